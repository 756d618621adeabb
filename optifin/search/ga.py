"""The genetic search: pymoo 0.6.2 NSGA-II (M-nearest-neighbour crowding) or NSGA-III.

Choices follow measurements of pymoo on a heat-sink-like problem (see DEVELOPERS.md):
integer-coded genes in one float vector snapped by a repair that rounds only the integer
columns, a vectorised problem, M-NN crowding (Kukkonen & Deb 2006) for more than two
objectives, an archive of every feasible design evaluated (the population holds at most
``population`` points), and an explicit evaluation budget.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.algorithms.moo.nsga3 import NSGA3
from pymoo.core.problem import Problem as PymooProblem
from pymoo.core.repair import Repair
from pymoo.operators.selection.tournament import TournamentSelection, compare
from pymoo.operators.survival.rank_and_crowding import RankAndCrowding
from pymoo.util.ref_dirs import get_reference_directions

from optifin.search.encoding import Encoding


class SnapIntegerGenes(Repair):
    """Round the integer-coded genes only (pymoo's RoundingRepair rounds every column)."""

    def __init__(self, encoding: Encoding):
        super().__init__()
        self.encoding = encoding

    def _do(self, problem, X, **kwargs):
        return self.encoding.snap(X)


class VectorisedProblem(PymooProblem):
    """A pymoo problem that scores a whole population with one model call."""

    def __init__(self, encoding: Encoding, n_obj: int, n_constr: int, evaluate: Callable):
        super().__init__(
            n_var=encoding.n_var,
            n_obj=n_obj,
            n_ieq_constr=n_constr,
            xl=encoding.xl,
            xu=encoding.xu,
        )
        self.evaluate_batch = evaluate

    def _evaluate(self, X, out, *args, **kwargs):
        out["F"], out["G"] = self.evaluate_batch(X)


def _compare_by_cv_then_random(pop, P, random_state=None, **kwargs):
    """NSGA-III's tournament, forwarding the random state to every tie-break.

    pymoo 0.6.2's own ``comp_by_cv_then_random`` calls ``compare`` without it, so equal
    constraint violations are broken by the global NumPy state and a seeded run is not
    reproducible (pymoo issue #794, fixed upstream after 0.6.2).
    """
    S = np.full(P.shape[0], np.nan)
    for i in range(P.shape[0]):
        a, b = P[i, 0], P[i, 1]
        if pop[a].CV > 0.0 or pop[b].CV > 0.0:
            S[i] = compare(
                a,
                pop[a].CV,
                b,
                pop[b].CV,
                method="smaller_is_better",
                return_random_if_equal=True,
                random_state=random_state,
            )
        else:
            S[i] = random_state.choice([a, b])
    return S[:, None].astype(int)


def make_algorithm(name: str, encoding: Encoding, n_obj: int, population: int):
    """A configured pymoo algorithm: ``"nsga2"`` or ``"nsga3"``."""
    repair = SnapIntegerGenes(encoding)
    if name == "nsga3":
        partitions = 1
        while (
            len(get_reference_directions("das-dennis", n_obj, n_partitions=partitions + 1))
            <= population
        ):
            partitions += 1
        ref_dirs = get_reference_directions("das-dennis", n_obj, n_partitions=partitions)
        return NSGA3(
            ref_dirs=ref_dirs,
            pop_size=max(population, len(ref_dirs)),
            repair=repair,
            selection=TournamentSelection(func_comp=_compare_by_cv_then_random),
            eliminate_duplicates=True,
        )
    crowding = "mnn" if n_obj > 2 else "cd"
    return NSGA2(
        pop_size=population,
        repair=repair,
        survival=RankAndCrowding(crowding_func=crowding),
        eliminate_duplicates=True,
    )


def run_ga(
    name: str,
    encoding: Encoding,
    n_obj: int,
    n_constr: int,
    evaluate: Callable,
    population: int,
    evaluations: int,
    seed: int,
    on_generation: Callable[[int], None] | None = None,
) -> bool:
    """Run the search until the budget is spent. Returns False if interrupted (Ctrl-C).

    ``evaluate(X) -> (F, G)`` sees every population; it is where the caller keeps its
    archive. ``on_generation(n_eval)`` is called after each generation.
    """
    problem = VectorisedProblem(encoding, n_obj, n_constr, evaluate)
    algorithm = make_algorithm(name, encoding, n_obj, population)
    algorithm.setup(problem, termination=("n_eval", evaluations), seed=seed, verbose=False)
    try:
        while algorithm.has_next():
            algorithm.next()
            if on_generation is not None:
                on_generation(algorithm.evaluator.n_eval)
    except KeyboardInterrupt:
        return False
    return True
