"""Derived geometry of plate-fin arrays and the checks that a design can exist and be made.

A plate-fin sink of width W carries N fins of thickness t, with fins flush with both edges,
so the gap between fins is b = (W - N t)/(N - 1). Every fin runs the full length L.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from optifin.library import Library
from optifin.model.design import Designs

#: Reasons a design is infeasible, one bit each. Geometry reasons mean the sink cannot
#: exist (its metrics are NaN); the others mean it cannot be made or does not fit.
REASONS: tuple[tuple[str, str], ...] = (
    ("fin_count", "fewer than 2 fins"),
    ("dimensions", "a dimension is not positive"),
    ("no_gap", "the fins do not fit across the width (gap <= 0)"),
    ("source_fit", "a heat source does not fit on the base"),
    ("material_process", "the process cannot form this material"),
    ("finish", "the finish is not offered for this material"),
    ("min_fin_thickness", "fin thinner than the process minimum"),
    ("min_gap", "gap narrower than the process minimum"),
    ("max_aspect_ratio", "fin height to gap above the process maximum"),
    ("min_base_thickness", "base thinner than the process minimum"),
    ("max_fin_height", "fin taller than the process maximum"),
    ("max_width", "wider than the process maximum"),
    ("no_solution", "no steady operating point found"),
)
BIT = {name: 1 << i for i, (name, _) in enumerate(REASONS)}
REASON_DTYPE = np.int32  #: bitmask type (fewer than 31 reasons)
#: Bits after which the sink does not physically exist.
NONEXISTENT = BIT["fin_count"] | BIT["dimensions"] | BIT["no_gap"] | BIT["source_fit"]


@dataclass(frozen=True)
class Geometry:
    """Derived geometry; arrays over designs, SI. Impossible designs carry safe stand-ins."""

    n: np.ndarray  #: fin count (float)
    t: np.ndarray  #: fin thickness [m]
    height: np.ndarray  #: fin height [m]
    base: np.ndarray  #: base thickness [m]
    width: np.ndarray  #: [m]
    length: np.ndarray  #: flow length [m]
    gap: np.ndarray  #: b [m]
    base_area: np.ndarray  #: footprint W L [m²]
    exposed_base_area: np.ndarray  #: (N-1) b L [m²]
    sigma: np.ndarray  #: free-flow / frontal area ratio (N-1) b / W
    reasons: np.ndarray  #: bitmask of :data:`REASONS` (int32)


def derive(designs: Designs, library: Library, source_sizes=None) -> Geometry:
    """Derived geometry plus the geometric and manufacturing feasibility bitmask.

    ``source_sizes`` is a sequence of ``(size_x, size_y, x, y)`` with ``None`` centres; a
    source must lie on the base.
    """
    n = designs.fin_count.astype(float)
    t, h, tb = designs.fin_thickness, designs.fin_height, designs.base_thickness
    w, length = designs.width, designs.length
    reasons = np.zeros(len(designs), dtype=REASON_DTYPE)
    _set(reasons, "fin_count", n < 2)
    positive = (t > 0) & (h > 0) & (tb > 0) & (w > 0) & (length > 0)
    positive &= np.isfinite(t) & np.isfinite(h) & np.isfinite(tb) & np.isfinite(w)
    positive &= np.isfinite(length)
    _set(reasons, "dimensions", ~positive)
    with np.errstate(divide="ignore", invalid="ignore"):
        gap = (w - n * t) / (n - 1)
    _set(reasons, "no_gap", (n >= 2) & ~(gap > 0))
    for size_x, size_y, x, y in source_sizes or ():
        cx = w / 2 if x is None else x
        cy = length / 2 if y is None else y
        fits = (cx - size_x / 2 >= -1e-12) & (cx + size_x / 2 <= w + 1e-12)
        fits &= (cy - size_y / 2 >= -1e-12) & (cy + size_y / 2 <= length + 1e-12)
        _set(reasons, "source_fit", ~fits)

    reasons |= manufacturing_reasons(designs, library, gap)

    # safe stand-ins where the sink cannot exist, so that no arithmetic warns
    bad = np.flatnonzero(reasons & NONEXISTENT)
    if bad.size:  # by index: such rows are few, and inputs are never written to
        n, t, h, tb, w, length, gap = (a.copy() for a in (n, t, h, tb, w, length, gap))
        n[bad], t[bad], h[bad], tb[bad], w[bad], length[bad] = 2.0, 1e-3, 1e-2, 1e-3, 0.1, 0.1
        gap[bad] = (0.1 - 2.0 * 1e-3) / (2.0 - 1.0)
    return Geometry(
        n=n,
        t=t,
        height=h,
        base=tb,
        width=w,
        length=length,
        gap=gap,
        base_area=w * length,
        exposed_base_area=(n - 1) * gap * length,
        sigma=(n - 1) * gap / w,
        reasons=reasons,
    )


#: Process limits checked on every design: (name, True for a minimum, False for a maximum).
LIMIT_CHECKS: tuple[tuple[str, bool], ...] = (
    ("min_fin_thickness", True),
    ("min_gap", True),
    ("max_aspect_ratio", False),
    ("min_base_thickness", True),
    ("max_fin_height", False),
    ("max_width", False),
)


def _reciprocal(library: Library, name: str) -> np.ndarray:
    """1 / a process limit, by process code (cached in the library; an absent maximum: 0)."""
    key = f"_reciprocal_{name}"
    cached = library._arrays.get(key)
    if cached is None:
        cached = 1.0 / library.array(name)
        cached.setflags(write=False)
        library._arrays[key] = cached
    return cached


def manufacturing_margins(designs: Designs, library: Library, gap=None) -> dict[str, np.ndarray]:
    """Normalised margins of each process limit, negative where the limit is broken.

    ``value/minimum - 1`` for minimums and ``1 - value/maximum`` for maximums, so that a
    search can grade how far a design is from being makeable.
    """
    if gap is None:
        n = designs.fin_count.astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            gap = (designs.width - n * designs.fin_thickness) / (n - 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        aspect = np.where(gap > 0, designs.fin_height / gap, np.inf)
    values = {
        "min_fin_thickness": designs.fin_thickness,
        "min_gap": gap,
        "max_aspect_ratio": aspect,
        "min_base_thickness": designs.base_thickness,
        "max_fin_height": designs.fin_height,
        "max_width": designs.width,
    }
    p = designs.process
    margins = {}
    with np.errstate(invalid="ignore"):
        for name, is_minimum in LIMIT_CHECKS:
            ratio = values[name] * np.take(_reciprocal(library, name), p)  # value / limit
            margins[name] = ratio - 1.0 if is_minimum else 1.0 - ratio
    return margins


def manufacturing_reasons(designs: Designs, library: Library, gap=None) -> np.ndarray:
    """Bitmask of the manufacturing reasons a design cannot be made."""
    reasons = np.zeros(len(designs), dtype=REASON_DTYPE)
    with np.errstate(invalid="ignore"):
        for name, margin in manufacturing_margins(designs, library, gap).items():
            _set(reasons, name, margin < -1e-9)
    allowed = pair_lookup(library.array("allowed"), designs.process, designs.material)
    _set(reasons, "material_process", ~allowed)
    emissivity = pair_lookup(library.array("emissivity"), designs.material, designs.finish)
    _set(reasons, "finish", np.isnan(emissivity))
    return reasons


def _set(reasons: np.ndarray, name: str, where: np.ndarray) -> None:
    """Set the bit of reason ``name`` in place where ``where`` holds.

    ``where * bit`` is about ten times faster than a masked ``bitwise_or(..., where=)``
    (measured, bench notes in DEVELOPERS.md).
    """
    reasons |= where * REASON_DTYPE(BIT[name])


def pair_lookup(table: np.ndarray, first: np.ndarray, second: np.ndarray) -> np.ndarray:
    """``table[first, second]`` for a small 2-D table, through one flat ``np.take``.

    Indexing with two integer arrays goes through numpy's general map iterator, several
    times slower than a flat take (measured).
    """
    return np.take(table.ravel(), first * table.shape[1] + second)


def describe(reasons: np.ndarray) -> pd.Categorical:
    """Readable reasons for a bitmask array (``""`` where feasible), as a categorical."""
    reasons = np.asarray(reasons, dtype=np.int64)
    used = np.flatnonzero(np.bincount(reasons.ravel(), minlength=1))
    texts = []
    for code in used:
        parts = [text for i, (_, text) in enumerate(REASONS) if code & (1 << i)]
        texts.append("; ".join(parts))
    lookup = np.zeros(used[-1] + 1 if used.size else 1, dtype=np.int32)
    lookup[used] = np.arange(used.size, dtype=np.int32)
    return pd.Categorical.from_codes(lookup[reasons], categories=pd.Index(texts, dtype=object))
