"""The operating keys of problem files: fans, extra losses, clearances, pin and tapered fins,
flow limits and objectives, and the catalog and study sections.

Check values are unit definitions, each exact by definition: 1 ft = 0.3048 m (1959
international yard and pound agreement), so 1 CFM = 0.3048^3 / 60 m^3/s; 1 m^3/h = 1/3600
m^3/s; 1 mm = 1e-3 m and 1 cm^2 = 1e-4 m^2 (SI prefixes); the conventional inch of water,
1 inH2O = 1000 kg/m^3 x 9.80665 m/s^2 x 0.0254 m = 249.08891 Pa (NIST SP 811, 2008,
appendix B.8: "inch of water, conventional", 2.490 889 E+02 Pa). The bundled fan table is
compared with the numbers written in optifin/data/fans.yaml (invented demo data) and with
the fan file reader, an independent path through the same file.

The tests of bad input are invariants of the loader's contract: a bad entry gives a
ConfigError whose message names the YAML path and what was expected or found; they assert
the fragments that carry the path and the value, not the whole wording.
"""

from __future__ import annotations

import copy
import math
from pathlib import Path

import pytest
import yaml

from optifin.errors import ConfigError
from optifin.fans import load_fans
from optifin.problem import load_problem, load_problem_text, problem_from_mapping, problem_hash

from ._data import read
from ._edit import DELETE, loader_accepted_drops, problems, put

FT = 0.3048  # m, exact
CFM = FT**3 / 60.0  # m^3/s, exact
M3H = 1.0 / 3600.0  # m^3/s per m^3/h, exact
INH2O = 1000.0 * 9.80665 * 0.0254  # Pa, conventional inch of water (NIST SP 811 B.8)
MM = 1e-3
EXAMPLES = Path(__file__).resolve().parents[2] / "problems"
EXAMPLE_FILES = sorted(EXAMPLES.glob("*.yaml"))
PIN_VARIABLES = {
    "pin_diameter": {"min": "1.5 mm", "max": "4 mm", "step": "0.25 mm"},
    "pin_pitch_transverse": {"min": "4 mm", "max": "10 mm", "step": "0.5 mm"},
    "pin_pitch_longitudinal": "6 mm",
}
#: A material study with the bundled demo catalog (one centred source, so an insert fits).
STUDY_TEXT = """
heat_load: {power: "60 W", footprint: ["30 mm", "30 mm"]}
ambient: {temperature: "35 degC"}
cooling: {mode: forced, approach_velocity: "2 m/s"}
envelope: {max_width: "80 mm", max_length: "80 mm", max_height: "40 mm"}
variables:
  fin_count: {min: 10, max: 30}
  fin_thickness: {min: "0.5 mm", max: "2 mm", step: "0.1 mm"}
  fin_height: {min: "15 mm", max: "35 mm", step: "1 mm"}
  base_thickness: {min: "5 mm", max: "10 mm", step: "1 mm"}
  material: [al_6063_t5]
  process: [extrusion]
objectives: [thermal_resistance, mass]
constraints: {max_base_temperature: "90 degC"}
catalog: {cut_lengths: {min: "30 mm", max: "80 mm", step: "10 mm"}}
study:
  materials:
    - {name: aluminium, material: al_6063_t5, process: [extrusion]}
    - {name: copper, material: cu_c11000, process: [skived]}
    - {name: cu base al fins, material: al_6063_t5, base_material: cu_c11000,
       process: [bonded]}
    - {name: al + cu insert, material: al_6063_t5, process: [extrusion],
       insert: {material: cu_c11000, thickness: "4 mm", footprint: ["40 mm", "40 mm"]}}
  price_sweep: {material: cu_c11000, min: "4 USD/kg", max: "30 USD/kg"}
"""
#: A catalog CSV with one profile (invented numbers, valid against the bundled library).
CATALOG_HEADER = (
    "id,width [mm],base_thickness [mm],fin_count,fin_thickness_root [mm],fin_height [mm],"
    "alloy,price [USD/kg]\n"
)
GOOD_ROW = "P1,60,6,12,1.5,25,al_6063_t5,5.0\n"


# -- helpers ---------------------------------------------------------------------------------
def only(doc, source="bad.yaml") -> str:
    found = problems(doc, source)
    assert len(found) == 1, found
    return found[0]


def base(which: str) -> dict:
    """A fresh valid document of one kind (safe to mutate)."""
    if which == "natural":
        return read("natural_minimal.yaml")
    if which == "study":
        return yaml.safe_load(STUDY_TEXT)
    doc = read("forced_full.yaml")
    if which == "fan":
        del doc["cooling"]["approach_velocity"]
        doc["cooling"]["fan"] = {"model": "demo_60x25"}
    elif which == "pins":
        del doc["cooling"]["radiation"]  # radiation of pin arrays is not modelled
        doc["variables"].update(fin_type=["plate", "pin"], **copy.deepcopy(PIN_VARIABLES))
        doc["variables"]["process"] = ["extrusion", "forging"]
    elif which != "full":
        raise KeyError(which)
    return doc


def load(which: str, changes=()):
    doc = base(which)
    for path, value in changes:
        put(doc, path, value)
    return problem_from_mapping(doc, "ok.yaml")


# -- the keys parse to SI --------------------------------------------------------------------
def test_fan_by_model_key_gives_the_bundled_curve():
    """Published check value (unit definition: 36 m^3/h = 0.01 m^3/s) against the numbers of
    optifin/data/fans.yaml, and cross-method against the fan file reader."""
    c = load("fan").condition
    bundled = load_fans()["demo_60x25"].curve
    assert c.fan == bundled
    # fans.yaml, demo_60x25: 0, 8, 16, 24, 30, 36 m^3/h at 42, 36, 28, 18, 9, 0 Pa
    assert list(c.fan.flow) == pytest.approx([q * M3H for q in (0, 8, 16, 24, 30, 36)])
    assert c.fan.free_delivery == pytest.approx(0.01, rel=1e-12)
    assert list(c.fan.pressure) == pytest.approx([42, 36, 28, 18, 9, 0])
    assert c.approach_velocity is None and c.volumetric_flow is None
    assert c.side_clearance is None and c.top_clearance is None  # a fan drives a ducted sink


