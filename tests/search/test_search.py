"""The search: encoding, exact grid, GA against the exact front, reproducibility."""

import numpy as np
import pytest

from optifin.problem import load_problem_text
from optifin.search import optimise
from optifin.search.encoding import Encoding
from optifin.search.pareto import hypervolume, nondominated, normaliser

SMALL = """
name: small_grid
heat_load: {power: "40 W", footprint: ["30 mm", "30 mm"]}
ambient: {temperature: "35 degC"}
cooling: {mode: forced, approach_velocity: "2 m/s"}
envelope: {max_height: "40 mm"}
variables:
  fin_count: {min: 8, max: 30}
  fin_thickness: {min: "0.6 mm", max: "2.0 mm", step: "0.2 mm"}
  fin_height: {min: "10 mm", max: "35 mm", step: "2.5 mm"}
  base_thickness: {min: "3 mm", max: "6 mm", step: "1 mm"}
  width: "60 mm"
  length: "60 mm"
  material: {choices: [al_6063_t5, cu_c11000]}
  process: {choices: [extrusion, skived]}
objectives: [thermal_resistance, mass, pressure_drop]
constraints:
  max_base_temperature: "90 degC"
  max_pressure_drop: "40 Pa"
search: {algorithm: nsga2, population: 60, evaluations: 9000, seed: 7}
"""


@pytest.fixture(scope="module")
def problem():
    return load_problem_text(SMALL, "small.yaml")


@pytest.fixture(scope="module")
def exact(problem):
    return optimise(problem, algorithm="exact")


def _minimised(result):
    return np.column_stack(
        [
            result.front[c].to_numpy() * (-1.0 if s == "maximise" else 1.0)
            for c, s in result.objective_columns
        ]
    )


def test_encoding_snaps_only_integer_genes(problem):
    enc = Encoding(problem)
    x = (enc.xl + enc.xu) / 2 + 0.3
    snapped = enc.snap(np.vstack([x, x]))
    for i, gene in enumerate(enc.genes):
        if gene.integer:
            assert snapped[0, i] == np.rint(snapped[0, i])
    # material x process combinations: only what the library can make (no extruded copper)
    lib = problem.library
    made = {(lib.material_keys[m], lib.process_keys[p]) for m, p, _, _ in enc.combos}
    assert made == {("al_6063_t5", "extrusion"), ("al_6063_t5", "skived"), ("cu_c11000", "skived")}


def test_exact_front_is_the_brute_force_front(problem, exact):
    """Cross-method: the chunked exact mode against a plain O(n^2) dominance filter of
    every feasible grid design."""
    enc = Encoding(problem)
    from optifin.search.objectives import score

    X = enc.grid_chunk(0, enc.grid_size)
    s = score(problem, enc.decode(X))
    F = s.F[s.feasible]
    worse_eq = (F[None, :, :] <= F[:, None, :]).all(axis=2)
    better = (F[None, :, :] < F[:, None, :]).any(axis=2)
    dominated = (worse_eq & better).any(axis=1)
    brute = np.unique(np.round(F[~dominated], 12), axis=0)
    ours = np.unique(np.round(_minimised(exact), 12), axis=0)
    np.testing.assert_allclose(ours, brute, rtol=1e-9)
    assert exact.evaluations == enc.grid_size


def test_front_rows_are_feasible_and_non_dominated(exact):
    assert exact.front["feasible"].all()
    margins = exact.front.filter(like="margin_")
    assert (margins.to_numpy() >= -1e-12).all()
    assert nondominated(_minimised(exact)).all()


def test_ga_reaches_99_percent_of_the_exact_hypervolume(problem, exact):
    """The GA's archive front reaches at least 99 % of the exact grid front's hypervolume
    (both normalised by the exact front's ideal and nadir), with a fixed seed."""
    result = optimise(problem)
    norm = normaliser(_minimised(exact))
    ratio = hypervolume(_minimised(result), norm) / hypervolume(_minimised(exact), norm)
    assert ratio >= 0.99
    # the archive holds far more than one population
    assert len(result.archive) == result.evaluations
    assert len(result.front) > problem.search.population


@pytest.mark.parametrize("algorithm", ["nsga2", "nsga3"])
def test_same_seed_same_front(problem, algorithm):
    a = optimise(problem, algorithm=algorithm, evaluations=3000)
    b = optimise(problem, algorithm=algorithm, evaluations=3000)
    np.testing.assert_array_equal(_minimised(a), _minimised(b))
    c = optimise(problem, algorithm=algorithm, evaluations=3000, seed=99)
    assert not np.array_equal(_minimised(a), _minimised(c))


def test_history_is_monotone(problem):
    result = optimise(problem, evaluations=3000)
    hv = result.history["hypervolume"].to_numpy()
    assert np.all(np.diff(hv) >= -1e-12)  # an archive front never loses hypervolume
    assert result.history["evaluations"].iloc[-1] == result.evaluations


def test_interrupted_search_keeps_what_it_found(problem, monkeypatch):
    """Ctrl-C during the search: the result holds the archive front so far and says so."""
    import optifin.search as search

    calls = {"n": 0}
    real = search.score

    def stop_after_three(*args, **kwargs):
        calls["n"] += 1
        if calls["n"] == 4:  # the user presses Ctrl-C once, during the fourth generation
            raise KeyboardInterrupt
        return real(*args, **kwargs)

    monkeypatch.setattr(search, "score", stop_after_three)
    result = optimise(problem)
    assert result.interrupted
    assert any("interrupted" in n for n in result.notes)
    assert len(result.front) > 0
    assert result.evaluations < problem.search.evaluations
