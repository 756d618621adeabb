"""Spreading (constriction) resistance of heat sources on a heat-sink base.

A source of uniform heat flux (isoflux) sits on one face of a base plate of thickness t and
conductivity k; the opposite face gives its heat to the fins, modelled as a uniform
effective heat-transfer coefficient h_eff = 1/(R_0 A_p), where R_0 is the resistance of the
sink without spreading and A_p the base area. The plate edges are adiabatic. Temperatures
are rises above the fluid (the temperature h_eff refers to).

Two methods:

* :func:`spreading_song_lee_au_1994`, the closed form of Song, Lee & Au (1994) for a circular
  source centred on a circular plate, applied to rectangles through circles of equal area;
* :func:`flux_channel_influence_muzychka_2003`, the exact series of Muzychka, Culham &
  Yovanovich (2003) for any number of rectangular sources anywhere on a rectangular plate,
  as a matrix of influence coefficients (superposition).

All functions are vectorised over a population of designs; SI units.
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError
from optifin.numerics import tanh
from optifin.physics.registry import correlation

__all__ = [
    "DEFAULT_N_TERMS",
    "flux_channel_influence_muzychka_2003",
    "flux_channel_resistance_muzychka_2003",
    "one_dimensional_resistance",
    "source_placement_groups",
    "spreading_song_lee_au_1994",
]

#: Default number of Fourier terms per direction of the flux-channel series (m, n = 0 ...
#: DEFAULT_N_TERMS - 1, plus the 1-D tail correction). Measured: the mean rise over a source
#: of 1/20 of the plate side is within 1e-4 (2e-5 to 7e-5) of the converged value, over a
#: source of 1/5 within 1e-6 (see the notes of the influence function).
DEFAULT_N_TERMS = 128

# Tail correction runs the 1-D sums from n_terms to _TAIL_FACTOR * n_terms.
_TAIL_FACTOR = 16
# Elements per temporary array in the blocked series (2**20 doubles = 8 MB).
_BLOCK_ELEMENTS = 1 << 20

_LEE_REFERENCE = (
    "Song, Lee & Au, Closed-form equation for thermal constriction/spreading resistances with "
    "variable resistance boundary condition, Proc. IEPS Conf. (1994) 111-121; Lee, Song, Au "
    "& Moran, Constriction/spreading resistance model for electronics packaging, Proc. "
    "ASME/JSME Thermal Engineering Joint Conf. 4 (1995) 199-206; Lee, Calculating spreading "
    "resistance in heat sinks, Electronics Cooling 4(1) (1998) 30-33 "
    "[formula from memory, checked against an exact disk series]"
)

_MUZYCHKA_REFERENCE = (
    "Muzychka, Culham & Yovanovich, Thermal spreading resistance of eccentric heat sources on "
    "rectangular flux channels, J. Electronic Packaging 125(2) (2003) 178-185 [from memory; "
    "series re-derived and checked against a 3-D finite-volume solution]"
)


def one_dimensional_resistance(thickness, k, area):
    """Resistance of a slab to 1-D conduction, R = t/(k A).

    Parameters
    ----------
    thickness : array_like
        Slab thickness t [m].
    k : array_like
        Conductivity [W/(m·K)].
    area : array_like
        Area normal to the flow of heat [m²].

    Returns
    -------
    numpy.ndarray
        R [K/W].
    """
    thickness, k, area = (np.asarray(v, dtype=float) for v in (thickness, k, area))
    return thickness / (k * area)


@correlation(
    "spreading_song_lee_au_1994",
    quantity="spreading resistance, source-average and centre (maximum), without the 1-D term",
    reference=_LEE_REFERENCE,
    validity={
        "epsilon": (0.0, 0.77),
        "plate_aspect_ratio": (1.0, 1.1),
        "source_aspect_ratio": (1.0, 2.0),
    },
    validity_note=(
        "isoflux source centred on the plate, adiabatic edges, uniform h_eff on the far face; "
        "epsilon = sqrt(A_s/A_p); aspect ratios are long side over short side. Rectangles are "
        "replaced by circles of equal area. The ranges are optifin's own cross-check against "
        "the exact rectangular series (flux_channel_resistance_muzychka_2003), not published "
        "limits: on a square plate, sources of aspect ratio up to 2 and area fraction up to "
        "0.6 (epsilon 0.77) come within 14 % (average); a source of area fraction 0.8 is off "
        "by up to +45 % (small spreading there); a plate of aspect 1.2 by up to -29 %, 2:1 by "
        "up to -50 %"
    ),
)
def spreading_song_lee_au_1994(source_area, plate_area, thickness, k, h_eff):
    r"""Spreading resistance of a centred source, closed form of Song, Lee & Au (1994).

    With equivalent-circle radii a = √(A_s/π), b = √(A_p/π), ε = a/b, τ = t/b,
    Bi = h_eff b/k:

    .. math::

        λ_c = π + \frac{1}{\sqrt{π} ε}, \quad
        Φ_c = \frac{\tanh(λ_c τ) + λ_c/Bi}{1 + (λ_c/Bi) \tanh(λ_c τ)}

        ψ_{avg} = \frac{ε τ}{\sqrt{π}} + \tfrac12 (1 - ε)^{3/2} Φ_c, \quad
        ψ_{max} = \frac{ε τ}{\sqrt{π}} + \frac{(1 - ε) Φ_c}{\sqrt{π}}, \quad
        R = \frac{ψ}{\sqrt{π} k a}

    The term ετ/√π gives exactly t/(k π b²) = t/(k A_p), the 1-D conduction through the
    plate. It is left out here: this function returns the spreading part only,

    .. math::

        R_{sp,avg} = \frac{(1-ε)^{3/2} Φ_c}{2 \sqrt{π} k a}, \quad
        R_{sp,max} = \frac{(1-ε) Φ_c}{π k a}

    so that the source-to-fluid resistance is R_sp + t/(k A_p) + 1/(h_eff A_p).

    Parameters
    ----------
    source_area : array_like
        Source (footprint) area A_s [m²], > 0.
    plate_area : array_like
        Plate (base) area A_p [m²].
    thickness : array_like
        Plate thickness t [m].
    k : array_like
        Plate conductivity [W/(m·K)].
    h_eff : array_like
        Effective heat-transfer coefficient on the far face [W/(m²·K)], > 0 (inf: an
        isothermal far face).

    Returns
    -------
    r_avg, r_max : numpy.ndarray
        Spreading resistance referred to the source-average and to the centre (maximum)
        temperature [K/W]. Zero where the source covers the plate (ε >= 1).

    Notes
    -----
    Validity: isoflux source centred on the plate, adiabatic plate edges, uniform h_eff.
    Rectangles through circles of equal area. Cross-checks in optifin's tests: against the
    exact series of a disk, the average is 6.9 % low and the maximum 1.4 % low for ε = 0.4,
    τ = 0.177, Bi = 0.141; the exact disk and the exact square (same areas) differ by 0.8 %.
    Against the exact rectangular series (:func:`flux_channel_resistance_muzychka_2003`):
    on square plates, square sources within 12 % and sources of aspect ratio up to 2
    within 14 % for area fractions up to 0.6; elongated plates are poorly served (on a
    1.2:1 plate up to -22 % for a square source, -29 % for a 2:1 source across the plate;
    on a 2:1 plate up to -50 %), see the registry entry.
    For ε → 0 on a thick plate R_max → 1/(π k a) (exact for a half space) and R_avg →
    0.2821/(k a) against the exact 8/(3π² k a) = 0.2702/(k a).
    For Bi > λ_c the spreading part grows with thickness (nearly isothermal far face); for
    the small Bi of fin-cooled bases it falls as the base thickens.

    References
    ----------
    .. [1] S. Song, S. Lee, V. Au, "Closed-form equation for thermal constriction/spreading
       resistances with variable resistance boundary condition", Proc. IEPS Conf. (1994)
       111-121.
    .. [2] S. Lee, S. Song, V. Au, K. P. Moran, "Constriction/spreading resistance model for
       electronics packaging", Proc. ASME/JSME Thermal Engineering Joint Conf. 4 (1995)
       199-206.
    .. [3] S. Lee, "Calculating spreading resistance in heat sinks", Electronics Cooling 4(1)
       (1998) 30-33.
    """
    source_area, plate_area, thickness, k, h_eff = (
        np.asarray(v, dtype=float) for v in (source_area, plate_area, thickness, k, h_eff)
    )
    _check(
        (source_area > 0) & (plate_area > 0) & (thickness >= 0) & (k > 0) & (h_eff > 0),
        "Song-Lee-Au spreading needs A_s > 0, A_p > 0, t >= 0, k > 0 and h_eff > 0",
    )
    a = np.sqrt(source_area / np.pi)
    b = np.sqrt(plate_area / np.pi)
    eps = np.minimum(a / b, 1.0)
    tau = thickness / b
    lam = np.pi + 1.0 / (np.sqrt(np.pi) * eps)
    lam_over_bi = lam * k / (h_eff * b)  # 0 for an isothermal far face (h_eff = inf)
    th = tanh(lam * tau)
    phi = (th + lam_over_bi) / (1.0 + lam_over_bi * th)
    rest = 1.0 - eps
    r_avg = 0.5 * rest * np.sqrt(rest) * phi / (np.sqrt(np.pi) * k * a)  # (1 - ε)^(3/2)
    r_max = (1.0 - eps) * phi / (np.pi * k * a)
    return r_avg, r_max


def source_placement_groups(plate_a, plate_b, src_size_a, src_size_b, src_x, src_y):
    """Validity groups of the flux-channel series for a set of sources (one value a design).

    Parameters
    ----------
    plate_a, plate_b : array_like
        Plate sides a, b [m], shape () or (N,).
    src_size_a, src_size_b, src_x, src_y : array_like
        Source sides and centres from the plate corner [m], shape (S,), (N, S) or ().

    Returns
    -------
    dict
        ``edge_clearance``: smallest distance from a source edge to a plate edge over the
        sources, divided by min(a, b) [-] (negative where a source sticks out of the plate);
        ``source_fraction``: smallest of c/a and d/b over the sources [-].
    """
    a, b = (np.asarray(v, dtype=float) for v in (plate_a, plate_b))
    c, d, x, y = (np.asarray(v, dtype=float) for v in (src_size_a, src_size_b, src_x, src_y))
    a_, b_, c, d, x, y = np.broadcast_arrays(a[..., None], b[..., None], *np.atleast_1d(c, d, x, y))
    gaps = np.minimum(np.minimum(x - c / 2, a_ - x - c / 2), np.minimum(y - d / 2, b_ - y - d / 2))
    clearance = gaps.min(axis=-1) / np.minimum(a_, b_)[..., 0]
    fraction = np.minimum(c / a_, d / b_).min(axis=-1)
    return {"edge_clearance": clearance, "source_fraction": fraction}


_FLUX_CHANNEL_VALIDITY = {"edge_clearance": (0.0, None), "source_fraction": (0.05, 1.0)}
_FLUX_CHANNEL_NOTE = (
    "isoflux rectangular sources with edges parallel to the plate's, adiabatic plate edges, "
    "uniform h_eff on the far face, isotropic plate; exact for any thickness, source size and "
    "position. edge_clearance >= 0: every source inside the plate (a source that sticks out is "
    "folded back by the cosine series). The lower bound 0.05 of source_fraction is the "
    "accuracy of the default n_terms (1e-4 on the mean rise), not a limit of the theory; see "
    "source_placement_groups"
)


@correlation(
    "flux_channel_influence_muzychka_2003",
    quantity="mean and centre temperature rise over source i per watt of source j (K/W)",
    reference=_MUZYCHKA_REFERENCE,
    validity=_FLUX_CHANNEL_VALIDITY,
    validity_note=_FLUX_CHANNEL_NOTE,
)
def flux_channel_influence_muzychka_2003(
    plate_a,
    plate_b,
    thickness,
    k,
    h_eff,
    src_size_a,
    src_size_b,
    src_x,
    src_y,
    n_terms=None,
):
    r"""Influence coefficients of rectangular sources on a rectangular plate (exact series).

    Plate a × b × t, conductivity k, cooled on the far face by h_eff, adiabatic edges;
    source j of sides c_j × d_j centred at (X_j, Y_j) dissipates 1 W uniformly. The mean
    rise above the fluid over source i is (Muzychka, Culham & Yovanovich 2003, re-derived)

    .. math::

        R_{ij} = \frac{1}{a b}\Big[\frac{t}{k} + \frac{1}{h}
            + \sum_{(m,n) \ne (0,0)} \frac{ε_m ε_n\, C^x_{im} C^x_{jm} C^y_{in} C^y_{jn}}
                   {k\, β_{mn}\, φ(β_{mn})}\Big]

    with λ_m = mπ/a, δ_n = nπ/b, β_mn = √(λ_m² + δ_n²), ε_0 = 1, ε_{m>0} = 2,
    C^x_{im} = cos(λ_m X_i) sin(λ_m c_i/2)/(λ_m c_i/2) (the mean of cos(λ_m x) over
    source i), C^y likewise, and

    .. math::

        φ(ζ) = \frac{ζ \tanh(ζ t) + h/k}{ζ + (h/k) \tanh(ζ t)}

    For one source the single sums (n = 0 or m = 0) become 8 S_m²/(a b c² k λ_m³ φ(λ_m))
    with S_m = cos(λ_m X_c) sin(λ_m c/2), and the double sum
    64 S_m² S_n²/(a b c² d² k λ_m² δ_n² β_mn φ(β_mn)): the paper's A_m, A_n and A_mn terms
    as we recall them [from memory]. The centre rise of source i replaces
    C^x_{im} C^y_{in} by cos(λ_m X_i) cos(δ_n Y_i).

    Parameters
    ----------
    plate_a, plate_b : array_like
        Plate sides a and b [m], shape () or (N,).
    thickness : array_like
        Plate thickness t [m], >= 0, shape () or (N,).
    k : array_like
        Plate conductivity [W/(m·K)], shape () or (N,).
    h_eff : array_like
        Heat-transfer coefficient on the far face [W/(m²·K)], > 0 (inf allowed: isothermal
        far face), shape () or (N,).
    src_size_a, src_size_b : array_like
        Source sides c (along a) and d (along b) [m], > 0, shape (S,) (the same sources on
        every design), (N, S) or ().
    src_x, src_y : array_like
        Source centres X, Y measured from the plate corner along a and b [m], shapes as the
        sizes.
    n_terms : int, optional
        Fourier terms per direction, m, n = 0 ... n_terms - 1 (default
        :data:`DEFAULT_N_TERMS`). Cost grows as n_terms².

    Returns
    -------
    mean_influence : numpy.ndarray
        R_ij, mean rise over source i per watt of source j, including the 1-D and film term
        (t/k + 1/h)/(a b) [K/W]; shape design_shape + (S, S), where design_shape is () or
        (N,) (the broadcast of the plate arrays and the leading axis of the sources).
    centre_influence : numpy.ndarray
        Rise at the centre point of source i per watt of source j [K/W], same shape: an
        estimate of the peak (the hottest point of an eccentric source lies off its
        centre, towards the nearest adiabatic edges).

    Notes
    -----
    Superposition: with powers Q_j the mean rise over source i is Σ_j R_ij Q_j. R is
    symmetric (reciprocity of the mean rises of isoflux sources), the centre matrix is not.

    Validity: isotropic plate, isoflux rectangular sources with sides parallel to the
    plate's, inside the plate (see :func:`source_placement_groups`), adiabatic edges,
    uniform h_eff.

    Numerics: the double sum is truncated at m, n < n_terms; the remainder is approximated
    by 1-D sums from n_terms to 16 n_terms in which the sum over the other index is replaced
    by its Parseval limit, which holds for wavenumbers well above 1/(source size); it
    overestimates slightly. Measured relative error with the default 128 terms, against
    1024 terms: mean self-rise 2e-10 (c = 0.4 a), 3e-7 (c = 0.2 a, eccentric), 2e-5 to
    7e-5 (c = a/20, t/a = 0.01 ... 1, centred or eccentric), 6e-4 (c = a/40); centre rise
    7e-8, 2e-6, 6e-5 to 1.9e-4 and 5e-5. The error falls roughly as n_terms^-3 (64 terms:
    5e-4 at c = a/20, 5e-6 at c = 0.2 a). Without the tail correction the c = a/20 error
    at 128 terms is 4e-3.

    Cost: the work grows as N n_terms² S (and N n_terms² S² in small matrix products).
    Measured on one core: about 1 ms per design with one source at the default terms
    (N = 1e5: 110 s), 2 ms with four sources. Memory: the series is summed in blocks of
    terms; numpy temporaries stay near 160 MB plus about 10 N S² doubles (N = 1e5, S = 4:
    240 MB in all).

    References
    ----------
    .. [1] Y. S. Muzychka, J. R. Culham, M. M. Yovanovich, "Thermal spreading resistance of
       eccentric heat sources on rectangular flux channels", J. Electronic Packaging
       125(2) (2003) 178-185.
    """
    return _flux_channel(
        plate_a,
        plate_b,
        thickness,
        k,
        h_eff,
        src_size_a,
        src_size_b,
        src_x,
        src_y,
        n_terms,
        centre=True,
    )


@correlation(
    "flux_channel_resistance_muzychka_2003",
    quantity="source-average resistance of one source on a plate, total and spreading (K/W)",
    reference=_MUZYCHKA_REFERENCE,
    validity=_FLUX_CHANNEL_VALIDITY,
    validity_note=_FLUX_CHANNEL_NOTE,
)
def flux_channel_resistance_muzychka_2003(
    plate_a,
    plate_b,
    thickness,
    k,
    h_eff,
    src_size_a,
    src_size_b,
    src_x,
    src_y,
    n_terms=None,
):
    """Resistance of one rectangular source on a rectangular plate (Muzychka et al. 2003).

    R_total is the mean rise over the source per watt, above the fluid;
    R_sp = R_total - (t/k + 1/h_eff)/(a b). See
    :func:`flux_channel_influence_muzychka_2003` for the series and its numerics.

    Parameters
    ----------
    plate_a, plate_b, thickness, k, h_eff : array_like
        Plate sides [m], thickness [m], conductivity [W/(m·K)] and far-face coefficient
        [W/(m²·K)].
    src_size_a, src_size_b, src_x, src_y : array_like
        Source sides and centre (from the plate corner) [m]. All arguments broadcast
        together (any shape: one source per design).
    n_terms : int, optional
        Fourier terms per direction (default :data:`DEFAULT_N_TERMS`).

    Returns
    -------
    r_total, r_spreading : numpy.ndarray
        [K/W], the broadcast shape of the arguments.

    References
    ----------
    .. [1] Y. S. Muzychka, J. R. Culham, M. M. Yovanovich, J. Electronic Packaging 125(2)
       (2003) 178-185.
    """
    args = np.broadcast_arrays(
        *(
            np.asarray(v, dtype=float)
            for v in (plate_a, plate_b, thickness, k, h_eff, src_size_a, src_size_b, src_x, src_y)
        )
    )
    shape = args[0].shape
    flat = [v.reshape(-1) for v in args]
    mean, _ = _flux_channel(
        *flat[:5], *(v[:, None] for v in flat[5:]), n_terms=n_terms, centre=False
    )
    a, b, t, kk, h = flat[:5]
    r_total = mean[:, 0, 0]
    r_sp = r_total - (t / kk + 1.0 / h) / (a * b)
    return r_total.reshape(shape), r_sp.reshape(shape)


def _flux_channel(a, b, t, k, h, c, d, x0, y0, n_terms, *, centre):
    """Blocked evaluation of the flux-channel series; see the public function."""
    m_terms = DEFAULT_N_TERMS if n_terms is None else int(n_terms)
    if m_terms < 1:
        raise ModelError(f"n_terms must be at least 1, not {n_terms!r}")
    plate = [np.asarray(v, dtype=float) for v in (a, b, t, k, h)]
    src = [np.asarray(v, dtype=float) for v in (c, d, x0, y0)]
    if any(v.ndim > 1 for v in plate) or any(v.ndim > 2 for v in src):
        raise ModelError("plate arrays must have shape () or (N,), source arrays (S,) or (N, S)")
    plate_shape = np.broadcast_shapes(*(v.shape for v in plate))
    src = [np.atleast_1d(v) for v in src]
    src_shape = np.broadcast_shapes(*(v.shape for v in src))
    lead = np.broadcast_shapes(plate_shape, src_shape[:-1])  # () or (N,)
    n_des = int(np.prod(lead)) if lead else 1
    n_src = src_shape[-1]
    a, b, t, k, h = (np.broadcast_to(v, lead).reshape(n_des) for v in plate)
    c, d, x0, y0 = (np.broadcast_to(v, (*lead, n_src)).reshape(n_des, n_src) for v in src)
    _check(
        (a > 0) & (b > 0) & (t >= 0) & (k > 0) & (h > 0) & np.isfinite(a * b * t * k),
        "flux-channel series needs finite a > 0, b > 0, t >= 0, k > 0 and h_eff > 0",
    )
    _check(
        (c > 0) & (d > 0) & np.isfinite(c * d) & np.isfinite(x0) & np.isfinite(y0),
        "flux-channel series needs finite source sides > 0 and finite centres",
    )
    g = k / h  # k/h [m], 0 for an isothermal far face

    mean = np.zeros((n_des, n_src, n_src))
    ctr = np.zeros((n_des, n_src, n_src)) if centre else None
    product = np.empty((n_des, n_src, n_src))  # matmul output, reused
    # Blocks of terms: outer over n, as long as memory allows (the x factors are recomputed
    # for each outer block), inner over m. Per block the products P_i(m, n) = C^x_im C^y_in,
    # shape (N, S, B), and the weighted sums P W P^T, shape (N, S, S).
    block_o = int(min(m_terms, max(1, _BLOCK_ELEMENTS // (n_des * n_src))))
    block_i = int(min(m_terms, max(1, _BLOCK_ELEMENTS // (n_des * n_src * block_o))))
    x_modes = _mode_table(a, c, x0, block_i)
    y_modes = _mode_table(b, d, y0, block_o)
    for n0 in range(0, m_terms, block_o):
        n_idx, cos_y, avg_y = y_modes(n0, min(block_o, m_terms - n0))
        dlt2 = (n_idx * (np.pi / b)[:, None]) ** 2
        eps_n = np.where(n_idx == 0, 1.0, 2.0)
        for m0 in range(0, m_terms, block_i):
            m_idx, cos_x, avg_x = x_modes(m0, min(block_i, m_terms - m0))
            lam2 = (m_idx * (np.pi / a)[:, None]) ** 2
            zeta2 = lam2[:, :, None] + dlt2[:, None, :]  # (N, Bi, Bo)
            origin = m0 == 0 and n0 == 0
            if origin:
                zeta2[:, 0, 0] = 1.0  # the (0, 0) term is the 1-D term, added below
            weight = _k_kernel(zeta2, t, g, lam2[:, 0] + dlt2[:, 0])
            weight *= _eps_m_n(m_idx, eps_n)
            if origin:
                weight[:, 0, 0] = 0.0
            weight = weight.reshape(n_des, 1, -1)
            prod = (avg_x[:, :, :, None] * avg_y[:, :, None, :]).reshape(n_des, n_src, -1)
            weighted_t = (prod * weight).transpose(0, 2, 1)  # (N, B, S)
            mean += np.matmul(prod, weighted_t, out=product)
            if centre:
                prod = (cos_x[:, :, :, None] * cos_y[:, :, None, :]).reshape(n_des, n_src, -1)
                ctr += np.matmul(prod, weighted_t, out=product)

    # Tail: m >= n_terms with the n-sum at its Parseval limit, and the same with x and y
    # swapped. Parseval: sum_n eps_n C_in C_jn = b overlap_ij/(d_i d_j) (means) and
    # sum_n eps_n cos(δ_n Y_i) C_jn = b/d_j where Y_i lies on source j (centre).
    tail_stop = _TAIL_FACTOR * m_terms
    block_t = int(min(tail_stop - m_terms, max(1, _BLOCK_ELEMENTS // (n_des * n_src))))
    for side, size, pos, o_side, o_size, o_pos in ((a, c, x0, b, d, y0), (b, d, y0, a, c, x0)):
        modes = _mode_table(side, size, pos, block_t, direct=True)
        tail_mean = np.zeros((n_des, n_src, n_src))
        tail_ctr = np.zeros((n_des, n_src, n_src)) if centre else None
        limit = _overlap(o_pos, o_size)
        limit *= o_side[:, None, None]
        for i0 in range(m_terms, tail_stop, block_t):
            idx, cos_w, avg_w = modes(i0, min(block_t, tail_stop - i0))
            wave2 = (idx * (np.pi / side)[:, None]) ** 2
            weight = 2.0 * _k_kernel(wave2, t, g, wave2[:, 0])  # (N, B)
            weighted_t = (avg_w * weight[:, None, :]).transpose(0, 2, 1)
            tail_mean += np.matmul(avg_w, weighted_t, out=product)
            if centre:
                tail_ctr += np.matmul(cos_w, weighted_t, out=product)
        tail_mean *= limit
        mean += tail_mean
        if centre:
            limit = _on_source(o_pos, o_size)
            limit *= o_side[:, None, None]
            tail_ctr *= limit
            ctr += tail_ctr
        del tail_mean, tail_ctr, limit

    # the sums carry a factor k (see _k_kernel); k (t/k + 1/h) = t + g
    uniform = (t + g)[:, None, None]
    scale = (k * a * b)[:, None, None]
    out_shape = (*lead, n_src, n_src)
    mean += uniform
    mean /= scale
    if centre:
        ctr += uniform
        ctr /= scale
        ctr = ctr.reshape(out_shape)
    return mean.reshape(out_shape), ctr


def _eps_m_n(m_idx, eps_n):
    """Neumann factors ε_m ε_n of a block, shape (Bi, Bo)."""
    return np.where(m_idx == 0, 1.0, 2.0)[:, None] * eps_n[None, :]


def _k_kernel(zeta2, t, g, zeta2_min):
    """k/(k ζ φ(ζ)) = (gζ + tanh ζt)/(ζ (1 + gζ tanh ζt)) from ζ² > 0, with g = k/h.

    ``zeta2`` has the design axis first; ``t`` and ``g`` are (N,); ``zeta2_min`` (N,) is a
    lower bound of ζ² over the block. Safe for h = inf (g = 0). Where ζ t > 19.1 for the
    whole block tanh(ζt) = 1 to double precision and the kernel is exactly 1/ζ.
    """
    extra = (1,) * (zeta2.ndim - 1)
    zeta = np.sqrt(zeta2)
    if np.all(np.sqrt(zeta2_min) * t >= 19.1):
        return np.reciprocal(zeta, out=zeta)
    th = np.tanh(zeta * t.reshape(-1, *extra))
    gz = zeta * g.reshape(-1, *extra)
    out = gz + th
    gz *= th
    gz += 1.0
    gz *= zeta
    out /= gz
    return out


def _mode_table(side, size, pos, block, direct=False):
    """Cosine factors of the sources for consecutive blocks of mode numbers.

    Returns ``modes(start, count)`` -> (index (B,), cos(ι π X/side) (N, S, B), mean of
    cos(ι π x/side) over each source (N, S, B)). Angle addition from a base table of
    ``block`` angles keeps the trigonometric work per block at O(N S) when the table serves
    many blocks; ``direct`` computes each block's two trigonometric arrays outright, which
    is half the work for a table used once (the tail sums).
    """
    step = np.pi * pos / side[:, None]  # (N, S)
    half = 0.5 * np.pi * size / side[:, None]
    if direct:

        def direct_modes(start, count):
            idx = np.arange(start, start + count)
            cos = np.cos(idx * step[..., None])
            arg = idx * half[..., None]
            sinc = np.divide(np.sin(arg), arg, out=np.ones_like(arg), where=arg != 0)
            return idx, cos, cos * sinc

        return direct_modes
    j = np.arange(block)
    base_cos, base_sin = np.cos(j * step[..., None]), np.sin(j * step[..., None])
    half_cos, half_sin = np.cos(j * half[..., None]), np.sin(j * half[..., None])

    def modes(start, count):
        idx = np.arange(start, start + count)
        cos = np.cos(start * step)[..., None] * base_cos[..., :count]
        cos -= np.sin(start * step)[..., None] * base_sin[..., :count]
        sin_half = np.sin(start * half)[..., None] * half_cos[..., :count]
        sin_half += np.cos(start * half)[..., None] * half_sin[..., :count]
        arg = idx * half[..., None]
        sinc = np.divide(sin_half, arg, out=np.ones_like(arg), where=arg != 0)
        return idx, cos, cos * sinc

    return modes


def _overlap(pos, size):
    """Length common to the intervals of sources i and j over d_i d_j, (N, S, S)."""
    low, high = pos - size / 2, pos + size / 2
    out = np.minimum(high[:, :, None], high[:, None, :])
    out -= np.maximum(low[:, :, None], low[:, None, :])
    np.maximum(out, 0.0, out=out)
    out /= size[:, :, None]
    out /= size[:, None, :]
    return out


def _on_source(pos, size):
    """1/d_j where the centre of source i lies on source j's interval (1/2 on its edge)."""
    gap = np.abs(pos[:, :, None] - pos[:, None, :])
    gap -= size[:, None, :] / 2
    out = (gap < 0).astype(float)
    out += 0.5 * (gap == 0)
    out /= size[:, None, :]
    return out


def _check(ok, message):
    ok = np.asarray(ok)
    if not ok.all():
        raise ModelError(f"{message} ({int((~ok).sum())} of {ok.size} values violate it)")
