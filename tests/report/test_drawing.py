"""Cross-section drawings: valid SVG, the dimension values, the geometry drawn to scale."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np
import pytest

from optifin.errors import ModelError
from optifin.report.drawing import cross_section_svg, format_mm, write_marked_drawings

from ._data import forced_condition, front_table

SVG = "{http://www.w3.org/2000/svg}"
DESIGN = {
    "fin_count": 20,
    "fin_thickness_mm": 1.0,
    "fin_height_mm": 25.0,
    "base_thickness_mm": 4.0,
    "width_mm": 50.0,
    "length_mm": 50.0,
    "material": "al_6063_t5",
    "process": "extrusion",
}


def texts(svg: str) -> list[str]:
    root = ET.fromstring(svg.encode())
    return [t.text for t in root.iter(f"{SVG}text")]


def outline(svg: str) -> np.ndarray:
    root = ET.fromstring(svg.encode())
    part = [p for p in root.iter(f"{SVG}polygon") if p.get("class") == "part"]
    assert len(part) == 1
    return np.array([[float(v) for v in pair.split(",")] for pair in part[0].get("points").split()])


def test_invariant_svg_parses_and_carries_every_dimension():
    """Invariant: the SVG is well-formed XML, 600 px wide, and shows W, t_b + H, t_b, H,
    t and the gap b = (W - N t)/(N - 1) = (50 - 20)/19 = 1.58 mm (computed here)."""
    svg = cross_section_svg(DESIGN, title="knee <row 3> & co")
    root = ET.fromstring(svg.encode())
    assert root.tag == f"{SVG}svg" and root.get("width") == "600"
    values = texts(svg)
    gap = (50.0 - 20 * 1.0) / 19
    for expected in ("50", "29", "4", "25", "1", f"{gap:.2f}"):
        assert expected in values, expected
    assert "knee <row 3> & co" in values  # escaped in the file, intact once parsed
    note = " ".join(v for v in values if "fins" in v or "material" in v)
    assert "20 fins" in note and "L = 50 mm" in note and "al_6063_t5" in note


def test_cross_method_drawn_section_area_equals_the_geometry():
    """Cross-method: the shoelace area of the drawn outline, divided by the drawing scale
    squared, equals the section area W t_b + N t H; the outline has 4 N corners and the
    aspect ratio of the part W : (t_b + H)."""
    for design in (
        DESIGN,
        {**DESIGN, "fin_count": 2, "fin_thickness_mm": 3.0},
        {**DESIGN, "fin_count": 38, "fin_thickness_mm": 0.9, "width_mm": 100.0},
    ):
        p = outline(cross_section_svg(design))
        n, t, h = design["fin_count"], design["fin_thickness_mm"], design["fin_height_mm"]
        w, tb = design["width_mm"], design["base_thickness_mm"]
        assert len(p) == 4 * n
        x, y = p[:, 0], p[:, 1]
        scale = (x.max() - x.min()) / w
        assert (y.max() - y.min()) / scale == pytest.approx(tb + h, rel=1e-3)
        area = 0.5 * abs(np.dot(x, np.roll(y, 1)) - np.dot(y, np.roll(x, 1)))
        assert area / scale**2 == pytest.approx(w * tb + n * t * h, rel=2e-3)
        assert x.max() - x.min() <= 600


def test_invariant_a_result_row_draws_with_its_own_gap():
    """Invariant: a row of the model's table (a Series with a categorical material) draws,
    and the gap written is the table's fin_gap_mm."""
    front = front_table(forced_condition())
    row = front.iloc[4]
    svg = cross_section_svg(row)
    assert format_mm(row["fin_gap_mm"]) in texts(svg)
    assert "material cu_c11000; process skived; finish bare" in texts(svg)


def test_invariant_impossible_sections_are_refused():
    """Invariant: fins that do not fit, one fin, or a missing column raise ModelError with
    the offending value."""
    with pytest.raises(ModelError, match="30 fins of 2 mm"):
        cross_section_svg({**DESIGN, "fin_count": 30, "fin_thickness_mm": 2.0})
    with pytest.raises(ModelError, match="at least 2, got 1"):
        cross_section_svg({**DESIGN, "fin_count": 1})
    with pytest.raises(ModelError, match="'base_thickness_mm'"):
        cross_section_svg({k: v for k, v in DESIGN.items() if k != "base_thickness_mm"})


def test_invariant_format_mm():
    """Invariant: at most two decimals, no trailing zeros."""
    assert [format_mm(v) for v in (100.0, 0.9, 1.25, 3.3333, 25.0000001)] == [
        "100",
        "0.9",
        "1.25",
        "3.33",
        "25",
    ]


def test_invariant_one_drawing_per_mark(tmp_path):
    """Invariant: write_marked_drawings writes design_<label>.svg for each mark, each the
    drawing of its own row."""
    front = front_table(forced_condition())
    marks = {"knee": 2, "best_mass_kg": 0, "best_thermal_resistance_K_per_W": 4}
    paths = write_marked_drawings(front, marks, tmp_path)
    assert [p.name for p in paths] == [
        "design_knee.svg",
        "design_best_mass_kg.svg",
        "design_best_thermal_resistance_K_per_W.svg",
    ]
    for path, row in zip(paths, marks.values(), strict=True):
        values = texts(path.read_text(encoding="utf-8"))
        assert (
            f"{int(front.iloc[row]['fin_count'])} fins; cut length along the flow L = 50 mm"
            in values
        )
