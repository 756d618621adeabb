"""Problem files: the YAML format, its validation, its JSON Schema and the resolved Problem.

>>> from optifin.problem import load_problem_text
>>> problem = load_problem_text('''
... heat_load: {power: "40 W", footprint: ["30 mm", "30 mm"]}
... ambient: {temperature: "35 degC"}
... cooling: {mode: forced, approach_velocity: "400 LFM"}
... variables:
...   fin_count: {min: 8, max: 30}
...   fin_thickness: "1 mm"
...   fin_height: {min: "10 mm", max: "30 mm", step: "1 mm"}
...   base_thickness: "4 mm"
...   width: "60 mm"
...   length: "60 mm"
...   material: al_6063_t5
...   process: extrusion
... objectives: [thermal_resistance, mass]
... ''')
>>> round(problem.condition.approach_velocity, 6)
2.032
"""

from optifin.problem.loader import (
    load_problem,
    load_problem_text,
    problem_from_mapping,
    problem_hash,
)
from optifin.problem.schema import problem_schema, problem_schema_json
from optifin.problem.spec import (
    LIMITS,
    OBJECTIVES,
    VARIABLE_KINDS,
    Envelope,
    Objective,
    Problem,
    SearchSettings,
    Variable,
)

__all__ = [
    "LIMITS",
    "OBJECTIVES",
    "VARIABLE_KINDS",
    "Envelope",
    "Objective",
    "Problem",
    "SearchSettings",
    "Variable",
    "load_problem",
    "load_problem_text",
    "problem_from_mapping",
    "problem_hash",
    "problem_schema",
    "problem_schema_json",
]
