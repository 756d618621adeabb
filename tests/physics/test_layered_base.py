"""Tests of optifin.physics.layered_base: two-layer bases and bases with a spreader insert.

Every test names its kind: published check value, invariant, cross-method or regression.
The independent references written here: a 3-D finite-volume solution with a cell-wise
conductivity (quarter plate by symmetry, harmonic-mean face conductances, scipy.sparse,
Jacobi-preconditioned conjugate gradients as in test_spreading.py), Richardson-extrapolated
from 1 mm and 0.5 mm grids; scipy.integrate.solve_bvp for the two-layer factor of one
Fourier mode; the single-layer series of optifin.physics.spreading (separate code).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.integrate import solve_bvp

from optifin.errors import ModelError
from optifin.physics import layered_base
from optifin.physics.layered_base import (
    insert_base_resistance,
    insert_base_resistance_bounds,
    two_layer_flux_channel_resistance,
)
from optifin.physics.registry import get
from optifin.physics.spreading import (
    flux_channel_influence_muzychka_2003 as influence,
)

from ._fv import pcg

# --------------------------------------------------------------------------------------
# independent reference: 3-D finite volumes on a quarter of the plate (both mid-planes are
# planes of symmetry, i.e. adiabatic), cell-wise k, isoflux source on top, film below


def _finite_volume(case, dx, frame_k=None):
    """(mean, centre, frame energy) of a source on a base with an insert, 1 W, grid dx.

    ``case`` = (a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h). Layers of about
    dx/2 in z (at least one cell in the insert). ``frame_k`` replaces the conductivity of
    the top layer outside the insert (k_ins there: the insert widened to the whole plate).
    The frame energy is ∫ |∇T|² dV over that part of the top layer, from the face
    dissipations g ΔT² shared half and half by the two cells.
    """
    a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h = case
    nx, ny = round(a / 2 / dx), round(b / 2 / dx)
    n_ins = max(1, round(2 * t_ins / dx)) if t_ins > 0 else 0
    n_low = max(1, round(2 * (t_b - t_ins) / dx)) if t_b > t_ins else 0
    dz = np.array([t_ins / max(n_ins, 1)] * n_ins + [(t_b - t_ins) / max(n_low, 1)] * n_low)
    xc, yc = (np.arange(nx) + 0.5) * dx, (np.arange(ny) + 0.5) * dx
    zc = np.cumsum(dz) - dz / 2
    shape = (nx, ny, dz.size)
    top_layer = np.broadcast_to((zc < t_ins)[None, None, :], shape)
    footprint = np.broadcast_to(
        ((xc[:, None] < c_ins / 2) & (yc[None, :] < d_ins / 2))[..., None], shape
    )
    k = np.full(shape, k_base)
    k[top_layer & footprint] = k_ins
    k[top_layer & ~footprint] = k_base if frame_k is None else frame_k
    index = np.arange(k.size).reshape(shape)
    faces = []  # (cells 1, cells 2, conductance)
    faces.append((np.s_[:-1], np.s_[1:], dx * dz / (dx / (2 * k[:-1]) + dx / (2 * k[1:]))))
    faces.append(
        (np.s_[:, :-1], np.s_[:, 1:], dx * dz / (dx / (2 * k[:, :-1]) + dx / (2 * k[:, 1:])))
    )
    g_z = dx * dx / (dz[:-1] / (2 * k[:, :, :-1]) + dz[1:] / (2 * k[:, :, 1:]))
    faces.append((np.s_[:, :, :-1], np.s_[:, :, 1:], g_z))
    diag = np.zeros(shape)
    diag[:, :, -1] += dx * dx / (dz[-1] / (2 * k[:, :, -1]) + 1.0 / h)
    rows, cols, vals = [], [], []
    for one, two, g in faces:
        diag[one] += g
        diag[two] += g
        rows += [index[one].ravel(), index[two].ravel()]
        cols += [index[two].ravel(), index[one].ravel()]
        vals += [-g.ravel(), -g.ravel()]
    rows.append(index.ravel())
    cols.append(index.ravel())
    vals.append(diag.ravel())
    matrix = sp.csr_matrix(
        (np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), (k.size, k.size)
    )
    on = (xc[:, None] < c / 2) & (yc[None, :] < d / 2)
    assert on.sum() * dx * dx == pytest.approx(c * d / 4), "the source must fit the grid"
    flux = on / (c * d)  # 1 W on the whole plate, a quarter of it here
    rhs = np.zeros(shape)
    rhs[:, :, 0] = flux * dx * dx
    temp = pcg(matrix, rhs.ravel()).reshape(shape)
    top = temp[:, :, 0] + flux * dz[0] / (2 * k[:, :, 0])
    cell_energy = np.zeros(shape)
    for one, two, g in faces:
        share = 0.5 * g * (temp[one] - temp[two]) ** 2
        cell_energy[one] += share
        cell_energy[two] += share
    frame = top_layer & ~footprint
    # the quarter carries the field of the whole plate at 1 W: 4 quarters; / k for ∫|∇T|²
    energy = 4.0 * (cell_energy[frame] / k[frame]).sum()
    return top[on].mean(), top[0, 0], energy


def _richardson(case, frame_k=None):
    coarse = np.array(_finite_volume(case, 1e-3, frame_k))
    fine = np.array(_finite_volume(case, 0.5e-3, frame_k))
    return (4.0 * fine - coarse) / 3.0


# (a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h), SI; copper in aluminium
CASE_LARGE = (0.05, 0.05, 0.006, 200.0, 0.03, 0.03, 0.003, 390.0, 0.01, 0.01, 2000.0)
CASE_DEEP = (0.06, 0.04, 0.008, 170.0, 0.03, 0.02, 0.006, 390.0, 0.01, 0.01, 3000.0)
CASE_TIGHT = (0.05, 0.05, 0.006, 200.0, 0.012, 0.012, 0.005, 390.0, 0.01, 0.01, 2000.0)
CASE_OBLONG = (0.05, 0.05, 0.006, 200.0, 0.02, 0.02, 0.003, 390.0, 0.02, 0.01, 2000.0)


def _two_layer_of(case):
    """The insert widened to the whole plate: (a, b, t1, k1, t2, k2, c, d, h)."""
    a, b, t_b, k_base, _, _, t_ins, k_ins, c, d, h = case
    return (a, b, t_ins, k_ins, t_b - t_ins, k_base, c, d, h)


# --------------------------------------------------------------------------------------
# two full-span layers


def test_two_layer_against_finite_volume():
    """Cross-method: two-layer series vs 3-D FV, 2 mm copper on 2 mm aluminium.

    50 × 50 mm plate, 10 × 10 mm source, h = 2000. Measured: mean 5e-4 and centre 1e-5
    apart, the FV error of the mean (the flux step at the source edge; see
    test_spreading.py), so the tolerance is 1e-3 and 1e-4.
    """
    case = (0.05, 0.05, 0.004, 200.0, 0.05, 0.05, 0.002, 390.0, 0.01, 0.01, 2000.0)
    fv_mean, fv_centre, fv_energy = _richardson(case)
    mean, peak = two_layer_flux_channel_resistance(*_two_layer_of(case))
    assert mean == pytest.approx(fv_mean, rel=1e-3)
    assert peak == pytest.approx(fv_centre, rel=1e-4)
    assert fv_energy == 0.0  # no frame: the insert is the whole top layer


def test_two_layer_factor_against_solve_bvp():
    """Cross-method: the transfer-matrix factor Z_1(ζ) against a 1-D solve per mode.

    For one Fourier mode θ'' = ζ² θ in each layer, -k1 θ'(0) = 1, θ and k θ' continuous at
    the interface, -k2 θ'(t) = h θ(t); Z_1 = θ(0). Both layers mapped onto s ∈ [0, 1] and
    solved as one system of four equations with solve_bvp (the interface conditions link
    the end of layer 1 to the start of layer 2).
    """
    t1, k1, t2, k2, h = 0.002, 390.0, 0.004, 167.0, 1500.0
    for zeta in (50.0, 400.0, 2000.0):

        def rhs(s, y, zeta=zeta):
            # y = (θ1, θ1', θ2, θ2') in the scaled coordinates of each layer
            return np.vstack([y[1], (zeta * t1) ** 2 * y[0], y[3], (zeta * t2) ** 2 * y[2]])

        def bc(ya, yb):
            return np.array(
                [
                    -k1 * ya[1] / t1 - 1.0,  # unit flux in at the top
                    yb[0] - ya[2],  # θ continuous at the interface
                    k1 * yb[1] / t1 - k2 * ya[3] / t2,  # flux continuous
                    -k2 * yb[3] / t2 - h * yb[2],  # film at the bottom
                ]
            )

        s = np.linspace(0.0, 1.0, 201)
        sol = solve_bvp(rhs, bc, s, np.ones((4, s.size)), tol=1e-10, max_nodes=100000)
        assert sol.success, sol.message
        stack = layered_base._Stack(*(np.array([v]) for v in (t1, k1, t2, k2, h)), slice(None))
        z1 = stack.kernel(np.array([zeta])) / (k1 * zeta)
        assert z1[0] == pytest.approx(sol.sol(0.0)[0], rel=1e-7)


def test_two_layer_equal_conductivities_is_the_single_layer_series():
    """Invariant: k1 = k2 gives the series of spreading.py (separate code) to 1e-10.

    Both keep the modes below 128 (odd ones vanish for a centred source) and the same
    Parseval tail to 2048, so they agree to round-off.
    """
    a, b, t1, t2, k, h = 0.06, 0.04, 0.002, 0.004, 170.0, 500.0
    c, d = np.array([0.02, 0.006]), np.array([0.01, 0.012])
    mean, peak = two_layer_flux_channel_resistance(a, b, t1, k, t2, k, c, d, h)
    for i in range(2):
        ref_mean, ref_centre = influence(a, b, t1 + t2, k, h, c[i], d[i], a / 2, b / 2)
        assert mean[i] == pytest.approx(ref_mean[0, 0], rel=1e-10)
        assert peak[i] == pytest.approx(ref_centre[0, 0], rel=1e-10)


def test_two_layer_limits():
    """Invariant: an empty layer leaves the plain plate of the other; order of layers."""
    a, b, c, d, h = 0.05, 0.05, 0.012, 0.008, 1200.0
    plain_cu = two_layer_flux_channel_resistance(a, b, 0.005, 390.0, 0.0, 200.0, c, d, h)
    same_cu = two_layer_flux_channel_resistance(a, b, 0.0025, 390.0, 0.0025, 390.0, c, d, h)
    top_only = two_layer_flux_channel_resistance(a, b, 0.0, 200.0, 0.005, 390.0, c, d, h)
    for one, other, third in zip(plain_cu, same_cu, top_only, strict=True):
        assert one == pytest.approx(other, rel=1e-12)
        assert one == pytest.approx(third, rel=1e-12)
    # copper on the source side spreads better than copper underneath
    cu_top = two_layer_flux_channel_resistance(a, b, 0.002, 390.0, 0.003, 200.0, c, d, h)
    cu_bottom = two_layer_flux_channel_resistance(a, b, 0.003, 200.0, 0.002, 390.0, c, d, h)
    assert cu_top[0] < cu_bottom[0] and cu_top[1] < cu_bottom[1]
    # a source over the whole plate: 1-D resistances in series with the film
    mean, peak = two_layer_flux_channel_resistance(a, b, 0.002, 390.0, 0.003, 200.0, a, b, h)
    one_d = (0.002 / 390.0 + 0.003 / 200.0 + 1.0 / h) / (a * b)
    assert mean == pytest.approx(one_d, rel=1e-12)
    assert peak == pytest.approx(one_d, rel=1e-12)


def test_two_layer_default_terms_convergence():
    """Invariant (numerical convergence): default terms against 512 (measured 7e-6 worst)."""
    c = np.array([0.005, 0.01, 0.02])
    t1 = np.array([[0.0005], [0.003], [0.01]])
    args = (0.05, 0.05, t1, 390.0, 0.003, 200.0, c, c, 2000.0)
    mean, peak = two_layer_flux_channel_resistance(*args)
    mean_c, peak_c = two_layer_flux_channel_resistance(*args, n_terms=512)
    np.testing.assert_allclose(mean[:, 1:], mean_c[:, 1:], rtol=1e-5)
    np.testing.assert_allclose(peak[:, 1:], peak_c[:, 1:], rtol=1e-5)
    np.testing.assert_allclose(mean[:, 0], mean_c[:, 0], rtol=1e-4)  # c = a/10
    np.testing.assert_allclose(peak[:, 0], peak_c[:, 0], rtol=3e-4)


# --------------------------------------------------------------------------------------
# base with an insert


@pytest.mark.parametrize(
    ("case", "tol_mean", "tol_peak"),
    [
        (CASE_LARGE, 3e-3, 3e-3),  # insert 3 × the source: measured -0.05 %, +0.01 %
        (CASE_DEEP, 6e-3, 6e-3),  # 60 × 40 plate, insert 6 of 8 mm: -0.37 %, -0.24 %
        (CASE_TIGHT, 2.5e-2, 2.0e-2),  # insert 1.2 × the source, 5 of 6 mm: -1.78 %, -1.40 %
        (CASE_OBLONG, 3e-3, 6e-3),  # 20 × 10 source on a 20 × 20 insert: -0.01 %, +0.41 %
    ],
)
def test_insert_against_finite_volume(case, tol_mean, tol_peak):
    """Cross-method: the variational estimate and its bounds against 3-D finite volumes.

    The FV (Richardson from 1 and 0.5 mm grids) has an error of about 5e-4 on the mean
    (test_two_layer_against_finite_volume). Its mean must lie within the bounds (with that
    margin); the estimate within the tolerance beside each case, about 1.5 × the measured
    error plus the FV error. Also the frame energy G of the series against the FV energy
    of the widened insert (measured within 0.1 %).
    """
    fv_mean, fv_centre, _ = _richardson(case)
    mean, peak = insert_base_resistance(*case)
    lower, upper = insert_base_resistance_bounds(*case)
    assert lower * (1 - 1e-3) <= fv_mean <= upper * (1 + 1e-3)
    assert mean == pytest.approx(fv_mean, rel=tol_mean)
    assert peak == pytest.approx(fv_centre, rel=tol_peak)
    if case is CASE_LARGE:
        fs_mean, _ = two_layer_flux_channel_resistance(*_two_layer_of(case))
        energy = (lower - fs_mean) / (case[7] - case[3])
        _, _, fv_energy = _richardson(case, frame_k=case[7])
        assert energy == pytest.approx(fv_energy, rel=1e-2)


def test_insert_limits_are_exact():
    """Invariant: no insert, a base-material insert, and inserts over the whole plate.

    k_ins = k_base and t_ins = 0 give the plain base (the series of spreading.py to 1e-10);
    an insert over the whole plate gives the two-layer base, and through the whole
    thickness the plain base of insert material.
    """
    a, b, t_b, k_b, c, d, h = 0.05, 0.05, 0.006, 200.0, 0.01, 0.01, 2000.0
    plain = influence(a, b, t_b, k_b, h, c, d, a / 2, b / 2)
    plain_cu = influence(a, b, t_b, 390.0, h, c, d, a / 2, b / 2)
    for ins in (
        (0.03, 0.03, 0.003, k_b),  # base material
        (0.03, 0.03, 0.0, 390.0),  # no thickness
    ):
        mean, peak = insert_base_resistance(a, b, t_b, k_b, *ins, c, d, h)
        assert mean == pytest.approx(plain[0][0, 0], rel=1e-10)
        assert peak == pytest.approx(plain[1][0, 0], rel=1e-10)
    mean, peak = insert_base_resistance(a, b, t_b, k_b, a, b, t_b, 390.0, c, d, h)
    assert mean == pytest.approx(plain_cu[0][0, 0], rel=1e-10)
    assert peak == pytest.approx(plain_cu[1][0, 0], rel=1e-10)
    two = two_layer_flux_channel_resistance(a, b, 0.002, 390.0, t_b - 0.002, k_b, c, d, h)
    full = insert_base_resistance(a, b, t_b, k_b, a, b, 0.002, 390.0, c, d, h)
    np.testing.assert_allclose(full, two, rtol=1e-13)
    # an insert larger than the plate is clipped to it
    wide = insert_base_resistance(a, b, t_b, k_b, 2 * a, 2 * b, 0.002, 390.0, c, d, h)
    np.testing.assert_allclose(wide, two, rtol=1e-13)
    # and the approach to t_ins = 0 is continuous (no step at the exact-limit mask): the
    # gain of a very thin insert is linear in its thickness
    gains = [
        plain[0][0, 0] - insert_base_resistance(a, b, t_b, k_b, 0.03, 0.03, t, 390.0, c, d, h)[0]
        for t in (1e-7, 1e-8)
    ]
    assert gains[0] > 0 and gains[0] == pytest.approx(10 * gains[1], rel=1e-3)


def test_insert_monotonicity():
    """Invariant: a wider, thicker or better-conducting insert lowers both resistances.

    Rayleigh's monotonicity: raising k anywhere cannot raise the mean rise of an isoflux
    source. Checked on sweeps, including inserts smaller than the source.
    """
    a, b, t_b, k_b, c, d, h = 0.05, 0.05, 0.006, 200.0, 0.01, 0.01, 2000.0
    sizes = np.linspace(0.004, 0.05, 24)
    for t_ins in (0.001, 0.003, 0.006):
        mean, peak = insert_base_resistance(a, b, t_b, k_b, sizes, sizes, t_ins, 390.0, c, d, h)
        assert np.all(np.diff(mean) < 0) and np.all(np.diff(peak) < 0)
    depth = np.linspace(0.0, t_b, 25)
    for size in (0.008, 0.012, 0.03):
        mean, peak = insert_base_resistance(a, b, t_b, k_b, size, size, depth, 390.0, c, d, h)
        assert np.all(np.diff(mean) < 0) and np.all(np.diff(peak) < 0)
    k_ins = np.linspace(50.0, 2000.0, 30)
    mean, peak = insert_base_resistance(a, b, t_b, k_b, 0.02, 0.02, 0.003, k_ins, c, d, h)
    assert np.all(np.diff(mean) < 0) and np.all(np.diff(peak) < 0)


def test_insert_bounds_order_and_interval():
    """Invariant: lower <= estimate <= upper, for copper in aluminium and the reverse.

    The estimate is the midpoint; the interval shrinks to a point without a frame.
    """
    a, b, t_b, c, d, h = 0.05, 0.05, 0.006, 0.01, 0.01, 2000.0
    for k_b, k_ins in ((200.0, 390.0), (390.0, 200.0), (200.0, 1000.0)):
        sizes = np.array([0.008, 0.012, 0.03, 0.05])
        lower, upper = insert_base_resistance_bounds(
            a, b, t_b, k_b, sizes, sizes, 0.003, k_ins, c, d, h
        )
        mean, _ = insert_base_resistance(a, b, t_b, k_b, sizes, sizes, 0.003, k_ins, c, d, h)
        assert np.all(lower <= mean) and np.all(mean <= upper)
        np.testing.assert_allclose(mean, 0.5 * (lower + upper), rtol=1e-14)
        assert np.all(upper[:-1] > lower[:-1])
        assert upper[-1] == lower[-1]  # full span: exact


def test_blocked_evaluation_and_shapes(monkeypatch):
    """Invariant: results do not depend on the blocking over designs; shapes broadcast."""
    rng = np.random.default_rng(5)
    n = 7
    args = (
        rng.uniform(0.04, 0.08, n),
        rng.uniform(0.04, 0.08, n),
        0.006,
        200.0,
        rng.uniform(0.012, 0.035, n),
        rng.uniform(0.012, 0.035, n),
        rng.uniform(0.0, 0.006, n),
        390.0,
        0.01,
        rng.uniform(0.006, 0.012, n),
        rng.uniform(300.0, 5000.0, n),
    )
    whole = insert_base_resistance(*args)
    two = two_layer_flux_channel_resistance(
        args[0], args[1], 0.002, 390.0, 0.004, 200.0, 0.01, 0.01, 900.0
    )
    monkeypatch.setattr(layered_base, "_BLOCK_ELEMENTS", 1)  # one design per block
    blocked = insert_base_resistance(*args)
    two_blocked = two_layer_flux_channel_resistance(
        args[0], args[1], 0.002, 390.0, 0.004, 200.0, 0.01, 0.01, 900.0
    )
    for one, other in zip((*whole, *two), (*blocked, *two_blocked), strict=True):
        np.testing.assert_allclose(one, other, rtol=1e-13)
    # each design alone gives its row
    single = insert_base_resistance(*(v[3] if np.ndim(v) else v for v in args))
    np.testing.assert_allclose(single, [whole[0][3], whole[1][3]], rtol=1e-13)
    mean, peak = insert_base_resistance(
        0.05, 0.05, 0.006, 200.0, np.full((2, 3), 0.02), 0.02, 0.003, 390.0, 0.01, 0.01, 2e3
    )
    assert mean.shape == peak.shape == (2, 3)


def test_input_checks():
    """Invariant: impossible inputs raise ModelError instead of giving NaN."""
    good = (0.05, 0.05, 0.006, 200.0, 0.02, 0.02, 0.003, 390.0, 0.01, 0.01, 2000.0)
    bad = [
        (6, 0.007),  # insert thicker than the base
        (6, -0.001),
        (8, 0.06),  # source wider than the plate
        (10, 0.0),  # no film
        (7, 0.0),  # k_ins = 0
    ]
    for index, value in bad:
        args = list(good)
        args[index] = value
        with pytest.raises(ModelError):
            insert_base_resistance(*args)
    with pytest.raises(ModelError):
        two_layer_flux_channel_resistance(0.05, 0.05, -1e-3, 390.0, 0.003, 200.0, 0.01, 0.01, 1e3)
    with pytest.raises(ModelError):
        two_layer_flux_channel_resistance(
            0.05, 0.05, 1e-3, 390.0, 0.003, 200.0, 0.01, 0.01, 1e3, n_terms=0
        )
    assert np.all(np.isfinite(insert_base_resistance(*good[:10], np.array([1.0, 1e4, np.inf]))))


def test_registry_entries_and_groups():
    """Invariant: both methods are registered; the groups flag small inserts and odd ratios."""
    entry = get("insert_base_variational")
    assert entry.function is insert_base_resistance
    assert "Muzychka" in entry.reference
    groups = layered_base.insert_groups(
        np.array([0.03, 0.008, 0.03]), 0.03, np.array([390.0, 390.0, 2000.0]), 0.01, 0.01, 200.0
    )
    np.testing.assert_allclose(groups["insert_to_source"], [3.0, 0.8, 3.0])
    np.testing.assert_array_equal(entry.out_of_range(**groups), [False, True, True])
    two = get("two_layer_flux_channel_muzychka_2004")
    assert two.function is two_layer_flux_channel_resistance
    assert two.out_of_range(source_fraction=np.array([0.2, 0.01])).tolist() == [False, True]
