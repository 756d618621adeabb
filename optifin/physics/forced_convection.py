"""Forced convection in the channels of a shrouded plate-fin array.

The channel between two fins is a rectangular duct of spacing ``b``, fin height ``H`` and flow
length ``L``. Two families of results live here:

* Teertstra et al. (1999), a composite of the fully developed and the developing-flow
  asymptotes for the whole channel. Its ``h`` is referenced to the **inlet** air temperature,
  so it already contains the heating of the air along the channel.
* Bulk-referenced values (fully developed laminar Nusselt numbers of Shah & London 1978, and
  the turbulent correlation of Gnielinski 1976). With these the air heating is added with the
  epsilon-NTU relation for one stream against an isothermal wall
  (:func:`bulk_referenced_conductance`).

Never combine the two: an epsilon-NTU correction on top of Teertstra counts the air heating
twice.
"""

from __future__ import annotations

import numpy as np

from optifin.errors import ModelError
from optifin.physics.registry import correlation

__all__ = [
    "NUSSELT_PARALLEL_PLATES_H",
    "NUSSELT_PARALLEL_PLATES_T",
    "bulk_referenced_conductance",
    "channel_reynolds_star",
    "effectiveness_single_stream",
    "fanning_petukhov_1970",
    "nusselt_gnielinski_1976",
    "nusselt_parallel_plates_shah_london_1978",
    "nusselt_teertstra_1999",
]

#: Fully developed laminar Nusselt number between parallel plates, both walls at a uniform
#: temperature, on D_h = 2b and the bulk-mean temperature (Shah & London 1978) [from memory].
NUSSELT_PARALLEL_PLATES_T = 7.541
#: The same with both walls at a uniform heat flux (Shah & London 1978) [from memory].
NUSSELT_PARALLEL_PLATES_H = 8.235

_PARALLEL_PLATES = {"T": NUSSELT_PARALLEL_PLATES_T, "H": NUSSELT_PARALLEL_PLATES_H}


def _check(condition, message: str) -> None:
    """Raise :class:`ModelError` with ``message`` unless ``condition`` holds everywhere."""
    if not np.all(condition):
        raise ModelError(message)


def channel_reynolds_star(velocity, spacing, length, nu):
    """Modified channel Reynolds number Re_b* = (V b / ν)(b / L) of Teertstra et al.

    Parameters
    ----------
    velocity : array_like
        Mean air velocity in the channel V [m/s], >= 0.
    spacing : array_like
        Fin spacing (channel width) b [m], >= 0.
    length : array_like
        Flow length of the fins L [m], > 0.
    nu : array_like
        Kinematic viscosity of the air ν [m²/s], > 0.

    Returns
    -------
    numpy.ndarray
        Re_b* [-].
    """
    velocity, spacing, length, nu = (
        np.asarray(x, dtype=float) for x in (velocity, spacing, length, nu)
    )
    _check(velocity >= 0, "channel velocity must be >= 0")
    _check(spacing >= 0, "fin spacing must be >= 0")
    _check(length > 0, "flow length must be > 0")
    _check(nu > 0, "kinematic viscosity must be > 0")
    return velocity * spacing / nu * (spacing / length)


