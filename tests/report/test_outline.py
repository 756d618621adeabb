"""Section outlines and pin plans: simple counter-clockwise polygons of the model's geometry.

The areas are checked against the model's own mass (optifin.model.cost, a separate code
path from the polygon), the pin plans against the model's pin counts (the floor formula of
optifin.physics.pin_fins.pin_array_counts, against the enumeration here), and the SVG
drawings against the outline.
"""

from __future__ import annotations

import itertools
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from optifin.errors import ModelError
from optifin.library import load_library
from optifin.model.cost import mass_and_cost
from optifin.model.design import Designs
from optifin.model.geometry import derive, pin_geometry
from optifin.report.drawing import cross_section_svg, format_mm
from optifin.report.outline import (
    is_pin_design,
    pin_plan,
    pin_row_section,
    polygon_area,
    read_section,
    section_outline,
)

SVG = "{http://www.w3.org/2000/svg}"
PLAIN = {
    "fin_count": 20,
    "fin_thickness_mm": 1.0,
    "fin_height_mm": 25.0,
    "base_thickness_mm": 4.0,
    "width_mm": 50.0,
    "length_mm": 50.0,
    "material": "al_6063_t5",
    "process": "extrusion",
}
TAPERED = {**PLAIN, "fin_count": 12, "fin_thickness_mm": 2.0, "fin_tip_thickness_mm": 0.8}
COPPER = {
    **PLAIN,
    "fin_count": 31,
    "fin_thickness_mm": 0.6,
    "width_mm": 62.0,
    "material": "cu_c11000",
    "process": "skived",
}
PINS = {
    "fin_type": "pin",
    "fin_count": 2,  # ignored for pins
    "fin_thickness_mm": 1.0,
    "pin_diameter_mm": 3.0,
    "pin_pitch_transverse_mm": 6.0,
    "pin_pitch_longitudinal_mm": 5.2,
    "pin_layout": "staggered",
    "fin_height_mm": 20.0,
    "base_thickness_mm": 4.0,
    "width_mm": 50.0,
    "length_mm": 40.0,
    "material": "al_6061_t6",
    "process": "forging",
}


def model_mass(design: dict) -> float:
    """Mass [kg] of one design by optifin.model (Designs, derive, mass_and_cost)."""
    library = load_library()
    designs = Designs.from_columns({k: [v] for k, v in design.items()}, library)
    geometry = derive(designs, library)
    return float(mass_and_cost(designs, geometry, library, 1000)["mass"][0])


def density(design: dict) -> float:
    library = load_library()
    return float(library.array("density")[library.material_code(design["material"])])


def _orientation(a, b, c) -> float:
    return (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])


def _on_segment(a, b, p) -> bool:
    return min(a[0], b[0]) <= p[0] <= max(a[0], b[0]) and min(a[1], b[1]) <= p[1] <= max(a[1], b[1])


def segments_touch(a, b, c, d) -> bool:
    """True when the closed segments ab and cd share a point (exact arithmetic on floats)."""
    o1, o2 = _orientation(a, b, c), _orientation(a, b, d)
    o3, o4 = _orientation(c, d, a), _orientation(c, d, b)
    if o1 * o2 < 0 and o3 * o4 < 0:
        return True
    return (
        (o1 == 0 and _on_segment(a, b, c))
        or (o2 == 0 and _on_segment(a, b, d))
        or (o3 == 0 and _on_segment(c, d, a))
        or (o4 == 0 and _on_segment(c, d, b))
    )


def is_simple(vertices: np.ndarray) -> bool:
    """O(n²) test: non-adjacent edges never touch, adjacent ones meet only at their vertex."""
    p = [tuple(v) for v in vertices]
    n = len(p)
    edges = [(p[i], p[(i + 1) % n]) for i in range(n)]
    for i, j in itertools.combinations(range(n), 2):
        adjacent = j == i + 1 or (i == 0 and j == n - 1)
        (a, b), (c, d) = edges[i], edges[j]
        if adjacent:  # sharing one vertex; they must not fold back over each other
            shared = b if j == i + 1 else a
            other_i = a if j == i + 1 else b
            other_j = d if j == i + 1 else c
            if _orientation(other_i, shared, other_j) == 0 and _on_segment(
                other_i, other_j, shared
            ):
                continue  # collinear, continuing: allowed (though the outline has none)
            if _orientation(other_i, shared, other_j) == 0:
                return False  # folds back
            continue
        if segments_touch(a, b, c, d):
            return False
    return True


def test_invariant_segment_test_catches_a_bow_tie_and_a_touching_notch():
    """Invariant (of the test helper): a bow tie and a polygon whose notch touches its own
    edge are not simple; a unit square and an L are."""
    assert is_simple(np.array([[0, 0], [1, 0], [1, 1], [0, 1]], float))
    assert is_simple(np.array([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]], float))
    assert not is_simple(np.array([[0, 0], [1, 1], [1, 0], [0, 1]], float))
    assert not is_simple(np.array([[0, 0], [2, 0], [2, 2], [1, 0], [0, 2]], float))


