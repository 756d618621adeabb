"""Cross-section outlines and pin plans of heat-sink designs, as polygons in millimetres.

The section is normal to the flow (one looks along the fins): x runs across the width W
from the left side edge, y up from the bottom face of the base. A plate-fin section is the
base rectangle with the N fins standing on it, flush with both side edges and each centred
on its pitch (root gap b = (W - N t)/(N - 1), as :mod:`optifin.model.geometry`); a tapered
fin is a symmetric trapezoid, root thickness t on the base and t_tip at the tip. The
outline is one simple polygon, counter-clockwise, its first vertex (0, 0) not repeated and
with no collinear or repeated vertices.

A pin-fin design is drawn as its plan (the pin centres on the W x L base, x across, y along
the flow from the leading edge) and a section through one row of pins (the base with the
rectangles of that row's pins). The pins sit as :func:`optifin.physics.pin_fins.pin_array_counts`
counts them: every pin fully on the base, the first pin of an even row with its centre D/2
from the side edge x = 0, the first row D/2 from the leading edge y = 0, and the odd rows
of a staggered array shifted S_T/2 further in.

The functions read a result row (mapping or pandas Series) with the ``_mm`` columns of the
result tables, or a mapping with the SI names of :class:`optifin.model.design.Designs`
(``fin_thickness`` [m]); the SI name wins when both are present, as in
:meth:`~optifin.model.design.Designs.from_columns`. Pure functions: no I/O.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from optifin.errors import ModelError

__all__ = [
    "PinPlan",
    "Section",
    "is_pin_design",
    "pin_plan",
    "pin_row_section",
    "polygon_area",
    "read_section",
    "section_outline",
]

_FIT_EPS = 1e-9  #: relative slack on a fit, as pin_array_counts (an exact fit keeps its pin)
_FIN_TYPES = ("plate", "pin")
_PIN_LAYOUTS = ("inline", "staggered")


def _fmt(value: float) -> str:
    text = f"{float(value):.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _present(design: Mapping, key: str) -> bool:
    try:
        value = design[key]
    except (KeyError, IndexError, TypeError):
        return False
    if value is None:
        return False
    try:
        return not bool(pd.isna(value))
    except (TypeError, ValueError):  # not a scalar
        return True


def _length_mm(design: Mapping, name: str, required: bool = True) -> float:
    """The length ``name`` in mm, from ``name`` [m] or ``name_mm`` [mm]; NaN if optional."""
    if _present(design, name):
        key, scale = name, 1e3
    elif _present(design, f"{name}_mm"):
        key, scale = f"{name}_mm", 1.0
    elif required:
        raise ModelError(f"the design has no {name + '_mm'!r} column (or {name!r} in metres)")
    else:
        return math.nan
    try:
        value = float(design[key]) * scale
    except (TypeError, ValueError):
        raise ModelError(f"{key} is not a number: {design[key]!r}") from None
    if not (math.isfinite(value) and value > 0):
        if not required and math.isnan(value):
            return math.nan
        raise ModelError(f"{key} must be positive and finite, got {design[key]}")
    return value


def _code(design: Mapping, key: str, names: tuple[str, ...]) -> int:
    """A coded column given as its name (``"pin"``) or its code (1); 0 when absent."""
    if not _present(design, key):
        return 0
    value = design[key]
    if isinstance(value, str):
        if value not in names:
            raise ModelError(f"{key} {value!r} is not one of {', '.join(names)}")
        return names.index(value)
    try:
        code = float(value)
    except (TypeError, ValueError):
        raise ModelError(f"{key} is not a name or code: {value!r}") from None
    if code not in range(len(names)):
        raise ModelError(f"{key} code must be 0..{len(names) - 1}, got {value!r}")
    return int(code)


def is_pin_design(design: Mapping) -> bool:
    """True when ``fin_type`` is ``"pin"`` (or code 1); absent means plate fins."""
    return _code(design, "fin_type", _FIN_TYPES) == 1


@dataclass(frozen=True)
class Section:
    """The dimensions a drawing needs, in mm (NaN where they do not apply).

    Plates: ``n`` fins of root thickness ``t`` and tip thickness ``t_tip``, root gap ``gap``
    and pitch ``pitch = t + gap``. Pins: ``n`` is 0 (the plan sets the count), ``t`` and
    ``t_tip`` the diameter; ``gap`` the clear transverse gap S_T - D.
    """

    pins: bool
    n: int
    t: float
    t_tip: float
    height: float  #: fin (pin) height H above the base
    base: float  #: base thickness t_b
    width: float
    length: float  #: flow length L (NaN if not given; pins need it)
    gap: float
    pitch: float
    pitch_longitudinal: float = math.nan
    staggered: bool = False

    @property
    def tapered(self) -> bool:
        return self.t_tip != self.t

    @property
    def total_height(self) -> float:
        return self.base + self.height


def read_section(design: Mapping) -> Section:
    """The checked dimensions of a design, in mm; ModelError names what is wrong."""
    h = _length_mm(design, "fin_height")
    tb = _length_mm(design, "base_thickness")
    w = _length_mm(design, "width")
    length = _length_mm(design, "length", required=False)
    if is_pin_design(design):
        d = _length_mm(design, "pin_diameter")
        s_t = _length_mm(design, "pin_pitch_transverse")
        s_l = _length_mm(design, "pin_pitch_longitudinal")
        staggered = _code(design, "pin_layout", _PIN_LAYOUTS) == 1
        if math.isnan(length):
            raise ModelError("a pin-fin design needs its flow length (length_mm)")
        if not s_t > d:
            raise ModelError(
                f"the transverse pitch {_fmt(s_t)} mm must exceed the pin diameter {_fmt(d)} mm"
            )
        along = math.hypot(s_l, s_t / 2) if staggered else s_l
        if not along > d:
            raise ModelError(
                f"pins of {_fmt(d)} mm overlap at a {'diagonal' if staggered else 'longitudinal'}"
                f" pitch of {_fmt(along)} mm"
            )
        if d > w or d > length:
            raise ModelError(f"a pin of {_fmt(d)} mm does not fit on {_fmt(w)} x {_fmt(length)} mm")
        return Section(True, 0, d, d, h, tb, w, length, s_t - d, s_t, s_l, staggered)
    count = design["fin_count"] if _present(design, "fin_count") else None
    if count is None:
        raise ModelError("the design has no 'fin_count' column")
    try:
        count = float(count)
    except (TypeError, ValueError):
        raise ModelError(f"fin_count is not a number: {count!r}") from None
    if count != round(count) or count < 2:
        raise ModelError(f"fin_count must be a whole number of at least 2, got {_fmt(count)}")
    n = round(count)
    t = _length_mm(design, "fin_thickness")
    t_tip = _length_mm(design, "fin_tip_thickness", required=False)
    if math.isnan(t_tip):
        t_tip = t
    if t_tip > t * (1 + 1e-9):
        raise ModelError(f"the fin tip ({_fmt(t_tip)} mm) is thicker than its root ({_fmt(t)} mm)")
    gap = (w - n * t) / (n - 1)
    if not gap > 0:
        raise ModelError(f"{n} fins of {_fmt(t)} mm do not fit across {_fmt(w)} mm")
    return Section(False, n, t, t_tip, h, tb, w, length, gap, t + gap)


def polygon_area(vertices, signed: bool = False) -> np.ndarray | float:
    """Area of a closed polygon by the shoelace formula, A = ½ Σ (x_i y_{i+1} - x_{i+1} y_i).

    ``vertices`` is an array (..., n, 2) of a polygon's vertices in order, the first not
    repeated; leading axes broadcast. The signed area is positive for counter-clockwise
    vertices; by default the absolute area is returned.
    """
    p = np.asarray(vertices, dtype=float)
    x, y = p[..., 0], p[..., 1]
    area = 0.5 * np.sum(x * np.roll(y, -1, axis=-1) - np.roll(x, -1, axis=-1) * y, axis=-1)
    return area if signed else np.abs(area)


def _tidy(points: np.ndarray) -> np.ndarray:
    """Drop repeated vertices, then vertices in the middle of a straight edge."""
    keep = np.any(points != np.roll(points, 1, axis=0), axis=1)
    points = points[keep]
    before, after = np.roll(points, 1, axis=0), np.roll(points, -1, axis=0)
    u, v = points - before, after - points
    cross = u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]
    scale = np.abs(points).max() ** 2
    straight = (np.abs(cross) <= 1e-12 * scale) & (np.sum(u * v, axis=1) > 0)
    return points[~straight]


def _base_with_risers(w, tb, top, root_left, root_right, tip_left, tip_right) -> np.ndarray:
    """Counter-clockwise outline of a base with risers (fins or pins) standing on it.

    The risers are given left to right; the outline runs along the bottom, up the right
    side edge, back over the risers from right to left and down the left side edge.
    """
    y_root = np.full(root_left.shape, tb)
    y_tip = np.full(root_left.shape, top)
    risers = np.stack(
        [
            np.column_stack([root_right, y_root]),
            np.column_stack([tip_right, y_tip]),
            np.column_stack([tip_left, y_tip]),
            np.column_stack([root_left, y_root]),
        ],
        axis=1,
    )[::-1].reshape(-1, 2)
    corners = np.array([[0.0, 0.0], [w, 0.0], [w, tb]])
    return _tidy(np.concatenate([corners, risers, [[0.0, tb]]]))


def section_outline(design: Mapping) -> np.ndarray:
    """The closed cross-section outline of a design, normal to the flow, in mm.

    Parameters
    ----------
    design
        A result row or mapping: ``fin_count``, ``fin_thickness_mm``, ``fin_height_mm``,
        ``base_thickness_mm``, ``width_mm`` and optionally ``fin_tip_thickness_mm`` (tapered
        fins; NaN or absent: untapered) — or the SI names [m]. A pin-fin design
        (``fin_type`` ``"pin"``) gives its first row's section, :func:`pin_row_section`.

    Returns
    -------
    numpy.ndarray
        Vertices (n, 2) [mm], counter-clockwise, starting at (0, 0), first not repeated:
        4 N for straight fins, 4 N + 2 for tapered ones. Its area is
        W t_b + N (t + t_tip) H / 2 and its bounding box W x (t_b + H).
    """
    s = read_section(design)
    if s.pins:
        return pin_row_section(design, 0)
    i = np.arange(s.n)
    centre = s.t / 2 + i * s.pitch
    last, first = i == s.n - 1, i == 0
    # the outer faces of the outer fins lie exactly on the side edges
    root_right = np.where(last, s.width, centre + s.t / 2)
    root_left = np.where(first, 0.0, centre - s.t / 2)
    if s.tapered:
        tip_right, tip_left = centre + s.t_tip / 2, centre - s.t_tip / 2
    else:
        tip_right, tip_left = root_right, root_left
    return _base_with_risers(
        s.width, s.base, s.total_height, root_left, root_right, tip_left, tip_right
    )


@dataclass(frozen=True)
class PinPlan:
    """Pin centres on the base, in mm: x across the width, y along the flow."""

    centres: np.ndarray  #: (count, 2) [mm], row by row from the leading edge, left to right
    row: np.ndarray  #: row index of each pin (0 at the leading edge)
    diameter: float  #: [mm]
    width: float  #: base width W [mm]
    length: float  #: base length L along the flow [mm]
    pitch_transverse: float  #: S_T [mm]
    pitch_longitudinal: float  #: S_L [mm]
    staggered: bool

    @property
    def count(self) -> int:
        return int(self.centres.shape[0])

    @property
    def rows(self) -> int:
        return int(self.row.max()) + 1 if self.row.size else 0


def _fit(span: float, pitch: float) -> int:
    return max(math.floor(span / pitch + _FIT_EPS) + 1, 0)


def pin_plan(design: Mapping) -> PinPlan:
    """The pins of a pin-fin design in plan view (W x L), centres and diameter in mm.

    Every pin lies fully on the base: even rows (0, 2, ...) start with a centre D/2 from the
    side edge x = 0 and hold floor((W - D)/S_T) + 1 pins; the odd rows of a staggered array
    start S_T/2 further in and hold floor((W - D - S_T/2)/S_T) + 1; there are
    floor((L - D)/S_L) + 1 rows, the first D/2 from the leading edge y = 0 — the placement
    the counts of :func:`optifin.physics.pin_fins.pin_array_counts` assume.

    Parameters
    ----------
    design
        A row with ``fin_type`` pin, ``pin_diameter_mm``, ``pin_pitch_transverse_mm``,
        ``pin_pitch_longitudinal_mm``, ``pin_layout`` (``"inline"``/``"staggered"`` or
        0/1), ``width_mm``, ``length_mm``, ``fin_height_mm``, ``base_thickness_mm`` (or
        the SI names).
    """
    s = read_section(design)
    if not s.pins:
        raise ModelError("pin_plan needs a pin-fin design (fin_type 'pin')")
    d, s_t, s_l = s.t, s.pitch, s.pitch_longitudinal
    rows = _fit(s.length - d, s_l)
    even = _fit(s.width - d, s_t)
    odd = _fit(s.width - d - s_t / 2, s_t) if s.staggered else even
    row = np.arange(rows)
    shifted = (row % 2 == 1) & s.staggered
    per_row = np.where(shifted, odd, even)
    row_of_pin = np.repeat(row, per_row)
    start = np.cumsum(per_row) - per_row  # index of each row's first pin
    k = np.arange(row_of_pin.size) - np.repeat(start, per_row)
    x = d / 2 + np.where(shifted[row_of_pin], s_t / 2, 0.0) + k * s_t
    y = d / 2 + row_of_pin * s_l
    return PinPlan(np.column_stack([x, y]), row_of_pin, d, s.width, s.length, s_t, s_l, s.staggered)


def pin_row_section(design: Mapping, row: int = 0) -> np.ndarray:
    """Section of a pin-fin design through the centres of one row of pins, in mm.

    The base rectangle W x t_b with a D x H rectangle for each pin of the row, one simple
    polygon, counter-clockwise from (0, 0) (conventions of :func:`section_outline`); its
    area is W t_b + n_row D H.
    """
    s = read_section(design)
    plan = pin_plan(design)
    if not 0 <= row < plan.rows:
        raise ModelError(f"the design has {plan.rows} rows of pins, no row {row}")
    x = plan.centres[plan.row == row, 0]
    left, right = x - s.t / 2, x + s.t / 2
    right = np.where(np.abs(right - s.width) <= 1e-9 * s.width, s.width, right)  # flush
    left = np.where(np.abs(left) <= 1e-9 * s.width, 0.0, left)
    return _base_with_risers(s.width, s.base, s.total_height, left, right, left, right)
