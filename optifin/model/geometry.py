"""Derived geometry of fin arrays and the checks that a design can exist and be made.

A plate-fin sink of width W carries N fins of root thickness t, with fins flush with both
edges, so the gap between fin roots is b = (W - N t)/(N - 1). Every fin runs the full
length L. A tapered fin (tip thickness t_tip < t) leaves the mean gap
(W - N (t + t_tip)/2)/(N - 1) to the air. Pin-fin arrays take their pin count from the
pitches (:func:`optifin.physics.pin_fins.pin_array_counts`); for them ``n`` is the pin
count, ``t`` the pin diameter and ``gap`` the narrowest clear gap between pins.
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
    ("fin_type_process", "the process cannot make this fin type"),
    ("construction", "the process cannot join a base and fins of different materials"),
    ("insert_fit", "the spreader insert does not fit in the base"),
    ("taper", "the fin tip is thicker than its root"),
    ("fan_stall", "the system curve does not meet the fan curve"),
)
BIT = {name: 1 << i for i, (name, _) in enumerate(REASONS)}
REASON_DTYPE = np.int32  #: bitmask type (fewer than 31 reasons)
#: Bits after which the sink does not physically exist.
NONEXISTENT = (
    BIT["fin_count"]
    | BIT["dimensions"]
    | BIT["no_gap"]
    | BIT["source_fit"]
    | BIT["insert_fit"]
    | BIT["taper"]
)


@dataclass(frozen=True)
class Geometry:
    """Derived geometry; arrays over designs, SI. Impossible designs carry safe stand-ins."""

    n: np.ndarray  #: fin count (float; pins: the pin count)
    t: np.ndarray  #: fin root thickness [m] (pins: diameter)
    height: np.ndarray  #: fin height [m]
    base: np.ndarray  #: base thickness [m]
    width: np.ndarray  #: [m]
    length: np.ndarray  #: flow length [m]
    gap: np.ndarray  #: mean gap b open to the air [m] (pins: narrowest clear gap)
    base_area: np.ndarray  #: footprint W L [m²]
    exposed_base_area: np.ndarray  #: base area between the fins [m²]
    sigma: np.ndarray  #: free-flow / frontal area ratio (N-1) b / W
    reasons: np.ndarray  #: bitmask of :data:`REASONS` (int32)
    t_tip: np.ndarray  #: fin tip thickness [m] (= t untapered)
    fin_volume: np.ndarray  #: metal of one fin [m³]: (t + t_tip) H L / 2, pins π D² H / 4
    #: :func:`pin_geometry` of the pin rows (in the order of ``fin_type == 1``), or None
    pins: dict | None = None


def derive(designs: Designs, library: Library, source_sizes=None) -> Geometry:
    """Derived geometry plus the geometric and manufacturing feasibility bitmask.

    ``source_sizes`` is a sequence of ``(size_x, size_y, x, y)`` with ``None`` centres; a
    source must lie on the base.
    """
    n = designs.fin_count.astype(float)
    t, h, tb = designs.fin_thickness, designs.fin_height, designs.base_thickness
    w, length = designs.width, designs.length
    t_tip = designs.fin_tip_thickness
    pins = np.flatnonzero(designs.fin_type == 1) if designs.has_pins else None
    reasons = np.zeros(len(designs), dtype=REASON_DTYPE)
    if pins is not None:  # for pins: n is the pin count and t the pin diameter
        pg = pin_geometry(designs.take(pins))
        n, t, t_tip = n.copy(), t.copy(), t_tip.copy()
        n[pins] = pg["count"]
        t[pins] = t_tip[pins] = pg["diameter"]
    tapered = designs.is_tapered
    _set(reasons, "fin_count", n < 2)
    positive = (t > 0) & (h > 0) & (tb > 0) & (w > 0) & (length > 0)
    positive &= np.isfinite(t) & np.isfinite(h) & np.isfinite(tb) & np.isfinite(w)
    positive &= np.isfinite(length)
    if pins is not None:
        positive[pins] &= pg["valid"]
    if tapered:
        positive &= (t_tip > 0) & np.isfinite(t_tip)
        _set(reasons, "taper", t_tip > t * (1 + 1e-9))
    _set(reasons, "dimensions", ~positive)
    with np.errstate(divide="ignore", invalid="ignore"):
        gap_root = (w - n * t) / (n - 1)
        gap = (w - n * 0.5 * (t + t_tip)) / (n - 1) if tapered else gap_root
    if pins is not None:
        gap_root[pins] = pg["clear_gap"]
        if gap is not gap_root:
            gap[pins] = pg["clear_gap"]
    _set(reasons, "no_gap", (n >= 2) & ~(gap_root > 0))
    for size_x, size_y, x, y in source_sizes or ():
        cx = w / 2 if x is None else x
        cy = length / 2 if y is None else y
        fits = (cx - size_x / 2 >= -1e-12) & (cx + size_x / 2 <= w + 1e-12)
        fits &= (cy - size_y / 2 >= -1e-12) & (cy + size_y / 2 <= length + 1e-12)
        _set(reasons, "source_fit", ~fits)
    if designs.has_inserts:
        has = designs.insert_material >= 0
        fits = (designs.insert_width <= w) & (designs.insert_length <= length)
        fits &= (designs.insert_thickness > 0) & (designs.insert_thickness <= tb)
        _set(reasons, "insert_fit", has & ~fits)

    reasons |= manufacturing_reasons(designs, library, gap_root)

    # safe stand-ins where the sink cannot exist, so that no arithmetic warns
    bad = np.flatnonzero(reasons & NONEXISTENT)
    if bad.size:  # by index: such rows are few, and inputs are never written to
        n, t, h, tb, w, length, gap = (a.copy() for a in (n, t, h, tb, w, length, gap))
        t_tip = t_tip.copy()
        n[bad], t[bad], h[bad], tb[bad], w[bad], length[bad] = 2.0, 1e-3, 1e-2, 1e-3, 0.1, 0.1
        t_tip[bad] = 1e-3
        gap[bad] = (0.1 - 2.0 * 1e-3) / (2.0 - 1.0)
    fin_volume = (0.5 * (t + t_tip) if tapered else t) * h * length
    exposed = (n - 1) * gap * length
    sigma = (n - 1) * gap / w
    if pins is not None:
        fin_volume[pins] = np.pi / 4 * t[pins] ** 2 * h[pins]
        exposed[pins] = (w * length - n * np.pi / 4 * t**2)[pins]
        sigma[pins] = np.where(np.isin(pins, bad), sigma[pins], pg["sigma"])
        # a pin design stood in for by a plate stand-in stays a stand-in: nothing else to do
    return Geometry(
        n=n,
        t=t,
        height=h,
        base=tb,
        width=w,
        length=length,
        gap=gap,
        base_area=w * length,
        exposed_base_area=exposed,
        sigma=sigma,
        reasons=reasons,
        t_tip=t_tip,
        fin_volume=fin_volume,
        pins=None if pins is None else pg,
    )


def pin_geometry(designs: Designs) -> dict[str, np.ndarray]:
    """Pin count, rows, narrowest clear gap and free-area ratio of pin-fin designs.

    Counts follow :func:`optifin.physics.pin_fins.pin_array_counts`; the clear gap is the
    narrowest of the transverse gap S_T - D and, for staggered arrays, the diagonal gap
    S_D - D with S_D = sqrt(S_L² + (S_T/2)²); in-line arrays also have S_L - D.
    """
    d = designs.pin_diameter
    s_t, s_l = designs.pin_pitch_transverse, designs.pin_pitch_longitudinal
    w, length = designs.width, designs.length
    staggered = designs.pin_layout == 1
    valid = (d > 0) & (s_t > 0) & (s_l > 0) & (w > 0) & (length > 0)
    valid &= np.isfinite(d) & np.isfinite(s_t) & np.isfinite(s_l)
    valid &= np.isfinite(w) & np.isfinite(length) & (d <= np.fmin(w, length))
    with np.errstate(invalid="ignore"):
        diagonal = np.sqrt(s_l**2 + (0.5 * s_t) ** 2)
        clear = np.minimum(s_t, np.where(staggered, diagonal, s_l)) - d
    usable = valid & (clear > 0)
    if not usable.all():  # stand-ins where pins are undefined or overlap (flagged elsewhere)
        d, s_t, s_l, w, length = (
            np.where(usable, a, b) for a, b in zip((d, s_t, s_l, w, length), STAND_IN, strict=True)
        )
    from optifin.physics import pin_fins  # only pin designs need it

    counts = pin_fins.pin_array_counts(w, length, d, s_t, s_l, staggered)
    return {
        "count": counts.total.astype(float),
        "rows": counts.rows.astype(float),
        "diameter": designs.pin_diameter,
        "clear_gap": clear,
        "sigma": (s_t - d) / s_t,
        "valid": valid,
        "usable": usable,
        "stand_in": (d, s_t, s_l),
    }


#: Stand-in pin array (D, S_T, S_L, W, L) [m] for designs whose pins are undefined.
STAND_IN = (1e-3, 3e-3, 3e-3, 0.1, 0.1)


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
    pins = np.flatnonzero(designs.fin_type == 1) if designs.has_pins else None
    if gap is None:
        n = designs.fin_count.astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            gap = (designs.width - n * designs.fin_thickness) / (n - 1)
        if pins is not None:
            gap[pins] = pin_geometry(designs.take(pins))["clear_gap"]
    with np.errstate(divide="ignore", invalid="ignore"):
        aspect = np.where(gap > 0, designs.fin_height / gap, np.inf)
    thinnest = designs.fin_thickness
    if designs.is_tapered:
        thinnest = np.fmin(thinnest, designs.fin_tip_thickness)
    if pins is not None:
        thinnest = np.array(thinnest)
        thinnest[pins] = designs.pin_diameter[pins]
    values = {
        "min_fin_thickness": thinnest,
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
    # plates: one look-up of a (process, material) table that also holds "makes plates";
    # the few failures are then sorted into their reasons by index
    pin = designs.fin_type == 1 if designs.has_pins else None
    table = library.array("allowed" if pin is not None else "allowed_plates")
    allowed = pair_lookup(table, designs.process, designs.material)
    if designs.has_base_material:
        base = designs.base_material_code
        allowed &= pair_lookup(table, designs.process, base)
        joined = (base != designs.material) & np.take(library.array("monolithic"), designs.process)
        _set(reasons, "construction", joined)
    if pin is not None:
        makes = np.where(
            pin,
            np.take(library.array("makes_pins"), designs.process),
            np.take(library.array("makes_plates"), designs.process),
        )
        _set(reasons, "fin_type_process", ~makes)
        _set(reasons, "material_process", ~allowed)
    else:
        failed = np.flatnonzero(~allowed)
        if failed.size:
            plates = np.take(library.array("makes_plates"), designs.process[failed])
            reasons[failed] |= np.where(
                plates, BIT["material_process"], BIT["fin_type_process"]
            ).astype(REASON_DTYPE)
            # a process that makes no plates may also not form the material: say both
            forms = pair_lookup(
                library.array("allowed"), designs.process[failed], designs.material[failed]
            )
            reasons[failed] |= np.where(forms, 0, BIT["material_process"]).astype(REASON_DTYPE)
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