def test_invariant_hand_drawn_three_fin_outline():
    """Invariant: 3 fins of 2 mm on 10 mm leave gaps b = (10 - 6)/2 = 2 mm (worked by hand);
    the outline starts at (0, 0), runs counter-clockwise and has 4 N = 12 corners."""
    design = {
        "fin_count": 3,
        "fin_thickness_mm": 2.0,
        "fin_height_mm": 5.0,
        "base_thickness_mm": 1.0,
        "width_mm": 10.0,
    }
    expected = [
        (0, 0),
        (10, 0),
        (10, 6),
        (8, 6),
        (8, 1),
        (6, 1),
        (6, 6),
        (4, 6),
        (4, 1),
        (2, 1),
        (2, 6),
        (0, 6),
    ]
    np.testing.assert_array_equal(section_outline(design), np.array(expected, float))
    assert polygon_area(section_outline(design), signed=True) == pytest.approx(10 + 3 * 2 * 5)


@pytest.mark.parametrize("design", [PLAIN, TAPERED, COPPER], ids=["plain", "tapered", "copper"])
def test_invariant_outline_is_simple_ccw_and_fills_its_envelope(design):
    """Invariant: one simple polygon, counter-clockwise, bounding box W x (t_b + H), no
    repeated first vertex; 4 N corners, or 4 N + 2 for tapered fins (the side edges break
    where the slanted outer fin faces start)."""
    p = section_outline(design)
    assert is_simple(p)
    assert polygon_area(p, signed=True) > 0
    assert tuple(p[0]) == (0.0, 0.0) and not np.array_equal(p[0], p[-1])
    w, total = design["width_mm"], design["base_thickness_mm"] + design["fin_height_mm"]
    np.testing.assert_allclose(p.min(axis=0), [0.0, 0.0], atol=0)
    np.testing.assert_allclose(p.max(axis=0), [w, total], rtol=1e-15)
    tapered = "fin_tip_thickness_mm" in design
    assert len(p) == 4 * design["fin_count"] + (2 if tapered else 0)


@pytest.mark.parametrize("design", [PLAIN, TAPERED, COPPER], ids=["plain", "tapered", "copper"])
def test_cross_method_outline_area_times_length_and_density_is_the_model_mass(design):
    """Cross-method: shoelace area x L x ρ of the outline equals the mass of
    optifin.model.cost.mass_and_cost (W L t_b + N (t + t_tip)/2 H L, times ρ) to 1e-9."""
    area_mm2 = polygon_area(section_outline(design))
    mass = area_mm2 * 1e-6 * design["length_mm"] * 1e-3 * density(design)
    assert mass == pytest.approx(model_mass(design), rel=1e-9)


def test_invariant_si_names_give_the_same_outline():
    """Invariant: the SI names [m] of Designs and the _mm columns of a result row draw the
    same outline (pandas Series rows included)."""
    import pandas as pd

    si = {
        "fin_count": 12,
        "fin_thickness": 2e-3,
        "fin_tip_thickness": 0.8e-3,
        "fin_height": 25e-3,
        "base_thickness": 4e-3,
        "width": 50e-3,
        "length": 50e-3,
    }
    np.testing.assert_allclose(section_outline(si), section_outline(TAPERED), rtol=1e-12)
    np.testing.assert_array_equal(section_outline(pd.Series(TAPERED)), section_outline(TAPERED))
    # a NaN tip thickness (table rows of untapered designs) means untapered
    assert len(section_outline({**PLAIN, "fin_tip_thickness_mm": float("nan")})) == 80


def test_invariant_impossible_outlines_are_refused():
    """Invariant: a tip thicker than the root, fins that do not fit, overlapping pins and
    a pin design without its length raise ModelError naming the values."""
    with pytest.raises(ModelError, match="tip"):
        section_outline({**PLAIN, "fin_tip_thickness_mm": 1.5})
    with pytest.raises(ModelError, match="do not fit across"):
        section_outline({**PLAIN, "fin_count": 60})
    with pytest.raises(ModelError, match="must exceed the pin diameter"):
        pin_plan({**PINS, "pin_pitch_transverse_mm": 3.0})
    with pytest.raises(ModelError, match="overlap at a longitudinal pitch"):
        pin_plan({**PINS, "pin_layout": "inline", "pin_pitch_longitudinal_mm": 2.5})
    with pytest.raises(ModelError, match="length"):
        pin_plan({k: v for k, v in PINS.items() if k != "length_mm"})
    with pytest.raises(ModelError, match="fin_type"):
        is_pin_design({"fin_type": "wavy"})


PIN_CASES = [
    PINS,
    {**PINS, "pin_layout": "inline", "pin_pitch_longitudinal_mm": 6.0},
    {**PINS, "pin_layout": 1, "width_mm": 51.0, "length_mm": 39.4},  # odd rows n_even - 1
    {**PINS, "pin_layout": 0, "width_mm": 3.0 + 8 * 6.0, "length_mm": 3.0 + 7 * 5.2},  # exact
    {**PINS, "pin_diameter_mm": 2.5, "pin_pitch_transverse_mm": 4.1, "width_mm": 37.7},
]