@correlation(
    "nusselt_teertstra_1999",
    quantity="Nu_b = h b / k_air, mean over the channel, referenced to the inlet air temperature",
    reference=(
        "Teertstra, Yovanovich, Culham & Lemczyk, Analytical forced convection modeling of "
        "plate fin heat sinks, Proc. 15th IEEE SEMI-THERM (1999) 34-41; J. Electronics "
        "Manufacturing 10(4) (2000) 253-261 [volume and pages from memory]"
    ),
    validity={"re_b_star": (0.1, 100.0)},
    validity_note=(
        "laminar, fully shrouded (no bypass, no tip clearance); the range 0.1 < Re_b* < 100 "
        "is from memory and uncertain"
    ),
)
def nusselt_teertstra_1999(re_b_star, pr):
    r"""Channel Nusselt number of a shrouded plate-fin array (Teertstra et al. 1999).

    .. math::

        Nu_b = \left[\left(\frac{Re_b^* Pr}{2}\right)^{-3}
        + \left(0.664 \sqrt{Re_b^*}\, Pr^{1/3}
        \sqrt{1 + \frac{3.65}{\sqrt{Re_b^*}}}\right)^{-3}\right]^{-1/3}

    with Nu_b = h b / k_air and Re_b* = (V b / ν)(b / L).

    Parameters
    ----------
    re_b_star : array_like
        Modified channel Reynolds number Re_b* [-], >= 0 (see
        :func:`channel_reynolds_star`).
    pr : array_like
        Prandtl number of the air [-], > 0.

    Returns
    -------
    numpy.ndarray
        Nu_b [-]; 0 where Re_b* = 0.

    Notes
    -----
    The first term is the small-Re_b* asymptote: fully developed flow whose heat transfer is
    limited by the heat capacity of the air, h (2 H L) = ρ c_p V b H = ṁ c_p of one channel.
    The second is a developing flat-plate boundary layer with a leading-edge enhancement.
    ``h`` is therefore referenced to the **inlet** air temperature: the air heating is
    already inside the correlation and no epsilon-NTU correction goes on top.

    The composite is evaluated as min(A, B) (1 + (min/max)³)^(-1/3), which equals the
    published form, cannot overflow and tends to 0 (not NaN) as Re_b* -> 0.

    Validity: laminar flow, fully shrouded fins, isothermal fin surfaces in h. The
    experimental range, roughly 0.1 < Re_b* < 100, is from memory and uncertain.

    References
    ----------
    .. [1] P. Teertstra, M. M. Yovanovich, J. R. Culham, T. Lemczyk, "Analytical forced
       convection modeling of plate fin heat sinks", Proc. 15th IEEE SEMI-THERM Symposium
       (1999) 34-41.
    .. [2] The same authors, J. Electronics Manufacturing 10(4) (2000) 253-261 [from memory].
    """
    re_b_star = np.asarray(re_b_star, dtype=float)
    pr = np.asarray(pr, dtype=float)
    _check(re_b_star >= 0, "Re_b* must be >= 0")
    _check(pr > 0, "Prandtl number must be > 0")
    developed = re_b_star * pr / 2.0
    # 0.664 sqrt(Re*) Pr^(1/3) sqrt(1 + 3.65/sqrt(Re*)), written without dividing by sqrt(Re*)
    developing = 0.664 * np.cbrt(pr) * np.sqrt(re_b_star + 3.65 * np.sqrt(re_b_star))
    small = np.minimum(developed, developing)
    large = np.maximum(developed, developing)
    positive = large > 0
    if positive.all():  # the usual case: no guard needed (np.where is costly in hot loops)
        ratio = small / large
        return small / np.cbrt(1.0 + ratio * ratio * ratio)
    ratio = small / np.where(positive, large, 1.0)
    return np.where(positive, small / np.cbrt(1.0 + ratio * ratio * ratio), 0.0)


@correlation(
    "nusselt_parallel_plates_shah_london_1978",
    quantity="Nu_Dh, D_h = 2b, fully developed laminar, bulk-mean temperature",
    reference=(
        "Shah & London, Laminar Flow Forced Convection in Ducts, Academic Press (1978) "
        "[values from memory]"
    ),
    validity={"re_dh": (None, 2300.0)},
    validity_note=(
        "fully developed laminar flow (hydrodynamically and thermally); re_dh is the channel "
        "Reynolds number on D_h = 2b, not an argument of the function"
    ),
)
def nusselt_parallel_plates_shah_london_1978(boundary: str = "T") -> float:
    """Fully developed laminar Nusselt number between parallel plates (Shah & London 1978).

    Nu_Dh = 7.541 (both walls at uniform temperature, ``"T"``) or 8.235 (both walls at
    uniform heat flux, ``"H"``), on D_h = 2b.

    Parameters
    ----------
    boundary : {"T", "H"}
        Thermal boundary condition on both walls.

    Returns
    -------
    float
        Nu_Dh [-], referenced to the bulk-mean air temperature.

    Notes
    -----
    Bulk-referenced: the heat rate of a channel needs the air heating added with
    :func:`bulk_referenced_conductance`. Valid for fully developed laminar flow (Re_Dh below
    about 2300, long channels); in short channels the entrance region raises h.

    References
    ----------
    .. [1] R. K. Shah, A. L. London, Laminar Flow Forced Convection in Ducts, Academic Press
       (1978) [values from memory].
    """
    try:
        return _PARALLEL_PLATES[boundary]
    except KeyError:
        raise ModelError(
            f"unknown boundary condition {boundary!r} (valid: {', '.join(_PARALLEL_PLATES)})"
        ) from None


