"""Cross-section drawings as DXF (an open CAD exchange format), dimensioned, in mm.

One drawing per design, ready to send to a vendor: the section outline of
:func:`optifin.report.outline.section_outline` as one closed polyline on layer ``OUTLINE``
(hatched on ``HATCH``), linear dimensions on ``DIMENSIONS`` (rendered, so that any reader
shows them), and a block of notes on ``NOTES``. A pin-fin design also gets its plan view on
``PLAN`` beside the section (the base rectangle and one circle per pin, the section line
A-A on ``CENTRE``). Drawing units are millimetres ($INSUNITS = 4), drawn 1:1.

The document is built with ezdxf in memory; :func:`write_dxf` writes it to a temporary
file beside the target and moves it into place, so a failure never leaves half a file.
"""

from __future__ import annotations

import datetime
import io
import math
import os
import uuid
from collections.abc import Mapping
from pathlib import Path

import ezdxf
import numpy as np
from ezdxf import units

from optifin.report.drawing import format_mm, length_text, material_notes
from optifin.report.outline import (
    Section,
    pin_plan,
    pin_row_section,
    read_section,
    section_outline,
)

__all__ = ["LAYERS", "section_dxf", "write_dxf"]

#: Layer name -> ACI colour.
LAYERS = {
    "OUTLINE": 7,
    "HATCH": 8,
    "DIMENSIONS": 5,
    "NOTES": 7,
    "PLAN": 7,
    "CENTRE": 1,
}
TEXT = 2.5  #: dimension and note text height [mm] (ISO 3098 series, common practice)
TITLE = 3.5  #: title text height [mm]
OFF = 8.0  #: from the part to the first dimension line [mm]
TIER = 7.0  #: between rows of dimensions [mm]
SHORT = 4.8 * TEXT  #: a dimension shorter than this has its value beside it [mm]
STYLE = "OPTIFIN"
DIAMETER_STYLE = "OPTIFIN_DIAMETER"


def _setup(doc) -> None:
    doc.units = units.MM  # $INSUNITS = 4
    doc.header["$MEASUREMENT"] = 1  # metric
    doc.header["$LUNITS"] = 2  # decimal
    for name, colour in LAYERS.items():
        attribs = {"color": colour}
        if name == "CENTRE":
            attribs["linetype"] = "CENTER"
        doc.layers.add(name, **attribs)
    common = {
        "dimtxt": TEXT,
        "dimasz": TEXT,
        "dimexe": 1.25,  # extension beyond the dimension line
        "dimexo": 0.625,  # gap between the part and the extension line
        "dimgap": 0.625,
        "dimdec": 2,
        "dimzin": 8,  # no trailing zeros: 1.5, 50
        "dimtad": 1,  # text above the dimension line
        "dimlfac": 1.0,
        "dimtxsty": "Standard",
        "dimblk": "",  # closed filled arrows
        "dimtih": 0,
        "dimtoh": 0,
        "dimdsep": ord("."),
        "dimtmove": 2,  # text moved freely, no leader
        "dimclrd": 5,
        "dimclre": 5,
        "dimclrt": 5,
    }
    doc.dimstyles.new(STYLE, dxfattribs=common)
    doc.dimstyles.new(DIAMETER_STYLE, dxfattribs={**common, "dimtmove": 1, "dimcen": 0.0})