@pytest.mark.parametrize("design", PIN_CASES)
def test_cross_method_pin_plan_count_equals_the_model_pin_count(design):
    """Cross-method: the pins enumerated row by row here equal the count and rows of
    optifin.model.geometry.pin_geometry (the floor formula of pin_array_counts), exact
    fits included; every pin lies on the base and no two pins overlap."""
    plan = pin_plan(design)
    library = load_library()
    pg = pin_geometry(Designs.from_columns({k: [v] for k, v in design.items()}, library))
    assert plan.count == int(pg["count"][0]) and plan.rows == int(pg["rows"][0])
    d = plan.diameter
    x, y = plan.centres[:, 0], plan.centres[:, 1]
    slack = 1e-9 * design["width_mm"]
    assert np.all(x - d / 2 >= -slack) and np.all(x + d / 2 <= design["width_mm"] + slack)
    assert np.all(y - d / 2 >= -slack) and np.all(y + d / 2 <= design["length_mm"] + slack)
    gaps = np.hypot(x[:, None] - x[None, :], y[:, None] - y[None, :])
    assert np.min(gaps[~np.eye(plan.count, dtype=bool)]) > d


@pytest.mark.parametrize("design", PIN_CASES[:3])
def test_cross_method_pin_mass_from_plan_and_section_is_the_model_mass(design):
    """Cross-method: ρ (W L t_b + count π D²/4 H), with W, t_b and H read off the row
    section and the count and D off the plan, equals mass_and_cost's mass to 1e-9; the
    row section has area W t_b + n_row D H and is a simple counter-clockwise polygon."""
    plan = pin_plan(design)
    section = pin_row_section(design, 0)
    assert is_simple(section) and polygon_area(section, signed=True) > 0
    w = section[:, 0].max()
    tb = section[section[:, 1] > 0, 1].min()
    h = section[:, 1].max() - tb
    n_row = int(np.sum(plan.row == 0))
    assert polygon_area(section) == pytest.approx(w * tb + n_row * plan.diameter * h, rel=1e-12)
    volume_mm3 = w * plan.length * tb + plan.count * np.pi / 4 * plan.diameter**2 * h
    assert volume_mm3 * 1e-9 * density(design) == pytest.approx(model_mass(design), rel=1e-9)
    assert np.array_equal(section_outline(design), section)
    # the odd row of a staggered array is a different section, equally simple
    odd = pin_row_section(design, 1)
    assert is_simple(odd) and polygon_area(odd) == pytest.approx(
        w * tb + np.sum(plan.row == 1) * plan.diameter * h, rel=1e-12
    )


def svg_part(svg: str) -> np.ndarray:
    root = ET.fromstring(svg.encode())
    parts = [p for p in root.iter(f"{SVG}polygon") if p.get("class") == "part"]
    assert len(parts) == 1
    return np.array(
        [[float(v) for v in pair.split(",")] for pair in parts[0].get("points").split()]
    )


@pytest.mark.parametrize("design", [PLAIN, TAPERED, PINS], ids=["plain", "tapered", "pins"])
def test_cross_method_svg_draws_the_outline(design):
    """Cross-method: the SVG (well-formed XML, one outline polygon) is the outline of
    section_outline, scaled and flipped (y down); tapered fins are trapezoids (their tip
    corners inset by (t - t_tip)/2); a pin design adds one circle per pin of the plan."""
    svg = cross_section_svg(design, title="t")
    px = svg_part(svg)
    mm = section_outline(design)
    assert px.shape == mm.shape
    scale = (px[:, 0].max() - px[:, 0].min()) / design["width_mm"]
    rebuilt = np.column_stack([px[:, 0] - px[0, 0], px[0, 1] - px[:, 1]]) / scale
    np.testing.assert_allclose(rebuilt, mm, atol=0.02 / scale + 1e-9)
    root = ET.fromstring(svg.encode())
    circles = list(root.iter(f"{SVG}circle"))
    if is_pin_design(design):
        plan = pin_plan(design)
        assert len(circles) == plan.count
        radius = {round(float(c.get("r")), 2) for c in circles}
        assert radius == {round(plan.diameter / 2 * scale, 2)}
    else:
        assert circles == []
    if "fin_tip_thickness_mm" in design:
        sec = read_section(design)
        tips = np.sort(mm[mm[:, 1] == sec.total_height, 0]).reshape(-1, 2)
        np.testing.assert_allclose(tips[:, 1] - tips[:, 0], sec.t_tip, rtol=1e-12)
        assert tips[0, 0] == pytest.approx((sec.t - sec.t_tip) / 2)
        texts = [t.text for t in root.iter(f"{SVG}text")]
        for value in (sec.t_tip, sec.t, sec.gap):  # tip, root thickness and root gap
            assert format_mm(value) in texts