def test_fan_curve_table_in_cfm_and_inh2o_converts():
    """Published check values: 1 CFM = 0.3048^3/60 m^3/s, 1 inH2O = 249.08891 Pa
    (unit definitions, see the module docstring)."""
    table = {"flow": ["0 CFM", "10 CFM", "20 CFM"], "pressure": ["0.2 inH2O", "0.1 inH2O", "0 Pa"]}
    c = load("fan", [("cooling.fan", {"curve": table})]).condition
    assert list(c.fan.flow) == pytest.approx([0.0, 10 * CFM, 20 * CFM], rel=1e-12)
    assert 10 * CFM == pytest.approx(4.719474432e-3, rel=1e-12)
    assert list(c.fan.pressure) == pytest.approx([0.2 * INH2O, 0.1 * INH2O, 0.0], rel=1e-12)
    assert 0.2 * INH2O == pytest.approx(49.817782, rel=1e-12)


@pytest.mark.parametrize(
    ("arrangement", "flow_factor", "pressure_factor"),
    [("parallel", 2, 1), ("series", 1, 2), (None, 2, 1)],
    ids=["parallel", "series", "default-parallel"],
)
def test_two_fans_combine(arrangement, flow_factor, pressure_factor):
    """Invariant: two identical fans side by side deliver twice the flow at each pressure;
    one behind the other, twice the pressure at each flow; parallel is the default."""
    one = load_fans()["demo_60x25"].curve
    fan = {"model": "demo_60x25", "count": 2}
    if arrangement:
        fan["arrangement"] = arrangement
    c = load("fan", [("cooling.fan", fan)]).condition
    assert list(c.fan.flow) == pytest.approx(list(one.flow * flow_factor), rel=1e-12)
    assert list(c.fan.pressure) == pytest.approx(list(one.pressure * pressure_factor), rel=1e-12)


def test_one_fan_with_an_arrangement_is_the_fan_itself():
    """Invariant: count 1 leaves the curve as it is, whatever the arrangement."""
    one = load_fans()["demo_60x25"].curve
    fan = {"model": "demo_60x25", "count": 1, "arrangement": "series"}
    assert load("fan", [("cooling.fan", fan)]).condition.fan == one


def test_extra_loss_coefficient_and_area():
    """Published check values (unit definitions): 40 cm^2 = 4e-3 m^2, 8 Pa at 20 CFM; a
    coefficient without an area leaves the area to the model (the frontal area)."""
    loss = {"coefficient": 1.5, "area": "40 cm^2"}
    c = load("fan", [("cooling.extra_loss", loss)]).condition
    assert c.extra_loss_coefficient == 1.5
    assert c.extra_loss_area == pytest.approx(4e-3, rel=1e-12)
    assert c.extra_loss_pressure == 0.0 and c.extra_loss_flow is None
    c = load("fan", [("cooling.extra_loss", {"coefficient": "2.5"})]).condition
    assert c.extra_loss_coefficient == 2.5 and c.extra_loss_area is None
    measured = {"pressure_drop": "8 Pa", "at_flow": "20 CFM"}
    c = load("fan", [("cooling.extra_loss", measured)]).condition
    assert c.extra_loss_pressure == 8.0
    assert c.extra_loss_flow == pytest.approx(20 * CFM, rel=1e-12)
    assert c.extra_loss_coefficient == 0.0
    c = load("fan").condition  # no extra loss at all
    assert (c.extra_loss_coefficient, c.extra_loss_pressure) == (0.0, 0.0)


def test_clearances_in_mm_and_open():
    """Published check values (1 mm = 1e-3 m, 1 in = 25.4 mm); open: true is an unbounded
    stream (infinite gaps); open: false is the default shrouded sink."""
    c = load("full", [("cooling.clearance", {"side": "8 mm", "top": "0.4 in"})]).condition
    assert c.side_clearance == pytest.approx(8e-3, rel=1e-12)
    assert c.top_clearance == pytest.approx(10.16e-3, rel=1e-12)
    assert c.bypassed
    c = load("full", [("cooling.clearance", {"side": "5 mm"})]).condition
    assert c.side_clearance == pytest.approx(5e-3) and c.top_clearance is None
    c = load("full", [("cooling.clearance", {"open": True})]).condition
    assert c.side_clearance == math.inf and c.top_clearance == math.inf and c.bypassed
    c = load("full", [("cooling.clearance", {"open": False})]).condition
    assert c.side_clearance is None and c.top_clearance is None and not c.bypassed
    assert not load("full").condition.bypassed


def test_fin_type_both_with_pin_variables():
    """Published check values (1 mm = 1e-3 m); invariant: the pin variables, the layout and
    the pin-array correlation reach the Problem, plate variables stay as given."""
    p = load(
        "pins",
        [
            ("variables.pin_layout", ["inline", "staggered"]),
            ("model.pin_heat_transfer", "khan_2005"),
        ],
    )
    assert p.variable("fin_type").choices == ("plate", "pin")
    d = p.variable("pin_diameter")
    assert (d.kind, d.low, d.high, d.step) == pytest.approx(("length", 1.5e-3, 4e-3, 0.25e-3))
    assert len(d.grid()) == 11  # 1.5, 1.75, ..., 4 mm
    st = p.variable("pin_pitch_transverse")
    assert (st.low, st.high, st.step) == pytest.approx((4e-3, 10e-3, 0.5e-3))
    sl = p.variable("pin_pitch_longitudinal")
    assert sl.fixed and sl.low == pytest.approx(6e-3)
    assert p.variable("pin_layout").choices == ("inline", "staggered")
    assert p.condition.pin_heat_transfer == "khan_2005"
    assert p.variable("fin_count").low == 8  # plate variables untouched
    assert {"fin_type", "pin_diameter", "pin_layout"} <= {v.name for v in p.searched}


