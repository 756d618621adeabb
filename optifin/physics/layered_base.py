"""Bases of two conductivities: a clad (two-layer) base and a base with a spreader insert.

A centred rectangular source of uniform heat flux (isoflux) sits on the top face of a base
plate a × b; the bottom face gives its heat to the fins through a uniform effective
heat-transfer coefficient h_eff, the edges are adiabatic. Temperatures are rises above the
fluid h_eff refers to, as in :mod:`optifin.physics.spreading`, and every resistance is the
total one, source to fluid, 1-D and film parts included.

* :func:`two_layer_flux_channel_resistance`: two layers that span the whole plate (a copper
  clad aluminium base, a full-size copper plate bonded to a base); exact Fourier series.
* :func:`insert_base_resistance`: an aluminium base with a copper insert of smaller footprint
  let into its top face under the source; the exact two-layer solution with the insert
  widened to the whole plate, corrected for the aluminium frame around the real insert by
  the two variational bounds of steady conduction (minimum potential and minimum
  complementary energy); :func:`insert_base_resistance_bounds` returns the bounds.

Fourier modes: only the even cosines cos(2jπx'/a) survive for a centred source (x' from the
plate centre), so j = 0 ... n_terms - 1 covers what :mod:`optifin.physics.spreading` reaches
with 2 n_terms modes. All functions broadcast over a population of designs; SI units.
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError
from optifin.numerics import tanh
from optifin.physics.registry import correlation

__all__ = [
    "DEFAULT_N_TERMS",
    "insert_base_resistance",
    "insert_base_resistance_bounds",
    "insert_groups",
    "two_layer_flux_channel_resistance",
]

#: Even Fourier modes per direction of the series (j = 0 ... DEFAULT_N_TERMS - 1), plus a
#: 1-D tail correction. Measured: within 1e-5 of the converged mean rise for sources of 1/10
#: of the plate side and above (see the notes of two_layer_flux_channel_resistance).
DEFAULT_N_TERMS = 64

# Modes per direction for the energy of the frame around an insert (no tail; within 1e-3 of
# 96 modes): it only scales a correction of a few per cent, see insert_base_resistance.
_ENERGY_TERMS = 32
# Gauss-Legendre nodes through the insert thickness for the wall integrals of that energy.
_GAUSS_NODES = 8
# Tail of the series: 1-D sums from n_terms to _TAIL_FACTOR * n_terms.
_TAIL_FACTOR = 16
# Elements per (designs, modes, modes) temporary in the blocked evaluation (8 MB).
_BLOCK_ELEMENTS = 1 << 20

_COMPOUND_REFERENCE = (
    "Muzychka, Yovanovich & Culham, Thermal spreading resistance in compound and orthotropic "
    "systems, J. Thermophysics Heat Transfer 18(1) (2004) 45-51 [from memory; the two-layer "
    "factor re-derived here by a transfer matrix per Fourier mode and checked against a 3-D "
    "finite-volume solution]; Muzychka, Culham & Yovanovich, J. Electronic Packaging 125(2) "
    "(2003) 178-185 (single-layer series) [from memory]"
)

_BOUNDS_REFERENCE = (
    "exact compound flux channel (Muzychka, Yovanovich & Culham 2004 [from memory], "
    "re-derived) corrected by the principles of minimum potential energy (Dirichlet) and "
    "minimum complementary energy (Thomson/Kelvin) of steady conduction, classical [from "
    "memory]; the combination and its accuracy are optifin's own, measured against a 3-D "
    "finite-volume solution"
)


# --------------------------------------------------------------------------------------
# public functions


@correlation(
    "two_layer_flux_channel_muzychka_2004",
    quantity="mean and centre resistance of a centred source on a two-layer plate (K/W)",
    reference=_COMPOUND_REFERENCE,
    validity={"source_fraction": (0.05, 1.0)},
    validity_note=(
        "isoflux rectangular source centred on a plate of two full-span isotropic layers in "
        "perfect contact, adiabatic edges, uniform h_eff on the far face; exact for any "
        "thicknesses and conductivities. source_fraction = min(c/a, d/b) (as "
        "spreading.source_placement_groups gives it); its lower bound 0.05 is the accuracy "
        "of the default terms (about 1e-4 on the mean rise), not a limit of the theory"
    ),
)
def two_layer_flux_channel_resistance(a, b, t1, k1, t2, k2, c, d, h_eff, n_terms=None):
    r"""Resistance of a centred source on a plate of two full-span layers (exact series).

    Layer 1 (thickness t1, conductivity k1) carries the source c × d on its top face,
    layer 2 (t2, k2) lies below it and gives the heat to the fluid through h_eff. With
    α_j = 2jπ/a, γ_l = 2lπ/b, β = √(α_j² + γ_l²), s_j = sin(jπc/a)/(jπc/a),
    σ_l = sin(lπd/b)/(lπd/b) and ε_0 = 1, ε_{j>0} = 2, the mean rise over the source per
    watt is

    .. math::

        R = \frac{1}{a b}\Big[\frac{t_1}{k_1} + \frac{t_2}{k_2} + \frac{1}{h}
            + \sum_{(j,l) \ne (0,0)} ε_j ε_l\, s_j^2 σ_l^2\, Z_1(β)\Big]

    and the rise at the centre of the source replaces s_j² σ_l² by s_j σ_l. Z_1(ζ) is the
    rise of the top face per unit amplitude of flux of wavenumber ζ, built up from the
    fluid by the transfer rule of a layer (k, t) on an impedance Z below it,

    .. math::

        Z_{top} = \frac{Z + \tanh(ζ t)/(k ζ)}{1 + k ζ Z \tanh(ζ t)}, \quad
        Z_2 = Z_{top}(1/h;\, k_2, t_2), \quad Z_1 = Z_{top}(Z_2;\, k_1, t_1)

    For one layer k ζ Z_1 = 1/φ(ζ), the φ of Muzychka, Culham & Yovanovich (2003); for two
    it is the compound-channel factor of Muzychka, Yovanovich & Culham (2004) [from memory],
    here derived from the transfer rule (continuity of temperature and flux at the
    interface) and written as k_1 ζ Z_1 = (κ + tanh ζt_1)/(1 + κ tanh ζt_1), κ = k_1 ζ Z_2.

    Parameters
    ----------
    a, b : array_like
        Plate sides [m].
    t1, k1 : array_like
        Thickness [m] (>= 0) and conductivity [W/(m·K)] of the top layer (the source side).
    t2, k2 : array_like
        Thickness [m] (>= 0) and conductivity [W/(m·K)] of the bottom layer.
    c, d : array_like
        Source sides along a and b [m], 0 < c <= a, 0 < d <= b; centred on the plate.
    h_eff : array_like
        Heat-transfer coefficient on the bottom face [W/(m²·K)], > 0 (inf: isothermal).
    n_terms : int, optional
        Even modes per direction (default :data:`DEFAULT_N_TERMS`).

    Returns
    -------
    r_mean, r_peak : numpy.ndarray
        Source-average and source-centre (maximum) resistance, source to fluid [K/W], the
        broadcast shape of the arguments.

    Notes
    -----
    Validity: perfect contact between the layers (add a contact resistance as a third
    layer of small thickness if needed), isotropic layers, centred isoflux source, adiabatic
    edges, uniform h_eff.

    Limits, exact in the series: k1 = k2 gives the single-layer series of
    :func:`optifin.physics.spreading.flux_channel_resistance_muzychka_2003`; t1 = 0 or
    t2 = 0 gives the single plate of the other layer.

    Numerics: the double sum is truncated at j, l < n_terms and the remainder taken by 1-D
    sums up to 16 n_terms with the other index at its Parseval limit (as in
    :mod:`optifin.physics.spreading`). Measured against 512 terms, t1 = 0.5 ... 10 mm: the
    mean within 3e-7 for c = a/5, 6e-6 for c = a/10 and 7e-5 for c = a/20; the centre
    within 1.3e-6, 2e-6 and 1.9e-4. Cost about half that of
    :func:`optifin.physics.spreading.flux_channel_resistance_muzychka_2003` at its defaults
    (measured 1.1 ms against 2.1 ms a design on a loaded core).

    References
    ----------
    .. [1] Y. S. Muzychka, M. M. Yovanovich, J. R. Culham, "Thermal spreading resistance in
       compound and orthotropic systems", J. Thermophysics Heat Transfer 18(1) (2004)
       45-51.
    .. [2] Y. S. Muzychka, J. R. Culham, M. M. Yovanovich, "Thermal spreading resistance of
       eccentric heat sources on rectangular flux channels", J. Electronic Packaging 125(2)
       (2003) 178-185.
    """
    arrays, shape = _prepare(a, b, t1, k1, t2, k2, c, d, h_eff)
    a, b, t1, k1, t2, k2, c, d, h = arrays
    _check(
        (a > 0) & (b > 0) & (t1 >= 0) & (t2 >= 0) & (k1 > 0) & (k2 > 0) & (h > 0),
        "two-layer series needs a, b > 0, t1, t2 >= 0, k1, k2 > 0 and h_eff > 0",
    )
    _check_source(a, b, c, d)
    terms = _terms(n_terms)
    mean, peak = _blocked(
        lambda sl: _series(a[sl], b[sl], c[sl], d[sl], _Stack(t1, k1, t2, k2, h, sl), terms),
        a.size,
        terms,
    )
    return mean.reshape(shape), peak.reshape(shape)


@correlation(
    "insert_base_variational",
    quantity="mean and centre resistance of a centred source on a base with an insert (K/W)",
    reference=_BOUNDS_REFERENCE,
    validity={"insert_to_source": (1.0, None), "conductivity_ratio": (0.5, 5.0)},
    validity_note=(
        "centred isoflux source over a centred rectangular insert let flush into the top "
        "face, perfect contact, adiabatic edges, uniform h_eff. insert_to_source = "
        "min(c_ins/c, d_ins/d) (insert_groups), conductivity_ratio = k_ins/k_base. Inside "
        "these ranges the estimate was within 3.1 % of 3-D finite volumes (0.6 % for "
        "inserts of twice the source side or more) and lies between two rigorous bounds "
        "(insert_base_resistance_bounds); outside, the bounds still hold, the estimate was "
        "measured at one point (insert 0.8 times the source, 0.9 %)"
    ),
)
def insert_base_resistance(a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff):
    r"""Resistance of a centred source on a base with a centred spreader insert.

    The base (a × b × t_b, conductivity k_base) carries in its top face a centred insert
    c_ins × d_ins × t_ins of conductivity k_ins, flush with the top face, base material
    below it; the source c × d is centred above it. Let R_fs be the exact resistance of the
    insert widened to the whole plate (:func:`two_layer_flux_channel_resistance` with
    layers (t_ins, k_ins) over (t_b - t_ins, k_base)), T_fs its temperature field for 1 W
    and

    .. math::

        G = \int_{frame} |\nabla T_{fs}|^2 \, dV

    over the frame, the part of the top layer outside the insert footprint, where the real
    base has k_base instead of k_ins. With Δk = k_ins - k_base and r = k_ins/k_base, the
    minimum-energy principles bound the true mean resistance (source isoflux):

    .. math::

        R_{fs} + Δk\, G \;\le\; R \;\le\; R_{fs} + Δk\, r\, G \quad (Δk > 0;
        \text{reversed for } Δk < 0)

    (T_fs as trial temperature field gives the lower bound, its heat flux as trial flux
    field the upper one; :func:`insert_base_resistance_bounds`). This function returns the
    midpoint, R = R_fs + Δk G (1 + r)/2, and for the peak (centre) rise
    R_peak = R_fs,peak + (R - R_fs): the frame acts far from the source and shifts the
    rise over it nearly uniformly (measured: the centre shift is 0.87 to 1.0 of the mean
    shift).

    Parameters
    ----------
    a, b : array_like
        Plate sides [m].
    t_b : array_like
        Base thickness [m], > 0.
    k_base : array_like
        Base conductivity [W/(m·K)].
    c_ins, d_ins : array_like
        Insert sides along a and b [m], > 0 (clipped to the plate).
    t_ins : array_like
        Insert thickness [m], 0 <= t_ins <= t_b.
    k_ins : array_like
        Insert conductivity [W/(m·K)].
    c, d : array_like
        Source sides along a and b [m], 0 < c <= a, 0 < d <= b.
    h_eff : array_like
        Heat-transfer coefficient on the bottom face [W/(m²·K)], > 0 (inf: isothermal).

    Returns
    -------
    r_mean, r_peak : numpy.ndarray
        Source-average and source-centre resistance, source to fluid [K/W], the broadcast
        shape of the arguments.

    Notes
    -----
    Accuracy, measured against 3-D finite volumes (quarter plate, Richardson-extrapolated
    from 1 and 0.5 mm grids, their own error about 5e-4) on 50 × 50 and 60 × 40 mm plates,
    t_b = 4 ... 8 mm, k_base = 170 ... 200, inserts of k_ins = 390 (one of 1000, one the
    other way round: 200 in 390), t_ins = 1 ... 6 mm, sources of 10 × 10 and 20 × 10 mm,
    h_eff = 300 ... 10⁴ W/(m²·K):

    * inserts of 2 to 4 times the source side: mean within 0.6 %, centre within 0.6 %;
    * an insert of 1.2 times the source side, 5 of 6 mm deep: -1.8 % and -1.4 %;
    * an insert of the source's size through the whole base: -3.1 % and -2.2 % (the upper
      bound is closer there);
    * an insert of 0.8 times the source side (outside the registered range): -0.9 % and
      +0.9 %.

    The finite-volume value lay between the bounds in every case. The limits hold to
    round-off: k_ins = k_base (Δk = 0) and t_ins = 0 (G = 0, R_fs plain) give the plain
    base, an insert over the whole plate the two-layer base and, through the whole
    thickness, the plain base of insert material.

    For comparison, on the same cases: cascading the source on the insert (taken as a plate
    with h = 1/(A_ins R_below) on its far face) and the insert footprint on the base below
    it, with the closed form of Lee et al. (1995) or the exact series of Muzychka et al.
    (2003) for both steps, was off by +4 % to +140 % when the base below the insert is
    taken without the frame around it, and by -2 % to -16 % when the frame is counted as a
    full layer of base material under the footprint; R_fs alone by 0 to -16 %.

    Numerics: R_fs as in :func:`two_layer_flux_channel_resistance` (64 even modes and the
    tail). G from 32 modes per direction by Green's identity (T_fs is harmonic in the top
    layer) as integrals over the faces of the frame: top and bottom in closed form, the
    walls of the insert by 8-point Gauss-Legendre through t_ins. G is the exact energy of
    the truncated field, within 1e-3 of 96 modes for the cases above and within 0.1 % of
    the finite-volume energy; it only scales the correction. Cost about 1.1 times that of
    :func:`two_layer_flux_channel_resistance`, 0.6 of
    :func:`optifin.physics.spreading.flux_channel_resistance_muzychka_2003` at its defaults
    (measured 1.3 ms against 2.1 ms a design on a loaded core).

    References
    ----------
    .. [1] Y. S. Muzychka, M. M. Yovanovich, J. R. Culham, J. Thermophysics Heat Transfer
       18(1) (2004) 45-51.
    .. [2] S. Lee, S. Song, V. Au, K. P. Moran, Proc. ASME/JSME Thermal Engineering Joint
       Conf. 4 (1995) 199-206 (the cascade compared above).
    """
    lower, upper, r_fs_peak, r_fs = _insert(
        a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff
    )
    r_mean = 0.5 * (lower + upper)
    return r_mean, r_fs_peak + (r_mean - r_fs)


def insert_base_resistance_bounds(a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff):
    """Rigorous lower and upper bounds of the mean resistance of a base with an insert.

    See :func:`insert_base_resistance` for the geometry, the arguments and the bounds
    R_fs + Δk G and R_fs + Δk (k_ins/k_base) G (ordered so that lower <= upper).

    Returns
    -------
    lower, upper : numpy.ndarray
        Bounds of the source-average resistance, source to fluid [K/W]. They hold for the
        exact field; here up to the truncation of the series for R_fs (about 2e-5) and for
        the frame energy G (which scales the width of the interval).
    """
    lower, upper, _, _ = _insert(a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff)
    return lower, upper


def insert_groups(c_ins, d_ins, k_ins, c, d, k_base):
    """Validity groups of :func:`insert_base_resistance` for the registry.

    Parameters
    ----------
    c_ins, d_ins, k_ins : array_like
        Insert sides [m] and conductivity [W/(m·K)].
    c, d : array_like
        Source sides [m].
    k_base : array_like
        Base conductivity [W/(m·K)].

    Returns
    -------
    dict
        ``insert_to_source`` = min(c_ins/c, d_ins/d) [-], ``conductivity_ratio`` =
        k_ins/k_base [-].
    """
    c_ins, d_ins, k_ins, c, d, k_base = _floats(c_ins, d_ins, k_ins, c, d, k_base)
    return {
        "insert_to_source": np.minimum(c_ins / c, d_ins / d),
        "conductivity_ratio": k_ins / k_base,
    }


# --------------------------------------------------------------------------------------
# the insert


def _insert(a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff):
    """Lower bound, upper bound, R_fs at the centre and R_fs (mean), flat and reshaped."""
    arrays, shape = _prepare(a, b, t_b, k_base, c_ins, d_ins, t_ins, k_ins, c, d, h_eff)
    a, b, t_b, kb, ci, di, ti, ki, c, d, h = arrays
    _check(
        (a > 0) & (b > 0) & (t_b > 0) & (kb > 0) & (ki > 0) & (h > 0) & (ci > 0) & (di > 0),
        "insert base needs a, b, t_b, k_base, k_ins, h_eff, c_ins, d_ins > 0",
    )
    _check((ti >= 0) & (ti <= t_b), "insert thickness must lie in 0 <= t_ins <= t_b")
    _check_source(a, b, c, d)
    ci, di = np.minimum(ci, a), np.minimum(di, b)
    t2 = t_b - ti
    terms = _terms(None)
    energy_terms = min(terms, _ENERGY_TERMS)

    def block(sl):
        stack = _Stack(ti, ki, t2, kb, h, sl)
        mean, peak = _series(a[sl], b[sl], c[sl], d[sl], stack, terms)
        g = _frame_energy(a[sl], b[sl], c[sl], d[sl], ci[sl], di[sl], stack, energy_terms)
        return mean, peak, g

    r_fs, r_fs_peak, energy = _blocked(block, a.size, terms)
    # no frame (insert over the whole plate, or of zero thickness): G = 0 exactly
    no_frame = ((ci >= a) & (di >= b)) | (ti == 0)
    energy = np.where(no_frame, 0.0, np.maximum(energy, 0.0))
    dk = ki - kb
    one = r_fs + dk * energy
    other = r_fs + dk * (ki / kb) * energy
    lower, upper = np.minimum(one, other), np.maximum(one, other)
    return tuple(v.reshape(shape) for v in (lower, upper, r_fs_peak, r_fs))


def _frame_energy(a, b, c, d, ci, di, stack, n):
    """∫|∇T|² dV over the frame (top layer outside the insert) of the truncated T_fs, 1 W.

    Green's identity on the harmonic T_fs: the energy is the sum over the frame's faces of
    T ∂T/∂n; the plate edges are adiabatic, so only the top face (the flux of the truncated
    series outside the footprint), the bottom face (flux into layer 2) and the four walls
    of the insert remain.
    """
    j = np.arange(n)
    eps = np.where(j == 0, 1.0, 2.0)
    alpha = 2.0 * np.pi * j / a[:, None]  # (N, n)
    gamma = 2.0 * np.pi * j / b[:, None]
    amp = (
        (eps * np.sinc(j * (c / a)[:, None]))[:, :, None]
        * (eps * np.sinc(j * (d / b)[:, None]))[:, None, :]
        / (a * b)[:, None, None]
    )  # A_jl, flux amplitudes of the source per watt
    beta = np.sqrt(alpha[:, :, None] ** 2 + gamma[:, None, :] ** 2)

    over_x = _overlap(j, ci / a, ci)  # ∫ cos α_j x cos α_j' x over the footprint, (N, n, n)
    over_y = _overlap(j, di / b, di)
    plate_x, plate_y = a[:, None] / eps, b[:, None] / eps  # the same over the whole plate

    def outside(theta, flux):
        """∫ T q_z over the plate outside the footprint at one depth (T, q_z amplitudes)."""
        tt, qq = amp * theta, amp * flux
        whole = np.sum(tt * qq * plate_x[:, :, None] * plate_y[:, None, :], axis=(1, 2))
        inner = np.sum(tt * np.matmul(np.matmul(over_x, qq), over_y), axis=(1, 2))
        return whole - inner

    faces, pair = stack.field(beta)
    theta0, flux0, theta1, flux1 = faces()
    energy = (outside(theta0, flux0) - outside(theta1, flux1)) / stack.k1

    # walls x' = ±c_ins/2 (|y'| < d_ins/2) and y' = ±d_ins/2 (|x'| < c_ins/2): 2 ∫∫ T (-∂T/∂x')
    cos_x, sin_x = np.cos(alpha * ci[:, None] / 2), alpha * np.sin(alpha * ci[:, None] / 2)
    cos_y, sin_y = np.cos(gamma * di[:, None] / 2), gamma * np.sin(gamma * di[:, None] / 2)
    # Gauss-Legendre on [0, t1]: the nodes come in pairs s, 1 - s (even node count)
    nodes, weights = np.polynomial.legendre.leggauss(_GAUSS_NODES)
    walls = np.zeros(a.shape)
    for node, weight in zip(nodes[: _GAUSS_NODES // 2], weights[: _GAUSS_NODES // 2], strict=True):
        for theta in pair(0.5 * node + 0.5):
            tt = amp * theta
            u_x = np.sum(tt * cos_x[:, :, None], axis=1)  # (N, n) over l
            v_x = np.sum(tt * sin_x[:, :, None], axis=1)
            u_y = np.sum(tt * cos_y[:, None, :], axis=2)  # (N, n) over j
            v_y = np.sum(tt * sin_y[:, None, :], axis=2)
            walls += (0.5 * weight) * (_quadratic(u_x, over_y, v_x) + _quadratic(u_y, over_x, v_y))
    walls *= 2.0 * stack.t1
    return energy + walls


def _overlap(j, ratio, width):
    """∫ cos(2jπx/s) cos(2j'πx/s) dx over |x| < width/2, ratio = width/s; (N, n, n).

    = (width/2) [sinc((j - j') r) + sinc((j + j') r)] with sinc(x) = sin(πx)/(πx), the
    sines of the sum and difference from those of jπr by angle addition.
    """
    angle = np.pi * j * ratio[:, None]  # (N, n)
    sin, cos = np.sin(angle)[:, :, None], np.cos(angle)[:, :, None]
    sin_t, cos_t = sin.transpose(0, 2, 1), cos.transpose(0, 2, 1)
    arg_diff = angle[:, :, None] - angle[:, None, :]
    arg_sum = angle[:, :, None] + angle[:, None, :]
    sin_diff = sin * cos_t - cos * sin_t
    sin_sum = sin * cos_t + cos * sin_t
    one = np.ones_like(arg_diff)
    diff = np.divide(sin_diff, arg_diff, out=one.copy(), where=arg_diff != 0)
    total = np.divide(sin_sum, arg_sum, out=one, where=arg_sum != 0)
    return 0.5 * width[:, None, None] * (diff + total)


# --------------------------------------------------------------------------------------
# the layered series


class _Stack:
    """Two layers over the film for a block of designs: impedances and layer-1 fields."""

    def __init__(self, t1, k1, t2, k2, h, sl):
        self.t1, self.k1, self.t2, self.k2 = t1[sl], k1[sl], t2[sl], k2[sl]
        self.g = 1.0 / h[sl]  # film resistance per area, 0 for an isothermal face

    def uniform(self):
        """Z(0) = t1/k1 + t2/k2 + 1/h [m²·K/W]."""
        return self.t1 / self.k1 + self.t2 / self.k2 + self.g

    def _kappa(self, zeta, extra):
        """κ = k1 ζ Z2(ζ): layer 2 on the film, seen from layer 1 (bounded, no overflow)."""
        shape = (-1, *(1,) * extra)
        k2, t2, g = (v.reshape(shape) for v in (self.k2, self.t2, self.g))
        th2 = tanh(zeta * t2)
        kzg = k2 * zeta * g
        return (self.k1.reshape(shape) / k2) * (kzg + th2) / (1.0 + kzg * th2)

    def kernel(self, zeta):
        """k1 ζ Z1(ζ) for ζ > 0; the design axis first."""
        extra = zeta.ndim - 1
        kappa = self._kappa(zeta, extra)
        th1 = tanh(zeta * self.t1.reshape(-1, *(1,) * extra))
        return (kappa + th1) / (1.0 + kappa * th1)

    def field(self, zeta):
        """Layer-1 fields per unit top flux for the modes ζ (N, n, n) of a block.

        θ(z) = P [e^{-ζz} + ρ E e^{-ζ(t1 - z)}], q(z) = -k1 θ' = k1 ζ P [e^{-ζz} -
        ρ E e^{-ζ(t1 - z)}] with E = e^{-ζ t1}, ρ = (κ - 1)/(κ + 1) and
        P = 1/(k1 ζ (1 - ρ E²)), so that q(0) = 1: only decaying exponentials. The (0, 0)
        mode is θ = Z(0) - z/k1, q = 1.

        Returns ``faces()`` -> (θ(0), q(0), θ(t1), q(t1)) and ``pair(s)`` -> (θ(s t1),
        θ((1 - s) t1)), the two depths sharing their exponentials.
        """
        t1, k1 = self.t1[:, None, None], self.k1[:, None, None]
        safe = zeta.copy()
        safe[:, 0, 0] = 1.0
        kappa = self._kappa(safe, 2)
        rho_e = (kappa - 1.0) / (kappa + 1.0)
        e1 = np.exp(-safe * t1)
        rho_e *= e1  # ρ E
        scale = 1.0 / (k1 * safe * (1.0 - rho_e * e1))
        uniform = self.uniform()

        def fix(theta, depth):
            theta[:, 0, 0] = uniform - depth / self.k1
            return theta

        def faces():
            theta0 = fix(scale * (1.0 + rho_e * e1), 0.0)
            theta1 = fix(scale * (e1 + rho_e), self.t1)
            flux0 = np.ones_like(theta0)
            flux1 = k1 * safe * scale * (e1 - rho_e)
            flux1[:, 0, 0] = 1.0
            return theta0, flux0, theta1, flux1

        def pair(s):
            near = np.exp(-safe * (s * t1))
            far = np.exp(-safe * ((1.0 - s) * t1))
            theta_near = fix(scale * (near + rho_e * far), s * self.t1)
            theta_far = fix(scale * (far + rho_e * near), (1.0 - s) * self.t1)
            return theta_near, theta_far

        return faces, pair


def _series(a, b, c, d, stack, n):
    """Mean and centre rise per watt of a centred source, block of designs (N,)."""
    j = np.arange(n)
    eps = np.where(j == 0, 1.0, 2.0)
    sx = np.sinc(j * (c / a)[:, None])  # (N, n)
    sy = np.sinc(j * (d / b)[:, None])
    alpha2 = (2.0 * np.pi * j / a[:, None]) ** 2
    gamma2 = (2.0 * np.pi * j / b[:, None]) ** 2
    beta = np.sqrt(alpha2[:, :, None] + gamma2[:, None, :])
    beta[:, 0, 0] = 1.0
    weight = stack.kernel(beta) / (stack.k1[:, None, None] * beta)  # Z1(β)
    weight[:, 0, 0] = 0.0
    wx, wy = eps * sx, eps * sy
    mean = _quadratic(wx * sx, weight, wy * sy)
    peak = _quadratic(wx, weight, wy)

    # tail: j >= n with the l-sum at its Parseval limit (Σ ε σ² = b/d, Σ ε σ = b/d), and
    # the same with the directions swapped
    tail = np.arange(n, _TAIL_FACTOR * n)
    for side, size, other, other_size in ((a, c, b, d), (b, d, a, c)):
        s = np.sinc(tail * (size / side)[:, None])
        zeta = 2.0 * np.pi * tail / side[:, None]
        z1 = stack.kernel(zeta) / (stack.k1[:, None] * zeta)
        limit = other / other_size
        mean += 2.0 * np.sum(s * s * z1, axis=1) * limit
        peak += 2.0 * np.sum(s * z1, axis=1) * limit
    uniform = stack.uniform()
    area = a * b
    return (mean + uniform) / area, (peak + uniform) / area


# --------------------------------------------------------------------------------------
# helpers


def _quadratic(left, matrix, right):
    """Σ_jl left_j M_jl right_l for each design: (N, n), (N, n, n), (N, n) -> (N,)."""
    return np.matmul(left[:, None, :], np.matmul(matrix, right[:, :, None]))[:, 0, 0]


def _blocked(work, size, terms):
    """Run ``work(slice)`` over blocks of designs and join the tuples of (N,) results."""
    step = max(1, _BLOCK_ELEMENTS // (terms * terms))
    parts = [work(slice(start, start + step)) for start in range(0, size, step)]
    return tuple(np.concatenate(column) for column in zip(*parts, strict=True))


def _prepare(*values):
    arrays = np.broadcast_arrays(*_floats(*values))
    shape = arrays[0].shape
    return [v.reshape(-1) for v in arrays], shape


def _terms(n_terms):
    terms = DEFAULT_N_TERMS if n_terms is None else int(n_terms)
    if terms < 1:
        raise ModelError(f"n_terms must be at least 1, not {n_terms!r}")
    return terms


def _check_source(a, b, c, d):
    _check(
        (c > 0) & (d > 0) & (c <= a * (1 + 1e-12)) & (d <= b * (1 + 1e-12)),
        "the source must have 0 < c <= a and 0 < d <= b",
    )


def _check(ok, message):
    ok = np.asarray(ok)
    if not ok.all():
        raise ModelError(f"{message} ({int((~ok).sum())} of {ok.size} values violate it)")


def _floats(*values):
    return tuple(np.asarray(v, dtype=float) for v in values)
