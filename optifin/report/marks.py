"""Designs worth a closer look on a Pareto front: the knee and the best in each objective."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np
import pandas as pd

__all__ = ["binding_constraint", "knee_index", "marked_designs", "minimised_objectives"]

MARGIN_PREFIX = "margin_"


def minimised_objectives(
    front: pd.DataFrame, objective_columns: Sequence[tuple[str, str]]
) -> np.ndarray:
    """The objectives of a front as an (n, m) array, every one turned into a minimisation.

    Maximised columns are negated; non-numeric or missing values become NaN.
    """
    columns = []
    for column, sense in objective_columns:
        if sense not in ("minimise", "maximise"):
            raise ValueError(
                f"objective {column!r}: sense must be 'minimise' or 'maximise', got {sense!r}"
            )
        value = pd.to_numeric(front[column], errors="coerce").to_numpy(dtype=float)
        columns.append(-value if sense == "maximise" else value)
    if not columns:
        return np.zeros((len(front), 0))
    return np.column_stack(columns)


def knee_index(F: np.ndarray) -> int | None:
    """Row of the knee of a front F (all objectives minimised), or None when F is empty.

    Each objective is normalised to [0, 1] between the front's ideal and nadir values. The
    knee is the design farthest from the hyperplane through the extreme designs (the best
    in each objective), on the side of the ideal point: the "maximum bulge" of the front
    towards the ideal, the knee of Das (1999) characterised with normal-boundary
    intersection. In two objectives the hyperplane is the line joining the two ends of the
    front. Where the extreme designs do not span a hyperplane (a repeated extreme, or a
    plane not facing the ideal), the plane :math:`\\sum_i z_i = 1` through the unit points
    is used instead. Ties are broken by the distance to the ideal point, then by the lower
    row.

    Rows with a non-finite objective are ignored. With one objective the knee is the best
    design; with one design it is that design; with two designs (both are extremes, at
    equal distance) it is, by the tie-break, the first row.

    References
    ----------
    I. Das, "On characterizing the 'knee' of the Pareto curve based on normal-boundary
    intersection", Structural Optimization 18, 107-115 (1999), doi:10.1007/BF01195985
    [from memory]. J. Branke, K. Deb, H. Dierolf and M. Osswald, "Finding knees in
    multi-objective optimization", PPSN VIII, LNCS 3242, 722-731 (2004) discuss this and
    angle-based alternatives [from memory].
    """
    F = np.asarray(F, dtype=float)
    if F.ndim != 2 or F.shape[0] == 0:
        return None
    ok = np.all(np.isfinite(F), axis=1)
    if not ok.any():
        return None
    rows = np.flatnonzero(ok)
    G = F[ok]
    if G.shape[1] == 1:
        return int(rows[np.argmin(G[:, 0])])
    ideal, nadir = G.min(axis=0), G.max(axis=0)
    span = np.where(nadir > ideal, nadir - ideal, 1.0)
    Z = (G - ideal) / span
    m = Z.shape[1]
    extremes = Z[np.argmin(Z, axis=0)]  # (m, m): row i is the best design in objective i
    normal = np.ones(m)
    if np.linalg.matrix_rank(extremes) == m:
        a = np.linalg.solve(extremes, np.ones(m))
        if np.all(a > 0):  # a plane a.z = 1 that faces the ideal point (the origin)
            normal = a
    distance = (1.0 - Z @ normal) / np.linalg.norm(normal)
    to_ideal = np.linalg.norm(Z, axis=1)
    # round so that ties in floating point are ties; lexsort: last key is the primary one
    order = np.lexsort((np.arange(len(Z)), to_ideal, -np.round(distance, 12)))
    return int(rows[order[0]])


def marked_designs(
    front: pd.DataFrame, objective_columns: Sequence[tuple[str, str]]
) -> dict[str, int]:
    """Marked designs of a front: label -> row position (``front.iloc``).

    ``"knee"`` is the knee of the front (see :func:`knee_index` for the definition) and
    ``"best_<column>"`` the best design in each objective column, respecting its sense
    (the lowest row among ties). An empty front has no marks; a front of one design marks
    that design under every label. Objectives whose values are all missing get no mark.
    """
    if len(front) == 0:
        return {}
    F = minimised_objectives(front, objective_columns)
    marks: dict[str, int] = {}
    knee = knee_index(F)
    if knee is not None:
        marks["knee"] = knee
    for j, (column, _) in enumerate(objective_columns):
        value = F[:, j]
        finite = np.isfinite(value)
        if finite.any():
            marks[f"best_{column}"] = int(np.argmin(np.where(finite, value, np.inf)))
    return marks


def binding_constraint(row: Mapping) -> tuple[str, float]:
    """The constraint with the smallest normalised margin in a front row: (name, margin).

    Margins are the ``margin_<constraint>`` entries (normalised, >= 0 when satisfied); the
    name is returned without the prefix. Raises ValueError when the row has no finite
    margin.
    """
    keys = row.keys() if hasattr(row, "keys") else row.index
    margins = {}
    for key in keys:
        if isinstance(key, str) and key.startswith(MARGIN_PREFIX):
            try:
                value = float(row[key])
            except (TypeError, ValueError):
                continue
            if np.isfinite(value):
                margins[key[len(MARGIN_PREFIX) :]] = value
    if not margins:
        raise ValueError("the row has no finite margin_<constraint> value")
    name = min(margins, key=margins.__getitem__)
    return name, margins[name]
