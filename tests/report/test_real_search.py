"""The report of a real (exact) search on a Problem built from the spec dataclasses.

Skipped when the problem or search packages do not import (they are developed alongside).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np
import pytest

from optifin.library import load_library
from optifin.model import Condition, HeatSource
from optifin.report.document import write_extras
from optifin.report.marks import marked_designs

spec = pytest.importorskip("optifin.problem.spec")
search = pytest.importorskip("optifin.search")


def small_problem():
    condition = Condition(
        sources=[HeatSource(30.0, 0.025, 0.025)],
        ambient_temperature=313.15,
        approach_velocity=1.5,
        max_base_temperature=363.15,
    )
    V = spec.Variable
    variables = (
        V("fin_count", "integer", 8, 20),
        V("fin_thickness", "length", 1.2e-3, 1.2e-3),
        V("fin_height", "length", 0.015, 0.030, 0.005),
        V("base_thickness", "length", 0.004, 0.004),
        V("width", "length", 0.05, 0.05),
        V("length", "length", 0.05, 0.05),
        V("material", "choice", choices=("al_6063_t5",)),
        V("process", "choice", choices=("extrusion",)),
        V("finish", "choice", choices=("bare",)),
    )
    return spec.Problem(
        name="report-exact",
        source="<test>",
        description="exact grid for the report test",
        condition=condition,
        variables=variables,
        objectives=(
            spec.Objective("thermal_resistance", "minimise"),
            spec.Objective("mass", "minimise"),
        ),
        limits={"max_base_temperature": 363.15},
        envelope=spec.Envelope(max_height=0.04),
        search=spec.SearchSettings(algorithm="exact"),
        library=load_library(),
        resolved={"name": "report-exact"},
    )


def test_invariant_report_of_a_real_exact_search(tmp_path):
    """Invariant: on a real front, best_ marks are the argmin of each objective, and the
    hook writes a report naming the algorithm and drawings that parse."""
    result = search.optimise(small_problem())
    front = result.front
    assert len(front) >= 3
    marks = marked_designs(front, result.objective_columns)
    for column, _ in result.objective_columns:
        assert marks[f"best_{column}"] == int(np.argmin(front[column].to_numpy()))
    paths = write_extras(result, tmp_path)
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "Algorithm `exact`" in md
    assert f"holds {len(front)} feasible designs" in md
    for path in paths:
        if path.suffix == ".svg":
            ET.fromstring(path.read_bytes())