def test_pin_defaults_and_pins_only():
    """Invariant: the documented defaults (inline layout, zukauskas_1972); pins only need no
    plate variables, which become fixed stand-ins."""
    p = load("pins")
    assert p.variable("pin_layout").choices == ("inline",)
    assert p.condition.pin_heat_transfer == "zukauskas_1972"
    p = load(
        "pins",
        [
            ("variables.fin_type", "pin"),
            ("variables.fin_count", DELETE),
            ("variables.fin_thickness", DELETE),
            ("variables.process", "forging"),
        ],
    )
    assert p.variable("fin_type").choices == ("pin",)
    assert p.variable("fin_count").fixed and p.variable("fin_thickness").fixed
    assert "fin_count" not in {v.name for v in p.searched}


def test_plate_problem_has_fixed_pin_stand_ins():
    """Invariant: a plate-fin problem searches no pin variable and no taper."""
    p = load("full")
    assert p.variable("fin_type").choices == ("plate",)
    for name in ("pin_diameter", "pin_pitch_transverse", "pin_pitch_longitudinal", "fin_taper"):
        assert p.variable(name).fixed, name
    assert p.variable("fin_taper").low == 1.0


def test_fin_taper_range_and_fixed():
    """Invariant: the taper is a ratio (tip over root) kept as given; a step makes a grid."""
    p = load("full", [("variables.fin_taper", {"min": 0.6, "max": 1, "step": 0.1})])
    taper = p.variable("fin_taper")
    assert (taper.kind, taper.low, taper.high, taper.step) == pytest.approx(
        ("ratio", 0.6, 1.0, 0.1)
    )
    assert list(taper.grid()) == pytest.approx([0.6, 0.7, 0.8, 0.9, 1.0])
    p = load("full", [("variables.fin_taper", "0.7")])
    assert p.variable("fin_taper").fixed and p.variable("fin_taper").low == pytest.approx(0.7)
    p = load("full", [("variables.fin_taper", {"min": 0.5, "max": 1})])
    assert p.variable("fin_taper").step is None and not p.variable("fin_taper").discrete


def test_min_volumetric_flow_in_cfm():
    """Published check value: 5 CFM = 5 x 0.3048^3/60 m^3/s (unit definition); 18 m^3/h
    = 5e-3 m^3/s."""
    p = load("fan", [("constraints.min_volumetric_flow", "5 CFM")])
    assert p.limits["min_volumetric_flow"] == pytest.approx(5 * CFM, rel=1e-12)
    assert p.limits["min_volumetric_flow"] == pytest.approx(2.359737216e-3, rel=1e-12)
    p = load("full", [("constraints.min_volumetric_flow", "18 m^3/h")])
    assert p.limits["min_volumetric_flow"] == pytest.approx(5e-3, rel=1e-12)


def test_flow_objectives_in_forced_convection():
    """Invariant: the documented senses (flow maximised, entropy generation minimised)."""
    p = load("fan", [("objectives", ["volumetric_flow", "entropy_generation_rate", "mass"])])
    assert [(o.name, o.sense, o.key) for o in p.objectives] == [
        ("volumetric_flow", "maximise", "volumetric_flow"),
        ("entropy_generation_rate", "minimise", "entropy_generation_rate"),
        ("mass", "minimise", "mass"),
    ]
    p = load("full", [("objectives", [{"volumetric_flow": "minimize"}])])
    assert p.objectives[0].sense == "minimise"


def test_process_override_accepts_fin_types():
    """Invariant: processes.<key>.fin_types reaches the library and the pin check."""
    changes = [("variables.process", "extrusion"), ("variables.material", "al_6063_t5")]
    with pytest.raises(ConfigError, match="makes pin fins"):
        load("pins", changes)
    p = load("pins", [*changes, ("processes.extrusion.fin_types", ["plate", "pin"])])
    assert p.library.processes["extrusion"].fin_types == ("plate", "pin")


def test_catalog_section():
    """Published check values (1 mm = 1e-3 m): the cut-length grid in SI; invariant: the
    documented defaults (bundled catalog, both orientations, screening only)."""
    p = load("study")
    cat = p.catalog
    assert cat.path is None
    assert list(cat.cut_lengths) == pytest.approx([0.03, 0.04, 0.05, 0.06, 0.07, 0.08])
    assert cat.orientations == ("along", "across") and cat.in_search is False
    p = load(
        "study",
        [("catalog", {"cut_lengths": "50 mm", "orientations": ["across"], "in_search": True})],
    )
    assert p.catalog.cut_lengths == pytest.approx((0.05,))
    assert (p.catalog.orientations, p.catalog.in_search) == (("across",), True)
    p = load("study", [("catalog", {})])
    assert p.catalog.cut_lengths == ()  # the default grid is the catalog module's
    assert load("full").catalog is None


def test_catalog_file_is_relative_to_the_problem_file(tmp_path):
    """Invariant: catalog.file is read relative to the problem file's folder."""
    (tmp_path / "parts").mkdir()
    csv = tmp_path / "parts" / "mine.csv"
    csv.write_text("# invented test data\n" + CATALOG_HEADER + GOOD_ROW, encoding="utf-8")
    doc = base("study")
    doc["catalog"] = {"file": "parts/mine.csv", "cut_lengths": "40 mm"}
    path = tmp_path / "problem.yaml"
    path.write_text(yaml.safe_dump(doc), encoding="utf-8")
    p = load_problem(path)
    assert Path(p.catalog.path) == csv.resolve()
    assert p.catalog.cut_lengths == pytest.approx((0.04,))


