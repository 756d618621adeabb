"""Valid problem files resolve into the right SI values.

Check values are unit definitions (1 ft = 0.3048 m and 1 in = 25.4 mm exactly, by the 1959
international yard and pound agreement; 0 degC = 273.15 K by the definition of the Celsius
scale) and the 1976 standard atmosphere as the fluids library implements it
(fluids.atmosphere.ATMOSPHERE_1976, an independent implementation of U.S. Standard
Atmosphere 1976).
"""

from __future__ import annotations

import json

import pytest
from fluids.atmosphere import ATMOSPHERE_1976

from optifin.errors import ConfigError
from optifin.problem import (
    load_problem,
    load_problem_text,
    problem_from_mapping,
    problem_hash,
)
from optifin.problem.spec import VARIABLE_KINDS, Problem

from ._data import DATA, VALID_FILES, read

FT = 0.3048  # m, exact
MINUTE = 60.0  # s


@pytest.mark.parametrize("path", VALID_FILES, ids=[p.name for p in VALID_FILES])
def test_every_fixture_loads(path):
    """Invariant: each valid fixture gives a Problem with every variable, in spec order."""
    problem = load_problem(path)
    assert isinstance(problem, Problem)
    assert tuple(v.name for v in problem.variables) == tuple(VARIABLE_KINDS)
    assert problem.source == str(path)
    json.dumps(problem.resolved)  # JSON-serialisable


def test_full_problem_si_values():
    """Published check values (unit definitions, see the module docstring) and cross-method
    (pressure at 1500 m against fluids' ATMOSPHERE_1976)."""
    p = load_problem(DATA / "forced_full.yaml")
    c = p.condition
    assert p.name == "power-module-forced"
    assert c.cooling == "forced"
    # 400 LFM = 400 ft/min = 400 * 0.3048 / 60 m/s = 2.032 m/s
    assert c.approach_velocity == pytest.approx(2.032, rel=1e-12)
    assert c.volumetric_flow is None
    assert c.ambient_temperature == pytest.approx(308.15, abs=1e-12)  # 35 degC
    assert c.pressure == pytest.approx(ATMOSPHERE_1976(1500.0).P, rel=1e-6)
    assert c.radiation is True and c.surroundings_temperature == pytest.approx(308.15)
    assert c.max_base_temperature == pytest.approx(368.15)  # 95 degC
    assert c.max_source_temperature == pytest.approx(383.15)  # 110 degC
    assert c.quantity == 5000
    assert (c.fin_tip, c.channel_heat_transfer, c.spreading, c.loss_coefficients) == (
        "adiabatic",
        "auto",
        "auto",
        "borda_carnot",
    )

    igbt, second = c.sources
    assert (igbt.name, second.name) == ("igbt", "source2")
    assert igbt.power == 60.0 and second.power == 20.0
    assert (igbt.size_x, igbt.size_y) == pytest.approx((0.040, 0.030))
    assert (igbt.x, igbt.y) == pytest.approx((0.050, 0.040))
    assert igbt.interface_resistance == pytest.approx(0.05)
    assert second.centred
    # 0.3 K cm^2/W over 20 mm x 20 mm = 0.3e-4 K m^2/W / 4e-4 m^2 = 0.075 K/W
    assert second.interface_resistance == pytest.approx(0.075, rel=1e-12)

    assert p.limits == pytest.approx(
        {
            "max_base_temperature": 368.15,
            "max_source_temperature": 383.15,
            "max_pressure_drop": 40.0,
            "max_fan_power": 2.0,
            "max_mass": 0.8,
            "max_cost": 25.0,
            "max_material_cost": 12.0,
        }
    )
    assert (p.envelope.max_width, p.envelope.max_length, p.envelope.max_height) == (
        pytest.approx((0.1, 0.08, 0.04))
    )

    count = p.variable("fin_count")
    assert (count.kind, count.low, count.high, count.step) == ("integer", 8, 40, None)
    t = p.variable("fin_thickness")
    assert (t.low, t.high, t.step) == pytest.approx((0.8e-3, 2.5e-3, 0.1e-3))
    assert len(t.grid()) == 18  # 0.8, 0.9, ..., 2.5 mm
    base = p.variable("base_thickness")
    assert base.step is None and not base.discrete
    width = p.variable("width")
    assert width.fixed and width.low == pytest.approx(0.1)
    assert p.variable("material").choices == ("al_6063_t5", "cu_c11000")
    assert p.variable("process").choices == ("extrusion", "skived")
    assert p.variable("finish").choices == ("bare",)
    assert {v.name for v in p.searched} == {
        "fin_count",
        "fin_thickness",
        "fin_height",
        "base_thickness",
        "length",
        "material",
        "process",
    }

    assert [(o.name, o.sense) for o in p.objectives] == [
        ("thermal_resistance", "minimise"),
        ("mass", "minimise"),
    ]  # "minimize" stored British
    assert (p.search.algorithm, p.search.population, p.search.evaluations, p.search.seed) == (
        "auto",
        100,
        20000,
        1,
    )
    # library overrides reach the library
    assert p.library.materials["cu_c11000"].price.si == 13.0
    assert p.library.processes["extrusion"].limit("min_gap") == pytest.approx(2e-3)


