"""Property tests: whatever a problem file holds, the loader returns a Problem or raises a
ConfigError, never anything else; and what the loader accepts, the JSON Schema accepts.

All tests here are invariants (hypothesis draws the inputs).
"""

from __future__ import annotations

import copy
from typing import Any

import jsonschema
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from optifin.errors import ConfigError
from optifin.problem import load_problem_text, problem_from_mapping, problem_schema
from optifin.problem.format import PROBLEM, Entries, HeatLoad, Range, Section
from optifin.problem.loader import bundled_library
from optifin.problem.spec import OBJECTIVES, Problem

from ._data import read

VALIDATOR = jsonschema.Draft202012Validator(problem_schema())
FIXTURES = ("forced_full.yaml", "natural_minimal.yaml", "flow_exact.yaml")
SETTINGS = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _keys(node, out: set[str]) -> set[str]:
    """Every key the format knows, so that drawn documents reach deep into the tree."""
    if isinstance(node, Section):
        for key, sub in node.fields.items():
            out.add(key)
            _keys(sub, out)
    elif isinstance(node, HeatLoad):
        _keys(node.single, out)
        _keys(node.multi, out)
    elif isinstance(node, Range):
        out.update(("min", "max", "step"))
    elif isinstance(node, Entries):
        _keys(node.item, out)
    return out


LIB = bundled_library()
KNOWN = sorted(
    _keys(PROBLEM, {"choices", *OBJECTIVES, *LIB.material_keys, *LIB.process_keys, *LIB.finishes})
)
WORDS = [
    "1.5 mm",
    "60 W",
    "35 degC",
    "-5 W",
    "0 mm",
    "3 kg",
    "400 LFM",
    "20 CFM",
    "1500 m",
    "85 kPa",
    "0.05 K/W",
    "0.3 K*cm^2/W",
    "13 USD/kg",
    "12 EUR",
    "1e999 mm",
    "nan mm",
    "-300 degC",
    "2 mil",
    "1 mm mm",
    "5 degC/s",
    "forced",
    "natural",
    "minimise",
    "maximize",
    "exact",
    "bare",
    "al_6063_t5",
    "extrusion",
    "mass",
    "heat_rate",
    "",
    " ",
    "٣ mm",
]

scalars = (
    st.none()
    | st.booleans()
    | st.integers(min_value=-(10**20), max_value=10**20)
    | st.integers()
    | st.floats()
    | st.text(max_size=12)
    | st.sampled_from(WORDS)
    | st.dates()
    | st.binary(max_size=4)
)
keys = st.sampled_from(KNOWN) | st.text(max_size=10) | st.integers(-3, 3) | st.none()
values = st.recursive(
    scalars,
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(keys, inner, max_size=5),
    max_leaves=25,
)


def _outcome(doc: Any) -> Problem | None:
    """Load ``doc``; a ConfigError is fine (None), anything else fails the test."""
    try:
        problem = problem_from_mapping(doc, "drawn.yaml")
    except ConfigError as exc:
        assert exc.problems and all(isinstance(p, str) and p for p in exc.problems)
        return None
    assert isinstance(problem, Problem)
    return problem


@SETTINGS
@given(values)
def test_arbitrary_documents_never_raise_anything_else(doc):
    """Invariant: any nested mapping, list or scalar gives a Problem or a ConfigError."""
    _outcome(doc)


@SETTINGS
@given(st.dictionaries(st.sampled_from(list(PROBLEM.fields)), values, max_size=8))
def test_arbitrary_sections_never_raise_anything_else(doc):
    """Invariant: known sections with arbitrary contents give a Problem or a ConfigError."""
    _outcome(doc)


def _paths(node: Any, prefix: tuple = ()) -> list[tuple]:
    out = [prefix]
    if isinstance(node, dict):
        for k, v in node.items():
            out.extend(_paths(v, (*prefix, k)))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.extend(_paths(v, (*prefix, i)))
    return out


def _leaves(node: Any) -> list:
    if isinstance(node, dict):
        return [x for v in node.values() for x in _leaves(v)]
    if isinstance(node, list):
        return [x for v in node for x in _leaves(v)]
    return [node]


def _mutate(data, doc: dict) -> dict:
    doc = copy.deepcopy(doc)
    for _ in range(data.draw(st.integers(1, 3), label="mutations")):
        path = data.draw(st.sampled_from(_paths(doc)), label="path")
        parent = doc
        for key in path[:-1]:
            parent = parent[key]
        action = data.draw(st.sampled_from(["drop", "replace", "swap", "inject"]), label="do")
        target = parent[path[-1]] if path else doc
        if action == "inject" and isinstance(target, dict):
            target[data.draw(keys, label="key")] = data.draw(values, label="value")
        elif not path:
            continue
        elif action == "drop":
            del parent[path[-1]]
        elif action == "replace":
            parent[path[-1]] = data.draw(values, label="value")
        else:  # a value taken from elsewhere in the file: plausible type, wrong place
            parent[path[-1]] = copy.deepcopy(data.draw(st.sampled_from(_leaves(doc)), label="leaf"))
    return doc


@SETTINGS
@given(st.data(), st.sampled_from(FIXTURES))
def test_mutated_problems_never_raise_anything_else(data, name):
    """Invariant: a valid problem with keys dropped, values swapped for random types and
    unknown keys injected gives a Problem or a ConfigError; and whatever the loader accepts,
    the JSON Schema accepts too (the two come from one declaration)."""
    doc = _mutate(data, read(name))
    problem = _outcome(doc)
    materials = doc.get("materials") if isinstance(doc, dict) else None
    defines_new = isinstance(materials, dict) and any(k not in LIB.materials for k in materials)
    if problem is not None and not defines_new:
        errors = [e.message for e in VALIDATOR.iter_errors(doc)]
        assert errors == [], errors


@SETTINGS
@given(st.text(max_size=200))
def test_arbitrary_text_never_raises_anything_else(text):
    """Invariant: any text at all gives a Problem or a ConfigError."""
    try:
        load_problem_text(text)
    except ConfigError:
        pass


@SETTINGS
@given(st.data(), st.sampled_from(FIXTURES))
def test_mutated_yaml_text_never_raises_anything_else(data, name):
    """Invariant: a mutated problem written out as YAML and read back loads or is refused."""
    doc = _mutate(data, read(name))
    try:
        text = yaml.safe_dump(doc, allow_unicode=True)
    except yaml.YAMLError:
        return
    cut = data.draw(st.integers(0, len(text)), label="cut")
    for candidate in (text, text[:cut]):
        try:
            load_problem_text(candidate, source="drawn.yaml")
        except ConfigError:
            pass