class _Sheet:
    """Adds entities to the modelspace on their layers."""

    def __init__(self, doc):
        self.msp = doc.modelspace()

    def outline(self, vertices: np.ndarray) -> None:
        pts = [(float(x), float(y)) for x, y in vertices]
        self.msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": "OUTLINE"})
        hatch = self.msp.add_hatch(dxfattribs={"layer": "HATCH", "color": 256})
        hatch.set_pattern_fill("ANSI31", scale=0.5)
        hatch.paths.add_polyline_path(pts, is_closed=True)

    def linear(self, p1, p2, base, angle=0.0, aside="right") -> None:
        """A linear dimension from p1 to p2 (horizontal: angle 0; vertical: 90), rendered.

        The dimension line passes through ``base``. A dimension too short to hold its
        value between the arrows has the value beside it: past the end on the ``aside``
        ("left"/"right") of a horizontal one, beside the line of a vertical one ("left"
        or "right" of it).
        """
        horizontal = angle == 0.0
        axis = 0 if horizontal else 1
        length = abs(p2[axis] - p1[axis])
        text_at = None
        if length < SHORT:
            sign = -1.0 if aside == "left" else 1.0
            if horizontal:
                edge = min(p1[0], p2[0]) if aside == "left" else max(p1[0], p2[0])
                text_at = (edge + sign * 2.6 * TEXT, base[1] + 0.8 * TEXT)
            else:
                text_at = (base[0] + sign * 1.2 * TEXT, 0.5 * (p1[1] + p2[1]))
        dim = self.msp.add_linear_dim(
            base=base,
            p1=p1,
            p2=p2,
            angle=angle,
            location=text_at,
            dimstyle=STYLE,
            dxfattribs={"layer": "DIMENSIONS"},
        )
        dim.render()

    def hdim(self, x1, x2, y_from, y, aside="right") -> None:
        """Horizontal dimension of x1..x2 (both points at height y_from) on the line y."""
        self.linear((x1, y_from), (x2, y_from), (x1, y), 0.0, aside)

    def vdim(self, y1, y2, x_from, x) -> None:
        """Vertical dimension of y1..y2 (both points at x_from) on the line x."""
        aside = "right" if x > x_from else "left"
        self.linear((x_from, y1), (x_from, y2), (x, y1), 90.0, aside)

    def text(self, x, y, text, height=TEXT, layer="NOTES") -> None:
        self.msp.add_text(text, height=height, dxfattribs={"layer": layer}).set_placement((x, y))


def _section_dims(sheet: _Sheet, vertices: np.ndarray, sec: Section) -> None:
    """Width, base thickness, fin height and total height of any section."""
    w, tb, total = sec.width, sec.base, sec.total_height
    top = vertices[vertices[:, 1] == total]
    sheet.hdim(0.0, w, 0.0, -OFF)
    sheet.vdim(0.0, tb, 0.0, -OFF)
    sheet.linear((0.0, tb), (float(top[:, 0].min()), total), (-OFF, 0.0), 90.0, "left")
    sheet.linear((w, 0.0), (float(top[:, 0].max()), total), (w + OFF, 0.0), 90.0, "right")


