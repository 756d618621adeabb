"""DXF drawings: files ezdxf reads back and audits clean, with the model's geometry.

Everything is read back from the written file with ezdxf (an independent DXF reader): the
outline's area against the model's mass (optifin.model.cost), the dimensions ezdxf
measures against the design, the plan's circles against the model's pin count.
"""

from __future__ import annotations

import os

import ezdxf
import numpy as np
import pandas as pd
import pytest

from optifin.errors import ModelError
from optifin.library import load_library
from optifin.model.design import Designs
from optifin.model.geometry import pin_geometry
from optifin.report.cad import section_dxf, write_dxf
from optifin.report.outline import polygon_area, read_section

from .test_outline import COPPER, PINS, PLAIN, TAPERED, density, is_simple, model_mass


def outline_of(doc) -> np.ndarray:
    """Vertices of the one closed polyline on OUTLINE (asserting there is exactly one)."""
    polylines = doc.modelspace().query('LWPOLYLINE[layer=="OUTLINE"]')
    assert len(polylines) == 1
    assert len(doc.modelspace().query('*[layer=="OUTLINE"]')) == 1
    (polyline,) = polylines
    assert polyline.closed
    return np.array([(x, y) for x, y in polyline.vertices()], dtype=float)


def measurements(doc) -> list[float]:
    return [d.get_measurement() for d in doc.modelspace().query('DIMENSION[layer=="DIMENSIONS"]')]


def notes(doc) -> str:
    return "\n".join(t.dxf.text for t in doc.modelspace().query('TEXT[layer=="NOTES"]'))


def read_back(design, tmp_path, name="sink.dxf", **kwargs):
    path = write_dxf(design, tmp_path / name, **kwargs)
    assert path == tmp_path / name
    doc = ezdxf.readfile(path)
    auditor = doc.audit()
    assert not auditor.has_errors, [str(e) for e in auditor.errors]
    assert doc.header["$INSUNITS"] == 4  # millimetres
    return doc


@pytest.mark.parametrize("design", [PLAIN, TAPERED, COPPER], ids=["plain", "tapered", "copper"])
def test_cross_method_dxf_outline_area_gives_the_model_mass(design, tmp_path):
    """Cross-method: the file opens with ezdxf.readfile and audits without errors; its one
    closed OUTLINE polyline is simple, counter-clockwise, W x (t_b + H), and its shoelace
    area x L x ρ equals optifin.model.cost.mass_and_cost's mass to 1e-9."""
    doc = read_back(design, tmp_path, title="row 3")
    p = outline_of(doc)
    assert is_simple(p) and polygon_area(p, signed=True) > 0
    total = design["base_thickness_mm"] + design["fin_height_mm"]
    np.testing.assert_allclose(p.max(axis=0) - p.min(axis=0), [design["width_mm"], total])
    mass = polygon_area(p) * 1e-6 * design["length_mm"] * 1e-3 * density(design)
    assert mass == pytest.approx(model_mass(design), rel=1e-9)
    assert {"OUTLINE", "DIMENSIONS", "NOTES"} <= {layer.dxf.name for layer in doc.layers}


@pytest.mark.parametrize("design", [PLAIN, TAPERED, COPPER], ids=["plain", "tapered", "copper"])
def test_cross_method_dxf_dimensions_measure_the_design(design, tmp_path):
    """Cross-method: the dimensions, as ezdxf measures them from their points, are W,
    t_b, H, t_b + H, the fin thickness and the gap b = (W - N t)/(N - 1) (tapered: also
    the tip thickness); each is rendered (has its geometry block)."""
    doc = read_back(design, tmp_path)
    sec = read_section(design)
    got = sorted(measurements(doc))
    expected = [sec.width, sec.base, sec.height, sec.total_height, sec.t, sec.gap]
    if sec.tapered:
        expected.append(sec.t_tip)
    np.testing.assert_allclose(got, sorted(expected), rtol=1e-12)
    for dim in doc.modelspace().query("DIMENSION"):
        assert dim.get_geometry_block() is not None


def test_invariant_dxf_notes_carry_material_length_and_mass(tmp_path):
    """Invariant: the NOTES layer names the fin count, cut length, material, process, the
    mass when the row has one, the tapered fins' root and tip, and the title."""
    row = pd.Series({**TAPERED, "mass_kg": 0.1234, "finish": "anodised"})
    text = notes(read_back(row, tmp_path, title="knee"))
    for expected in (
        "12 fins; cut length along the flow L = 50 mm",
        "material al_6063_t5; process extrusion; finish anodised",
        "mass 0.1234 kg",
        "from 2 mm at the root to 0.8 mm at the tip",
        "optifin",
    ):
        assert expected in text
    title = [t.dxf.text for t in read_back(row, tmp_path).modelspace().query("TEXT")]
    assert "knee" not in title  # a title only when asked


