"""Every entry of the bundled data files: positive, with a unit, with a listed source."""

import math

import pytest
import yaml

from optifin.errors import DataError
from optifin.library import (
    COST_FIELDS,
    MATERIAL_FIELDS,
    PROCESS_FIELDS,
    bundled_documents,
    load_library,
    parse_library,
)

MATERIALS, PROCESSES = bundled_documents()
REQUIRED_MATERIALS = {"al_6063_t5", "al_6061_t6", "al_1050a", "al_a380", "cu_c11000", "cu_c10200"}
REQUIRED_PROCESSES = {"extrusion", "skived", "bonded", "die_casting", "machining"}


def _numbers(doc, section):
    for key, entry in doc[section].items():
        for name, value in entry.items():
            if isinstance(value, dict) and "value" in value:
                yield f"{section}.{key}.{name}", value
            elif isinstance(value, dict):
                for sub, v in value.items():
                    yield f"{section}.{key}.{name}.{sub}", v


ALL_NUMBERS = list(_numbers(MATERIALS, "materials")) + list(_numbers(PROCESSES, "processes"))


@pytest.mark.parametrize(("path", "entry"), ALL_NUMBERS, ids=[p for p, _ in ALL_NUMBERS])
def test_every_number_is_positive_with_unit_and_source(path, entry):
    """Invariant: provenance of every bundled number."""
    sources = {**MATERIALS["sources"], **PROCESSES["sources"]}
    assert isinstance(entry["value"], int | float) and entry["value"] > 0, path
    assert isinstance(entry["unit"], str) and entry["unit"], path
    assert entry["source"] in sources, path
    src = sources[entry["source"]]
    assert src["kind"] in ("handbook", "practice", "memory", "indicative")
    assert len(src["citation"]) > 10


def test_required_entries_present():
    assert REQUIRED_MATERIALS <= set(MATERIALS["materials"])
    assert REQUIRED_PROCESSES <= set(PROCESSES["processes"])
    for key in REQUIRED_MATERIALS:
        m = MATERIALS["materials"][key]
        assert set(MATERIAL_FIELDS) <= set(m), key
        assert m["price"]["source"] == "price_2024"  # prices are marked indicative
        assert "bare" in m["emissivity"]
    for key in REQUIRED_PROCESSES:
        p = PROCESSES["processes"][key]
        required = set(PROCESS_FIELDS) - {"joint_resistance", "groove_depth"}
        assert required <= set(p), key
        assert set(p["cost"]) <= set(COST_FIELDS)
        assert p["materials"]


def test_bonded_fins_carry_a_bond_line():
    lib = load_library()
    bonded = lib.processes["bonded"]
    # epoxy bond lines 0.05-0.3 K cm^2/W (common practice, no source)
    assert 0.05e-4 <= bonded.limit("joint_resistance") <= 0.3e-4
    assert not bonded.monolithic


def test_conductivities_match_the_handbook_values():
    """Published check values (data-file check): AA typical 209 / 167 W/mK for 6063-T5 /
    6061-T6; stockist sheet 388-391 W/mK for C11000 (reference notes, physics.md section 8)."""
    lib = load_library()
    k = {key: m.conductivity.si for key, m in lib.materials.items()}
    assert k["al_6063_t5"] == 209
    assert k["al_6061_t6"] == 167
    assert 388 <= k["cu_c11000"] <= 391
    assert k["al_a380"] == pytest.approx(96, rel=0.15)  # NADCA 96.2 [from memory]


def test_processes_per_material_are_derived():
    lib = load_library()
    assert "die_casting" in lib.materials["al_a380"].processes
    assert "extrusion" not in lib.materials["cu_c11000"].processes


def test_overrides_replace_values_and_mark_the_source():
    lib = load_library({"cu_c11000": {"price": "14.5 USD/kg"}}, {"extrusion": {"min_gap": "2 mm"}})
    assert lib.materials["cu_c11000"].price.si == 14.5
    assert lib.materials["cu_c11000"].price.source == "user"
    assert lib.processes["extrusion"].limit("min_gap") == pytest.approx(2e-3)


def test_bad_override_names_the_field():
    with pytest.raises(DataError, match=r"materials\.cu_c11000\.price"):
        load_library({"cu_c11000": {"price": "14.5 W"}})
    with pytest.raises(DataError, match="money must be in USD"):
        load_library({"cu_c11000": {"price": "14.5 EUR/kg"}})


def test_missing_source_is_refused():
    mats = yaml.safe_load(yaml.safe_dump(MATERIALS))
    del mats["materials"]["al_6063_t5"]["density"]["source"]
    with pytest.raises(DataError, match=r"al_6063_t5\.density: every value needs a source"):
        parse_library(mats, PROCESSES)


def test_array_views_are_consistent():
    lib = load_library()
    emis = lib.array("emissivity")
    assert emis.shape == (len(lib.materials), len(lib.finishes))
    assert math.isnan(emis[lib.material_code("cu_c11000"), lib.finish_code("anodised")])
    allowed = lib.array("allowed")
    assert allowed[lib.process_code("die_casting"), lib.material_code("al_a380")]
    assert not allowed[lib.process_code("extrusion"), lib.material_code("cu_c11000")]