def test_study_section():
    """Published check values (1 mm = 1e-3 m); invariant: each option keeps its material,
    base material, processes and insert, and the price sweep its range and default steps."""
    p = load("study")
    names = [o.name for o in p.study]
    assert names == ["aluminium", "copper", "cu base al fins", "al + cu insert"]
    al, cu, bonded, insert = p.study
    assert (al.material, al.processes, al.base_material) == ("al_6063_t5", ("extrusion",), None)
    assert cu.processes == ("skived",) and al.construction() == {}
    assert bonded.construction() == {"base_material": "cu_c11000"}
    assert insert.construction() == pytest.approx(
        {
            "insert_material": "cu_c11000",
            "insert_thickness": 4e-3,
            "insert_width": 40e-3,
            "insert_length": 40e-3,
        }
    )
    sweep = p.price_sweep
    assert (sweep.material, sweep.low, sweep.high, sweep.steps) == ("cu_c11000", 4.0, 30.0, 41)
    p = load("study", [("study.price_sweep.steps", 5), ("study.materials.0.process", DELETE)])
    assert p.price_sweep.steps == 5
    assert p.study[0].processes == ("extrusion",)  # the problem's processes by default
    assert load("full").study == () and load("full").price_sweep is None


def test_bundled_operating_examples():
    """Invariant: the examples that use the new keys load with the values they state
    (unit definitions as check values: 5 CFM, 8 mm, 10 mm)."""
    fan = load_problem(EXAMPLES / "ducted_fan.yaml")
    c = fan.condition
    assert c.fan == load_fans()["demo_60x25"].curve
    assert c.extra_loss_coefficient == 2.5 and c.extra_loss_area is None
    assert fan.limits["min_volumetric_flow"] == pytest.approx(5 * CFM, rel=1e-12)
    pins = load_problem(EXAMPLES / "pin_drive.yaml")
    c = pins.condition
    assert (c.side_clearance, c.top_clearance) == pytest.approx((8e-3, 10e-3))
    assert c.approach_velocity == pytest.approx(3.0) and c.fan is None
    assert [s.power for s in c.sources] == [18.0, 18.0, 12.0]
    assert pins.variable("fin_type").choices == ("plate", "pin")
    assert pins.variable("pin_layout").choices == ("inline", "staggered")


# -- bad input: path and expectation in the message -------------------------------------------
CURVE = {"flow": ["0 CFM", "10 CFM", "20 CFM"], "pressure": ["0.2 inH2O", "0.1 inH2O", "0 inH2O"]}


def curve(**change) -> dict:
    """A fan given by a curve table with some columns changed (or with DELETE removed)."""
    table = copy.deepcopy(CURVE)
    table.update(change)
    return {"curve": {k: v for k, v in table.items() if v is not DELETE}}


