"""Thermal radiation from a plate-fin array to large surroundings.

The array is reduced to its envelope (common practice, no source): each channel between two
fins is a 2-D U-shaped grey cavity that radiates through its opening with an apparent
emissivity; fin tips and the two outer fin faces radiate directly. Radiation is linearised
about the surroundings temperature so that it adds to convection as a conductance,
``Q_rad = G_rad (T_s - T_inf)``, exact for an isothermal surface.

Every function broadcasts over numpy arrays.
"""

from __future__ import annotations

import numpy as np
from scipy.constants import Stefan_Boltzmann

from optifin.errors import ModelError
from optifin.physics.registry import correlation


def _array(
    value,
    name: str,
    *,
    low: float | None = None,
    high: float | None = None,
    strict_low: bool = False,
) -> np.ndarray:
    value = np.asarray(value, dtype=float)
    if low is not None:
        bad = value <= low if strict_low else value < low
        if np.any(bad):
            sign = ">" if strict_low else ">="
            raise ModelError(f"{name} must be {sign} {low}")
    if high is not None and np.any(value > high):
        raise ModelError(f"{name} must be <= {high}")
    return value


def linearised_radiative_coefficient(t_surface, t_surroundings):
    """Linearised radiative heat-transfer coefficient per unit emissivity.

    ``h_r / eps = sigma (T_s + T_inf)(T_s^2 + T_inf^2)``, so that
    ``eps sigma (T_s^4 - T_inf^4) = eps (h_r/eps) (T_s - T_inf)`` exactly.

    Parameters
    ----------
    t_surface : array_like
        Surface temperature T_s [K].
    t_surroundings : array_like
        Temperature of the (large, black) surroundings T_inf [K].

    Returns
    -------
    numpy.ndarray
        h_r / eps [W/(m^2 K)]; tends to 4 sigma T^3 as T_s -> T_inf.

    Notes
    -----
    sigma is the exact SI value ``scipy.constants.Stefan_Boltzmann`` (5.670374419e-8
    W m^-2 K^-4). Valid for a grey surface exchanging with surroundings that are large
    compared with it and black at T_inf.

    References
    ----------
    Stefan-Boltzmann law; factorisation T_s^4 - T_inf^4 = (T_s - T_inf)(T_s + T_inf)
    (T_s^2 + T_inf^2).
    """
    ts = _array(t_surface, "t_surface", low=0.0)
    tinf = _array(t_surroundings, "t_surroundings", low=0.0)
    return Stefan_Boltzmann * (ts + tinf) * (ts**2 + tinf**2)


def u_channel_view_factors(spacing, height):
    """View factors to the opening of a 2-D U channel (two fins and the base between them).

    Hottel's crossed strings for a channel of width b and depth H (per unit length):

    ``F_fin->open = (H + b - sqrt(H^2 + b^2)) / (2 H)``
    ``F_base->open = sqrt(1 + (H/b)^2) - H/b``

    Parameters
    ----------
    spacing : array_like
        Channel width b (clear gap between fins) [m]; must be > 0.
    height : array_like
        Fin height H above the base (channel depth) [m]; may be 0.

    Returns
    -------
    f_fin_to_opening, f_base_to_opening : numpy.ndarray
        View factor from one fin face to the opening, and from the base to the opening [-].

    Notes
    -----
    Evaluated in the equivalent cancellation-free forms
    ``F_fin->open = b / (H + b + sqrt(H^2 + b^2))`` and
    ``F_base->open = b / (H + sqrt(H^2 + b^2))``; H = 0 gives 1/2 and 1. Exact for a 2-D
    (infinitely long) channel of diffuse surfaces; the channel length L >> b is assumed,
    the end openings are ignored.

    References
    ----------
    Hottel, H. C. crossed-strings method, e.g. in Hottel & Sarofim, Radiative Transfer
    (McGraw-Hill, 1967) [from memory].
    """
    b = _array(spacing, "spacing", low=0.0, strict_low=True)
    h = _array(height, "height", low=0.0)
    diagonal = np.hypot(h, b)
    f_fin = b / (h + b + diagonal)
    f_base = b / (h + diagonal)
    return f_fin, f_base


def cavity_apparent_emissivity(emissivity, opening_area, cavity_area):
    """Apparent emissivity of the opening of a grey isothermal cavity (one-node model).

    ``eps_a = eps / (eps + (1 - eps) A_open / A_cav)``

    Parameters
    ----------
    emissivity : array_like
        Total hemispherical emissivity of the cavity surface eps [-], 0..1.
    opening_area : array_like
        Area of the opening A_open [m^2] (or width per unit length [m] in 2-D); > 0.
    cavity_area : array_like
        Area of the cavity surface A_cav [m^2] (same units); >= A_open.

    Returns
    -------
    numpy.ndarray
        eps_a [-]: the opening radiates as a grey surface of emissivity eps_a at the cavity
        temperature. eps = 1 gives 1; A_cav = A_open (a flat surface) gives eps.

    Notes
    -----
    The cavity surface is taken as one isothermal, grey, diffuse node of uniform radiosity
    facing a black opening. This is exact only for an enclosure in which radiosity is
    uniform (e.g. a spherical cavity, where every surface element sees every other equally).
    In a deep U channel the radiosity is lowest near the opening, where the view factor to it
    is highest, so the model is optimistic, most for bare metal: for b = 6 mm, H = 30 mm a
    finely discretised 2-D radiosity network gives about 2 % less at eps = 0.85 and 11 % less
    at eps = 0.05 (see the tests).

    References
    ----------
    One-node grey-cavity (enclosure) analysis, net-radiation method; common practice, no
    source for its use on fin channels.
    """
    eps = _array(emissivity, "emissivity", low=0.0, high=1.0)
    a_open = _array(opening_area, "opening_area", low=0.0, strict_low=True)
    a_cav = np.asarray(cavity_area, dtype=float)
    if np.any(a_cav < a_open):
        raise ModelError("cavity_area must be >= opening_area")
    return eps / (eps + (1.0 - eps) * (a_open / a_cav))