@correlation(
    "fanning_petukhov_1970",
    quantity="Fanning friction factor, smooth duct, turbulent",
    reference=(
        "Petukhov, Heat transfer and friction in turbulent pipe flow with variable physical "
        "properties, Advances in Heat Transfer 6 (1970) 503-564"
    ),
    validity={"re_dh": (3000.0, 5e6)},
    validity_note="smooth walls, fully developed turbulent flow",
)
def fanning_petukhov_1970(re_dh):
    r"""Fanning friction factor of smooth ducts in turbulent flow (Petukhov 1970).

    .. math::

        f = \frac{1}{4} (0.790 \ln Re_{D_h} - 1.64)^{-2}

    (Petukhov's form is for the Darcy factor, 4 f.)

    Parameters
    ----------
    re_dh : array_like
        Reynolds number on the hydraulic diameter [-].

    Returns
    -------
    numpy.ndarray
        Fanning friction factor f [-].

    Raises
    ------
    ModelError
        Where Re_Dh <= exp(1.64/0.790) ≈ 7.97: the bracket vanishes there and the formula
        has no meaning. Between that and the published range the formula is evaluated as
        written (the registry flags it).

    Notes
    -----
    Validity 3000 <= Re_Dh <= 5e6, smooth walls. For a population that mixes laminar and
    turbulent channels evaluate at ``np.maximum(re_dh, re_transition)`` inside ``np.where``.

    References
    ----------
    .. [1] B. S. Petukhov, "Heat transfer and friction in turbulent pipe flow with variable
       physical properties", Advances in Heat Transfer 6 (1970) 503-564.
    """
    re_dh = np.asarray(re_dh, dtype=float)
    bracket = 0.790 * np.log(np.where(re_dh > 0, re_dh, 1.0)) - 1.64
    _check((re_dh > 0) & (bracket > 0), "Petukhov friction needs Re_Dh > 7.97 (pole of the fit)")
    return 0.25 / bracket**2