def section_dxf(design: Mapping, *, title: str = ""):
    """The DXF document (ezdxf ``Drawing``) of a design's section, and plan for pins.

    Parameters
    ----------
    design
        A result row or mapping, as for :func:`optifin.report.outline.section_outline`;
        ``length_mm``, ``material``, ``process``, ``finish``, ``base_material``,
        ``insert_*`` and ``mass_kg`` go into the notes when present.
    title
        First line of the notes.

    Returns
    -------
    ezdxf.document.Drawing
        R2010 document, units mm: the section from (0, 0) to (W, t_b + H) (base bottom
        on y = 0); for pins the plan view to its right, the leading edge at the top.
    """
    sec = read_section(design)
    doc = ezdxf.new("R2010", setup=True)
    _setup(doc)
    sheet = _Sheet(doc)
    vertices = pin_row_section(design, 0) if sec.pins else section_outline(design)
    sheet.outline(vertices)
    _section_dims(sheet, vertices, sec)
    w, tb, total = sec.width, sec.base, sec.total_height
    y_tier1 = total + OFF
    if not sec.pins:
        t, n = sec.t, sec.n
        last = (n - 2) * sec.pitch + t  # right root face of the last but one fin
        inset = (t - sec.t_tip) / 2
        sheet.hdim(inset, t - inset, total, y_tier1, aside="left")  # tip thickness
        if sec.tapered:
            y_tier2 = y_tier1 + TIER  # root thickness and root gap, from the roots
            sheet.hdim(0.0, t, tb, y_tier2, aside="left")
            sheet.hdim(last, w - t, tb, y_tier2, aside="right")
        else:
            sheet.hdim(last, w - t, total, y_tier1, aside="right")
        sheet.text(0.0, -OFF - 2.5 * TEXT, "SECTION (looking along the flow)")
        y_notes = -OFF - 6 * TEXT
    else:
        plan = pin_plan(design)
        d = sec.t
        row0 = plan.centres[plan.row == 0, 0]
        sheet.hdim(row0[0] - d / 2, row0[0] + d / 2, total, y_tier1, aside="left")
        if row0.size >= 2:  # clear gap between the last two pins of the row
            sheet.hdim(row0[-2] + d / 2, row0[-1] - d / 2, total, y_tier1, aside="right")
        x0 = w + 2 * OFF + 6 * TEXT
        y_low = _plan(sheet, plan, x0)
        y_label = y_low - 2.5 * TEXT
        sheet.text(0.0, y_label, "SECTION A-A (through the first row of pins)")
        sheet.text(x0, y_label, "PLAN (from above the pins)")
        y_notes = y_label - 3.5 * TEXT
    _notes(sheet, design, sec, title, y_notes)
    return doc


def _plan(sheet: _Sheet, plan, x0: float) -> float:
    """The plan view at x0: base rectangle, pins, section line, size and pitches.

    Returns the height of the lowest dimension line, for the labels below.
    """
    w, length, r = plan.width, plan.length, plan.diameter / 2

    def P(x, y):  # plan position (x across, y along the flow) -> sheet, leading edge on top
        return (x0 + float(x), length - float(y))

    corners = [P(0, 0), P(w, 0), P(w, length), P(0, length)]
    sheet.msp.add_lwpolyline(corners, close=True, dxfattribs={"layer": "PLAN"})
    for x, y in plan.centres:
        sheet.msp.add_circle(P(x, y), r, dxfattribs={"layer": "PLAN"})
    row0 = plan.centres[plan.row == 0]
    # the section line A-A through the first row, lettered below its ends
    y_a = P(0, row0[0, 1])[1]
    sheet.msp.add_line((x0 - 4.0, y_a), (x0 + w + 4.0, y_a), dxfattribs={"layer": "CENTRE"})
    sheet.text(x0 - 4.0 - TITLE, y_a - 1.4 * TITLE, "A", height=TITLE)
    sheet.text(x0 + w + 4.0, y_a - 1.4 * TITLE, "A", height=TITLE)
    # transverse pitch above the first row; the diameter of its last pin, up to the right
    if row0.shape[0] >= 2:
        a, b = P(*row0[0]), P(*row0[1])
        sheet.linear(a, b, (a[0], length + OFF), 0.0, "right")
    cx, cy = P(*row0[-1])
    reach = (r + 3.0 * TEXT) / math.sqrt(2.0)
    dim = sheet.msp.add_diameter_dim(
        center=(cx, cy),
        radius=r,
        location=(cx + reach, cy + reach),
        dimstyle=DIAMETER_STYLE,
        dxfattribs={"layer": "DIMENSIONS"},
    )
    dim.render()
    # longitudinal pitch on the left and the stagger below, between the last two rows
    y_low = -OFF
    if plan.rows >= 2:
        last = plan.centres[plan.row == plan.rows - 1]
        before = plan.centres[plan.row == plan.rows - 2]
        a, b = P(*before[0]), P(*last[0])
        sheet.linear(a, b, (x0 - OFF, a[1]), 90.0, "left")
        if plan.staggered:
            sheet.linear(a, b, (a[0], y_low), 0.0, "right")
            y_low -= TIER
    sheet.hdim(x0, x0 + w, 0.0, y_low)
    sheet.vdim(0.0, length, x0 + w, x0 + w + OFF)
    # flow direction, right of the length dimension
    xf = x0 + w + 2 * OFF + 2 * TEXT
    y_hi, y_lo = 0.65 * length, 0.35 * length
    sheet.msp.add_line((xf, y_hi), (xf, y_lo + TEXT), dxfattribs={"layer": "NOTES"})
    sheet.msp.add_solid(
        [(xf - 0.4 * TEXT, y_lo + TEXT), (xf + 0.4 * TEXT, y_lo + TEXT), (xf, y_lo)],
        dxfattribs={"layer": "NOTES"},
    )
    sheet.text(xf + TEXT, 0.5 * length, "FLOW")
    return y_low