# (base, [(path, value), ...], [fragments the one error message must contain])
CASES = {
    # fans
    "unknown fan model": (
        "fan",
        [("cooling.fan.model", "demo_60x52")],
        ["cooling.fan.model: unknown fan 'demo_60x52'", "did you mean 'demo_60x25'?", "known:"],
    ),
    "fan model not a key": (
        "fan",
        [("cooling.fan.model", "my fan!")],
        ["cooling.fan.model: expected a name", "found 'my fan!'"],
    ),
    "fan model and curve": (
        "fan",
        [("cooling.fan.curve", CURVE)],
        ["cooling.fan: give model or curve, not both"],
    ),
    "fan with neither model nor curve": (
        "fan",
        [("cooling.fan", {"count": 2})],
        ["cooling.fan: give the fan as model", "or curve"],
    ),
    "curve with unequal lengths": (
        "fan",
        [("cooling.fan", curve(pressure=["0.2 inH2O", "0 inH2O"]))],
        ["cooling.fan.curve: 3 flows but 2 pressures", "one pressure per flow"],
    ),
    "curve with one point": (
        "fan",
        [("cooling.fan", curve(flow=["0 CFM"]))],
        ["cooling.fan.curve.flow: expected a list of at least 2 flows, found 1"],
    ),
    "curve without pressures": (
        "fan",
        [("cooling.fan", curve(pressure=DELETE))],
        ["cooling.fan.curve.pressure: missing", "at least 2 pressures"],
    ),
    "curve pressure rising with flow": (
        "fan",
        [("cooling.fan", curve(pressure=["0.1 inH2O", "0.2 inH2O", "0 inH2O"]))],
        ["cooling.fan.curve:", "pressures must not increase with flow"],
    ),
    "curve flows not increasing": (
        "fan",
        [("cooling.fan", curve(flow=["0 CFM", "20 CFM", "10 CFM"]))],
        ["cooling.fan.curve:", "flows must be strictly increasing"],
    ),
    "curve not reaching zero pressure": (
        "fan",
        [("cooling.fan", curve(pressure=["0.2 inH2O", "0.1 inH2O", "0.05 inH2O"]))],
        ["cooling.fan.curve:", "last point must be free delivery (pressure 0)"],
    ),
    "curve not starting at zero flow": (
        "fan",
        [("cooling.fan", curve(flow=["2 CFM", "10 CFM", "20 CFM"]))],
        ["cooling.fan.curve:", "first point must be shut-off (flow 0)"],
    ),
    "curve pressure without unit": (
        "fan",
        [("cooling.fan", curve(pressure=[0.2, "0.1 inH2O", "0 inH2O"]))],
        ["cooling.fan.curve.pressure[0]: a bare number 0.2 has no unit", "inH2O"],
    ),
    "curve flow in a pressure unit": (
        "fan",
        [("cooling.fan", curve(flow=["0 CFM", "10 Pa", "20 CFM"]))],
        ["cooling.fan.curve.flow[1]: '10 Pa' is not a volumetric flow", "CFM"],
    ),
    "fan count zero": (
        "fan",
        [("cooling.fan.count", 0)],
        ["cooling.fan.count: must be at least 1, found 0"],
    ),
    "unknown fan arrangement": (
        "fan",
        [("cooling.fan.arrangement", "stacked")],
        ["cooling.fan.arrangement: expected one of parallel, series, found 'stacked'"],
    ),
    "unknown key under fan": (
        "fan",
        [("cooling.fan.modle", "demo_60x25")],
        ["cooling.fan.modle: unknown key", "did you mean 'model'?"],
    ),
    "fan together with approach_velocity": (
        "fan",
        [("cooling.approach_velocity", "2 m/s")],
        ["cooling: mode forced needs exactly one of", "found both (approach_velocity and fan)"],
    ),
    "fan together with both flows": (
        "fan",
        [("cooling.approach_velocity", "2 m/s"), ("cooling.volumetric_flow", "10 CFM")],
        [
            "cooling: mode forced needs exactly one of",
            "approach_velocity and volumetric_flow and fan",
        ],
    ),
    "fan in natural convection": (
        "natural",
        [("cooling.fan", {"model": "demo_60x25"})],
        ["cooling.fan: not used when mode is natural"],
    ),
    # clearances
    "fan with clearance": (
        "fan",
        [("cooling.clearance", {"side": "5 mm"})],
        ["cooling.clearance: a fan drives a ducted (shrouded) sink", "approach_velocity"],
    ),
    "clearance with volumetric_flow": (
        "full",
        [
            ("cooling.approach_velocity", DELETE),
            ("cooling.volumetric_flow", "20 CFM"),
            ("cooling.clearance", {"top": "5 mm"}),
        ],
        ["cooling.clearance: an open sink needs the approach_velocity", "not a flow"],
    ),
    "clearance open with side": (
        "full",
        [("cooling.clearance", {"open": True, "side": "5 mm"})],
        ["cooling.clearance: give open: true or side/top gaps, not both"],
    ),
    "clearance open not a flag": (
        "full",
        [("cooling.clearance", {"open": "yes", "side": "5 mm"})],
        ["cooling.clearance.open: expected true or false, found 'yes'"],
    ),
    "negative clearance": (
        "full",
        [("cooling.clearance", {"side": "-1 mm"})],
        ["cooling.clearance.side: must not be negative, found -1 mm"],
    ),
    "clearance in a mass unit": (
        "full",
        [("cooling.clearance", {"top": "3 g"})],
        ["cooling.clearance.top: '3 g' is not a length"],
    ),
    "misspelt clearance key": (
        "full",
        [("cooling.clearance", {"sides": "3 mm"})],
        ["cooling.clearance.sides: unknown key", "did you mean 'side'?"],
    ),
    "clearance in natural convection": (
        "natural",
        [("cooling.clearance", {"open": True})],
        ["cooling.clearance: not used when mode is natural"],
    ),
    # extra loss
    "extra_loss without fan": (
        "full",
        [("cooling.extra_loss", {"coefficient": 2})],
        ["cooling.extra_loss: an extra system loss needs a fan (cooling.fan)"],
    ),
    "pressure_drop without at_flow": (
        "fan",
        [("cooling.extra_loss", {"pressure_drop": "8 Pa"})],
        ["cooling.extra_loss.at_flow: missing (the flow of pressure_drop)"],
    ),
    "at_flow without pressure_drop": (
        "fan",
        [("cooling.extra_loss", {"at_flow": "20 CFM"})],
        ["cooling.extra_loss.pressure_drop: missing", "at_flow"],
    ),
    "area without coefficient": (
        "fan",
        [("cooling.extra_loss", {"area": "40 cm^2"})],
        ["cooling.extra_loss.area: area needs a coefficient"],
    ),
    "negative loss coefficient": (
        "fan",
        [("cooling.extra_loss", {"coefficient": -1})],
        ["cooling.extra_loss.coefficient: must be positive, found -1"],
    ),
    "at_flow in a pressure unit": (
        "fan",
        [("cooling.extra_loss", {"pressure_drop": "8 Pa", "at_flow": "20 Pa"})],
        ["cooling.extra_loss.at_flow: '20 Pa' is not a volumetric flow"],
    ),
    "extra_loss in natural convection": (
        "natural",
        [("cooling.extra_loss", {"coefficient": 1})],
        ["cooling.extra_loss: not used when mode is natural"],
    ),
    # pins and fin types
    "pins in natural convection": (
        "natural",
        [
            ("variables.fin_type", ["plate", "pin"]),
            ("variables.pin_diameter", "2 mm"),
            ("variables.pin_pitch_transverse", "5 mm"),
            ("variables.pin_pitch_longitudinal", "5 mm"),
            ("variables.process", ["extrusion", "forging"]),
        ],
        ["variables.fin_type: pin fins in natural convection", "plate fins or forced cooling"],
    ),
    "pin diameter without pin in fin_type": (
        "full",
        [("variables.pin_diameter", "2 mm")],
        ["variables.pin_diameter: pin fins are not among variables.fin_type"],
    ),
    "pin layout without pin in fin_type": (
        "full",
        [("variables.fin_type", "plate"), ("variables.pin_layout", "staggered")],
        ["variables.pin_layout: pin fins are not among variables.fin_type"],
    ),
    "missing pin_diameter when pin is chosen": (
        "pins",
        [("variables.pin_diameter", DELETE)],
        ["variables.pin_diameter: missing (needed for pin fins", "1.5 mm"],
    ),
    "missing pin pitch when pin is chosen": (
        "pins",
        [("variables.pin_pitch_longitudinal", DELETE)],
        ["variables.pin_pitch_longitudinal: missing (needed for pin fins"],
    ),
    "missing fin_count when plate is chosen": (
        "pins",
        [("variables.fin_count", DELETE)],
        ["variables.fin_count: missing (needed for plate fins"],
    ),
    "unknown fin type": (
        "full",
        [("variables.fin_type", "pins")],
        ["variables.fin_type: expected one of plate, pin, found 'pins'", "did you mean 'pin'?"],
    ),
    "unknown pin layout": (
        "pins",
        [("variables.pin_layout", ["inline", "staggerd"])],
        ["variables.pin_layout[1]:", "found 'staggerd'", "did you mean 'staggered'?"],
    ),
    "fin type listed twice": (
        "pins",
        [("variables.fin_type", ["pin", "pin"])],
        ["variables.fin_type[1]: 'pin' is listed twice"],
    ),
    "a process list that cannot make pins": (
        "pins",
        [("variables.process", ["extrusion", "skived"])],
        [
            "variables.fin_type: no process among extrusion, skived makes pin fins",
            "processes that do:",
            "forging",
        ],
    ),
    "a process list that cannot make plates": (
        "pins",
        [("variables.process", ["forging"])],
        ["variables.fin_type: no process among forging makes plate fins", "extrusion"],
    ),
    "radiation with pin fins": (
        "pins",
        [("cooling.radiation", True)],
        ["cooling.radiation:", "pin"],
    ),
    "unknown fin type in a process override": (
        "full",
        [("processes.extrusion.fin_types", ["plate", "pins"])],
        ["processes.extrusion.fin_types[1]: expected one of plate, pin, found 'pins'"],
    ),
    "unknown pin correlation": (
        "pins",
        [("model.pin_heat_transfer", "zukauskas")],
        ["model.pin_heat_transfer:", "found 'zukauskas'", "'zukauskas_1972'"],
    ),
    # taper
    "taper above one": (
        "full",
        [("variables.fin_taper", {"min": 0.5, "max": 1.2})],
        ["variables.fin_taper.max: must be at most 1, found 1.2"],
    ),
    "taper zero": (
        "full",
        [("variables.fin_taper", 0)],
        ["variables.fin_taper: must be positive, found 0"],
    ),
    "taper with a unit": (
        "full",
        [("variables.fin_taper", "0.7 mm")],
        ["variables.fin_taper: expected a number such as 0.7, found '0.7 mm'"],
    ),
    "empty taper range": (
        "full",
        [("variables.fin_taper", {"min": 0.9, "max": 0.6})],
        ["variables.fin_taper: empty range, min 0.9 > max 0.6"],
    ),
    # flow limits and objectives
    "min_volumetric_flow without unit": (
        "fan",
        [("constraints.min_volumetric_flow", 5)],
        ["constraints.min_volumetric_flow: a bare number 5 has no unit", "CFM"],
    ),
    "min_volumetric_flow in a pressure unit": (
        "fan",
        [("constraints.min_volumetric_flow", "5 Pa")],
        ["constraints.min_volumetric_flow: '5 Pa' is not a volumetric flow"],
    ),
    "min_volumetric_flow in natural convection": (
        "natural",
        [("constraints.min_volumetric_flow", "3 CFM")],
        ["constraints.min_volumetric_flow: not defined in natural convection"],
    ),
    "volumetric_flow objective in natural convection": (
        "natural",
        [("objectives", ["thermal_resistance", "volumetric_flow"])],
        ["objectives[1]: volumetric_flow is not defined in natural convection"],
    ),
    "entropy_generation_rate objective in natural convection": (
        "natural",
        [("objectives", ["entropy_generation_rate"])],
        ["objectives[0]: entropy_generation_rate is not defined in natural convection"],
    ),
    # study
    "study option with an unknown material": (
        "study",
        [("study.materials.0.material", "al_6036_t5")],
        ["study.materials[0].material: unknown material 'al_6036_t5'", "'al_6063_t5'"],
    ),
    "study option with an unknown base material": (
        "study",
        [("study.materials.2.base_material", "cu_c1100")],
        ["study.materials[2].base_material: unknown material 'cu_c1100'", "'cu_c11000'"],
    ),
    "study option with a process that cannot form its material": (
        "study",
        [("study.materials.1.process", ["extrusion"])],
        ["study.materials[1].process: no process among extrusion can form cu_c11000", "skived"],
    ),
    "bonded hybrid with a monolithic process": (
        "study",
        [("study.materials.2.process", ["machining"])],
        ["study.materials[2].base_material:", "needs a process that joins fins to a base"],
    ),
    "insert with several sources": (
        "study",
        [
            (
                "heat_load",
                {
                    "sources": [
                        {"power": "30 W", "footprint": ["20 mm", "20 mm"]},
                        {"name": "b", "power": "30 W", "footprint": ["20 mm", "20 mm"]},
                    ]
                },
            )
        ],
        ["study.materials[3].insert: an insert needs one heat source centred on the base"],
    ),
    "insert under an off-centre source": (
        "study",
        [("heat_load.position", ["20 mm", "20 mm"])],
        ["study.materials[3].insert: an insert needs one heat source centred"],
    ),
    "insert thicker than the base": (
        "study",
        [("study.materials.3.insert.thickness", "6 mm")],
        ["study.materials[3].insert.thickness: 6 mm is thicker than the thinnest base 5 mm"],
    ),
    "insert larger than the base": (
        "study",
        [("study.materials.3.insert.footprint", ["90 mm", "40 mm"])],
        ["study.materials[3].insert.footprint: 90 mm is larger than the base (80 mm)"],
    ),
    "insert without thickness": (
        "study",
        [("study.materials.3.insert.thickness", DELETE)],
        ["study.materials[3].insert.thickness: missing", "length"],
    ),
    "study option without a name": (
        "study",
        [("study.materials.0.name", DELETE)],
        ["study.materials[0].name: missing"],
    ),
    "study option without a material": (
        "study",
        [("study.materials.1.material", DELETE)],
        ["study.materials[1].material: missing", "material key"],
    ),
    "study with one option": (
        "study",
        [("study.materials", [{"name": "only", "material": "al_6063_t5"}])],
        ["study.materials: expected a list of at least 2 material options, found 1"],
    ),
    "study options with the same name": (
        "study",
        [("study.materials.1.name", "aluminium")],
        ["study.materials[1].name: 'aluminium' names another option too"],
    ),
    "price sweep upside down": (
        "study",
        [("study.price_sweep.max", "3 USD/kg")],
        ["study.price_sweep.max: must be above min"],
    ),
    "price sweep in another currency": (
        "study",
        [("study.price_sweep.min", "4 EUR/kg")],
        ["study.price_sweep.min: money must be in USD, found '4 EUR/kg'"],
    ),
    # catalog
    "catalog file missing": (
        "study",
        [("catalog.file", "no_such_catalog.csv")],
        ["catalog.file:", "no_such_catalog.csv: file not found"],
    ),
    "catalog cut_lengths range without step": (
        "study",
        [("catalog.cut_lengths", {"min": "30 mm", "max": "80 mm"})],
        ["catalog.cut_lengths: give a step"],
    ),
    "unknown catalog orientation": (
        "study",
        [("catalog.orientations", ["along", "sideways"])],
        ["catalog.orientations[1]: expected one of along, across, found 'sideways'"],
    ),
    "catalog orientations not a list": (
        "study",
        [("catalog.orientations", "along")],
        ["catalog.orientations: expected a list", "found 'along'"],
    ),
    "catalog in_search not a flag": (
        "study",
        [("catalog.in_search", "yes")],
        ["catalog.in_search: expected true or false, found 'yes'"],
    ),
}


