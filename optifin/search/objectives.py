"""Objectives and normalised constraints of a problem, for whole populations at once."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optifin.model.design import Designs
from optifin.model.geometry import BIT, NONEXISTENT, manufacturing_margins
from optifin.model.sink import evaluate_arrays
from optifin.problem.spec import LIMITS, Problem

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
    env = problem.envelope
    names += [
        f"envelope_{k}"
        for k in ("max_width", "max_length", "max_height")
        if getattr(env, k) is not None
    ]
    names += [
        "min_fin_thickness",
        "min_gap",
        "max_aspect_ratio",
        "min_base_thickness",
        "max_fin_height",
        "max_width",
        "exists",
    ]
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
    env = problem.envelope
    for bound, value in (
        (env.max_width, designs.width),
        (env.max_length, designs.length),
        (env.max_height, designs.base_thickness + designs.fin_height),
    ):
        if bound is not None:
            g.append((value - bound) / bound)
    margins = manufacturing_margins(designs, problem.library)
    for name in (
        "min_fin_thickness",
        "min_gap",
        "max_aspect_ratio",
        "min_base_thickness",
        "max_fin_height",
        "max_width",
    ):
        g.append(-margins[name])
    # the sink must exist, fit its sources and reach a steady operating point
    bad = gone | ((reasons & BIT["no_solution"]) != 0)
    g.append(np.where(bad, 1.0, -1.0))
    G = np.column_stack(g)
    G = np.where(np.isfinite(G), G, 1e3)
    feasible = np.all(G <= 0, axis=1) & (reasons == 0)
    return Scores(F=F, G=G, feasible=feasible, arrays=arrays)
