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
    reasons: np.ndarray  #: bitmask of :data:`REASONS` (int64)


def derive(designs: Designs, library: Library, source_sizes=None) -> Geometry:
    """Derived geometry plus the geometric and manufacturing feasibility bitmask.

    ``source_sizes`` is a sequence of ``(size_x, size_y, x, y)`` with ``None`` centres; a
    source must lie on the base.
    """
    n = designs.fin_count.astype(float)
    t, h, tb = designs.fin_thickness, designs.fin_height, designs.base_thickness
    w, length = designs.width, designs.length
    reasons = np.zeros(len(designs), dtype=np.int64)
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
    bad = (reasons & NONEXISTENT) != 0
    if bad.any():
        n = np.where(bad, 2.0, n)
        t = np.where(bad, 1e-3, t)
        h = np.where(bad, 1e-2, h)
        tb = np.where(bad, 1e-3, tb)
        w = np.where(bad, 1e-1, w)
        length = np.where(bad, 1e-1, length)
        gap = np.where(bad, (w - n * t) / (n - 1), gap)
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


#: Process limits checked on every design: (name, library array, True for a minimum).
LIMIT_CHECKS: tuple[tuple[str, bool], ...] = (
    ("min_fin_thickness", True),
    ("min_gap", True),
    ("max_aspect_ratio", False),
    ("min_base_thickness", True),
    ("max_fin_height", False),
    ("max_width", False),
)


def _limit_table(library: Library) -> np.ndarray:
    """Reciprocal limits, (process, check), and the sign of each check, cached per library."""
    key = "_limit_table"
    cached = library._arrays.get(key)
    if cached is None:
        cached = np.column_stack([1.0 / library.array(name) for name, _ in LIMIT_CHECKS])
        cached.setflags(write=False)
        library._arrays[key] = cached
    return cached


def _margin_matrix(designs: Designs, library: Library, gap) -> np.ndarray:
    """(N, 6) normalised margins in the order of :data:`LIMIT_CHECKS`."""
    with np.errstate(divide="ignore", invalid="ignore"):
        aspect = np.where(gap > 0, designs.fin_height / gap, np.inf)
    values = np.column_stack(
        (
            designs.fin_thickness,
            gap,
            aspect,
            designs.base_thickness,
            designs.fin_height,
            designs.width,
        )
    )
    with np.errstate(invalid="ignore"):
        ratio = values * _limit_table(library)[designs.process]  # value / limit
    # minimums: value/limit - 1; maximums: 1 - value/limit (an absent maximum is +inf: 1)
    sign = np.array([1.0 if is_min else -1.0 for _, is_min in LIMIT_CHECKS])
    return (ratio - 1.0) * sign


def manufacturing_margins(designs: Designs, library: Library, gap=None) -> dict[str, np.ndarray]:
    """Normalised margins of each process limit, negative where the limit is broken.

    ``value/minimum - 1`` for minimums and ``1 - value/maximum`` for maximums, so that a
    search can grade how far a design is from being makeable.
    """
    if gap is None:
        n = designs.fin_count.astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            gap = (designs.width - n * designs.fin_thickness) / (n - 1)
    margins = _margin_matrix(designs, library, gap)
    return {name: margins[:, i] for i, (name, _) in enumerate(LIMIT_CHECKS)}


_LIMIT_BITS = np.array(
    [1 << [n for n, _ in REASONS].index(name) for name, _ in LIMIT_CHECKS], dtype=np.int64
)


def manufacturing_reasons(designs: Designs, library: Library, gap=None) -> np.ndarray:
    """Bitmask of the manufacturing reasons a design cannot be made."""
    if gap is None:
        n = designs.fin_count.astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            gap = (designs.width - n * designs.fin_thickness) / (n - 1)
    with np.errstate(invalid="ignore"):
        broken = _margin_matrix(designs, library, gap) < -1e-9
    reasons = np.bitwise_or.reduce(np.where(broken, _LIMIT_BITS, 0), axis=1)
    allowed = library.array("allowed")[designs.process, designs.material]
    _set(reasons, "material_process", ~allowed)
    emissivity = library.array("emissivity")[designs.material, designs.finish]
    _set(reasons, "finish", np.isnan(emissivity))
    return reasons


def _set(reasons: np.ndarray, name: str, where: np.ndarray) -> None:
    """Set the bit of reason ``name`` in place where ``where`` holds."""
    np.bitwise_or(reasons, BIT[name], out=reasons, where=where)


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