@correlation(
    "array_radiation_conductance",
    quantity="G_rad [W/K], plate-fin array envelope to large black surroundings",
    reference=(
        "Envelope / effective-emissivity practice (common practice, no source); one-node grey "
        "U-channel cavity with crossed-strings geometry; Rea, S. N. & West, S. E. (1976). "
        "Thermal radiation from finned heat sinks. IEEE Trans. Parts, Hybrids, and Packaging "
        "12(2), 115-117 [from memory] is the usual reference for fin-array radiation"
    ),
    validity={"emissivity": (0.0, 1.0), "channel_efficiency": (0.0, 1.0)},
    validity_note=(
        "Grey diffuse surfaces at one temperature T_s (channel_efficiency corrects the "
        "channel term for non-isothermal fins, practice); surroundings large and black at "
        "T_inf; no fin-to-fin exchange beyond the one-node cavity model (optimistic for low "
        "emissivity and deep channels); fin ends (upstream/downstream faces) neglected."
    ),
)
def array_radiation_conductance(
    emissivity,
    fin_count,
    spacing,
    fin_thickness,
    fin_height,
    length,
    t_surface,
    t_surroundings,
    include_outer_faces=True,
    channel_efficiency=1.0,
):
    """Radiation conductance of a plate-fin array to large surroundings (envelope method).

    ``G_rad = (h_r/eps) L [(N - 1) b eps_a eta_ch + N t eps + 2 H eps]``, with
    ``eps_a = eps / (eps + (1 - eps) b / (2 H + b))`` and h_r/eps from
    :func:`linearised_radiative_coefficient`; ``Q_rad = G_rad (T_s - T_inf)``.

    Parameters
    ----------
    emissivity : array_like
        Surface emissivity eps [-], 0..1.
    fin_count : array_like
        Number of fins N [-], >= 1.
    spacing : array_like
        Clear gap between adjacent fins b [m], > 0.
    fin_thickness : array_like
        Fin thickness t [m], >= 0.
    fin_height : array_like
        Fin height above the base H [m], >= 0.
    length : array_like
        Fin length along the channel L [m], >= 0.
    t_surface : array_like
        Surface (base) temperature T_s [K].
    t_surroundings : array_like
        Surroundings temperature T_inf [K].
    include_outer_faces : bool, optional
        Count the two outer fin faces (H x L each) as directly exposed surfaces.
    channel_efficiency : array_like, optional
        Factor 0..1 on the channel-opening term for fins that are cooler than the base,
        e.g. the fin efficiency (common practice, no source).

    Returns
    -------
    numpy.ndarray
        G_rad [W/K].

    Notes
    -----
    Method: the array envelope (common practice, no source). Each of the N - 1 channels
    radiates through its opening (width b, length L) with the apparent emissivity of a
    one-node grey U-channel cavity of surface 2H + b per unit length (see
    :func:`cavity_apparent_emissivity`, which is optimistic for bare metal in deep
    channels); the N fin tips (t x L) and, optionally, the two outer fin faces (H x L)
    radiate with the surface emissivity. The fin ends (upstream and downstream faces of the
    fins and channels) and any base area outside the outer fins are neglected. A zero-height
    array reduces to a flat plate of width N t + (N - 1) b.

    Validity: grey, diffuse surfaces; surroundings large and black at T_inf; no fin-to-fin
    exchange beyond the cavity model; isothermal surface unless ``channel_efficiency`` < 1.

    References
    ----------
    Rea, S. N. & West, S. E. (1976). Thermal radiation from finned heat sinks. IEEE Trans.
    Parts, Hybrids, and Packaging 12(2), 115-117 [from memory].
    """
    eps = _array(emissivity, "emissivity", low=0.0, high=1.0)
    n = _array(fin_count, "fin_count", low=1.0)
    b = _array(spacing, "spacing", low=0.0, strict_low=True)
    t = _array(fin_thickness, "fin_thickness", low=0.0)
    h = _array(fin_height, "fin_height", low=0.0)
    length = _array(length, "length", low=0.0)
    eta = _array(channel_efficiency, "channel_efficiency", low=0.0, high=1.0)
    h_r = linearised_radiative_coefficient(t_surface, t_surroundings)
    eps_a = cavity_apparent_emissivity(eps, b, 2.0 * h + b)
    area_emissivity = (n - 1.0) * b * eps_a * eta + n * t * eps
    if include_outer_faces:
        area_emissivity = area_emissivity + 2.0 * h * eps
    return h_r * length * area_emissivity
