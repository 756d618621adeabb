"""Dimensioned cross-section drawings of heat sinks, as plain SVG text.

The section is normal to the flow: one looks along the fins, the base at the bottom and the
N fins standing on it, flush with both side edges (the model's geometry, gap
b = (W - N t)/(N - 1)); tapered fins are drawn as symmetric trapezoids. A pin-fin sink is
drawn as a section through its first row of pins above its plan view. The outlines are
those of :mod:`optifin.report.outline` (the same as the DXF of :mod:`optifin.report.cad`).
Dimensions are in millimetres. No drawing library is needed.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from pathlib import Path
from xml.sax.saxutils import escape

import numpy as np
import pandas as pd

from optifin.report.outline import (
    Section,
    pin_plan,
    pin_row_section,
    read_section,
    section_outline,
)

__all__ = [
    "cross_section_svg",
    "format_mm",
    "length_text",
    "material_notes",
    "write_marked_drawings",
]

WIDTH_PX = 600.0  #: width of the drawing
SINK_MAX_W = 400.0  #: largest drawn sink width [px]
SINK_MAX_H = 300.0  #: largest drawn sink height [px]
TOP = 92.0  #: from the top of the canvas to the fin tips [px]
OFFSET = 30.0  #: from the part to a dimension line [px]
ARROW = 8.0  #: arrowhead length [px]
FONT = 12.0  #: dimension text size [px]
CHAR = 0.6 * FONT  #: rough width of one character of dimension text [px]
PLAN_MAX_H = 300.0  #: largest drawn plan length of a pin-fin sink [px]


def format_mm(value: float) -> str:
    """A length in mm as drawn: at most two decimals, no trailing zeros (``0.9``, ``100``)."""
    text = f"{float(value):.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


class _Svg:
    """Collects SVG elements; coordinates in px, y downwards."""

    def __init__(self):
        self.parts: list[str] = []

    def line(self, x1, y1, x2, y2, cls="dim"):
        self.parts.append(
            f'<line x1="{x1:.2f}" y1="{y1:.2f}" x2="{x2:.2f}" y2="{y2:.2f}" class="{cls}"/>'
        )

    def arrow(self, x, y, dx, dy):
        """Filled arrowhead with its tip at (x, y), pointing along (dx, dy)."""
        norm = math.hypot(dx, dy)
        ux, uy = dx / norm, dy / norm
        bx, by = x - ARROW * ux, y - ARROW * uy
        px, py = -uy * ARROW * 0.35, ux * ARROW * 0.35
        points = f"{x:.2f},{y:.2f} {bx + px:.2f},{by + py:.2f} {bx - px:.2f},{by - py:.2f}"
        self.parts.append(f'<polygon points="{points}" class="arrow"/>')

    def text(self, x, y, text, anchor="middle", cls="value"):
        self.parts.append(
            f'<text x="{x:.2f}" y="{y:.2f}" text-anchor="{anchor}" class="{cls}">'
            f"{escape(text)}</text>"
        )

    def hdim(self, x1, x2, y, text, from_y, aside="right"):
        """Horizontal dimension from x1 to x2 on the line y, extension lines from from_y."""
        direction = 1.0 if y > from_y else -1.0
        for x in (x1, x2):
            self.line(x, from_y + 2 * direction, x, y + 4 * direction, "ext")
        length = x2 - x1
        if length >= 2 * ARROW + 4:
            self.line(x1, y, x2, y)
            self.arrow(x1, y, -1, 0)
            self.arrow(x2, y, 1, 0)
        else:  # arrows outside, pointing in
            self.line(x1 - ARROW - 8, y, x2 + ARROW + 8, y)
            self.arrow(x1, y, 1, 0)
            self.arrow(x2, y, -1, 0)
        ty = y - 5 if direction < 0 else y + FONT + 3
        if len(text) * CHAR + 6 <= length:
            self.text((x1 + x2) / 2, ty, text)
        elif aside == "left":
            self.text(x1 - ARROW - 10, y + FONT * 0.35, text, anchor="end")
        else:
            self.text(x2 + ARROW + 10, y + FONT * 0.35, text, anchor="start")

    def vdim(self, y1, y2, x, text, from_x):
        """Vertical dimension from y1 (top) to y2 on the line x, extension lines from from_x.

        The value is written level, beside the line, on the side away from the part.
        """
        direction = 1.0 if x > from_x else -1.0
        for y in (y1, y2):
            self.line(from_x + 2 * direction, y, x + 4 * direction, y, "ext")
        length = y2 - y1
        if length >= 2 * ARROW + 4:
            self.line(x, y1, x, y2)
            self.arrow(x, y1, 0, -1)
            self.arrow(x, y2, 0, 1)
        else:
            self.line(x, y1 - ARROW - 6, x, y2 + ARROW + 6)
            self.arrow(x, y1, 0, 1)
            self.arrow(x, y2, 0, -1)
        tx = x + 6 * direction
        self.text(tx, (y1 + y2) / 2 + FONT * 0.35, text, anchor="start" if direction > 0 else "end")


def cross_section_svg(design: Mapping, title: str = "") -> str:
    """A dimensioned cross-section of a heat sink (view along the flow), as SVG text.

    Parameters
    ----------
    design
        A result row (mapping or pandas Series) with ``fin_count``, ``fin_thickness_mm``,
        ``fin_height_mm``, ``base_thickness_mm``, ``width_mm`` and optionally
        ``fin_tip_thickness_mm`` (tapered fins), ``fin_gap_mm`` (computed from the others
        when missing), ``length_mm``, ``material``, ``process``, ``finish`` and
        ``base_material``; or the SI names of :class:`optifin.model.design.Designs`. A
        pin-fin row (``fin_type`` ``"pin"``) needs ``pin_diameter_mm``,
        ``pin_pitch_transverse_mm``, ``pin_pitch_longitudinal_mm``, ``pin_layout`` and
        ``length_mm`` instead of the fin count and thickness.
    title
        Printed above the drawing.

    Returns
    -------
    str
        A standalone SVG document about 600 px wide: the section outline of
        :func:`optifin.report.outline.section_outline` (hatched, tapered fins as
        trapezoids) with dimension lines for the overall width, the total height, the base
        thickness, the fin height, one fin thickness and one gap (tapered fins: the tip
        thickness, and the root thickness and root gap), all in mm, and notes with the fin
        count, the cut length along the flow and the material. A pin-fin design is drawn
        as the section A-A through its first row of pins (pin diameter and clear gap)
        above its plan view (circles on the W x L base, with L, S_T and S_L).
    """
    section = read_section(design)
    if section.pins:
        return _pin_svg(design, section, title)
    return _plate_svg(design, section, title)


def _polygon_points(vertices: np.ndarray, X, Y) -> str:
    return " ".join(f"{X(x):.2f},{Y(y):.2f}" for x, y in vertices)


def _plate_svg(design: Mapping, sec: Section, title: str) -> str:
    n, t, h, tb, w = sec.n, sec.t, sec.height, sec.base, sec.width
    gap_value = sec.gap
    if not sec.tapered:  # the table's own gap when it has one (the same b)
        gap_value = design.get("fin_gap_mm", sec.gap) if hasattr(design, "get") else sec.gap
        try:
            gap_value = float(gap_value)
        except (TypeError, ValueError):
            gap_value = sec.gap
        if not math.isfinite(gap_value):
            gap_value = sec.gap
    total = sec.total_height

    s = min(SINK_MAX_W / w, SINK_MAX_H / total)  # px per mm
    x0 = (WIDTH_PX - w * s) / 2
    top = TOP + (OFFSET if sec.tapered else 0.0)  # room for a second row of dimensions
    y_tip = top
    y_base_top = top + h * s
    y_bottom = top + total * s

    def X(x_mm):
        return x0 + x_mm * s

    def Y(y_mm):
        return y_bottom - y_mm * s

    svg = _Svg()
    points = _polygon_points(section_outline(design), X, Y)
    svg.parts.append(f'<polygon points="{points}" class="part"/>')
    # overall width, below
    svg.hdim(X(0), X(w), y_bottom + OFFSET, format_mm(w), y_bottom)
    # base thickness and fin height, chained on the left; total height on the right
    svg.vdim(y_base_top, y_bottom, X(0) - OFFSET, format_mm(tb), X(0))
    svg.vdim(y_tip, y_base_top, X(0) - OFFSET, format_mm(h), X(0))
    svg.vdim(y_tip, y_bottom, X(w) + OFFSET, format_mm(total), X(w))
    # one fin thickness (the first fin) and one gap (the last), above the fin tips
    pitch = sec.pitch
    last = (n - 2) * pitch + t  # right face of the last but one fin, at its root
    y_top_dims = y_tip - OFFSET * 0.8
    if not sec.tapered:
        svg.hdim(X(0), X(t), y_top_dims, format_mm(t), y_tip, aside="left")
        svg.hdim(X(last), X(w - t), y_top_dims, format_mm(gap_value), y_tip, aside="right")
        notes = []
    else:  # tip thickness at the tips; root thickness and root gap from the roots, above
        inset = (t - sec.t_tip) / 2
        svg.hdim(X(inset), X(t - inset), y_top_dims, format_mm(sec.t_tip), y_tip, aside="left")
        y_root_dims = y_top_dims - OFFSET
        svg.hdim(X(0), X(t), y_root_dims, format_mm(t), y_base_top, aside="left")
        svg.hdim(X(last), X(w - t), y_root_dims, format_mm(sec.gap), y_base_top, aside="right")
        notes = [
            f"Fins taper symmetrically from {format_mm(t)} mm at the root to "
            f"{format_mm(sec.t_tip)} mm at the tip; root gap {format_mm(sec.gap)} mm."
        ]

    length = length_text(design)
    cut = f"cut length along the flow L = {length} mm" if length else "flow length not given"
    notes.insert(0, f"{n} fins; {cut}")
    notes += material_notes(design)
    notes.append("Section across the fins, looking along the flow. Dimensions in mm.")
    y_note = y_bottom + OFFSET + FONT + 30
    return _document(svg, notes, y_note, title)


def _pin_svg(design: Mapping, sec: Section, title: str) -> str:
    plan = pin_plan(design)
    d, h, tb, w, length = sec.t, sec.height, sec.base, sec.width, sec.length
    total = sec.total_height
    s = min(SINK_MAX_W / w, SINK_MAX_H / total, PLAN_MAX_H / length)  # px per mm
    x0 = (WIDTH_PX - w * s) / 2
    y_tip = TOP
    y_base_top = TOP + h * s
    y_bottom = TOP + total * s

    def X(x_mm):
        return x0 + x_mm * s

    def Y(y_mm):
        return y_bottom - y_mm * s

    svg = _Svg()
    points = _polygon_points(pin_row_section(design, 0), X, Y)
    svg.parts.append(f'<polygon points="{points}" class="part"/>')
    svg.hdim(X(0), X(w), y_bottom + OFFSET, format_mm(w), y_bottom)
    svg.vdim(y_base_top, y_bottom, X(0) - OFFSET, format_mm(tb), X(0))
    svg.vdim(y_tip, y_base_top, X(0) - OFFSET, format_mm(h), X(0))
    svg.vdim(y_tip, y_bottom, X(w) + OFFSET, format_mm(total), X(w))
    row0 = plan.centres[plan.row == 0, 0]
    y_top_dims = y_tip - OFFSET * 0.8
    svg.hdim(X(row0[0] - d / 2), X(row0[0] + d / 2), y_top_dims, format_mm(d), y_tip, "left")
    if row0.size >= 2:  # the clear gap S_T - D between the last two pins of the row
        a, b = row0[-2] + d / 2, row0[-1] - d / 2
        svg.hdim(X(a), X(b), y_top_dims, format_mm(sec.gap), y_tip, aside="right")
    y_label = y_bottom + OFFSET + FONT + 24
    svg.text(WIDTH_PX / 2, y_label, "Section A-A (through the first row of pins)", cls="note")

    # plan view below, to the same scale: the leading edge (y = 0) at the top
    y_plan = y_label + 34

    def P(y_mm):
        return y_plan + y_mm * s

    svg.parts.append(
        f'<rect x="{X(0):.2f}" y="{P(0):.2f}" width="{w * s:.2f}" height="{length * s:.2f}" '
        'class="plan"/>'
    )
    r = d / 2 * s
    for x, y in plan.centres:
        svg.parts.append(f'<circle cx="{X(x):.2f}" cy="{P(y):.2f}" r="{r:.2f}" class="pin"/>')
    # the section line A-A through the first row, and the row centre line of the second
    y_a = P(plan.centres[0, 1])
    svg.line(X(0) - 14, y_a, X(w) + 14, y_a, "cut")
    svg.text(X(0) - 8, y_a + FONT + 2, "A", anchor="end", cls="note")
    svg.text(X(w) + 8, y_a + FONT + 2, "A", anchor="start", cls="note")
    svg.vdim(P(0), P(length), X(0) - OFFSET, format_mm(length), X(0))
    if plan.rows >= 2:
        y_b = P(plan.centres[plan.row == 1][0, 1])
        svg.line(X(0), y_b, X(w), y_b, "centre")
        svg.vdim(y_a, y_b, X(w) + OFFSET, format_mm(plan.pitch_longitudinal), X(w))
    last_row = plan.centres[plan.row == plan.rows - 1]
    if last_row.shape[0] >= 2:
        y_last = P(last_row[0, 1])
        svg.hdim(
            X(last_row[0, 0]),
            X(last_row[1, 0]),
            P(length) + OFFSET,
            format_mm(plan.pitch_transverse),
            y_last,
            aside="right",
        )
    # flow arrow, left of the length dimension
    x_flow = X(0) - OFFSET - 48
    y_flow = P(length / 2)
    svg.line(x_flow, y_flow - 22, x_flow, y_flow + 22, "dim")
    svg.arrow(x_flow, y_flow + 22, 0, 1)
    svg.text(x_flow, y_flow - 28, "flow", cls="note")
    svg.text(WIDTH_PX / 2, P(length) + OFFSET + FONT + 24, "Plan view", cls="note")

    layout = "staggered" if plan.staggered else "in-line"
    cut = f"L = {format_mm(length)} mm along the flow"
    notes = [
        f"{plan.count} pins of diameter {format_mm(d)} mm in {plan.rows} rows, {layout}; {cut}",
        f"pitch S_T = {format_mm(plan.pitch_transverse)} mm across, "
        f"S_L = {format_mm(plan.pitch_longitudinal)} mm along the flow"
        + (
            f"; odd rows shifted {format_mm(plan.pitch_transverse / 2)} mm"
            if plan.staggered
            else ""
        ),
        *material_notes(design),
        "Section across the flow, plan view from above the pins. Dimensions in mm.",
    ]
    y_note = P(length) + OFFSET + FONT + 56
    return _document(svg, notes, y_note, title)


def material_notes(design: Mapping) -> list[str]:
    """Note lines: the material, process and finish; the base material and insert if any."""
    material = _optional_text(design, "material")
    made = [f"material {material}"] if material else ["material not given"]
    for key in ("process", "finish"):
        value = _optional_text(design, key)
        if value:
            made.append(f"{key} {value}")
    lines = ["; ".join(made)]
    extra = []
    base = _optional_text(design, "base_material")
    if base and base != "-1" and base != material:
        extra.append(f"base {base}")
    insert = _optional_text(design, "insert_material")
    if insert and insert != "-1":
        size = [
            _optional_mm(design, f"insert_{k}_mm") or _optional_si_mm(design, f"insert_{k}")
            for k in ("width", "length", "thickness")
        ]
        extra.append(
            f"spreader insert {insert} {' x '.join(v or '?' for v in size)} mm "
            "(width x length x thickness), centred on the base, flush with its top"
        )
    if extra:
        lines.append("; ".join(extra))
    return lines


def _document(svg: _Svg, notes: list[str], y_note: float, title: str) -> str:
    for k, note in enumerate(notes):
        svg.text(WIDTH_PX / 2, y_note + 17 * k, note, cls="note")
    height = y_note + 17 * (len(notes) - 1) + 14
    head = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH_PX:.0f}" '
        f'height="{height:.0f}" viewBox="0 0 {WIDTH_PX:.0f} {height:.0f}">',
        "<title>" + escape(title or "Heat-sink cross-section") + "</title>",
        "<defs>",
        '<pattern id="hatch" width="6" height="6" patternUnits="userSpaceOnUse" '
        'patternTransform="rotate(45)"><line x1="0" y1="0" x2="0" y2="6" '
        'stroke="#7a8591" stroke-width="1"/></pattern>',
        "<style>"
        ".part{fill:url(#hatch);stroke:#1d2733;stroke-width:1.2}"
        ".plan{fill:#eef1f4;stroke:#1d2733;stroke-width:1.2}"
        ".pin{fill:#b9c2cc;stroke:#1d2733;stroke-width:0.8}"
        ".cut{stroke:#1d2733;stroke-width:0.9;stroke-dasharray:12 3 2 3}"
        ".centre{stroke:#1d4f91;stroke-width:0.5;stroke-dasharray:12 3 2 3}"
        ".dim{stroke:#1d4f91;stroke-width:0.9}"
        ".ext{stroke:#1d4f91;stroke-width:0.6}"
        ".arrow{fill:#1d4f91}"
        f".value{{font:{FONT:.0f}px sans-serif;fill:#1d4f91}}"
        ".note{font:12px sans-serif;fill:#1d2733}"
        ".title{font:bold 14px sans-serif;fill:#1d2733}"
        "</style>",
        "</defs>",
        '<rect width="100%" height="100%" fill="white"/>',
    ]
    if title:
        head.append(
            f'<text x="{WIDTH_PX / 2:.0f}" y="24" text-anchor="middle" class="title">'
            f"{escape(title)}</text>"
        )
    return "\n".join([*head, *svg.parts, "</svg>"]) + "\n"


def _optional_text(design: Mapping, key: str) -> str:
    try:
        value = design[key]
    except (KeyError, IndexError):
        return ""
    if value is None or pd.isna(value):
        return ""
    return str(value)


def _optional_mm(design: Mapping, key: str) -> str:
    try:
        value = float(design[key])
    except (KeyError, IndexError, TypeError, ValueError):
        return ""
    return format_mm(value) if math.isfinite(value) else ""


def length_text(design: Mapping) -> str:
    """The flow length L as drawn in mm (from ``length_mm`` or ``length`` [m]); "" if none."""
    return _optional_mm(design, "length_mm") or _optional_si_mm(design, "length")


def _optional_si_mm(design: Mapping, key: str) -> str:
    """A length given in metres under its SI name, as drawn in mm ("" when absent)."""
    try:
        value = float(design[key]) * 1e3
    except (KeyError, IndexError, TypeError, ValueError):
        return ""
    return format_mm(value) if math.isfinite(value) else ""


def drawing_name(label: str) -> str:
    """File name of the drawing of a marked design: ``design_<label>.svg``."""
    return "design_" + re.sub(r"[^A-Za-z0-9_.-]+", "_", label) + ".svg"


def write_marked_drawings(front: pd.DataFrame, marks: Mapping[str, int], folder) -> list[Path]:
    """Write one cross-section SVG per marked design into ``folder``; returns the paths.

    ``marks`` maps a label to a row position of ``front`` (as
    :func:`~optifin.report.marks.marked_designs` gives); the files are
    ``design_<label>.svg``.
    """
    folder = Path(folder)
    paths = []
    for label, row in marks.items():
        design = front.iloc[int(row)]
        path = folder / drawing_name(label)
        path.write_text(
            cross_section_svg(design, title=f"{label} (front row {int(row)})"), encoding="utf-8"
        )
        paths.append(path)
    return paths
