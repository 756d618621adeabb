"""Dimensioned cross-section drawings of plate-fin sinks, as plain SVG text.

The section is normal to the flow: one looks along the fins, the base at the bottom and the
N fins standing on it, flush with both side edges (the model's geometry, gap
b = (W - N t)/(N - 1)). Dimensions are in millimetres. No drawing library is needed.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from pathlib import Path
from xml.sax.saxutils import escape

import pandas as pd

from optifin.errors import ModelError

__all__ = ["cross_section_svg", "format_mm", "write_marked_drawings"]

WIDTH_PX = 600.0  #: width of the drawing
SINK_MAX_W = 400.0  #: largest drawn sink width [px]
SINK_MAX_H = 300.0  #: largest drawn sink height [px]
TOP = 92.0  #: from the top of the canvas to the fin tips [px]
OFFSET = 30.0  #: from the part to a dimension line [px]
ARROW = 8.0  #: arrowhead length [px]
FONT = 12.0  #: dimension text size [px]
CHAR = 0.6 * FONT  #: rough width of one character of dimension text [px]


def format_mm(value: float) -> str:
    """A length in mm as drawn: at most two decimals, no trailing zeros (``0.9``, ``100``)."""
    text = f"{float(value):.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _number(design: Mapping, key: str) -> float:
    try:
        value = float(design[key])
    except KeyError:
        raise ModelError(f"the design has no {key!r} column") from None
    except (TypeError, ValueError):
        raise ModelError(f"{key} is not a number: {design[key]!r}") from None
    if not (math.isfinite(value) and value > 0):
        raise ModelError(f"{key} must be positive and finite, got {value}")
    return value


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
    """A dimensioned cross-section of a plate-fin sink (view along the flow), as SVG text.

    Parameters
    ----------
    design
        A result row (mapping or pandas Series) with ``fin_count``, ``fin_thickness_mm``,
        ``fin_height_mm``, ``base_thickness_mm``, ``width_mm`` and optionally
        ``fin_gap_mm`` (computed from the others when missing), ``length_mm``,
        ``material``, ``process`` and ``finish``.
    title
        Printed above the drawing.

    Returns
    -------
    str
        A standalone SVG document about 600 px wide: the section (hatched) with dimension
        lines for the overall width, the total height, the base thickness, the fin height,
        one fin thickness and one gap, all in mm, and a note with the fin count, the cut
        length along the flow and the material.
    """
    count = _number(design, "fin_count")
    if count != round(count) or count < 2:
        raise ModelError(f"fin_count must be a whole number of at least 2, got {count}")
    n = round(count)
    t = _number(design, "fin_thickness_mm")
    h = _number(design, "fin_height_mm")
    tb = _number(design, "base_thickness_mm")
    w = _number(design, "width_mm")
    pitch_gap = (w - n * t) / (n - 1)
    if not pitch_gap > 0:
        raise ModelError(f"{n} fins of {format_mm(t)} mm do not fit across {format_mm(w)} mm")
    gap_value = design.get("fin_gap_mm", pitch_gap) if hasattr(design, "get") else pitch_gap
    try:
        gap_value = float(gap_value)
    except (TypeError, ValueError):
        gap_value = pitch_gap
    if not math.isfinite(gap_value):
        gap_value = pitch_gap
    total = tb + h

    s = min(SINK_MAX_W / w, SINK_MAX_H / total)  # px per mm
    x0 = (WIDTH_PX - w * s) / 2
    y_tip = TOP
    y_base_top = TOP + h * s
    y_bottom = TOP + total * s

    def X(x_mm):
        return x0 + x_mm * s

    # the section: one outline polygon, from the bottom left, right along the bottom, then
    # back along the tops of the fins and the gaps between them
    pitch = t + pitch_gap
    points = [(0.0, 0.0), (w, 0.0)]
    for i in range(n - 1, -1, -1):
        left = i * pitch
        points += [(left + t, total), (left, total)]
        if i:
            points += [(left, tb), ((i - 1) * pitch + t, tb)]
    outline = " ".join(f"{X(x):.2f},{y_bottom - y * s:.2f}" for x, y in points)

    svg = _Svg()
    svg.parts.append(f'<polygon points="{outline}" class="part"/>')
    # overall width, below
    svg.hdim(X(0), X(w), y_bottom + OFFSET, format_mm(w), y_bottom)
    # base thickness and fin height, chained on the left; total height on the right
    svg.vdim(y_base_top, y_bottom, X(0) - OFFSET, format_mm(tb), X(0))
    svg.vdim(y_tip, y_base_top, X(0) - OFFSET, format_mm(h), X(0))
    svg.vdim(y_tip, y_bottom, X(w) + OFFSET, format_mm(total), X(w))
    # one fin thickness (the first fin) and one gap (the last), above the fin tips
    y_top_dims = y_tip - OFFSET * 0.8
    svg.hdim(X(0), X(t), y_top_dims, format_mm(t), y_tip, aside="left")
    last = (n - 2) * pitch + t
    svg.hdim(X(last), X(last + pitch_gap), y_top_dims, format_mm(gap_value), y_tip, aside="right")

    length = _optional_mm(design, "length_mm")
    cut = f"cut length along the flow L = {length} mm" if length else "flow length not given"
    notes = [f"{n} fins; {cut}"]
    material = _optional_text(design, "material")
    made = [f"material {material}"] if material else ["material not given"]
    for key in ("process", "finish"):
        value = _optional_text(design, key)
        if value:
            made.append(f"{key} {value}")
    notes.append("; ".join(made))
    notes.append("Section across the fins, looking along the flow. Dimensions in mm.")
    y_note = y_bottom + OFFSET + FONT + 30
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
    except (KeyError, TypeError, ValueError):
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
