"""Pareto filtering, a running archive front and hypervolume (moocore)."""

from __future__ import annotations

import moocore
import numpy as np


def nondominated(F: np.ndarray) -> np.ndarray:
    """Boolean mask of the non-dominated rows of F (all objectives minimised).

    Duplicated points are all kept (they are the same design in another encoding or truly
    equal designs); weakly dominated points are dropped.
    """
    F = np.asarray(F, dtype=float)
    if F.shape[0] == 0:
        return np.zeros(0, bool)
    return np.asarray(moocore.is_nondominated(F, keep_weakly=True), dtype=bool)


class RunningFront:
    """The non-dominated set of every feasible design seen so far, updated in batches."""

    def __init__(self, n_var: int, n_obj: int):
        self.X = np.zeros((0, n_var))
        self.F = np.zeros((0, n_obj))
        self.snapshots: list[np.ndarray] = []

    def add(self, X: np.ndarray, F: np.ndarray) -> None:
        if X.shape[0]:
            keep = nondominated(F)  # cheap pre-filter of the batch on its own
            X, F = X[keep], F[keep]
            X = np.vstack([self.X, X])
            F = np.vstack([self.F, F])
            X, first = np.unique(X, axis=0, return_index=True)
            F = F[first]
            keep = nondominated(F)
            self.X, self.F = X[keep], F[keep]

    def snapshot(self) -> None:
        """Remember the current front (for the hypervolume history)."""
        self.snapshots.append(self.F.copy())


def normaliser(F: np.ndarray):
    """Fixed ideal and nadir of a front: a function mapping F to [0, 1] per objective."""
    ideal = F.min(axis=0)
    nadir = F.max(axis=0)
    span = np.where(nadir > ideal, nadir - ideal, 1.0)
    return lambda G: (np.asarray(G) - ideal) / span


REFERENCE = 1.1  #: reference point of the normalised hypervolume, per objective


def hypervolume(F: np.ndarray, normalise) -> float:
    """Hypervolume of F after ``normalise``, reference point 1.1 in every objective."""
    if F.shape[0] == 0:
        return 0.0
    Z = normalise(F)
    Z = Z[np.all(Z < REFERENCE, axis=1)]
    if Z.shape[0] == 0:
        return 0.0
    return float(moocore.hypervolume(Z, ref=np.full(Z.shape[1], REFERENCE)))
