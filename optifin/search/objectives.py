"""Objectives and normalised constraints of a problem, for whole populations at once."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optifin.model.design import Designs
from optifin.model.geometry import BIT, LIMIT_CHECKS, NONEXISTENT, manufacturing_margins
from optifin.model.sink import evaluate_arrays
from optifin.problem.spec import LIMITS, LOWER_LIMITS, Problem

#: The process limits, one constraint each (in the model's order).
PROCESS_LIMITS = tuple(name for name, _ in LIMIT_CHECKS)
#: A stand-in objective for designs that cannot exist; only ever compared with its peers.
BAD = 1e12


@dataclass(frozen=True)
class Scores:
    """F (minimised objectives), G (normalised constraints, <= 0 feasible) and margins."""

    F: np.ndarray  # (n, n_obj)
    G: np.ndarray  # (n, n_constr)
    feasible: np.ndarray  # (n,) bool
    arrays: dict  # the model arrays


def constraint_names(problem: Problem) -> list[str]:
    """Names of the constraints, in the column order of G."""
    names = [name for name in LIMITS if name in problem.limits]
    names += [name for name in LOWER_LIMITS if name in problem.limits]
    names += [f"envelope_{name}" for name, _, _ in _envelope_terms(problem)]
    names += [*PROCESS_LIMITS, "exists"]
    return names


def score(problem: Problem, designs: Designs) -> Scores:
    """Evaluate designs and express the problem's objectives and constraints."""
    cond = problem.condition
    arrays = evaluate_arrays(designs, cond, problem.library)
    reasons = arrays["reasons"]
    gone = (reasons & NONEXISTENT) != 0

    columns = []
    for objective in problem.objectives:
        value = arrays[objective.key]
        value = -value if objective.sense == "maximise" else value
        columns.append(np.where(np.isfinite(value), value, BAD))
    F = np.column_stack(columns)

    g = []
    t_a = cond.ambient_temperature
    for name, (key, kind) in LIMITS.items():
        if name not in problem.limits:
            continue
        limit = problem.limits[name]
        scale = (limit - t_a) if kind == "temperature" else abs(limit)
        g.append((arrays[key] - limit) / scale)
    for name, (key, _) in LOWER_LIMITS.items():
        if name in problem.limits:
            limit = problem.limits[name]
            g.append((limit - arrays[key]) / abs(limit))
    for _, bound, size in _envelope_terms(problem):
        g.append((size(designs) - bound) / bound)
    margins = manufacturing_margins(designs, problem.library)
    for name in PROCESS_LIMITS:
        g.append(-margins[name])
    # the sink must exist, fit its sources and reach a steady operating point
    bad = gone | ((reasons & (BIT["no_solution"] | BIT["fan_stall"])) != 0)
    g.append(np.where(bad, 1.0, -1.0))
    G = np.column_stack(g)
    G = np.where(np.isfinite(G), G, 1e3)
    feasible = np.all(G <= 0, axis=1) & (reasons == 0)
    return Scores(F=F, G=G, feasible=feasible, arrays=arrays)


def _envelope_terms(problem: Problem):
    """Envelope bounds that some design of the problem could exceed: (name, bound, size).

    A bound that no design within the variables' ranges can break (a width fixed at the
    envelope's maximum, say) is not a constraint and is left out.
    """
    env = problem.envelope

    def top(name):
        return problem.variable(name).high

    terms = (
        ("max_width", env.max_width, top("width"), lambda d: d.width),
        ("max_length", env.max_length, top("length"), lambda d: d.length),
        (
            "max_height",
            env.max_height,
            top("base_thickness") + top("fin_height"),
            lambda d: d.base_thickness + d.fin_height,
        ),
    )
    return [
        (name, bound, size)
        for name, bound, largest, size in terms
        if bound is not None and largest > bound * (1 + 1e-12)
    ]
