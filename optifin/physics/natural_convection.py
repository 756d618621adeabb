"""Natural convection from vertical plate-fin arrays (fins vertical, open top and bottom).

The channels between adjacent fins are treated as vertical parallel-plate channels open at
both ends (Elenbaas 1942; Bar-Cohen & Rohsenow 1984). The two outer fin faces of an array
see the room, not a neighbouring fin, and are rated as isolated vertical plates
(Churchill & Chu 1975).

All properties are taken at the film temperature ``T_film = (T_w + T_0)/2`` with
``beta = 1/T_film`` (ideal gas). Every function broadcasts over numpy arrays.
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError
from optifin.physics.registry import correlation

STANDARD_GRAVITY = 9.80665  # [m/s^2], CGPM 1901 conventional value

# Composite-correlation constants (Bar-Cohen & Rohsenow 1984, as tabulated in Kutz (ed.),
# Mechanical Engineers' Handbook vol. 4, ch. "Cooling Electronic Equipment", Table 1).
# Isothermal: Nu_b = [C_fd / El^2 + C_ip / El^(1/2)]^(-1/2)
_ISOTHERMAL = {
    "symmetric_isothermal": (576.0, 2.873),
    "asymmetric_isothermal": (144.0, 2.873),
}
# Isoflux: Nu_b = [C_fd / El' + C_ip / El'^(2/5)]^(-1/2)
_ISOFLUX = {
    "symmetric": (48.0, 2.51),
    "asymmetric": (24.0, 2.51),
    "symmetric_mid_height": (12.0, 1.88),
}
# Optimum-spacing constants b_opt * P^(1/4) (Bar-Cohen & Rohsenow 1984) [from memory]
_OPTIMUM = {
    "symmetric_isothermal": 2.714,
    "asymmetric_isothermal": 2.154,
}

_BCR_REFERENCE = (
    "Bar-Cohen, A. & Rohsenow, W. M. (1984). Thermally optimum spacing of vertical, natural "
    "convection cooled, parallel plates. J. Heat Transfer 106(1), 116-123 (composite forms as "
    "reproduced in Kutz (ed.), Mechanical Engineers' Handbook vol. 4, ch. Cooling Electronic "
    "Equipment, Table 1)"
)
_BCR_DOI = "10.1115/1.3246622"
_EL_RANGE = (0.1, 1.0e4)
_EL_NOTE = (
    "Laminar flow, smooth isothermal (or isoflux) parallel plates, open top and bottom, air "
    "(Pr ~ 0.7), properties at film temperature, beta = 1/T_film; the isolated-plate branch is "
    "laminar, so Ra_L = El (L/b)^4 should stay below about 1e9. The data span of the "
    "correlation could not be sourced: the El range registered is a conservative choice "
    "(common practice, no source) covering the fully developed region, the optimum "
    "(El ~ 54) and the approach to the isolated-plate limit."
)


def _check_case(case: str, table: dict) -> tuple:
    try:
        return table[case]
    except KeyError:
        raise ModelError(f"unknown case {case!r} (known: {', '.join(sorted(table))})") from None


def _nonnegative(value, name: str) -> np.ndarray:
    value = np.asarray(value, dtype=float)
    if np.any(value < 0):
        raise ModelError(f"{name} must be >= 0 (got a minimum of {np.nanmin(value)!r})")
    return value


def elenbaas_number(spacing, length, delta_t, rho, cp, mu, k, beta, g=STANDARD_GRAVITY):
    """Elenbaas number of a vertical parallel-plate channel.

    ``El = c_p rho^2 g beta |dT| b^4 / (mu k L) = Ra_b b / L``

    Parameters
    ----------
    spacing : array_like
        Channel width (clear gap between fins) b [m].
    length : array_like
        Channel length in the vertical (flow) direction L [m].
    delta_t : array_like
        Wall-to-ambient temperature difference T_w - T_0 [K]; its magnitude is used (a
        cooled array drives the same flow downwards, Boussinesq approximation).
    rho, cp, mu, k : array_like
        Density [kg/m^3], specific heat [J/(kg K)], dynamic viscosity [Pa s] and thermal
        conductivity [W/(m K)] of the fluid at the film temperature.
    beta : array_like
        Volumetric expansion coefficient [1/K]; 1/T_film for an ideal gas.
    g : array_like, optional
        Gravitational acceleration [m/s^2].

    Returns
    -------
    numpy.ndarray
        El [-].

    Notes
    -----
    Definition as in Kutz (ed.), Mechanical Engineers' Handbook vol. 4, ch. "Cooling
    Electronic Equipment", eq. 35.

    References
    ----------
    Elenbaas, W. (1942). Heat dissipation of parallel plates by free convection. Physica 9(1),
    1-28.
    """
    spacing = np.asarray(spacing, dtype=float)
    return (
        np.asarray(cp, dtype=float)
        * np.asarray(rho, dtype=float) ** 2
        * g
        * np.asarray(beta, dtype=float)
        * np.abs(np.asarray(delta_t, dtype=float))
        * spacing**4
        / (np.asarray(mu, dtype=float) * np.asarray(k, dtype=float) * np.asarray(length))
    )


def modified_elenbaas_number(spacing, length, heat_flux, rho, cp, mu, k, beta, g=STANDARD_GRAVITY):
    """Modified (isoflux) Elenbaas number of a vertical parallel-plate channel.

    ``El' = c_p rho^2 g beta q'' b^5 / (mu k^2 L)``

    Parameters
    ----------
    spacing : array_like
        Channel width b [m].
    length : array_like
        Channel length in the vertical (flow) direction L [m].
    heat_flux : array_like
        Uniform wall heat flux q'' [W/m^2]; its magnitude is used.
    rho, cp, mu, k : array_like
        Density [kg/m^3], specific heat [J/(kg K)], dynamic viscosity [Pa s] and thermal
        conductivity [W/(m K)] at the film temperature.
    beta : array_like
        Volumetric expansion coefficient [1/K].
    g : array_like, optional
        Gravitational acceleration [m/s^2].

    Returns
    -------
    numpy.ndarray
        El' [-].

    Notes
    -----
    Definition as in Kutz (ed.), Mechanical Engineers' Handbook vol. 4, ch. "Cooling
    Electronic Equipment" (isoflux entries of Table 1).

    References
    ----------
    Bar-Cohen, A. & Rohsenow, W. M. (1984). J. Heat Transfer 106(1), 116-123.
    doi:10.1115/1.3246622
    """
    spacing = np.asarray(spacing, dtype=float)
    k = np.asarray(k, dtype=float)
    return (
        np.asarray(cp, dtype=float)
        * np.asarray(rho, dtype=float) ** 2
        * g
        * np.asarray(beta, dtype=float)
        * np.abs(np.asarray(heat_flux, dtype=float))
        * spacing**5
        / (np.asarray(mu, dtype=float) * k**2 * np.asarray(length, dtype=float))
    )


def spacing_parameter(length, delta_t, rho, cp, mu, k, beta, g=STANDARD_GRAVITY):
    """Spacing parameter P = El / b^4 of the isothermal optimum-spacing result.

    ``P = c_p rho^2 g beta |dT| / (mu k L)``

    Parameters
    ----------
    length : array_like
        Channel length in the vertical (flow) direction L [m].
    delta_t : array_like
        Wall-to-ambient temperature difference [K]; its magnitude is used.
    rho, cp, mu, k : array_like
        Density [kg/m^3], specific heat [J/(kg K)], dynamic viscosity [Pa s] and thermal
        conductivity [W/(m K)] at the film temperature.
    beta : array_like
        Volumetric expansion coefficient [1/K].
    g : array_like, optional
        Gravitational acceleration [m/s^2].

    Returns
    -------
    numpy.ndarray
        P [1/m^4].

    References
    ----------
    Bar-Cohen, A. & Rohsenow, W. M. (1984). J. Heat Transfer 106(1), 116-123.
    doi:10.1115/1.3246622
    """
    return elenbaas_number(1.0, length, delta_t, rho, cp, mu, k, beta, g)


@correlation(
    "nusselt_bar_cohen_rohsenow_1984",
    quantity="Nu_b = h b / k, isothermal vertical parallel-plate channel",
    reference=_BCR_REFERENCE,
    doi=_BCR_DOI,
    validity={"el": _EL_RANGE},
    validity_note=_EL_NOTE,
)
def nusselt_bar_cohen_rohsenow_1984(el, case="symmetric_isothermal"):
    """Channel Nusselt number of isothermal vertical parallel plates (Bar-Cohen & Rohsenow).

    Composite of the fully developed and the isolated-plate limits, as published:

    - symmetric isothermal: ``Nu_b = [576/El^2 + 2.873/El^(1/2)]^(-1/2)``
    - asymmetric isothermal (one wall adiabatic): ``Nu_b = [144/El^2 + 2.873/El^(1/2)]^(-1/2)``

    Parameters
    ----------
    el : array_like
        Elenbaas number El [-], see :func:`elenbaas_number`.
    case : {"symmetric_isothermal", "asymmetric_isothermal"}
        Heating of the two channel walls.

    Returns
    -------
    numpy.ndarray
        Nu_b = h b / k [-], with h = q''/(T_w - T_0) averaged over the wall.

    Notes
    -----
    Evaluated as ``El / sqrt(576 + 2.873 El^(3/2))`` (and
    ``El^(1/4) / sqrt(2.873 + 576 El^(-3/2))`` for El > 1), which is the published form
    multiplied through by El^2: exact, and finite at El = 0 (Nu -> 0). Limits:
    El -> 0 gives El/24 (El/12 asymmetric), fully developed flow; El -> inf gives
    El^(1/4)/sqrt(2.873) = 0.590 El^(1/4), the laminar isolated plate
    (Nu_L = 0.59 Ra_L^(1/4) [from memory]).

    Validity: laminar flow, smooth isothermal parallel plates open at top and bottom, air
    (Pr ~ 0.7), properties at the film temperature with beta = 1/T_film. Registered range
    0.1 <= El <= 1e4 is a conservative choice, not the data span of the paper (which could
    not be sourced); the isolated-plate branch is laminar, Ra_L = El (L/b)^4 < ~1e9.

    References
    ----------
    Bar-Cohen, A. & Rohsenow, W. M. (1984). Thermally optimum spacing of vertical, natural
    convection cooled, parallel plates. J. Heat Transfer 106(1), 116-123.
    doi:10.1115/1.3246622. Forms as reproduced in Kutz, M. (ed.), Mechanical Engineers'
    Handbook, vol. 4, ch. "Cooling Electronic Equipment", Table 1.
    """
    c_fd, c_ip = _check_case(case, _ISOTHERMAL)
    el = _nonnegative(el, "el")
    small = el <= 1.0
    el_small = np.where(small, el, 1.0)
    el_large = np.where(small, 1.0, el)
    nu_small = el_small / np.sqrt(c_fd + c_ip * el_small**1.5)
    nu_large = el_large**0.25 / np.sqrt(c_ip + c_fd * el_large**-1.5)
    return np.where(small, nu_small, nu_large)


@correlation(
    "nusselt_bar_cohen_rohsenow_1984_isoflux",
    quantity="Nu_b = q'' b / (k dT), isoflux vertical parallel-plate channel",
    reference=_BCR_REFERENCE,
    doi=_BCR_DOI,
    validity={"el_prime": _EL_RANGE},
    validity_note=_EL_NOTE.replace("El range", "El' range"),
)
def nusselt_bar_cohen_rohsenow_1984_isoflux(el_prime, case="symmetric"):
    """Channel Nusselt number of isoflux vertical parallel plates (Bar-Cohen & Rohsenow).

    Composite forms, as published (temperature difference at the channel top, x = L,
    unless stated):

    - symmetric: ``Nu_b = [48/El' + 2.51/El'^(2/5)]^(-1/2)``
    - asymmetric (one wall adiabatic): ``Nu_b = [24/El' + 2.51/El'^(2/5)]^(-1/2)``
    - symmetric, on the mid-height temperature difference:
      ``Nu_b = [12/El' + 1.88/El'^(2/5)]^(-1/2)``

    Parameters
    ----------
    el_prime : array_like
        Modified Elenbaas number El' [-], see :func:`modified_elenbaas_number`.
    case : {"symmetric", "asymmetric", "symmetric_mid_height"}
        Heating of the walls and the reference temperature difference.

    Returns
    -------
    numpy.ndarray
        Nu_b = q'' b / (k (T_w - T_0)) [-] with T_w at x = L (or at L/2 for
        ``"symmetric_mid_height"``).

    Notes
    -----
    Evaluated as ``sqrt(El' / (C_fd + C_ip El'^(3/5)))``, the published form multiplied
    through by El': exact and finite at El' = 0. Limits: sqrt(El'/48) (symmetric),
    sqrt(El'/24) (asymmetric), sqrt(El'/12) (mid-height) as El' -> 0.

    Validity: laminar flow, smooth uniformly heated parallel plates open at top and
    bottom, air, properties at film temperature. Registered range 0.1 <= El' <= 1e4 is a
    conservative choice (data span not sourced).

    References
    ----------
    Bar-Cohen, A. & Rohsenow, W. M. (1984). J. Heat Transfer 106(1), 116-123.
    doi:10.1115/1.3246622. Forms as reproduced in Kutz, M. (ed.), Mechanical Engineers'
    Handbook, vol. 4, ch. "Cooling Electronic Equipment", Table 1.
    """
    c_fd, c_ip = _check_case(case, _ISOFLUX)
    el_prime = _nonnegative(el_prime, "el_prime")
    return np.sqrt(el_prime / (c_fd + c_ip * el_prime**0.6))


@correlation(
    "nusselt_elenbaas_1942",
    quantity="Nu_b = h b / k, symmetric isothermal vertical parallel-plate channel",
    reference=(
        "Elenbaas, W. (1942). Heat dissipation of parallel plates by free convection. "
        "Physica 9(1), 1-28 (form [from memory])"
    ),
    validity={"el": _EL_RANGE},
    validity_note=(
        "Air, square isothermal plates, laminar, open top and bottom; properties at film "
        "temperature. The form is quoted from memory and the El range is a conservative "
        "choice (common practice, no source)."
    ),
)
def nusselt_elenbaas_1942(el):
    """Channel Nusselt number of symmetric isothermal vertical parallel plates (Elenbaas).

    ``Nu_b = (El/24) [1 - exp(-35/El)]^(3/4)``  [form from memory]

    Parameters
    ----------
    el : array_like
        Elenbaas number El [-], see :func:`elenbaas_number`.

    Returns
    -------
    numpy.ndarray
        Nu_b = h b / k [-].

    Notes
    -----
    Evaluated with ``-expm1(-35/El)`` so that large El keeps full precision; El = 0 gives
    Nu = 0. Limits: El/24 as El -> 0; (35^(3/4)/24) El^(1/4) = 0.6053 El^(1/4) as
    El -> inf.

    Validity: Elenbaas measured square plates in air, so the constant 35 and the
    isolated-plate branch hold for Pr ~ 0.7; laminar; properties at the film temperature.
    Registered range 0.1 <= El <= 1e4 is a conservative choice (data span not sourced).

    References
    ----------
    Elenbaas, W. (1942). Heat dissipation of parallel plates by free convection. Physica
    9(1), 1-28.
    """
    el = _nonnegative(el, "el")
    positive = el > 0
    safe = np.where(positive, el, 1.0)
    nu = safe / 24.0 * (-np.expm1(-35.0 / safe)) ** 0.75
    return np.where(positive, nu, 0.0)


@correlation(
    "optimum_spacing_bar_cohen_rohsenow_1984",
    quantity="b_opt [m], isothermal vertical parallel plates, most heat per unit base width",
    reference=_BCR_REFERENCE + " (constants 2.714 / 2.154 [from memory])",
    doi=_BCR_DOI,
    validity_note=(
        "Isothermal plates of negligible thickness, laminar, air; maximises heat per unit "
        "base width (Nu_b / b^2 at fixed P) with the composite correlation."
    ),
)
def optimum_spacing_bar_cohen_rohsenow_1984(p, case="symmetric_isothermal"):
    """Optimum channel width of isothermal vertical parallel plates (Bar-Cohen & Rohsenow).

    ``b_opt = 2.714 P^(-1/4)`` (symmetric), ``b_opt = 2.154 P^(-1/4)`` (asymmetric), with
    ``P = El / b^4 = c_p rho^2 g beta dT / (mu k L)``.

    Parameters
    ----------
    p : array_like
        Spacing parameter P [1/m^4], see :func:`spacing_parameter`.
    case : {"symmetric_isothermal", "asymmetric_isothermal"}
        Heating of the two channel walls.

    Returns
    -------
    numpy.ndarray
        b_opt [m]; infinite where P = 0 (no buoyancy).

    Notes
    -----
    The spacing maximises the heat dissipated per unit base width by an array of plates of
    negligible thickness, i.e. Nu_b(P b^4) / b^2 at fixed P. With the composite correlation
    this optimum is b P^(1/4) = (2 C_fd / 2.873)^(1/6) = 2.7155 (symmetric) and 2.1553
    (asymmetric); the published constants are rounded [from memory]. At the symmetric
    optimum El = 54.4 and Nu_b = 1.31.

    Validity: as :func:`nusselt_bar_cohen_rohsenow_1984`; fin thickness is not part of the
    optimum (thick fins shift the best pitch).

    References
    ----------
    Bar-Cohen, A. & Rohsenow, W. M. (1984). Thermally optimum spacing of vertical, natural
    convection cooled, parallel plates. J. Heat Transfer 106(1), 116-123.
    doi:10.1115/1.3246622
    """
    constant = _check_case(case, _OPTIMUM)
    p = _nonnegative(p, "p")
    positive = p > 0
    safe = np.where(positive, p, 1.0)
    return np.where(positive, constant * safe**-0.25, np.inf)


def rayleigh_number(length, delta_t, rho, cp, mu, k, beta, g=STANDARD_GRAVITY):
    """Rayleigh number of a vertical plate of height L.

    ``Ra_L = g beta |dT| L^3 / (nu alpha) = c_p rho^2 g beta |dT| L^3 / (mu k)``

    Parameters
    ----------
    length : array_like
        Plate height in the vertical direction L [m].
    delta_t : array_like
        Wall-to-ambient temperature difference [K]; its magnitude is used.
    rho, cp, mu, k : array_like
        Density [kg/m^3], specific heat [J/(kg K)], dynamic viscosity [Pa s] and thermal
        conductivity [W/(m K)] at the film temperature.
    beta : array_like
        Volumetric expansion coefficient [1/K].
    g : array_like, optional
        Gravitational acceleration [m/s^2].

    Returns
    -------
    numpy.ndarray
        Ra_L [-].
    """
    length = np.asarray(length, dtype=float)
    return (
        np.asarray(cp, dtype=float)
        * np.asarray(rho, dtype=float) ** 2
        * g
        * np.asarray(beta, dtype=float)
        * np.abs(np.asarray(delta_t, dtype=float))
        * length**3
        / (np.asarray(mu, dtype=float) * np.asarray(k, dtype=float))
    )


@correlation(
    "nusselt_churchill_chu_1975",
    quantity="Nu_L = h L / k, isolated isothermal vertical plate (average)",
    reference=(
        "Churchill, S. W. & Chu, H. H. S. (1975). Correlating equations for laminar and "
        "turbulent free convection from a vertical plate. Int. J. Heat Mass Transfer 18(11), "
        "1323-1329"
    ),
    doi="10.1016/0017-9310(75)90243-4",
    validity={"ra": (1.0e-1, 1.0e12)},
    validity_note=(
        "Isothermal vertical plate in an extensive quiescent fluid, laminar and turbulent, all "
        "Pr; properties at film temperature. The form is recommended for all Ra; the Ra range "
        "registered is the span of the data it was fitted to as commonly quoted [from memory]."
    ),
)
def nusselt_churchill_chu_1975(ra, pr):
    """Average Nusselt number of an isolated isothermal vertical plate (Churchill & Chu).

    Full-range form, as published:
    ``Nu_L = {0.825 + 0.387 Ra_L^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}^2``

    Parameters
    ----------
    ra : array_like
        Rayleigh number on the plate height, Ra_L [-], see :func:`rayleigh_number`.
    pr : array_like
        Prandtl number [-].

    Returns
    -------
    numpy.ndarray
        Nu_L = h L / k [-]; Ra_L = 0 gives 0.825^2 = 0.6806 (the correlation's fitted
        intercept, not a physical conduction limit).

    Notes
    -----
    Used for the two outer fin faces of an array, which face the room rather than a
    neighbouring fin. Validity: isothermal plate, laminar and turbulent (one form for all
    Ra), all Pr, properties at the film temperature. Registered range
    0.1 <= Ra_L <= 1e12 [from memory].

    References
    ----------
    Churchill, S. W. & Chu, H. H. S. (1975). Correlating equations for laminar and turbulent
    free convection from a vertical plate. Int. J. Heat Mass Transfer 18(11), 1323-1329.
    doi:10.1016/0017-9310(75)90243-4
    """
    ra = _nonnegative(ra, "ra")
    pr = np.asarray(pr, dtype=float)
    if np.any(pr <= 0):
        raise ModelError("pr must be > 0")
    psi = (1.0 + (0.492 / pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    return (0.825 + 0.387 * ra ** (1.0 / 6.0) / psi) ** 2
