"""Shared numerics of the finite-volume oracles in the physics tests."""

from __future__ import annotations

import numpy as np


def pcg(matrix, rhs, rtol=1e-11):
    """Jacobi-preconditioned conjugate gradients without BLAS calls (no thread contention)."""
    dinv = 1.0 / matrix.diagonal()
    x = np.zeros_like(rhs)
    r = rhs.copy()
    z = dinv * r
    p = z.copy()
    rz = (r * z).sum()
    stop = rtol * np.sqrt((rhs * rhs).sum())
    for _ in range(50000):
        q = matrix @ p
        alpha = rz / (p * q).sum()
        x += alpha * p
        r -= alpha * q
        if np.sqrt((r * r).sum()) < stop:
            return x
        z = dinv * r
        rz_new = (r * z).sum()
        p *= rz_new / rz
        p += z
        rz = rz_new
    raise AssertionError("finite-volume CG did not converge")
