"""Marked designs of a front: the knee, the best in each objective, the binding constraint."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from optifin.report.marks import binding_constraint, knee_index, marked_designs


def convex_symmetric_front(points: int = 7) -> pd.DataFrame:
    """sqrt(f1) + sqrt(f2) = 1: a convex front, symmetric about f1 = f2."""
    s = np.linspace(0.0, 1.0, points)
    return pd.DataFrame({"f1": s**2, "f2": (1.0 - s) ** 2})


def test_invariant_knee_of_symmetric_convex_front_is_its_middle():
    """Invariant: by symmetry the knee of a symmetric convex front is its middle point."""
    front = convex_symmetric_front(7)
    marks = marked_designs(front, [("f1", "minimise"), ("f2", "minimise")])
    assert marks["knee"] == 3
    assert front.iloc[3]["f1"] == pytest.approx(0.25)


def test_invariant_knee_ignores_row_order_scale_and_sense():
    """Invariant: the knee is the same design after shuffling rows, rescaling an objective
    (normalisation) and stating an objective as the maximisation of its negative."""
    front = convex_symmetric_front(9)
    rng = np.random.default_rng(3)
    order = rng.permutation(len(front))
    shuffled = pd.DataFrame(
        {
            "cost": 1000.0 * front["f1"].to_numpy()[order] + 5.0,
            "gain": -front["f2"].to_numpy()[order],
        }
    )
    marks = marked_designs(shuffled, [("cost", "minimise"), ("gain", "maximise")])
    assert order[marks["knee"]] == 4


def test_invariant_knee_in_three_objectives_is_the_centre_of_a_symmetric_front():
    """Invariant: F = 1 - v for unit vectors v of the positive octant is a convex front
    symmetric under permutation of the objectives; its knee is the centre point."""
    v = [
        (1, 0, 0),
        (0, 1, 0),
        (0, 0, 1),
        (1, 1, 0),
        (1, 0, 1),
        (0, 1, 1),
        (1, 1, 1),
        (2, 1, 1),
        (1, 2, 1),
        (1, 1, 2),
    ]
    v = np.array(v, float)
    v /= np.linalg.norm(v, axis=1, keepdims=True)
    F = 1.0 - v
    assert knee_index(F) == 6
    front = pd.DataFrame(F, columns=["a", "b", "c"])
    marks = marked_designs(front, [("a", "minimise"), ("b", "minimise"), ("c", "minimise")])
    assert marks["knee"] == 6


def test_invariant_best_marks_are_argmin_and_argmax():
    """Invariant: best_<objective> is the argmin of a minimised column and the argmax of a
    maximised one, on a random non-dominated front."""
    rng = np.random.default_rng(11)
    x = np.sort(rng.uniform(0.1, 2.0, 15))
    front = pd.DataFrame({"r": x, "q": 10.0 / x + rng.uniform(0, 0.01, 15), "m": x**2})
    objectives = [("r", "minimise"), ("q", "maximise"), ("m", "minimise")]
    marks = marked_designs(front, objectives)
    assert marks["best_r"] == int(np.argmin(front["r"]))
    assert marks["best_q"] == int(np.argmax(front["q"]))
    assert marks["best_m"] == int(np.argmin(front["m"]))
    assert set(marks) == {"knee", "best_r", "best_q", "best_m"}


def test_invariant_tiny_fronts():
    """Invariant: no marks on an empty front; one design carries every mark; of two
    designs each best_ mark is its own extreme and the knee is the first row."""
    objectives = [("f1", "minimise"), ("f2", "minimise")]
    assert marked_designs(pd.DataFrame({"f1": [], "f2": []}), objectives) == {}
    one = marked_designs(pd.DataFrame({"f1": [1.0], "f2": [2.0]}), objectives)
    assert one == {"knee": 0, "best_f1": 0, "best_f2": 0}
    two = marked_designs(pd.DataFrame({"f1": [1.0, 2.0], "f2": [5.0, 3.0]}), objectives)
    assert two == {"knee": 0, "best_f1": 0, "best_f2": 1}


def test_invariant_single_objective_knee_is_the_best():
    """Invariant: with one objective the knee is the best design (here a maximisation)."""
    front = pd.DataFrame({"q": [3.0, 9.0, 4.0]})
    assert marked_designs(front, [("q", "maximise")]) == {"knee": 1, "best_q": 1}


def test_invariant_rows_with_missing_objectives_are_never_marked():
    """Invariant: a row with a NaN objective is not the knee nor the best."""
    front = convex_symmetric_front(5)
    front.loc[2, "f1"] = np.nan
    marks = marked_designs(front, [("f1", "minimise"), ("f2", "minimise")])
    assert 2 not in marks.values()
    assert marks["best_f1"] == 0 and marks["best_f2"] == 4


def test_invariant_unknown_sense_is_an_error():
    """Invariant: a sense other than minimise/maximise is refused, naming the column."""
    with pytest.raises(ValueError, match=r"'f1'.*'min'"):
        marked_designs(pd.DataFrame({"f1": [1.0]}), [("f1", "min")])


def test_invariant_binding_constraint_is_the_smallest_margin():
    """Invariant: the binding constraint has the smallest finite margin_ value."""
    row = pd.Series(
        {
            "mass_kg": 0.01,
            "margin_max_mass": 0.4,
            "margin_min_gap": 0.05,
            "margin_max_base_temperature": 0.12,
            "margin_exists": np.nan,
        }
    )
    assert binding_constraint(row) == ("min_gap", 0.05)
    assert binding_constraint(dict(row)) == ("min_gap", 0.05)
    with pytest.raises(ValueError, match="margin_"):
        binding_constraint({"mass_kg": 1.0})
