"""A small, real result for the report tests: designs evaluated by the model, no search.

The designs are evaluated with :func:`optifin.model.evaluate`; the constraint margins are
computed here from the table the way the search defines them (normalised, >= 0 when met);
the history is hand-made. The problem is a :class:`types.SimpleNamespace` stand-in with the
attributes the report reads, so these tests do not depend on the problem loader.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd

from optifin.library import load_library
from optifin.model import Condition, HeatSource, evaluate

T_AMBIENT = 308.15  # 35 °C
T_LIMIT = 368.15  # 95 °C
MAX_MASS = 0.5  # kg
POWER = 40.0  # W
OBJECTIVES = [("thermal_resistance_K_per_W", "minimise"), ("mass_kg", "minimise")]


def variable(name, kind, low=None, high=None, step=None, choices=()):
    fixed = len(choices) == 1 if kind == "choice" else low == high
    return SimpleNamespace(
        name=name, kind=kind, low=low, high=high, step=step, choices=tuple(choices), fixed=fixed
    )


def forced_condition() -> Condition:
    return Condition(
        sources=[HeatSource(POWER, 0.03, 0.03, interface_resistance=0.05, name="cpu")],
        ambient_temperature=T_AMBIENT,
        approach_velocity=2.0,
        max_base_temperature=T_LIMIT,
    )


def natural_condition() -> Condition:
    return Condition(
        sources=[HeatSource(10.0, 0.02, 0.02)],
        ambient_temperature=298.15,
        cooling="natural",
    )


def front_table(condition: Condition, fin_counts=(11, 13, 15, 17, 22)) -> pd.DataFrame:
    """Evaluated designs with margin columns; aluminium except the last (copper, skived)."""
    n = len(fin_counts)
    copper = np.arange(n) == n - 1
    designs = {
        "fin_count": list(fin_counts),
        "fin_thickness": 1.0e-3,
        "fin_height": 0.025,
        "base_thickness": 0.004,
        "width": 0.06,
        "length": 0.05,
        "material": np.where(copper, "cu_c11000", "al_6063_t5"),
        "process": np.where(copper, "skived", "extrusion"),
    }
    table = evaluate(designs, condition)
    if condition.max_base_temperature is not None:
        limit = condition.max_base_temperature - 273.15
        table["margin_max_base_temperature"] = (limit - table["base_temperature_C"]) / (
            limit - (condition.ambient_temperature - 273.15)
        )
    table["margin_max_mass"] = (MAX_MASS - table["mass_kg"]) / MAX_MASS
    table["margin_envelope_max_width"] = (0.08 - table["width_mm"] * 1e-3) / 0.08
    return table


def make_result(
    front: pd.DataFrame,
    condition: Condition,
    *,
    interrupted=False,
    notes=(),
    history: pd.DataFrame | None = None,
    objectives=OBJECTIVES,
):
    problem = SimpleNamespace(
        name="report-test",
        source="<test>",
        description="A CPU on a small extruded sink, ducted fan",
        condition=condition,
        variables=(
            variable("fin_count", "integer", 8, 24),
            variable("fin_thickness", "length", 1e-3, 1e-3),
            variable("fin_height", "length", 0.01, 0.03, 0.001),
            variable("base_thickness", "length", 0.003, 0.006),
            variable("width", "length", 0.06, 0.06),
            variable("length", "length", 0.05, 0.05),
            variable("material", "choice", choices=("al_6063_t5", "cu_c11000")),
        ),
        objectives=(),
        limits={"max_base_temperature": T_LIMIT, "max_mass": MAX_MASS}
        if condition.max_base_temperature is not None
        else {"max_mass": MAX_MASS},
        envelope=SimpleNamespace(max_width=0.08, max_length=None, max_height=0.04),
        library=load_library(),
        resolved={"name": "report-test"},
    )
    if history is None:
        history = pd.DataFrame(
            {
                "generation": [1, 2, 3, 4],
                "evaluations": [50, 100, 150, 200],
                "hypervolume": [0.61, 0.74, 0.80, 0.82],
                "feasible": [12, 30, 55, 81],
            }
        )
    hv = float(history["hypervolume"].iloc[-1]) if len(history) else 0.0
    return SimpleNamespace(
        problem=problem,
        algorithm="nsga2",
        seed=7,
        front=front,
        archive=front[[c for c in front.columns if not c.startswith("margin_")]],
        history=history,
        evaluations=int(history["evaluations"].iloc[-1]) if len(history) else 0,
        interrupted=interrupted,
        timings={"search_s": 1.5, "model_s": 1.1},
        notes=list(notes),
        objective_columns=list(objectives),
        hypervolume=hv,
    )
