"""Tests of optifin.physics.spreading: spreading resistance of sources on a base plate.

Every test names its kind: published check value, invariant, cross-method or regression.
The check values of physics.md §5 are [calc] (computed from formulas, the Song-Lee-Au one
remembered [mem]); each is checked here by an independent method written in this file: an
exact Bessel series for a disk (itself checked against the classical half-space limits),
and a 3-D finite-volume conduction solution (scipy.sparse) for the rectangular series.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.special import j0, j1, jn_zeros

from optifin.physics import spreading
from optifin.physics.registry import get
from optifin.physics.spreading import (
    flux_channel_influence_muzychka_2003 as influence,
)
from optifin.physics.spreading import (
    flux_channel_resistance_muzychka_2003 as resistance,
)
from optifin.physics.spreading import spreading_song_lee_au_1994 as lee

from ._fv import pcg

# physics.md table, check values 27 and 28: (a, b, t, k, h, c, d, X, Y) in SI
CASE_27 = (0.05, 0.05, 0.005, 200.0, 1000.0, 0.02, 0.02, 0.025, 0.025)
CASE_28 = (0.05, 0.05, 0.004, 200.0, 2000.0, 0.01, 0.01, 0.015, 0.02)


# --------------------------------------------------------------------------------------
# independent reference 1: exact series for a circular isoflux source on a disk
# (separation of variables, J1(λ b) = 0, adiabatic rim, convective far face; physics.md
# §5.2, matching Yovanovich, Culham & Teertstra 1998 [from memory])


def _disk_series(a, b, t, k, h, n=20000):
    """Spreading part (average, centre) of a source of radius a on a disk of radius b."""
    lam = jn_zeros(1, n) / b
    th = np.tanh(lam * t)
    ratio = h / (k * lam)
    phi = (1.0 + ratio * th) / (th + ratio)
    weight = phi / j0(lam * b) ** 2
    r_avg = 4.0 / (np.pi * k * a**2 * b**2) * np.sum(j1(lam * a) ** 2 * weight / lam**3)
    r_max = 2.0 / (np.pi * k * a * b**2) * np.sum(j1(lam * a) * weight / lam**2)
    return r_avg, r_max


# --------------------------------------------------------------------------------------
# independent reference 2: 3-D finite volumes on a uniform grid, adiabatic sides, isoflux
# sources on the top face, convection (half-cell conduction in series with 1/h) below


def _finite_volume_top(a, b, t, k, h, n_xy, n_z, sources, powers):
    """Top-face temperature rise (n_x, n_y) and cell centres for sources (c, d, X, Y)."""
    nx, ny = n_xy, round(n_xy * b / a)
    dx, dy, dz = a / nx, b / ny, t / n_z

    def neumann(n, step):
        main = np.full(n, 2.0)
        main[[0, -1]] = 1.0
        return sp.diags([-np.ones(n - 1), main, -np.ones(n - 1)], [-1, 0, 1]) / step**2

    lz = neumann(n_z, dz).tolil()
    lz[-1, -1] += 1.0 / (k * dz * (dz / (2 * k) + 1.0 / h))  # bottom: film + half cell
    eye = sp.identity
    matrix = k * (
        sp.kron(sp.kron(neumann(nx, dx), eye(ny)), eye(n_z))
        + sp.kron(sp.kron(eye(nx), neumann(ny, dy)), eye(n_z))
        + sp.kron(sp.kron(eye(nx), eye(ny)), lz.tocsr())
    )
    xc, yc = (np.arange(nx) + 0.5) * dx, (np.arange(ny) + 0.5) * dy
    flux = np.zeros((nx, ny))
    for (c, d, x0, y0), power in zip(sources, powers, strict=True):
        on = (np.abs(xc[:, None] - x0) < c / 2) & (np.abs(yc[None, :] - y0) < d / 2)
        assert on.sum() * dx * dy == pytest.approx(c * d), "sources must fit the grid"
        flux += on * power / (c * d)
    rhs = np.zeros((nx, ny, n_z))
    rhs[:, :, 0] = flux / dz
    temp = pcg(matrix.tocsr(), rhs.ravel()).reshape(nx, ny, n_z)
    return temp[:, :, 0] + flux * dz / (2 * k), xc, yc


def _fv_rises(plate, sources, powered, n_xy, n_z):
    """Mean and centre-point rise over every source with only source `powered` on (1 W)."""
    top, xc, yc = _finite_volume_top(*plate, n_xy, n_z, [sources[powered]], [1.0])
    means, centres = [], []
    for c, d, x0, y0 in sources:
        on = (np.abs(xc[:, None] - x0) < c / 2) & (np.abs(yc[None, :] - y0) < d / 2)
        means.append(top[on].mean())
        ix, iy = np.argsort(np.abs(xc - x0))[:2], np.argsort(np.abs(yc - y0))[:2]
        centres.append(top[np.ix_(ix, iy)].mean())  # centres lie on grid nodes
    return np.array(means), np.array(centres)


def _richardson(coarse, fine):
    return (4.0 * fine - coarse) / 3.0


# --------------------------------------------------------------------------------------
# Song, Lee & Au closed form


def test_lee_closed_form_check_value_25():
    """Regression (formula check): physics.md check value 25 [calc from a formula [mem]].

    a = 11.2838 mm, b = 28.2095 mm (A_s = 4 cm², A_p = 25 cm²), t = 5 mm, k = 200, h = 1000.
    The table values 0.084852 / 0.123607 are the spreading parts: the ψ-based totals
    including ετ/√π are 0.094852 / 0.133607, i.e. t/(k A_p) = 0.01 K/W more. Independent
    check of the formula: test_lee_against_exact_disk_series.
    """
    a, b = 11.2838e-3, 28.2095e-3
    source_area, plate_area = np.pi * a**2, np.pi * b**2
    r_avg, r_max = lee(source_area, plate_area, 5e-3, 200.0, 1000.0)
    assert r_avg == pytest.approx(0.084852, rel=1e-4)
    assert r_max == pytest.approx(0.123607, rel=1e-4)
    one_d = spreading.one_dimensional_resistance(5e-3, 200.0, plate_area)
    assert one_d == pytest.approx(0.01, rel=1e-5)
    assert r_avg + one_d == pytest.approx(0.094852, rel=1e-4)
    assert r_max + one_d == pytest.approx(0.133607, rel=1e-4)


def test_disk_series_half_space_limits():
    """Published check value (classical [from memory]): half-space limits of the disk series.

    An isoflux disk of radius a on a half space: R_max = 1/(π k a), R_avg = 8/(3π² k a).
    physics.md check value 24: the series within 0.2 % at ε = 0.001.
    """
    k, a = 1.0, 1e-3
    r_avg, r_max = _disk_series(a, 1.0, 1.0, k, 1e12, n=40000)
    assert r_avg == pytest.approx(8.0 / (3.0 * np.pi**2 * k * a), rel=2e-3)
    assert r_max == pytest.approx(1.0 / (np.pi * k * a), rel=2e-3)


def test_lee_against_exact_disk_series():
    """Cross-method: Song-Lee-Au against the exact disk series (physics.md §5 [calc]).

    Check value 26, exact disk: R_s,avg = 0.091139, R_s,max = 0.125381; Lee is 6.9 % and
    1.4 % low. More pairs (a, b, t, k, h) -> exact avg (Lee avg): (5, 50, 3 mm; 390; 500)
    0.26484 (0.25276); (2, 20, 1 mm; 390; 1e4) 0.62430 (0.67092); (10, 30, 2 mm; 200; 100)
    0.26583 (0.24423).
    """
    a, b = 11.2838e-3, 28.2095e-3
    exact_avg, exact_max = _disk_series(a, b, 5e-3, 200.0, 1000.0)
    assert exact_avg == pytest.approx(0.091139, rel=1e-4)
    assert exact_max == pytest.approx(0.125381, rel=1e-4)
    lee_avg, lee_max = lee(np.pi * a**2, np.pi * b**2, 5e-3, 200.0, 1000.0)
    assert lee_avg / exact_avg - 1 == pytest.approx(-0.069, abs=1e-3)
    assert lee_max / exact_max - 1 == pytest.approx(-0.014, abs=1e-3)
    pairs = [
        ((5e-3, 50e-3, 3e-3, 390.0, 500.0), 0.26484, 0.25276),
        ((2e-3, 20e-3, 1e-3, 390.0, 1e4), 0.62430, 0.67092),
        ((10e-3, 30e-3, 2e-3, 200.0, 100.0), 0.26583, 0.24423),
    ]
    for (ra, rb, t, k, h), want_exact, want_lee in pairs:
        got_exact, _ = _disk_series(ra, rb, t, k, h)
        got_lee, _ = lee(np.pi * ra**2, np.pi * rb**2, t, k, h)
        assert got_exact == pytest.approx(want_exact, rel=1e-4)
        assert got_lee == pytest.approx(want_lee, rel=1e-4)
        assert abs(got_lee / got_exact - 1) < 0.10


def test_lee_limits_and_no_nan():
    """Invariant: zero where the source covers the plate, half-space limit for ε -> 0."""
    r_avg, r_max = lee(np.array([25e-4, 30e-4, 24.99e-4]), 25e-4, 5e-3, 200.0, 1000.0)
    assert r_avg[0] == 0.0 and r_max[0] == 0.0
    assert r_avg[1] == 0.0 and r_max[1] == 0.0  # source larger than the plate: no NaN
    assert 0.0 < r_avg[2] < 1e-5
    # ε -> 0 on a thick plate: R_max -> 1/(π k a) (exact half space), R_avg -> 1/(2√π k a)
    a, k = 1e-5, 100.0
    r_avg, r_max = lee(np.pi * a**2, np.pi * 1.0**2, 1.0, k, np.inf)
    assert r_max == pytest.approx(1.0 / (np.pi * k * a), rel=2e-5)
    assert r_avg == pytest.approx(1.0 / (2.0 * np.sqrt(np.pi) * k * a), rel=2e-5)
    assert np.all(np.isfinite(lee(1e-4, 25e-4, 5e-3, 200.0, np.array([1e-3, 1.0, np.inf]))))


# --------------------------------------------------------------------------------------
# Muzychka, Culham & Yovanovich series


def test_series_check_values_27_28_against_finite_volume():
    """Cross-method: physics.md check values 27 and 28 [calc] and a 3-D finite-volume solve.

    27: 50 × 50 plate, 20 × 20 centred source, t = 5 mm, k = 200, h = 1000: R_total =
    0.500376 (R_sp = 0.090376). 28: 10 × 10 source at (15, 20) mm, t = 4 mm, h = 2000:
    R_total = 0.499696 (R_sp = 0.291696). The finite volumes (1 mm and 0.5 mm grids,
    Richardson-extrapolated) give 0.50042 and 0.50006. Their own error, from a further
    0.25 mm grid for case 28, is about 5e-4 relative (the flux step at the source edges
    slows the convergence of the mean), so the tolerance is 1e-3 of R_total (0.2 % of R_sp).
    """
    for case, want_total, want_sp, n_z in (
        (CASE_27, 0.500376, 0.090376, 5),
        (CASE_28, 0.499696, 0.291696, 4),
    ):
        r_total, r_sp = resistance(*case)
        assert r_total == pytest.approx(want_total, rel=1e-5)
        assert r_sp == pytest.approx(want_sp, rel=1e-4)
        plate, source = case[:5], [case[5:]]
        coarse, _ = _fv_rises(plate, source, 0, 50, n_z)
        fine, _ = _fv_rises(plate, source, 0, 100, 2 * n_z)
        assert r_total == pytest.approx(_richardson(coarse, fine)[0], rel=1e-3)
    # third row of the physics.md §5.3 table [calc], 100 × 60 plate: 0.505770
    assert resistance(0.1, 0.06, 0.003, 390.0, 500.0, 0.02, 0.01, 0.05, 0.03)[0] == (
        pytest.approx(0.505770, rel=1e-4)
    )


def test_two_source_influence_matrix_against_finite_volume():
    """Cross-method: mean, centre and cross influences of two unequal sources vs 3-D FV.

    50 × 50 × 3 mm plate, k = 200, h = 1500; 10 × 10 source at (15, 15) mm and 8 × 12 at
    (36, 31) mm. FV on 1 mm and 0.5 mm grids, Richardson-extrapolated. Measured agreement:
    self means 6e-4 (the FV error, see above), centre rises 1e-5, cross terms 1e-7.
    Also superposition: both sources on at 3 W and 7 W against one FV solve.
    """
    plate = (0.05, 0.05, 0.003, 200.0, 1500.0)
    sources = [(0.010, 0.010, 0.015, 0.015), (0.008, 0.012, 0.036, 0.031)]
    c, d, x0, y0 = (np.array(v) for v in zip(*sources, strict=True))
    mean, centre = influence(*plate, c, d, x0, y0)
    fv_mean, fv_centre = np.empty((2, 2)), np.empty((2, 2))
    for j in range(2):
        coarse = _fv_rises(plate, sources, j, 50, 3)
        fine = _fv_rises(plate, sources, j, 100, 6)
        fv_mean[:, j] = _richardson(coarse[0], fine[0])
        fv_centre[:, j] = _richardson(coarse[1], fine[1])
    np.testing.assert_allclose(np.diag(mean), np.diag(fv_mean), rtol=1e-3)
    np.testing.assert_allclose(centre, fv_centre, rtol=1e-4)
    assert mean[0, 1] == pytest.approx(fv_mean[0, 1], rel=1e-5)
    assert mean[1, 0] == pytest.approx(fv_mean[1, 0], rel=1e-5)
    # superposition (linearity) against one FV solve with both sources on
    powers = np.array([3.0, 7.0])
    top, xc, yc = _finite_volume_top(*plate, 100, 6, sources, powers)
    on = (np.abs(xc[:, None] - x0[0]) < c[0] / 2) & (np.abs(yc[None, :] - y0[0]) < d[0] / 2)
    assert (mean @ powers)[0] == pytest.approx(top[on].mean(), rel=2e-3)


def test_source_covering_the_plate_has_no_spreading():
    """Invariant (exact limit): a source on the whole face gives pure 1-D + film resistance."""
    a, b, t, k, h = 0.08, 0.05, 0.006, 167.0, 800.0
    r_total, r_sp = resistance(a, b, t, k, h, a, b, a / 2, b / 2)
    one_d = spreading.one_dimensional_resistance(t, k, a * b) + 1.0 / (h * a * b)
    assert r_total == pytest.approx(one_d, rel=1e-13)
    assert abs(r_sp) < 1e-13 * r_total
    mean, centre = influence(a, b, t, k, h, a, b, a / 2, b / 2)
    assert centre[0, 0] == pytest.approx(one_d, rel=1e-12)
    assert mean.shape == (1, 1)


def test_centred_square_closed_form_and_equivalent_circle():
    """Cross-method: Lee within 10 % of the square-source series; disk vs square within 1 %.

    Check value 27 geometry: the series R_sp = 0.090376, the disk of equal area 0.091139
    (0.8 % apart), Lee 0.084852 (-6.1 %). Centre: series 0.125454, Lee 0.123607.
    """
    _, r_sp = resistance(*CASE_27)
    _, centre = influence(*CASE_27)
    one_d = (0.005 / 200.0 + 1.0 / 1000.0) / 0.05**2
    centre_sp = centre[0, 0] - one_d
    lee_avg, lee_max = lee(0.02**2, 0.05**2, 0.005, 200.0, 1000.0)
    assert abs(lee_avg / r_sp - 1) < 0.10
    assert abs(lee_max / centre_sp - 1) < 0.10
    disk_avg, _ = _disk_series(np.sqrt(4e-4 / np.pi), np.sqrt(25e-4 / np.pi), 0.005, 200.0, 1e3)
    assert disk_avg / r_sp - 1 == pytest.approx(0.0084, abs=5e-4)
    # Lee against the series over source sizes and Biot numbers (square on square)
    for frac in (0.02, 0.1, 0.3, 0.6):
        for t, h in ((0.005, 1000.0), (0.002, 300.0), (0.01, 3000.0)):
            c = np.sqrt(frac) * 0.05
            series = resistance(0.05, 0.05, t, 200.0, h, c, c, 0.025, 0.025)[1]
            assert abs(lee(c * c, 0.05**2, t, 200.0, h)[0] / series - 1) < 0.13


def test_spreading_grows_as_source_shrinks_and_base_thins():
    """Invariant: spreading rises as the source shrinks and (small Bi) as the base thins."""
    sizes = np.array([0.04, 0.03, 0.02, 0.01, 0.005])
    _, r_sp = resistance(0.05, 0.05, 0.005, 200.0, 1000.0, sizes, sizes, 0.025, 0.025)
    assert np.all(np.diff(r_sp) > 0)
    assert np.all(np.diff(lee(sizes**2, 0.05**2, 0.005, 200.0, 1000.0)[0]) > 0)
    thick = np.array([0.02, 0.01, 0.005, 0.002, 0.001])  # Bi = h b/k = 0.14 << λ_c
    _, r_sp = resistance(0.05, 0.05, thick, 200.0, 1000.0, 0.01, 0.01, 0.025, 0.025)
    assert np.all(np.diff(r_sp) > 0)
    assert np.all(np.diff(lee(1e-4, 0.05**2, thick, 200.0, 1000.0)[0]) > 0)
    # isothermal far face (Bi -> inf > λ_c): the reverse, thin bases spread less
    _, r_iso = resistance(0.05, 0.05, thick, 200.0, np.inf, 0.01, 0.01, 0.025, 0.025)
    assert np.all(np.diff(r_iso) < 0)
    assert np.all(np.diff(lee(1e-4, 0.05**2, thick, 200.0, np.inf)[0]) < 0)


def test_isothermal_far_face_is_the_large_h_limit():
    """Invariant: h = inf is finite, NaN-free, and the limit of large h."""
    args = (0.05, 0.04, 0.003, 200.0)
    src = (0.01, 0.008, 0.02, 0.015)
    inf_total, inf_sp = resistance(*args, np.inf, *src)
    big_total, big_sp = resistance(*args, 1e12, *src)
    assert np.isfinite(inf_total) and np.isfinite(inf_sp)
    # h = 1e12 still differs by 4e-8 (film 1/(hab) and k/h in the kernel)
    assert inf_total == pytest.approx(big_total, rel=1e-7)
    assert inf_sp == pytest.approx(big_sp, rel=1e-7)


def test_reciprocity_and_superposition_structure():
    """Invariant: R_ij = R_ji for isoflux sources (mean rises); the centre matrix is not."""
    rng = np.random.default_rng(7)
    n, s = 5, 3
    a, b = rng.uniform(0.04, 0.1, n), rng.uniform(0.04, 0.1, n)
    t, k, h = rng.uniform(0.002, 0.01, n), rng.uniform(150, 400, n), rng.uniform(200, 3e3, n)
    c = rng.uniform(0.004, 0.012, (n, s))
    d = rng.uniform(0.004, 0.012, (n, s))
    x0 = c / 2 + rng.uniform(0, 1, (n, s)) * (a[:, None] - c)
    y0 = d / 2 + rng.uniform(0, 1, (n, s)) * (b[:, None] - d)
    mean, centre = influence(a, b, t, k, h, c, d, x0, y0)
    assert mean.shape == centre.shape == (n, s, s)
    np.testing.assert_allclose(mean, mean.transpose(0, 2, 1), rtol=1e-12)
    assert not np.allclose(centre, centre.transpose(0, 2, 1), rtol=1e-6)
    # self terms dominate, the centre is hotter than the mean, all rises exceed 1-D + film
    diag = np.diagonal(mean, axis1=1, axis2=2)
    one_d = ((t / k + 1 / h) / (a * b))[:, None]
    assert np.all(np.diagonal(centre, axis1=1, axis2=2) > diag)
    assert np.all(diag > one_d)
    # each row equals a single-design call (no mixing across the population axis)
    for i in range(n):
        single, _ = influence(a[i], b[i], t[i], k[i], h[i], c[i], d[i], x0[i], y0[i])
        np.testing.assert_allclose(single, mean[i], rtol=1e-12)


def test_far_apart_sources_interact_weakly():
    """Invariant: on a wide plate two small distant sources barely heat each other."""
    a, b, t, k, h = 0.3, 0.1, 0.004, 200.0, 1000.0
    gaps = np.array([0.02, 0.05, 0.1, 0.2])
    x0 = np.stack([np.full(4, 0.05), 0.05 + gaps], axis=1)  # (N, 2)
    mean, _ = influence(a, b, t, k, h, 0.01, 0.01, x0, 0.05)
    one_d = (t / k + 1 / h) / (a * b)
    cross_sp = mean[:, 0, 1] - one_d
    self_sp = mean[:, 0, 0] - one_d
    assert np.all(np.diff(mean[:, 0, 1]) < 0)
    assert cross_sp[-1] / self_sp[-1] < 0.02
    assert mean[-1, 0, 1] / mean[-1, 0, 0] < 0.05


def test_eccentric_source_spreads_more_than_centred():
    """Invariant: a source near an edge, and more so in a corner, has larger spreading."""
    a = b = 0.06
    places = [(0.03, 0.03), (0.006, 0.03), (0.006, 0.006)]  # centre, edge, corner
    x0, y0 = (np.array(v) for v in zip(*places, strict=True))
    _, r_sp = resistance(a, b, 0.004, 200.0, 1500.0, 0.01, 0.01, x0, y0)
    assert r_sp[0] < r_sp[1] < r_sp[2]
    # mirror symmetry of the plate
    r_mirror = resistance(a, b, 0.004, 200.0, 1500.0, 0.01, 0.01, a - x0, b - y0)[1]
    np.testing.assert_allclose(r_mirror, r_sp, rtol=1e-10)


def test_default_n_terms_convergence():
    """Invariant (numerical convergence): default terms within 1e-4 of 1024 terms.

    Sources of 1/20 of the plate side on thin to thick plates, centred and eccentric
    (measured 2e-5 to 8e-5), and 1/5 of the side (measured below 1e-6).
    """
    t = np.array([0.0005, 0.002, 0.01, 0.05])
    for x0, y0 in ((0.025, 0.025), (0.01, 0.04)):
        args = (0.05, 0.05, t, 200.0, 1000.0, 0.0025, 0.0025, x0, y0)
        default, _ = resistance(*args)
        converged, _ = resistance(*args, n_terms=1024)
        np.testing.assert_allclose(default, converged, rtol=1e-4)
    default, _ = resistance(*CASE_28)
    assert default == pytest.approx(resistance(*CASE_28, n_terms=1024)[0], rel=1e-6)
    _, centre = influence(*CASE_28)
    _, centre_c = influence(*CASE_28, n_terms=1024)
    assert centre[0, 0] == pytest.approx(centre_c[0, 0], rel=1e-5)


def test_blocked_summation_matches_single_block(monkeypatch):
    """Invariant: the result does not depend on how the series is cut into blocks."""
    rng = np.random.default_rng(3)
    n = 4
    a, b = rng.uniform(0.04, 0.1, n), rng.uniform(0.04, 0.1, n)
    c = np.array([0.01, 0.006])
    d = np.array([0.008, 0.012])
    x0 = np.stack([0.3 * a, 0.7 * a], axis=1)
    y0 = np.stack([0.4 * b, 0.6 * b], axis=1)
    args = (a, b, 0.004, 200.0, 900.0, c, d, x0, y0)
    whole = influence(*args, n_terms=40)
    monkeypatch.setattr(spreading, "_BLOCK_ELEMENTS", 64)  # forces many small blocks
    blocked = influence(*args, n_terms=40)
    for one, other in zip(whole, blocked, strict=True):
        np.testing.assert_allclose(one, other, rtol=1e-12)


def test_shapes_and_input_checks():
    """Invariant: output shapes follow the inputs; impossible inputs raise ModelError."""
    from optifin.errors import ModelError

    mean, centre = influence(0.05, 0.05, 0.004, 200.0, 1e3, [0.01, 0.01], 0.01, [0.01, 0.03], 0.02)
    assert mean.shape == centre.shape == (2, 2)
    mean, _ = influence(
        np.full(3, 0.05), 0.05, 0.004, 200.0, 1e3, [0.01, 0.01], 0.01, [0.01, 0.03], 0.02
    )
    assert mean.shape == (3, 2, 2)
    r_total, r_sp = resistance(
        0.05, 0.05, 0.004, 200.0, 1e3, np.full((2, 3), 0.01), 0.01, 0.02, 0.02
    )
    assert r_total.shape == r_sp.shape == (2, 3)
    with pytest.raises(ModelError):
        resistance(0.05, 0.05, 0.004, 200.0, 0.0, 0.01, 0.01, 0.02, 0.02)
    with pytest.raises(ModelError):
        influence(0.05, 0.05, 0.004, 200.0, 1e3, -0.01, 0.01, 0.02, 0.02)
    with pytest.raises(ModelError):
        lee(0.0, 1e-3, 0.004, 200.0, 1e3)


def test_registry_entries_and_validity_groups():
    """Invariant: both methods are registered; placement groups flag sources off the plate."""
    assert get("spreading_song_lee_au_1994").function is lee
    for name in ("flux_channel_influence_muzychka_2003", "flux_channel_resistance_muzychka_2003"):
        entry = get(name)
        assert "Muzychka" in entry.reference
    entry = get("flux_channel_influence_muzychka_2003")
    groups = spreading.source_placement_groups(
        np.array([0.05, 0.05, 0.05]),
        0.05,
        np.array([[0.01], [0.01], [0.001]]),
        0.01,
        np.array([[0.025], [0.004], [0.025]]),
        0.025,
    )
    np.testing.assert_allclose(groups["edge_clearance"], [0.4, -0.02, 0.4], atol=1e-12)
    np.testing.assert_array_equal(entry.out_of_range(**groups), [False, True, True])
    lee_entry = get("spreading_song_lee_au_1994")
    assert lee_entry.out_of_range(epsilon=np.array([0.4, 0.9])).tolist() == [False, True]