def _notes(sheet: _Sheet, design: Mapping, sec: Section, title: str, y: float) -> None:
    length = length_text(design)
    lines = []
    if sec.pins:
        plan = pin_plan(design)
        layout = "staggered" if plan.staggered else "in-line"
        lines.append(
            f"{plan.count} pins, diameter {format_mm(sec.t)} mm, height {format_mm(sec.height)}"
            f" mm, in {plan.rows} rows, {layout}; pitch {format_mm(plan.pitch_transverse)} mm"
            f" across, {format_mm(plan.pitch_longitudinal)} mm along the flow"
        )
        lines.append(f"base {format_mm(sec.width)} x {length} x {format_mm(sec.base)} mm")
    else:
        cut = f"cut length along the flow L = {length} mm" if length else "flow length not given"
        lines.append(f"{sec.n} fins; {cut}")
        if sec.tapered:
            lines.append(
                f"fins taper symmetrically from {format_mm(sec.t)} mm at the root to "
                f"{format_mm(sec.t_tip)} mm at the tip"
            )
    lines += material_notes(design)
    try:
        mass = float(design["mass_kg"])
    except (KeyError, IndexError, TypeError, ValueError):
        mass = math.nan
    if math.isfinite(mass):
        lines.append(f"mass {mass:.4g} kg")
    lines.append("Dimensions in mm. Drawn 1:1.")
    lines.append(f"optifin {datetime.date.today().isoformat()}")
    if title:
        sheet.text(0.0, y, title, height=TITLE)
        y -= 2 * TITLE
    for line in lines:
        sheet.text(0.0, y, line)
        y -= 2 * TEXT


def write_dxf(design: Mapping, path, *, title: str = "") -> Path:
    """Write the DXF drawing of a design to ``path`` (atomically) and return the path.

    The document of :func:`section_dxf` is serialised in memory, written to a temporary
    file in the target's folder and moved over ``path`` with :func:`os.replace`; on any
    failure the temporary file is removed and ``path`` is left as it was.
    """
    path = Path(path)
    doc = section_dxf(design, title=title)
    stream = io.StringIO()
    doc.write(stream)
    data = stream.getvalue().encode(doc.output_encoding, errors="dxfreplace")
    tmp = path.with_name(f".{path.name}.{uuid.uuid4().hex}.tmp")
    try:
        with open(tmp, "xb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return path


def write_marked_dxf(front, marks: Mapping[str, int], folder) -> list[Path]:
    """One DXF per marked design of a front (``design_<label>.dxf``); returns the paths.

    ``marks`` maps a label to a row position of ``front`` as
    :func:`~optifin.report.marks.marked_designs` gives. Designs that cannot be drawn (NaN
    geometry) are skipped.
    """
    from optifin.errors import ModelError
    from optifin.report.drawing import drawing_name

    folder = Path(folder)
    paths = []
    for label, row in marks.items():
        path = folder / drawing_name(label).replace(".svg", ".dxf")
        try:
            paths.append(
                write_dxf(front.iloc[int(row)], path, title=f"{label} (front row {int(row)})")
            )
        except ModelError:
            continue
    return paths
