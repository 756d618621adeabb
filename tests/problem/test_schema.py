"""The JSON Schema of problem files: valid itself, accepts the fixtures, rejects bad ones.

Cross-method: the schema is generated from the same format tree as the loader, and the
jsonschema library (an independent implementation of draft 2020-12) checks documents with
it, so agreement between the two on the same documents tests the generation.
"""

from __future__ import annotations

import json

import jsonschema
import pytest

from optifin.model.condition import COOLING_MODES
from optifin.problem import problem_from_mapping, problem_schema, problem_schema_json
from optifin.problem.loader import bundled_library
from optifin.problem.spec import LIMITS, LOWER_LIMITS, OBJECTIVES

from ._data import VALID_FILES, read
from ._edit import loader_accepted_drops

SCHEMA = problem_schema()
VALIDATOR = jsonschema.Draft202012Validator(SCHEMA)


def messages(doc) -> list[str]:
    return [e.message for e in VALIDATOR.iter_errors(doc)]


def test_schema_is_a_valid_draft_2020_12_schema():
    """Cross-method: jsonschema's meta-schema check."""
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    assert SCHEMA["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert json.loads(problem_schema_json()) == SCHEMA


@pytest.mark.parametrize("path", VALID_FILES, ids=[p.name for p in VALID_FILES])
def test_valid_fixtures_validate(path):
    """Cross-method: every valid fixture passes the schema."""
    assert messages(read(path.name)) == []


def test_schema_lists_the_choices_and_is_closed():
    """Invariant: enums of library keys, objectives and modes; every object is closed."""
    lib = bundled_library()
    props = SCHEMA["properties"]
    material = props["variables"]["properties"]["material"]["anyOf"][0]
    assert material["enum"] == list(lib.material_keys)
    process = props["variables"]["properties"]["process"]["anyOf"][0]
    assert process["enum"] == list(lib.process_keys)
    finish = props["variables"]["properties"]["finish"]["anyOf"][0]
    assert finish["enum"] == list(lib.finishes)
    assert props["cooling"]["properties"]["mode"]["enum"] == list(COOLING_MODES)
    assert props["objectives"]["items"]["anyOf"][0]["enum"] == list(OBJECTIVES)
    assert set(props["constraints"]["properties"]) == set(LIMITS) | set(LOWER_LIMITS)

    def walk(node):
        if isinstance(node, dict):
            if node.get("type") == "object" and "properties" in node:
                assert node["additionalProperties"] is False, node
                for key, sub in node["properties"].items():
                    assert "description" in sub, key
            for v in node.values():
                walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(SCHEMA)
    for key in ("heat_load", "ambient", "cooling", "variables", "objectives"):
        assert "description" in props[key]


@pytest.mark.parametrize(
    ("change", "fragment"),
    [
        (lambda d: d["variables"].update(fin_thicknes="1 mm"), "fin_thicknes"),
        (lambda d: d.update(colour="red"), "colour"),
        (lambda d: d["ambient"].update(temperature=35), "35"),
        (lambda d: d["cooling"].update(mode="forcd"), "forcd"),
        (lambda d: d["variables"].update(material="al_6036_t5"), "al_6036_t5"),
        (lambda d: d["objectives"].append("speed"), "speed"),
        (lambda d: d.pop("ambient"), "ambient"),
        (lambda d: d["cooling"].update(volumetric_flow="20 CFM"), ""),
        (lambda d: d["ambient"].update(pressure="85 kPa"), ""),
        (lambda d: d["search"].update(population=2), "2"),
        (lambda d: d["heat_load"]["sources"][0].update(power="-5 W"), "-5 W"),
    ],
)
def test_bad_documents_fail(full, change, fragment):
    """Cross-method: documents the loader refuses for their structure fail the schema too."""
    change(full)
    found = messages(full)
    assert found, "schema accepted a bad document"
    assert any(fragment in m for m in found), found


@pytest.mark.parametrize(
    ("path", "value"),
    [
        (("ambient", "temperature"), "-40 degC"),
        (("ambient", "temperature"), "77 degF"),
        (("cooling", "approach_velocity"), "2.032m/s"),
        (("cooling", "approach_velocity"), "+1e2 LFM"),
        (("variables", "fin_count"), 20.0),
        (("variables", "fin_thickness"), "0.001 m"),
        (("objectives",), [{"mass": "maximize"}, "volume"]),
        (("constraints", "max_cost"), "12 USD"),
        (("constraints", "max_material_cost"), 7),
        (("materials", "cu_c11000", "price"), "13 /kg"),
        (("materials", "cu_c11000", "emissivity"), {"bare": 0.05, "shiny": "0.04"}),
        (("processes", "extrusion", "cost"), {"setup": 300, "per_kg": "3 USD/kg"}),
        (("heat_load", "sources", 0, "position"), ["20 mm", "15 mm"]),
    ],
)
def test_spellings_the_loader_accepts_pass_the_schema(full, path, value):
    """Cross-method: valid alternative spellings pass both the loader and the schema."""
    node = full
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    problem_from_mapping(full, "x.yaml")
    assert messages(full) == []


@pytest.mark.parametrize("name", [p.name for p in VALID_FILES])
def test_dropping_any_key_never_leaves_the_schema_stricter(name):
    """Cross-method: drop each key of a valid fixture in turn; whenever the loader still
    accepts the file, the schema accepts it too (the schema is never stricter)."""
    doc = read(name)
    assert loader_accepted_drops(doc, messages) > 0