def test_invariant_si_design_writes_the_same_drawing(tmp_path):
    """Invariant: a design given with the SI names [m] gives the same outline."""
    si = {
        "fin_count": 20,
        "fin_thickness": 1e-3,
        "fin_height": 25e-3,
        "base_thickness": 4e-3,
        "width": 50e-3,
        "length": 50e-3,
        "material": "al_6063_t5",
    }
    a = outline_of(read_back(si, tmp_path, "si.dxf"))
    b = outline_of(read_back(PLAIN, tmp_path, "mm.dxf"))
    np.testing.assert_allclose(a, b, rtol=1e-12)


@pytest.mark.parametrize(
    "design",
    [PINS, {**PINS, "pin_layout": "inline", "pin_pitch_longitudinal_mm": 6.0}],
    ids=["staggered", "inline"],
)
def test_cross_method_dxf_pin_plan_and_section_give_the_model_count_and_mass(design, tmp_path):
    """Cross-method: the plan's circles number pin_geometry's count, all of diameter D;
    ρ (plan area x t_b + Σ π r² H), t_b and H read off the section polyline, equals
    mass_and_cost's mass to 1e-9; the section is the row through the first circles'
    centres (area W t_b + n_row D H); the pitches and diameter are dimensioned."""
    doc = read_back(design, tmp_path)
    msp = doc.modelspace()
    circles = msp.query('CIRCLE[layer=="PLAN"]')
    library = load_library()
    pg = pin_geometry(Designs.from_columns({k: [v] for k, v in design.items()}, library))
    assert len(circles) == int(pg["count"][0])
    radii = np.array([c.dxf.radius for c in circles])
    np.testing.assert_allclose(radii, design["pin_diameter_mm"] / 2, rtol=1e-15)
    (plan,) = msp.query('LWPOLYLINE[layer=="PLAN"]')
    assert plan.closed
    plan_area = polygon_area(np.array([(x, y) for x, y in plan.vertices()]))
    section = outline_of(doc)
    assert is_simple(section) and polygon_area(section, signed=True) > 0
    tb = section[section[:, 1] > 0, 1].min()
    h = section[:, 1].max() - tb
    volume = plan_area * tb + np.sum(np.pi * radii**2) * h
    assert volume * 1e-9 * density(design) == pytest.approx(model_mass(design), rel=1e-9)
    # the first row: the circles at the top of the plan (the leading edge is drawn on top)
    centres = np.array([(c.dxf.center.x, c.dxf.center.y) for c in circles])
    first_row = np.isclose(centres[:, 1], centres[:, 1].max())
    w = section[:, 0].max()
    d = 2 * radii[0]
    assert polygon_area(section) == pytest.approx(w * tb + first_row.sum() * d * h, rel=1e-12)
    got = measurements(doc)
    for value in (
        design["pin_diameter_mm"],
        design["pin_pitch_transverse_mm"],
        design["pin_pitch_longitudinal_mm"],
        design["pin_pitch_transverse_mm"] - design["pin_diameter_mm"],
        design["width_mm"],
        design["length_mm"],
    ):
        assert any(np.isclose(g, value, rtol=1e-12) for g in got), value
    assert f"{len(circles)} pins" in notes(doc)


def test_invariant_failed_writes_leave_the_old_file_and_no_temporary(tmp_path, monkeypatch):
    """Invariant: a design that cannot be drawn, or a failure while moving the file into
    place, leaves an existing drawing byte for byte and no temporary file behind."""
    path = write_dxf(PLAIN, tmp_path / "sink.dxf")
    before = path.read_bytes()
    with pytest.raises(ModelError):
        write_dxf({**PLAIN, "fin_count": 60}, path)

    def failing_replace(src, dst):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", failing_replace)
    with pytest.raises(OSError, match="disk full"):
        write_dxf(TAPERED, path)
    assert path.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["sink.dxf"]


def test_invariant_section_dxf_is_an_in_memory_document():
    """Invariant: section_dxf builds the document without touching the disk; it audits
    clean in memory as well."""
    doc = section_dxf(TAPERED)
    assert not doc.audit().has_errors
    assert len(doc.modelspace().query('LWPOLYLINE[layer=="OUTLINE"]')) == 1