@correlation(
    "nusselt_gnielinski_1976",
    quantity="Nu_Dh, turbulent duct flow, bulk-mean temperature",
    reference=(
        "Gnielinski, New equations for heat and mass transfer in turbulent pipe and channel "
        "flow, Int. Chem. Eng. 16(2) (1976) 359-368"
    ),
    validity={"re_dh": (2300.0, 5e6), "pr": (0.5, 2000.0)},
    validity_note=(
        "lower Reynolds limit 2300 as quoted by Rohsenow, Hartnett & Cho, Handbook of Heat "
        "Transfer 3rd ed. (1998); 3000 in other texts [from memory]; with the default "
        "Petukhov friction the fanning_petukhov_1970 entry flags Re_Dh < 3000"
    ),
)
def nusselt_gnielinski_1976(re_dh, pr, fanning=None):
    r"""Turbulent Nusselt number of a smooth duct (Gnielinski 1976).

    .. math::

        Nu_{D_h} = \frac{(f/2)(Re_{D_h} - 1000) Pr}{1 + 12.7 \sqrt{f/2}\,(Pr^{2/3} - 1)}

    with f the Fanning friction factor (the published form uses the Darcy factor f_D/8 =
    f/2).

    Parameters
    ----------
    re_dh : array_like
        Reynolds number on the hydraulic diameter [-], > 1000.
    pr : array_like
        Prandtl number [-], > 0.
    fanning : array_like, optional
        Fanning friction factor [-]; by default :func:`fanning_petukhov_1970`.

    Returns
    -------
    numpy.ndarray
        Nu_Dh [-], referenced to the bulk-mean temperature.

    Raises
    ------
    ModelError
        Where Re_Dh <= 1000, where the formula gives Nu <= 0.

    Notes
    -----
    Validity 0.5 < Pr < 2000 and 2300 < Re_Dh < 5e6 (3000 in some texts [from memory]).
    Bulk-referenced: add the air heating with :func:`bulk_referenced_conductance`. For a
    population mixing regimes evaluate at ``np.maximum(re_dh, 2300.0)`` inside ``np.where``.

    References
    ----------
    .. [1] V. Gnielinski, "New equations for heat and mass transfer in turbulent pipe and
       channel flow", Int. Chem. Eng. 16(2) (1976) 359-368.
    """
    re_dh = np.asarray(re_dh, dtype=float)
    pr = np.asarray(pr, dtype=float)
    _check(re_dh > 1000.0, "Gnielinski Nusselt number needs Re_Dh > 1000 (Nu <= 0 below)")
    _check(pr > 0, "Prandtl number must be > 0")
    f = fanning_petukhov_1970(re_dh) if fanning is None else np.asarray(fanning, dtype=float)
    _check(f > 0, "friction factor must be > 0")
    half_f = f / 2.0
    return (
        half_f * (re_dh - 1000.0) * pr / (1.0 + 12.7 * np.sqrt(half_f) * (pr ** (2.0 / 3.0) - 1.0))
    )


def effectiveness_single_stream(ntu):
    """Effectiveness of one stream against an isothermal wall, ε = 1 - exp(-NTU).

    The epsilon-NTU relation for a capacity-rate ratio C_r = 0 (Kays & London, Compact Heat
    Exchangers, 3rd ed., McGraw-Hill 1984 [from memory]).

    Parameters
    ----------
    ntu : array_like
        Number of transfer units NTU = UA / (ṁ c_p) [-], >= 0 (``inf`` allowed).

    Returns
    -------
    numpy.ndarray
        ε [-], in [0, 1].
    """
    ntu = np.asarray(ntu, dtype=float)
    _check(ntu >= 0, "NTU must be >= 0")
    return -np.expm1(-ntu)


def bulk_referenced_conductance(ua, capacity_rate):
    r"""Inlet-referenced conductance of a channel from its bulk-referenced UA.

    .. math::

        G = C \left(1 - e^{-UA/C}\right)

    so that the heat rate is Q = G (T_wall - T_inlet). C = ṁ c_p is the capacity rate of
    the air stream (epsilon-NTU with C_r = 0, isothermal wall).

    Parameters
    ----------
    ua : array_like
        Bulk-referenced conductance h A η_o [W/K], >= 0 (``inf`` allowed).
    capacity_rate : array_like
        Capacity rate of the air C = ṁ c_p [W/K], >= 0.

    Returns
    -------
    numpy.ndarray
        G [W/K], never above C nor above UA: G -> UA as UA/C -> 0 and G -> C as
        UA/C -> inf; G = 0 where C = 0 or UA = 0.
    """
    ua = np.asarray(ua, dtype=float)
    c = np.asarray(capacity_rate, dtype=float)
    _check(ua >= 0, "UA must be >= 0")
    _check(c >= 0, "capacity rate must be >= 0")
    positive = c > 0
    ntu = ua / np.where(positive, c, 1.0)
    g = np.where(positive, c * -np.expm1(-ntu), 0.0)
    # rounding could put G an ulp above min(UA, C); the exact function never is
    return np.minimum(g, np.minimum(ua, c))