def test_natural_minimal_defaults():
    """Invariant: the documented defaults (sea level, radiation on in natural convection,
    finish bare, width and length from the envelope, quantity 1000, search defaults)."""
    p = load_problem(DATA / "natural_minimal.yaml")
    c = p.condition
    assert p.name == "natural_minimal"  # the file stem
    assert c.pressure == 101325.0
    assert c.cooling == "natural" and c.radiation is None and c.radiation_on
    assert c.tip == "corrected"
    assert c.quantity == 1000
    assert p.variable("finish").choices == ("bare",)
    assert p.variable("width").fixed and p.variable("width").low == pytest.approx(0.08)
    assert p.variable("length").fixed and p.variable("length").low == pytest.approx(0.12)
    assert p.variable("fin_count").fixed and p.variable("fin_count").low == 12
    assert p.variable("material").choices == ("al_6063_t5", "al_6061_t6")  # a bare list
    assert p.limits == {}
    assert (p.search.algorithm, p.search.population, p.search.evaluations, p.search.seed) == (
        "auto",
        100,
        20000,
        1,
    )
    assert c.sources[0].interface_resistance == 0.0 and c.sources[0].name == "source1"


def test_volume_flow_pressure_and_new_material():
    """Published check values: 20 CFM = 20 ft^3/min = 20 * 0.3048^3 / 60 m^3/s (exact
    definition); 85 kPa; a material defined in the file joins the library."""
    p = load_problem(DATA / "flow_exact.yaml")
    c = p.condition
    assert c.volumetric_flow == pytest.approx(20 * FT**3 / MINUTE, rel=1e-12)
    assert c.approach_velocity is None
    assert c.pressure == 85e3
    assert c.ambient_temperature == pytest.approx(313.15)
    assert [(o.name, o.sense) for o in p.objectives] == [
        ("heat_rate", "maximise"),
        ("pressure_drop", "minimise"),
        ("total_cost", "minimise"),
    ]
    assert p.search.algorithm == "exact" and p.search.seed == 7
    assert "cu_extra" in p.library.material_keys
    assert "cu_extra" in p.library.processes["skived"].materials
    assert p.library.processes["skived"].cost_term("setup") == 500.0
    assert p.variable("finish").choices == ("bare", "oxidised")
    assert p.resolved["materials"]["cu_extra"]["conductivity"] == 380.0


def test_same_problem_in_other_units_has_the_same_hash(full):
    """Invariant: the resolved form is SI, so a change of units does not change the hash,
    and a change of value does."""
    reference = problem_hash(problem_from_mapping(full, "a.yaml"))
    full["cooling"]["approach_velocity"] = "2.032 m/s"
    full["ambient"]["temperature"] = "308.15 K"
    full["envelope"]["max_width"] = "10 cm"
    full["objectives"][1] = {"mass": "minimise"}
    assert problem_hash(problem_from_mapping(full, "b.yaml")) == reference
    full["ambient"]["temperature"] = "36 degC"
    assert problem_hash(problem_from_mapping(full, "c.yaml")) != reference


def test_resolved_is_canonical_json(full):
    """Invariant: sorted keys at every level, plain JSON types, SI values."""
    resolved = problem_from_mapping(full, "x.yaml").resolved

    def check(node):
        if isinstance(node, dict):
            assert list(node) == sorted(node)
            for v in node.values():
                check(v)
        elif isinstance(node, list):
            for v in node:
                check(v)
        else:
            assert node is None or type(node) in (str, int, float, bool)

    check(resolved)
    assert json.loads(json.dumps(resolved)) == resolved
    assert resolved["cooling"]["approach_velocity"] == pytest.approx(2.032)
    assert resolved["variables"]["fin_count"] == {
        "kind": "integer",
        "low": 8,
        "high": 40,
        "step": None,
    }
    assert resolved["materials"] == {"cu_c11000": {"price": 13.0}}


def test_single_source_and_text_loading():
    """Invariant: a single source given directly equals the same source under `sources`."""
    text = (DATA / "natural_minimal.yaml").read_text(encoding="utf-8")
    direct = load_problem_text(text, source="inline")
    doc = read("natural_minimal.yaml")
    doc["heat_load"] = {"sources": [doc["heat_load"]]}
    listed = problem_from_mapping(doc, "inline")
    assert direct.condition.sources == listed.condition.sources
    assert direct.name == "inline" and load_problem_text(text).name == "problem"


def test_range_beyond_the_envelope_is_allowed(full):
    """Invariant: a range reaching past the envelope is not an error (the search cuts it)."""
    full["variables"]["width"] = {"min": "60 mm", "max": "150 mm"}
    full["variables"]["fin_height"] = {"min": "10 mm", "max": "60 mm"}
    p = problem_from_mapping(full, "x.yaml")
    assert p.variable("width").high == pytest.approx(0.15)
    assert p.envelope.max_width == pytest.approx(0.1)


def test_american_spelling_and_integral_float(full):
    """Invariant: maximize is stored as maximise; 20.0 is the integer 20."""
    full["objectives"] = [{"volume": "maximize"}, "mass"]
    full["variables"]["fin_count"] = 20.0
    p = problem_from_mapping(full, "x.yaml")
    assert p.objectives[0].sense == "maximise"
    count = p.variable("fin_count")
    assert count.low == 20 and isinstance(count.low, int)


def test_problem_from_mapping_does_not_mutate_its_input(full):
    """Invariant: the document passed in is left as it was."""
    import copy

    before = copy.deepcopy(full)
    problem_from_mapping(full, "x.yaml")
    assert full == before


def test_load_problem_reports_missing_file(tmp_path):
    """Invariant: a missing file is a ConfigError naming the path."""
    with pytest.raises(ConfigError) as info:
        load_problem(tmp_path / "nope.yaml")
    assert info.value.source == str(tmp_path / "nope.yaml")
    assert info.value.problems == ["file not found"]
