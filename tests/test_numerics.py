"""The vectorised bracketed root finder."""

import numpy as np
from scipy.optimize import brentq

from optifin.numerics import bracketed_root


def test_matches_brentq_on_many_brackets():
    """Cross-method: Illinois regula falsi vs scipy.optimize.brentq, one root per element."""
    c = np.linspace(0.5, 50.0, 200)

    def f(x):
        return np.exp(0.1 * x) * x - c

    roots, ok = bracketed_root(f, np.zeros_like(c), np.full_like(c, 30.0), xtol=1e-12)
    expected = [brentq(lambda x, ci=ci: np.exp(0.1 * x) * x - ci, 0.0, 30.0) for ci in c]
    assert ok.all()
    np.testing.assert_allclose(roots, expected, rtol=1e-9)


def test_missing_sign_change_is_reported_not_guessed():
    roots, ok = bracketed_root(lambda x: x**2 + 1.0, np.array([-1.0, 0.0]), np.array([1.0, 2.0]))
    assert not ok.any()
    assert np.isnan(roots).all()


def test_exact_endpoint_roots():
    roots, ok = bracketed_root(lambda x: x - 1.0, np.array([1.0, 0.0]), np.array([2.0, 1.0]))
    assert ok.all()
    np.testing.assert_allclose(roots, [1.0, 1.0])