@pytest.mark.parametrize("case", list(CASES), ids=list(CASES))
def test_bad_operating_input_names_path_and_expectation(case):
    """Invariant: one bad entry gives one error naming the YAML path and what was expected."""
    which, changes, fragments = CASES[case]
    doc = base(which)
    for path, value in changes:
        put(doc, path, value)
    message = only(doc)
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def catalog_problems(tmp_path, text: str) -> tuple[Path, list[str]]:
    csv = tmp_path / "catalog.csv"
    csv.write_text(text, encoding="utf-8")
    doc = base("study")
    doc["catalog"]["file"] = str(csv)
    return csv, problems(doc)


def test_catalog_with_a_bad_row_names_the_file_and_line(tmp_path):
    """Invariant: a bad catalog row is reported under catalog.file with the file and line."""
    text = "# invented\n" + CATALOG_HEADER + GOOD_ROW + "P2,60,6,12,1.5,25,unobtainium,5\n"
    csv, found = catalog_problems(tmp_path, text)
    assert len(found) == 1, found
    assert found[0].startswith(f"catalog.file: {csv}:4: column 'alloy': ")
    assert "unobtainium" in found[0]


def test_catalog_with_several_bad_rows_lists_each(tmp_path):
    """Invariant: each finding of the catalog is its own entry, with its own line."""
    text = (
        CATALOG_HEADER
        + "P1,60,6,12,1.5,25,al_6063_t5,-5\n"
        + GOOD_ROW.replace("P1", "P3")
        + "P2,60,6,12,1.5,25,unobtainium,5\n"
    )
    csv, found = catalog_problems(tmp_path, text)
    assert len(found) == 2, found
    assert found[0].startswith(f"catalog.file: {csv}:2: column 'price'")
    assert found[1].startswith(f"catalog.file: {csv}:4: column 'alloy'")


