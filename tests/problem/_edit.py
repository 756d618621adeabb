"""Editing problem documents for the tests: set or drop a key, collect the loader's errors,
and drop keys one by one against the schema."""

from __future__ import annotations

import copy

import pytest

from optifin.errors import ConfigError
from optifin.problem import problem_from_mapping

DELETE = object()


def put(doc: dict, path: str, value) -> dict:
    """Set (or with DELETE remove) the value at a dotted path; digits index lists."""
    keys = path.split(".")
    node = doc
    for key in keys[:-1]:
        node = node[int(key)] if isinstance(node, list) else node.setdefault(key, {})
    last = int(keys[-1]) if isinstance(node, list) else keys[-1]
    if value is DELETE:
        del node[last]
    else:
        node[last] = value
    return doc


def problems(doc, source="bad.yaml") -> list[str]:
    """The loader's error lines for a bad document (which must name its source)."""
    with pytest.raises(ConfigError) as info:
        problem_from_mapping(doc, source)
    assert info.value.source == source
    return info.value.problems


def _paths(node, prefix=()):
    if isinstance(node, dict):
        for k, v in node.items():
            yield (*prefix, k)
            yield from _paths(v, (*prefix, k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield (*prefix, i)
            yield from _paths(v, (*prefix, i))


def loader_accepted_drops(doc, schema_messages) -> int:
    """Drop each key of ``doc`` in turn; wherever the loader still accepts the document,
    assert that the schema accepts it too (``schema_messages(doc)`` is empty). Returns how
    many such documents there were."""
    accepted = 0
    for path in list(_paths(doc)):
        mutated = copy.deepcopy(doc)
        node = mutated
        for key in path[:-1]:
            node = node[key]
        del node[path[-1]]
        try:
            problem_from_mapping(mutated, "x.yaml")
        except ConfigError:
            continue
        accepted += 1
        assert schema_messages(mutated) == [], path
    return accepted
