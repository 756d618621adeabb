r"""Pressure drop of the air through the channels of a shrouded plate-fin array.

The channel between two fins is a b x H rectangular duct of length L. The pressure drop is
the core equation of Kays & London (1984) with the density change and the flow acceleration
neglected,

.. math::

    \Delta p = \left(K_c + 4 f_{app} \frac{L}{D_h} + K_e\right) \frac{\rho V^2}{2},

with the apparent (developing-flow) Fanning factor of Muzychka & Yovanovich in laminar flow,
Petukhov (1970) in turbulent flow, and sudden contraction and expansion losses at the ends.
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError
from optifin.physics.forced_convection import fanning_petukhov_1970
from optifin.physics.registry import correlation

__all__ = [
    "LOSS_METHODS",
    "channel_pressure_drop",
    "fanning_apparent_muzychka_yovanovich",
    "fanning_channel",
    "fre_shah_london_1978",
    "hydraulic_diameter_rectangle",
    "loss_coefficients",
]

#: The entrance/exit loss models :func:`loss_coefficients` knows.
LOSS_METHODS = ("borda_carnot", "culham_muzychka_2001")

#: Coefficients of the Shah & London (1978) fRe polynomial, powers 0..5 of the aspect ratio.
_FRE_COEFFICIENTS = (1.0, -1.3553, 1.9467, -1.7012, 0.9564, -0.2537)


def _check(condition, message: str) -> None:
    """Raise :class:`ModelError` with ``message`` unless ``condition`` holds everywhere."""
    if not np.all(condition):
        raise ModelError(message)


@correlation(
    "fre_shah_london_1978",
    quantity="f Re_Dh (Fanning), fully developed laminar flow in a rectangular duct",
    reference=(
        "Shah & London, Laminar Flow Forced Convection in Ducts, Academic Press (1978) "
        "[polynomial coefficients from memory; within 0.07 % of the exact series]"
    ),
    validity={"aspect": (0.0, None)},
    validity_note="fully developed laminar flow; aspect > 1 is folded to 1/aspect",
)
def fre_shah_london_1978(aspect):
    r"""Fanning f Re_Dh of fully developed laminar flow in a rectangular duct (Shah & London).

    .. math::

        f Re_{D_h} = 24 (1 - 1.3553 a + 1.9467 a^2 - 1.7012 a^3 + 0.9564 a^4 - 0.2537 a^5)

    with a the ratio of the short to the long side.

    Parameters
    ----------
    aspect : array_like
        Side ratio of the duct [-], >= 0; a value above 1 is replaced by its inverse and
        ``inf`` counts as 0 (parallel plates).

    Returns
    -------
    numpy.ndarray
        f Re_Dh [-]: 24 for parallel plates (a = 0), 14.23 for a square duct.

    Notes
    -----
    Fully developed laminar flow (Re_Dh below about 2300). The polynomial agrees with the
    exact Fourier-series solution within 0.07 % for 0 <= a <= 1 (checked in the tests).

    References
    ----------
    .. [1] R. K. Shah, A. L. London, Laminar Flow Forced Convection in Ducts, Academic Press
       (1978) [coefficients from memory].
    """
    aspect = np.asarray(aspect, dtype=float)
    _check(aspect >= 0, "duct aspect ratio must be >= 0")
    with np.errstate(divide="ignore"):
        a = np.minimum(aspect, 1.0 / aspect)  # short side over long side; 0 and inf give 0
    # Horner's rule by hand: polyval's generic path costs several times more per element
    c = _FRE_COEFFICIENTS
    poly = c[5]
    for coefficient in c[4::-1]:
        poly = poly * a + coefficient
    return 24.0 * poly


def hydraulic_diameter_rectangle(spacing, height):
    """Hydraulic diameter of a b x H rectangular channel, D_h = 2 b H / (b + H).

    Parameters
    ----------
    spacing : array_like
        Channel width (fin spacing) b [m], > 0.
    height : array_like
        Channel height (fin height) H [m], > 0; ``inf`` gives parallel plates, D_h = 2b.

    Returns
    -------
    numpy.ndarray
        D_h = 4 A / P [m].
    """
    spacing = np.asarray(spacing, dtype=float)
    height = np.asarray(height, dtype=float)
    _check(spacing > 0, "channel spacing must be > 0")
    _check(height > 0, "channel height must be > 0")
    return 2.0 * spacing / (1.0 + spacing / height)


@correlation(
    "fanning_apparent_muzychka_yovanovich",
    quantity="apparent Fanning friction factor, developing laminar flow in a duct",
    reference=(
        "Muzychka & Yovanovich, AIAA paper 98-2492 (1998), as used by Culham & Muzychka, "
        "IEEE Trans. Compon. Packag. Technol. 24(2) (2001) 159-165 [from memory]; short-duct "
        "term 3.44/sqrt(L*) from Shah (1978)"
    ),
    validity={"re_dh": (None, 2300.0)},
    validity_note="laminar, hydrodynamically developing flow from a uniform inlet profile",
)
def fanning_apparent_muzychka_yovanovich(re_dh, l_star, fre):
    r"""Apparent Fanning factor of developing laminar duct flow (Muzychka & Yovanovich).

    .. math::

        f_{app} Re_{D_h} = \left[\left(\frac{3.44}{\sqrt{L^*}}\right)^2
        + (f Re_{D_h})^2\right]^{1/2}, \qquad L^* = \frac{L}{D_h Re_{D_h}}

    Parameters
    ----------
    re_dh : array_like
        Reynolds number on the hydraulic diameter [-], > 0.
    l_star : array_like
        Dimensionless duct length L* = L / (D_h Re_Dh) [-], > 0.
    fre : array_like
        Fully developed f Re_Dh of the duct [-] (e.g. :func:`fre_shah_london_1978`).

    Returns
    -------
    numpy.ndarray
        f_app [-], the mean Fanning factor over the length L, including the momentum change
        and the extra wall shear of the entrance region.

    Notes
    -----
    The composite joins Shah's (1978) short-duct asymptote 3.44/sqrt(L*) and the fully
    developed value f Re. Laminar flow, Re_Dh below about 2300.

    References
    ----------
    .. [1] Y. S. Muzychka, M. M. Yovanovich, AIAA paper 98-2492 (1998) [from memory].
    .. [2] J. R. Culham, Y. S. Muzychka, "Optimization of plate fin heat sinks using entropy
       generation minimization", IEEE Trans. Compon. Packag. Technol. 24(2) (2001) 159-165.
    .. [3] R. K. Shah, "A correlation for laminar hydrodynamic entry length solutions for
       circular and noncircular ducts", J. Fluids Eng. 100 (1978) 177-179 [from memory].
    """
    re_dh = np.asarray(re_dh, dtype=float)
    l_star = np.asarray(l_star, dtype=float)
    fre = np.asarray(fre, dtype=float)
    _check(re_dh > 0, "Re_Dh must be > 0 (no flow: f is infinite)")
    _check(l_star > 0, "L* must be > 0")
    _check(fre > 0, "f Re must be > 0")
    return np.sqrt(3.44**2 / l_star + fre**2) / re_dh


def fanning_channel(re_dh, length, d_h, aspect, re_transition=2300.0, turbulent=None):
    """Fanning factor of a fin channel over the whole flow range.

    Laminar (``re_dh <= re_transition``): the apparent factor of
    :func:`fanning_apparent_muzychka_yovanovich` with the fRe of
    :func:`fre_shah_london_1978`. Turbulent (above): the larger of that laminar value and
    :func:`fanning_petukhov_1970`, so that the factor never jumps down at the transition
    (in a short channel the developing-laminar value can exceed the turbulent one).

    Parameters
    ----------
    re_dh : array_like
        Reynolds number on the hydraulic diameter [-], > 0.
    length : array_like
        Flow length L [m], > 0.
    d_h : array_like
        Hydraulic diameter D_h [m], > 0.
    aspect : array_like
        Side ratio of the channel, b / H or H / b [-].
    re_transition : float
        Reynolds number above which the turbulent factor is used [-].

    Returns
    -------
    numpy.ndarray
        Fanning friction factor [-]. Whether a design is outside the published ranges is
        decided by the model from the registry entries of the correlations named above.
    """
    re_dh = np.asarray(re_dh, dtype=float)
    length = np.asarray(length, dtype=float)
    d_h = np.asarray(d_h, dtype=float)
    _check(re_dh > 0, "Re_Dh must be > 0 (no flow: f is infinite)")
    _check(length > 0, "channel length must be > 0")
    _check(d_h > 0, "hydraulic diameter must be > 0")
    laminar = fanning_apparent_muzychka_yovanovich(
        re_dh, length / (d_h * re_dh), fre_shah_london_1978(aspect)
    )
    above = re_dh > re_transition
    if not np.any(above):
        return laminar
    if turbulent is None:  # callers that already have it pass Petukhov's f at max(Re, Re_t)
        turbulent = fanning_petukhov_1970(np.maximum(re_dh, re_transition))
    return np.where(above, np.maximum(laminar, turbulent), laminar)


@correlation(
    "loss_coefficients",
    quantity="K_c, K_e: sudden contraction and expansion losses, on the channel velocity",
    reference=(
        "borda_carnot: K_e = (1 - sigma)^2 (Borda-Carnot momentum balance), K_c = 0.42(1 - "
        "sigma^2); culham_muzychka_2001: K_c = 0.42(1 - sigma^2), K_e = (1 - sigma^2)^2; the "
        "K_c fit to Kays & London, Compact Heat Exchangers 3rd ed. (1984), as used by Culham & "
        "Muzychka, IEEE Trans. Compon. Packag. Technol. 24(2) (2001) 159-165 and Simons, "
        "Electronics Cooling (2003) [forms from memory]"
    ),
    validity={"sigma": (0.0, 1.0)},
    validity_note=(
        "high-Reynolds, flat-profile limit; Webb & Paek (IPACK2003-35354) found Kays & London "
        "losses overestimate heat-sink entrance and exit losses"
    ),
)
def loss_coefficients(sigma, method: str = "borda_carnot"):
    r"""Entrance (contraction) and exit (expansion) loss coefficients of a fin array.

    ``"borda_carnot"`` (default):

    .. math::

        K_c = 0.42 (1 - \sigma^2), \qquad K_e = (1 - \sigma)^2

    ``"culham_muzychka_2001"``:

    .. math::

        K_c = 0.42 (1 - \sigma^2), \qquad K_e = (1 - \sigma^2)^2

    Parameters
    ----------
    sigma : array_like
        Ratio of the free-flow to the frontal area, 1 - N t / W [-], in [0, 1].
    method : {"borda_carnot", "culham_muzychka_2001"}
        Loss model.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        K_c and K_e [-], both on the channel velocity, in the sense of the core equation of
        :func:`channel_pressure_drop` (irreversible losses; the reversible 1 - σ² terms of
        the two ends cancel at constant density).

    Raises
    ------
    ModelError
        For an unknown ``method`` (the message lists the valid ones) or sigma outside [0, 1].

    Notes
    -----
    The default takes the exit loss from the Borda-Carnot momentum balance because it is
    exact algebra for a flat velocity profile, it is the high-Reynolds limit of Kays &
    London's exit-loss chart, and the remembered (1 - σ²)² of Culham & Muzychka (2001)
    exceeds it by the factor (1 + σ)² with no primary source at hand to confirm it. Borda-
    Carnot is also :func:`fluids.fittings.diffuser_sharp` with D1/D2 = sqrt(σ).

    K_c = 0.42 (1 - σ²) is a fit to Kays & London's high-Reynolds contraction chart as used
    by Culham & Muzychka (2001) and Simons (2003) [from memory]. For open arrays
    (σ > about 0.6) it lies above every sharp-edged pipe-contraction value in
    :func:`fluids.fittings.contraction_sharp` (Rennels, Crane, Hooper at high Re).

    Webb & Paek (IPACK2003-35354, abstract) found that Kays & London's losses overestimate
    the entrance and exit losses of heat sinks, whose channels are in developing flow.

    References
    ----------
    .. [1] W. M. Kays, A. L. London, Compact Heat Exchangers, 3rd ed., McGraw-Hill (1984).
    .. [2] J. R. Culham, Y. S. Muzychka, IEEE Trans. Compon. Packag. Technol. 24(2) (2001)
       159-165.
    .. [3] R. E. Simons, "Estimating parallel plate-fin heat sink pressure drop",
       Electronics Cooling (May 2003) [from memory].
    .. [4] R. L. Webb, J. W. Paek, IPACK2003-35354 (2003).
    """
    if method not in LOSS_METHODS:
        raise ModelError(
            f"unknown loss-coefficient method {method!r} (valid: {', '.join(LOSS_METHODS)})"
        )
    sigma = np.asarray(sigma, dtype=float)
    _check((sigma >= 0) & (sigma <= 1), "area ratio sigma must lie in [0, 1]")
    k_c = 0.42 * (1.0 - sigma**2)
    if method == "borda_carnot":
        k_e = (1.0 - sigma) ** 2
    else:
        k_e = (1.0 - sigma**2) ** 2
    return k_c, k_e


@correlation(
    "channel_pressure_drop",
    quantity="pressure drop across a fin array",
    reference=(
        "Kays & London, Compact Heat Exchangers, 3rd ed., McGraw-Hill (1984), core equation "
        "[from memory]"
    ),
    validity_note="constant density: flow acceleration and density change neglected",
)
def channel_pressure_drop(k_c, k_e, fanning, length, d_h, rho, velocity):
    r"""Pressure drop across a fin array, the core equation of Kays & London (1984).

    .. math::

        \Delta p = \left(K_c + 4 f \frac{L}{D_h} + K_e\right) \frac{\rho V^2}{2}

    Parameters
    ----------
    k_c, k_e : array_like
        Contraction and expansion loss coefficients on the channel velocity [-]
        (:func:`loss_coefficients`).
    fanning : array_like
        Mean Fanning friction factor over the channel length [-] (:func:`fanning_channel`).
    length : array_like
        Flow length L [m].
    d_h : array_like
        Hydraulic diameter D_h [m], > 0.
    rho : array_like
        Air density [kg/m³].
    velocity : array_like
        Mean velocity in the channels V [m/s].

    Returns
    -------
    numpy.ndarray
        Δp [Pa].

    Notes
    -----
    The density change along the core and the acceleration it causes are neglected
    (Kays & London's full equation reduces to this form at constant density).

    References
    ----------
    .. [1] W. M. Kays, A. L. London, Compact Heat Exchangers, 3rd ed., McGraw-Hill (1984)
       [from memory].
    """
    d_h = np.asarray(d_h, dtype=float)
    _check(d_h > 0, "hydraulic diameter must be > 0")
    velocity = np.asarray(velocity, dtype=float)
    dynamic = 0.5 * np.asarray(rho, dtype=float) * velocity**2
    friction = 4.0 * np.asarray(fanning, dtype=float) * np.asarray(length, dtype=float) / d_h
    return (np.asarray(k_c, dtype=float) + friction + np.asarray(k_e, dtype=float)) * dynamic