def test_errors_of_the_new_sections_come_together():
    """Invariant: findings in fan, clearance, pins and study are listed in one ConfigError."""
    doc = base("study")
    put(doc, "cooling.clearance", {"open": True, "side": "5 mm"})
    put(doc, "variables.pin_diameter", "2 mm")
    put(doc, "study.materials.0.material", "al_6036_t5")
    put(doc, "objectives", ["entropy_generation_rat"])
    found = problems(doc)
    assert {p.split(":")[0] for p in found} == {
        "cooling.clearance",
        "variables.pin_diameter",
        "study.materials[0].material",
        "objectives[0]",
    }, found


# -- the JSON Schema -------------------------------------------------------------------------
def _validator():
    jsonschema = pytest.importorskip("jsonschema")
    from optifin.problem import problem_schema

    return jsonschema.Draft202012Validator(problem_schema())


def schema_messages(doc) -> list[str]:
    return [e.message for e in _validator().iter_errors(doc)]


@pytest.mark.parametrize("path", EXAMPLE_FILES, ids=[p.name for p in EXAMPLE_FILES])
def test_schema_validates_every_bundled_example(path):
    """Cross-method: jsonschema (an independent draft 2020-12 validator) accepts every
    example of problems/, which the loader accepts too."""
    doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    assert schema_messages(doc) == []
    load_problem(path)


def test_schema_validates_the_study_document():
    """Cross-method: the catalog and study sections pass the schema."""
    assert schema_messages(base("study")) == []
    assert schema_messages(base("pins")) == []
    assert schema_messages(base("fan")) == []


SCHEMA_BAD = {
    "fan model not text": ("fan", [("cooling.fan.model", 3)], "3"),
    "curve with one pressure": (
        "fan",
        [("cooling.fan", {"curve": {"flow": ["0 CFM", "2 CFM"], "pressure": ["1 Pa"]}})],
        "too short",
    ),
    "fan and approach_velocity": ("fan", [("cooling.approach_velocity", "2 m/s")], ""),
    "unknown fan arrangement": ("fan", [("cooling.fan.arrangement", "stacked")], "stacked"),
    "negative loss coefficient": ("fan", [("cooling.extra_loss", {"coefficient": -1})], ""),
    "clearance open not a flag": ("full", [("cooling.clearance", {"open": "yes"})], "yes"),
    "clearance in natural": ("natural", [("cooling.clearance", {"side": "2 mm"})], ""),
    "unknown fin type": ("full", [("variables.fin_type", ["plate", "fork"])], ""),
    "taper above one": ("full", [("variables.fin_taper", 1.5)], ""),
    "unknown pin correlation": ("pins", [("model.pin_heat_transfer", "zukauskas")], "zukauskas"),
    "unknown orientation": ("study", [("catalog.orientations", ["sideways"])], "sideways"),
    "study with one option": (
        "study",
        [("study.materials", [{"name": "only", "material": "al_6063_t5"}])],
        "too short",
    ),
    "study option without name": ("study", [("study.materials.0.name", DELETE)], "name"),
    "unknown objective": ("full", [("objectives", ["entropy"])], "entropy"),
}


@pytest.mark.parametrize("case", list(SCHEMA_BAD), ids=list(SCHEMA_BAD))
def test_schema_rejects_bad_operating_documents(case):
    """Cross-method: documents the loader refuses for their structure fail the schema too."""
    which, changes, fragment = SCHEMA_BAD[case]
    doc = base(which)
    for path, value in changes:
        put(doc, path, value)
    found = schema_messages(doc)
    assert found, "schema accepted a bad document"
    assert any(fragment in m for m in found), found
    with pytest.raises(ConfigError):
        problem_from_mapping(doc, "bad.yaml")


@pytest.mark.parametrize("which", ["fan", "pins", "study"])
def test_dropping_any_key_never_leaves_the_schema_stricter(which):
    """Cross-method: drop each key of a document with the new sections in turn; whenever the
    loader still accepts it, the schema accepts it too."""
    assert loader_accepted_drops(base(which), schema_messages) > 0


# -- round trip: the hash --------------------------------------------------------------------
def test_hash_is_stable_for_the_same_file(tmp_path):
    """Invariant: the same file, read twice or as text, gives the same hash."""
    for name in ("ducted_fan.yaml", "pin_drive.yaml"):
        path = EXAMPLES / name
        first, second = load_problem(path), load_problem(path)
        assert problem_hash(first) == problem_hash(second)
        text = path.read_text(encoding="utf-8")
        assert problem_hash(load_problem_text(text, source=name)) == problem_hash(first)
        copied = tmp_path / name
        copied.write_text(text, encoding="utf-8")
        assert problem_hash(load_problem(copied)) == problem_hash(first)


def test_hash_changes_with_the_fan():
    """Invariant: every change of the fan or its extra loss changes the hash; the same
    curve given as a table in other units does not."""
    reference = problem_hash(load("fan"))
    same = {
        "curve": {
            "flow": [f"{q} m^3/h" for q in (0, 8, 16, 24, 30, 36)],
            "pressure": [f"{p / 1000} kPa" for p in (42, 36, 28, 18, 9, 0)],
        }
    }
    assert problem_hash(load("fan", [("cooling.fan", same)])) == reference
    changed = [
        [("cooling.fan.model", "demo_80x25")],
        [("cooling.fan.count", 2)],
        [("cooling.fan.count", 2), ("cooling.fan.arrangement", "series")],
        [("cooling.extra_loss", {"coefficient": 2.5})],
        [("cooling.extra_loss", {"coefficient": 2.5, "area": "30 cm^2"})],
        [("cooling.extra_loss", {"pressure_drop": "8 Pa", "at_flow": "20 CFM"})],
    ]
    hashes = {problem_hash(load("fan", c)) for c in changed}
    assert len(hashes) == len(changed) and reference not in hashes


def test_hash_changes_with_the_clearance():
    """Invariant: a clearance changes the hash, the same gap in other units does not."""
    gap = [("cooling.clearance", {"side": "8 mm", "top": "10 mm"})]
    reference = problem_hash(load("full", gap))
    other_units = [("cooling.clearance", {"side": "0.8 cm", "top": "0.01 m"})]
    assert problem_hash(load("full", other_units)) == reference
    changed = [
        [],
        [("cooling.clearance", {"side": "9 mm", "top": "10 mm"})],
        [("cooling.clearance", {"side": "8 mm"})],
        [("cooling.clearance", {"open": True})],
    ]
    hashes = {problem_hash(load("full", c)) for c in changed}
    assert len(hashes) == len(changed) and reference not in hashes
    assert problem_hash(load("full", [("cooling.clearance", {"open": False})])) == problem_hash(
        load("full")
    )


def test_hash_changes_with_the_catalog_and_study():
    """Invariant: the catalog and study sections are part of the resolved problem (they
    change what is run); a file without them resolves without them."""
    reference = problem_hash(load("study"))
    changed = [
        [("catalog.in_search", True)],
        [("catalog.cut_lengths", "50 mm")],
        [("study.price_sweep.max", "40 USD/kg")],
        [("study.materials.3.insert.thickness", "3 mm")],
        [("catalog", DELETE)],
        [("study", DELETE)],
    ]
    hashes = {problem_hash(load("study", c)) for c in changed}
    assert len(hashes) == len(changed) and reference not in hashes
    resolved = load("full").resolved
    assert "catalog" not in resolved and "study" not in resolved
    assert load("study").resolved["study"]["price_sweep"]["high"] == 30.0
