r"""Pin-fin arrays in forced cross-flow: geometry, heat transfer, pressure drop, conductance.

A pin-fin heat sink is treated as a bank of short cylinders in cross-flow: pins of diameter
``D`` and height ``H`` stand on a ``W x L`` base (``W`` across the flow, ``L`` along it) on a
transverse pitch ``S_T`` and a longitudinal (row-to-row) pitch ``S_L``. The layout is always
given explicitly, as a boolean (or 0/1 integer) array ``staggered``; it is never inferred from
the pitches. In a staggered array every second row is shifted by ``S_T/2``.

Contents:

* geometry: the maximum velocity in the narrowest gap (:func:`pin_array_max_velocity`), the
  number of pins that fit on the base (:func:`pin_array_counts`) and the base area left
  exposed to the air (:func:`pin_array_exposed_base_area`);
* heat transfer: the tube-bank correlation of Zukauskas (1972) with its row correction
  (:func:`nusselt_zukauskas_1972`) and the analytical model of Khan, Culham & Yovanovich
  (2005) (:func:`nusselt_khan_2005`);
* pressure drop: Jakob's (1938) tube-bank friction factors
  (:func:`friction_factor_jakob_1938`, :func:`pressure_drop_pin_array`);
* the conductance of the pins as fins (:func:`pin_fin_conductance`).

Reynolds numbers here are Re_D,max = V_max D / ν, on the pin diameter and the maximum
velocity. Tube-bank correlations assume that the pins span the duct (fully shrouded, no tip
clearance, no bypass); with bypass the approach velocity must first be reduced by a bypass
model.

Natural convection: no published correlation for the natural convection of pin-fin
*arrays* is implemented in optifin, so the model refuses the combination of a pin-fin sink
and natural convection rather than borrow a single-cylinder or plate-fin result.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from optifin.errors import ModelError
from optifin.physics.fins import pin_fin_efficiency
from optifin.physics.registry import correlation

__all__ = [
    "PinArrayCounts",
    "friction_factor_jakob_1938",
    "nusselt_khan_2005",
    "nusselt_zukauskas_1972",
    "pin_array_counts",
    "pin_array_exposed_base_area",
    "pin_array_max_velocity",
    "pin_fin_conductance",
    "pressure_drop_pin_array",
    "zukauskas_1972_coefficients",
    "zukauskas_1972_out_of_range",
    "zukauskas_row_correction",
]

# Row correction C2 of Zukauskas (1972) as tabulated by Incropera et al. 6e Table 7.6
# [from memory]; the point (20, 1.0) closes the table (C2 = 1 for N_L >= 20).
_ROWS = (1.0, 2.0, 3.0, 4.0, 5.0, 7.0, 10.0, 13.0, 16.0, 20.0)
_C2_ALIGNED = (0.70, 0.80, 0.86, 0.90, 0.92, 0.95, 0.97, 0.98, 0.99, 1.0)
_C2_STAGGERED = (0.64, 0.76, 0.84, 0.89, 0.92, 0.95, 0.97, 0.98, 0.99, 1.0)

# Tolerance on pin counts: a pitch that fits exactly (48 mm / 4 mm) must not lose a pin to
# rounding of the division.
_FIT_EPS = 1e-9

_ZUKAUSKAS_REFERENCE = (
    "Zukauskas, Heat transfer from tubes in crossflow, Advances in Heat Transfer 8 (1972) "
    "93-160; constants as tabulated in Incropera, DeWitt, Bergman & Lavine, Fundamentals of "
    "Heat and Mass Transfer, 6th ed., Wiley (2007), Tables 7.5 and 7.6 and Eq. 7.52 "
    "[from memory]"
)


def _check(condition, message: str) -> None:
    """Raise :class:`ModelError` with ``message`` unless ``condition`` holds everywhere."""
    if not np.all(condition):
        raise ModelError(message)


def _floats(*values):
    return tuple(np.asarray(v, dtype=float) for v in values)


def _layout(staggered) -> np.ndarray:
    """The layout flag as a boolean array; integers must be 0 or 1."""
    flag = np.asarray(staggered)
    if flag.dtype.kind == "b":
        return flag
    if flag.dtype.kind in "iu" and np.all((flag == 0) | (flag == 1)):
        return flag.astype(bool)
    raise ModelError("staggered must be a boolean array (or integers 0/1)")


def _check_pitches(diameter, pitch_transverse, pitch_longitudinal, staggered) -> None:
    """Refuse arrays whose pins touch or overlap."""
    _check(diameter > 0, "pin diameter must be > 0")
    _check(pitch_longitudinal > 0, "longitudinal pitch must be > 0")
    _check(pitch_transverse > diameter, "transverse pitch must exceed the pin diameter")
    diagonal = np.hypot(pitch_longitudinal, pitch_transverse / 2.0)
    _check(
        np.where(staggered, diagonal, pitch_longitudinal) > diameter,
        "pins overlap: the longitudinal pitch (aligned) or the diagonal pitch (staggered) "
        "must exceed the pin diameter",
    )


# --- geometry -------------------------------------------------------------------------------


def pin_array_max_velocity(
    approach_velocity, diameter, pitch_transverse, pitch_longitudinal, staggered
):
    r"""Maximum velocity in a pin (tube) bank, in its narrowest free cross-section.

    .. math::

        V_{max} = \frac{S_T}{S_T - D} V \quad\text{(aligned; staggered with } S_D \ge
        (S_T + D)/2\text{)}, \qquad
        V_{max} = \frac{S_T}{2 (S_D - D)} V \quad\text{(staggered, } S_D < (S_T + D)/2),

    with the diagonal pitch S_D = √(S_L² + (S_T/2)²).

    Parameters
    ----------
    approach_velocity : array_like
        Velocity V of the air approaching the array (the duct velocity in front of the
        pins) [m/s].
    diameter : array_like
        Pin diameter D [m], > 0.
    pitch_transverse : array_like
        Transverse pitch S_T, centre to centre across the flow [m], > D.
    pitch_longitudinal : array_like
        Longitudinal pitch S_L, row to row along the flow [m]; > D for an aligned array,
        diagonal S_D > D for a staggered one.
    staggered : array_like of bool
        True for a staggered layout, False for an aligned (in-line) one.

    Returns
    -------
    numpy.ndarray
        V_max [m/s].

    Notes
    -----
    The staggered condition S_D < (S_T + D)/2 is the same as 2(S_D - D) < S_T - D: the two
    diagonal gaps together are narrower than the transverse gap, so the air reaches its
    highest speed between the diagonal neighbours. Pure continuity; no range limit.

    References
    ----------
    .. [1] A. Zukauskas, "Heat transfer from tubes in crossflow", Advances in Heat Transfer 8
       (1972) 93-160.
    .. [2] Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed. (2007), Eqs.
       7.57-7.59 [from memory].
    """
    v, d, s_t, s_l = _floats(approach_velocity, diameter, pitch_transverse, pitch_longitudinal)
    staggered = _layout(staggered)
    _check(v >= 0, "approach velocity must be >= 0")
    _check_pitches(d, s_t, s_l, staggered)
    s_d = np.hypot(s_l, s_t / 2.0)
    diagonal = staggered & (s_d < (s_t + d) / 2.0)
    gap = np.where(diagonal, 2.0 * (s_d - d), s_t - d)
    return s_t * v / gap


class PinArrayCounts(NamedTuple):
    """Pins that fit on a ``W x L`` base (integer arrays, broadcast over the population)."""

    #: pins across the flow in the even rows (row 0, 2, 4, ...)
    across_even: np.ndarray
    #: pins across the flow in the odd rows (equal to ``across_even`` for aligned arrays)
    across_odd: np.ndarray
    #: rows along the flow, N_L
    rows: np.ndarray
    #: total number of pins
    total: np.ndarray


def pin_array_counts(width, length, diameter, pitch_transverse, pitch_longitudinal, staggered):
    r"""Number of pins per row, rows and total pins that fit fully inside a ``W x L`` base.

    Convention: every pin lies fully inside the footprint. The first pin of an even row has
    its centre D/2 from the side edge, the first row D/2 from the leading edge; odd rows of
    a staggered array start S_T/2 further in. Hence

    .. math::

        n_{even} = \left\lfloor \frac{W - D}{S_T} \right\rfloor + 1, \quad
        n_{odd} = \left\lfloor \frac{W - D - S_T/2}{S_T} \right\rfloor + 1, \quad
        N_L = \left\lfloor \frac{L - D}{S_L} \right\rfloor + 1,

    each clipped at 0, with n_odd = n_even for an aligned array, and the total
    N = ⌈N_L/2⌉ n_even + ⌊N_L/2⌋ n_odd. An odd row of a staggered array holds n_even pins
    when there is room for the shift and n_even - 1 when there is not.

    Parameters
    ----------
    width : array_like
        Base width W across the flow [m].
    length : array_like
        Base length L along the flow [m].
    diameter : array_like
        Pin diameter D [m], > 0.
    pitch_transverse : array_like
        Transverse pitch S_T [m], > D.
    pitch_longitudinal : array_like
        Longitudinal (row-to-row) pitch S_L [m].
    staggered : array_like of bool
        Layout flag.

    Returns
    -------
    PinArrayCounts
        ``across_even``, ``across_odd``, ``rows`` (N_L) and ``total``, as int64 arrays.

    Notes
    -----
    These are the largest counts for the given pitches; where the pins sit (flush with one
    edge or centred with the spare margin split) does not change them. A margin along the
    base edges, if the process needs one, is taken off ``width`` and ``length`` by the
    caller. A slack of 1e-9 pitch on each division keeps an exact fit (e.g. W - D = 12
    S_T) from losing a pin to rounding.
    """
    w, ell, d, s_t, s_l = _floats(width, length, diameter, pitch_transverse, pitch_longitudinal)
    staggered = _layout(staggered)
    _check((w > 0) & (ell > 0), "base width and length must be > 0")
    _check_pitches(d, s_t, s_l, staggered)

    def fit(span, pitch):
        return np.maximum(np.floor(span / pitch + _FIT_EPS) + 1.0, 0.0).astype(np.int64)

    across_even = fit(w - d, s_t)
    across_odd = np.where(staggered, fit(w - d - s_t / 2.0, s_t), across_even)
    rows = fit(ell - d, s_l)
    total = (rows + 1) // 2 * across_even + rows // 2 * across_odd
    across_even, across_odd, rows, total = np.broadcast_arrays(across_even, across_odd, rows, total)
    return PinArrayCounts(across_even.copy(), across_odd.copy(), rows.copy(), total.copy())


def pin_array_exposed_base_area(width, length, diameter, count):
    """Base area left exposed to the air between the pins, A_b = W L - N π D²/4.

    Parameters
    ----------
    width : array_like
        Base width W [m].
    length : array_like
        Base length L [m].
    diameter : array_like
        Pin diameter D [m], >= 0.
    count : array_like
        Number of pins N [-], >= 0.

    Returns
    -------
    numpy.ndarray
        A_b [m²].

    Raises
    ------
    ModelError
        Where the pin footprints exceed the base area.
    """
    w, ell, d, n = _floats(width, length, diameter, count)
    _check((w > 0) & (ell > 0), "base width and length must be > 0")
    _check((d >= 0) & (n >= 0), "pin diameter and count must be >= 0")
    area = w * ell - n * np.pi * d * d / 4.0
    _check(area >= 0, "the pins cover more than the base area")
    return area


# --- Zukauskas (1972) -----------------------------------------------------------------------


def zukauskas_row_correction(rows, staggered):
    """Row correction C₂ of Zukauskas (1972) for arrays of fewer than 20 rows.

    Tabulated values (Incropera et al. 6e Table 7.6 [from memory]):

    ========= ==== ==== ==== ==== ==== ==== ==== ==== ====
    N_L        1    2    3    4    5    7    10   13   16
    aligned   0.70 0.80 0.86 0.90 0.92 0.95 0.97 0.98 0.99
    staggered 0.64 0.76 0.84 0.89 0.92 0.95 0.97 0.98 0.99
    ========= ==== ==== ==== ==== ==== ==== ==== ==== ====

    Parameters
    ----------
    rows : array_like
        Number of rows along the flow N_L [-], >= 1.
    staggered : array_like of bool
        Layout flag.

    Returns
    -------
    numpy.ndarray
        C₂ [-]; linear in N_L between the tabulated rows (and from 0.99 at 16 rows to 1 at
        20), exactly 1 for N_L >= 20.

    Notes
    -----
    The interpolation between tabulated rows (N_L = 6, 8, 9, ...) is ours; the table gives
    no rule. Zukauskas' figure, as digitised in the ``ht`` library, agrees with the table
    within about 0.02 (checked in the tests).
    """
    (rows,) = _floats(rows)
    staggered = _layout(staggered)
    _check(rows >= 1, "number of rows must be >= 1")
    return np.where(
        staggered, np.interp(rows, _ROWS, _C2_STAGGERED), np.interp(rows, _ROWS, _C2_ALIGNED)
    )


def zukauskas_1972_coefficients(re_max, pr, staggered, pitch_ratio):
    """Constants C, m and the Prandtl exponent n of the Zukauskas (1972) tube-bank law.

    ========= ================ ================================= ==== =====
    layout    Re_D,max         C                                 m    n
    ========= ================ ================================= ==== =====
    aligned   < 100            0.80                              0.40 0.36
    either    100 - 1000       0.51 (single cylinder)            0.50 0.37
    aligned   1000 - 2e5       0.27                              0.63 0.36
    aligned   >= 2e5           0.021                             0.84 0.36
    staggered < 100            0.90                              0.40 0.36
    staggered 1000 - 2e5       0.35 (S_T/S_L)^(1/5), S_T/S_L < 2 0.60 0.36
                               0.40, S_T/S_L >= 2
    staggered >= 2e5           0.022                             0.84 0.36
    ========= ================ ================================= ==== =====

    Parameters
    ----------
    re_max : array_like
        Re_D,max [-], >= 0.
    pr : array_like
        Prandtl number at the mean air temperature [-], > 0.
    staggered : array_like of bool
        Layout flag.
    pitch_ratio : array_like
        S_T/S_L [-], > 0 (used by the staggered 1000 - 2e5 band only).

    Returns
    -------
    tuple of numpy.ndarray
        (C, m, n).

    Notes
    -----
    For 100 < Re_D,max < 1000 the tabulation says "treat as a single (isolated) cylinder".
    We use Zukauskas' single-cylinder law for 40 < Re_D < 1000, C = 0.51, m = 0.5, with its
    own Prandtl exponent n = 0.37 for Pr <= 10 (0.36 above), not the tube-bank 0.36: the
    band borrows the whole single-cylinder law. The two exponents differ by 0.3 % in Nu at
    Pr = 0.7. Other tabulations of Zukauskas' bank data give bank-specific laws here
    (0.52 Re^0.5 Pr^0.36 aligned; 1.04 Re^0.4 below Re = 500 and 0.71 Re^0.5 above,
    staggered; as fitted in Bejan, Convection Heat Transfer 4e, and implemented in the
    ``ht`` library). For aligned arrays they agree with the single-cylinder law within
    about 2 %; for staggered arrays they are 10-39 % higher, and our values are 19-25 %
    below ESDU 73031 (tests). The single-cylinder treatment is therefore conservative for staggered
    pin arrays in this band, which is where many pin-fin sinks operate.

    The row correction C₂ was tabulated for Re_D,max above about 1000 (Incropera 6e
    Table 7.6 [from memory]); Zukauskas' figure has a separate, milder curve for staggered
    banks below Re = 1000 (0.83 instead of 0.64 for one row, as digitised in ``ht``). C₂
    is applied in every band here, which errs on the conservative side at low Re.

    The bands do not join: Nu jumps up by about 30 % at Re = 1000 (both layouts) and, for
    staggered arrays, drops by about 10 % at Re = 100. The correlation is used as
    published; an optimiser can sit at such an edge, which the run record shows.
    """
    re, pr, ratio = _floats(re_max, pr, pitch_ratio)
    staggered = _layout(staggered)
    _check(re >= 0, "Reynolds number must be >= 0")
    _check(pr > 0, "Prandtl number must be > 0")
    _check(ratio > 0, "pitch ratio S_T/S_L must be > 0")
    low = re < 100.0
    single = (re >= 100.0) & (re < 1000.0)
    middle = (re >= 1000.0) & (re < 2.0e5)
    staggered_middle = np.where(ratio < 2.0, 0.35 * ratio**0.2, 0.40)
    c = np.select(
        [low, single, middle],
        [
            np.where(staggered, 0.90, 0.80),
            0.51,
            np.where(staggered, staggered_middle, 0.27),
        ],
        np.where(staggered, 0.022, 0.021),
    )
    m = np.select(
        [low, single, middle],
        [0.40, 0.50, np.where(staggered, 0.60, 0.63)],
        0.84,
    )
    n = np.where(single & (pr <= 10.0), 0.37, 0.36)
    c, m, n = np.broadcast_arrays(c, m, n)
    return c.astype(float), m.astype(float), n.astype(float)


@correlation(
    "nusselt_zukauskas_1972",
    quantity="mean Nu_D = h D / k of a pin (tube) bank in cross-flow, Re on V_max",
    reference=_ZUKAUSKAS_REFERENCE,
    validity={
        "re_max": (10.0, 2.0e6),
        "pr": (0.7, 500.0),
        "pitch_ratio_aligned": (0.7, None),
    },
    validity_note=(
        "pitch_ratio_aligned is S_T/S_L of aligned arrays in the 1e3 < Re_max < 2e5 band only "
        "(below 0.7 heat transfer is ineffective and the correlation should not be used); "
        "pass it through zukauskas_1972_out_of_range, which applies that condition. Fluid "
        "properties at the mean of inlet and outlet air temperatures except Pr_s. Banks of "
        "long tubes spanning the duct: short pins with tip clearance or bypass are outside "
        "the data. Ranges from memory (Incropera 6e)."
    ),
)
def nusselt_zukauskas_1972(re_max, pr, pr_wall, staggered, pitch_ratio, rows):
    r"""Mean Nusselt number of a pin (tube) bank in cross-flow (Zukauskas 1972).

    .. math::

        Nu_D = C_2 \, C \, Re_{D,max}^m \, Pr^{0.36} \left(\frac{Pr}{Pr_s}\right)^{1/4}

    with C and m from :func:`zukauskas_1972_coefficients` (Prandtl exponent 0.37 in the
    single-cylinder band 100 - 1000) and C₂ from :func:`zukauskas_row_correction`.

    Parameters
    ----------
    re_max : array_like
        Re_D,max = V_max D / ν [-], >= 0 (see :func:`pin_array_max_velocity`).
    pr : array_like
        Prandtl number at the mean air temperature [-], > 0.
    pr_wall : array_like
        Prandtl number at the pin surface temperature Pr_s [-], > 0; pass ``pr`` to leave
        the property correction out.
    staggered : array_like of bool
        Layout flag.
    pitch_ratio : array_like
        S_T/S_L [-], > 0.
    rows : array_like
        Number of rows along the flow N_L [-], >= 1.

    Returns
    -------
    numpy.ndarray
        Nu_D [-], averaged over the array; h = Nu_D k / D, with ΔT the log-mean
        temperature difference between pins and air (bulk-referenced).

    Notes
    -----
    Validity as published: 10 < Re_D,max < 2e6, 0.7 < Pr < 500, N_L >= 20 (with C₂ below),
    and for aligned arrays in 1e3 < Re_D,max < 2e5, S_T/S_L > 0.7. Properties at the mean
    of inlet and outlet temperatures, except Pr_s. Outside the Reynolds range the nearest
    band is evaluated and the registry flags the design. The row correction C₂ is applied
    in every band, including the single-cylinder band.

    References
    ----------
    .. [1] A. Zukauskas, "Heat transfer from tubes in crossflow", Advances in Heat Transfer 8
       (1972) 93-160.
    .. [2] Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th
       ed., Wiley (2007), Eq. 7.58 and Tables 7.5-7.6 [from memory].
    """
    re, pr, pr_wall = _floats(re_max, pr, pr_wall)
    _check(pr_wall > 0, "wall Prandtl number must be > 0")
    c, m, n = zukauskas_1972_coefficients(re, pr, staggered, pitch_ratio)
    c2 = zukauskas_row_correction(rows, staggered)
    return c2 * c * re**m * pr**n * (pr / pr_wall) ** 0.25


def zukauskas_1972_out_of_range(re_max, pr, staggered, pitch_ratio):
    """True where a design lies outside the published range of :func:`nusselt_zukauskas_1972`.

    Applies the registered ranges, with the S_T/S_L > 0.7 condition only for aligned arrays
    in the 1e3 <= Re_D,max < 2e5 band.

    Parameters
    ----------
    re_max : array_like
        Re_D,max [-].
    pr : array_like
        Prandtl number [-].
    staggered : array_like of bool
        Layout flag.
    pitch_ratio : array_like
        S_T/S_L [-].

    Returns
    -------
    numpy.ndarray of bool
    """
    re, pr, ratio = _floats(re_max, pr, pitch_ratio)
    staggered = _layout(staggered)
    band = (~staggered) & (re >= 1000.0) & (re < 2.0e5)
    return nusselt_zukauskas_1972.correlation.out_of_range(
        re_max=re, pr=pr, pitch_ratio_aligned=np.where(band, ratio, np.inf)
    )


# --- Khan, Culham & Yovanovich (2005) -------------------------------------------------------


@correlation(
    "nusselt_khan_2005",
    quantity="mean Nu_D = h D / k of a pin-fin array, Re on V_max",
    reference=(
        "Khan, Culham & Yovanovich, Optimization of pin-fin heat sinks using entropy "
        "generation minimization, IEEE Trans. Components and Packaging Technologies 28(2) "
        "(2005) 247-254 [coefficients from memory, medium confidence]"
    ),
    validity={"re_max": (None, 2.0e5), "pr": (0.6, None), "a_t": (1.25, 3.0), "b_l": (1.25, 3.0)},
    validity_note=(
        "the coefficients are remembered, not checked against the paper; the pitch range "
        "1.25-3 (S/D) is from memory and uncertain; the Re bound is the laminar boundary "
        "layer the model assumes (subcritical cylinder, common practice, no source) and the "
        "Pr bound is the usual one for a Pr^(1/3) laminar law (common practice, no source)"
    ),
)
def nusselt_khan_2005(re_max, pr, a_t, b_l, staggered):
    r"""Mean Nusselt number of a pin-fin array (Khan, Culham & Yovanovich 2005).

    .. math::

        Nu_D = C_1 \, Re_{D,max}^{1/2} \, Pr^{1/3}

    with a_T = S_T/D, b_L = S_L/D and

    .. math::

        C_1 = [0.25 + e^{-0.55 b_L}] \, a_T^{0.285} \, b_L^{0.212}
        \quad\text{(in-line)}, \qquad
        C_1 = \frac{0.61 \, a_T^{0.091} \, b_L^{0.053}}{1 - 2 e^{-1.09 b_L}}
        \quad\text{(staggered)}.

    Parameters
    ----------
    re_max : array_like
        Re_D,max = V_max D / ν [-], >= 0.
    pr : array_like
        Prandtl number [-], > 0.
    a_t : array_like
        Dimensionless transverse pitch S_T/D [-], > 1.
    b_l : array_like
        Dimensionless longitudinal pitch S_L/D [-], > 0; the staggered C₁ needs
        b_L > ln 2 / 1.09 ≈ 0.636 (its denominator vanishes there).
    staggered : array_like of bool
        Layout flag.

    Returns
    -------
    numpy.ndarray
        Nu_D [-].

    Notes
    -----
    **Medium confidence:** the C₁ expressions are reproduced from memory and have not been
    checked against the paper; verify them before relying on this model. The model comes
    from an integral (von Kármán-Pohlhausen) laminar boundary layer on a pin inside the
    array, so it assumes a laminar boundary layer (Re_D,max below about 2e5) and is meant
    for air (Pr^(1/3)). At low Re it gives far more heat transfer than Zukauskas (1972):
    about 14.5 against 9.2 for a = b = 2.5, Re_D,max = 423. Pitch range 1.25 <= a_T, b_L
    <= 3 is from memory and uncertain.

    References
    ----------
    .. [1] W. A. Khan, J. R. Culham, M. M. Yovanovich, "Optimization of pin-fin heat sinks
       using entropy generation minimization", IEEE Trans. Components and Packaging
       Technologies 28(2) (2005) 247-254.
    .. [2] W. A. Khan, Modeling of fluid flow and heat transfer for optimization of pin-fin
       heat sinks, PhD thesis, University of Waterloo (2004).
    """
    re, pr, a, b = _floats(re_max, pr, a_t, b_l)
    staggered = _layout(staggered)
    _check(re >= 0, "Reynolds number must be >= 0")
    _check(pr > 0, "Prandtl number must be > 0")
    _check(a > 1, "S_T/D must be > 1")
    _check(b > 0, "S_L/D must be > 0")
    denominator = 1.0 - 2.0 * np.exp(-1.09 * b)
    _check(
        np.where(staggered, denominator, 1.0) > 0,
        "staggered Khan et al. C1 needs S_L/D > ln2/1.09 = 0.636",
    )
    c1_inline = (0.25 + np.exp(-0.55 * b)) * a**0.285 * b**0.212
    c1_staggered = 0.61 * a**0.091 * b**0.053 / np.where(staggered, denominator, 1.0)
    c1 = np.where(staggered, c1_staggered, c1_inline)
    return c1 * np.sqrt(re) * np.cbrt(pr)


# --- pressure drop, Jakob (1938) ------------------------------------------------------------


@correlation(
    "friction_factor_jakob_1938",
    quantity="tube-bank friction factor f, Δp = 4 f N_L ρ V_max²/2",
    reference=(
        "Jakob, Heat transfer and flow resistance in cross flow of gases over tube banks, "
        "Trans. ASME 60 (1938) 384-386; as quoted in Holman, Heat Transfer, McGraw-Hill, "
        "ch. 6 [from memory]"
    ),
    validity={"re_max": (2.0e3, 4.0e4), "a_t": (1.25, 3.0), "b_l": (1.25, 3.0)},
    validity_note=(
        "Jakob fitted the tube-bank data also behind Grimison's (1937) table, for which "
        "2000 < Re_D,max < 40000 and pitches 1.25-3 D are the published range [from memory]; "
        "Jakob's own statement of range not seen. Long tubes spanning the duct; no "
        "entrance/exit losses; the wall-viscosity factor (mu_w/mu_b)^0.14 of the quoted form "
        "is left out (about +1.7 % for air at 300 K against a 350 K wall)."
    ),
)
def friction_factor_jakob_1938(re_max, a_t, b_l, staggered):
    r"""Friction factor of a tube (pin) bank in cross-flow (Jakob 1938).

    .. math::

        f = \left[0.044 + \frac{0.08 \, b_L}{(a_T - 1)^{0.43 + 1.13/b_L}}\right]
        Re_{D,max}^{-0.15} \quad\text{(in-line)}, \qquad
        f = \left[0.25 + \frac{0.118}{(a_T - 1)^{1.08}}\right] Re_{D,max}^{-0.16}
        \quad\text{(staggered)},

    with a_T = S_T/D, b_L = S_L/D, for Δp = 4 f N_L ρ V_max²/2.

    Parameters
    ----------
    re_max : array_like
        Re_D,max [-], > 0.
    a_t : array_like
        S_T/D [-], > 1.
    b_l : array_like
        S_L/D [-], > 0.
    staggered : array_like of bool
        Layout flag.

    Returns
    -------
    numpy.ndarray
        f [-] (per row, on ρ V_max²/2 with the factor 4 of Jakob's definition outside).

    Notes
    -----
    Validity: 2000 < Re_D,max < 40000 and 1.25 <= S/D <= 3, the range of the tube-bank
    data Jakob fitted [from memory]. Against the Zukauskas charts (``ht.dP_Zukauskas``)
    the two agree within about 5 % (staggered) and 15 % (in-line) at the Incropera 6e
    Example 7.7 pitches, and within -31 % to +32 % over 2000 <= Re <= 40000 and
    S/D = 1.5-2.5 (tests): Jakob is higher at the low end of the range and lower at the
    high end. Below Re = 2000 the power law underestimates the laminar
    rise of f; the registry flags those designs.

    References
    ----------
    .. [1] M. Jakob, "Heat transfer and flow resistance in cross flow of gases over tube
       banks", Trans. ASME 60 (1938) 384-386 [from memory].
    .. [2] J. P. Holman, Heat Transfer, McGraw-Hill, ch. 6 [from memory].
    """
    re, a, b = _floats(re_max, a_t, b_l)
    staggered = _layout(staggered)
    _check(re > 0, "Reynolds number must be > 0 for a friction factor")
    _check(a > 1, "S_T/D must be > 1")
    _check(b > 0, "S_L/D must be > 0")
    gap = a - 1.0
    inline = (0.044 + 0.08 * b / gap ** (0.43 + 1.13 / b)) * re**-0.15
    stagger = (0.25 + 0.118 / gap**1.08) * re**-0.16
    return np.where(staggered, stagger, inline)


def pressure_drop_pin_array(re_max, density, v_max, rows, a_t, b_l, staggered):
    r"""Pressure drop of the air across a pin array, Δp = 4 f N_L ρ V_max²/2.

    f is Jakob's (1938) friction factor (:func:`friction_factor_jakob_1938`).

    Parameters
    ----------
    re_max : array_like
        Re_D,max = ρ V_max D / μ [-], >= 0 (0 only together with V_max = 0).
    density : array_like
        Air density ρ [kg/m³], > 0.
    v_max : array_like
        Maximum velocity V_max [m/s], >= 0 (:func:`pin_array_max_velocity`).
    rows : array_like
        Number of rows N_L [-], >= 0.
    a_t : array_like
        S_T/D [-], > 1.
    b_l : array_like
        S_L/D [-], > 0.
    staggered : array_like of bool
        Layout flag.

    Returns
    -------
    numpy.ndarray
        Δp [Pa]; 0 where there is no flow (V_max = 0, Re = 0), the limit of the formula
        since f ~ Re^-0.16 while ρ V² vanishes faster.

    Notes
    -----
    Core friction of the array only: no entrance or exit losses (no source at hand for
    pin-array inlet and outlet coefficients), no wall-viscosity factor, constant density.
    Validity as :func:`friction_factor_jakob_1938`.
    """
    re, rho, v, n = _floats(re_max, density, v_max, rows)
    _check(re >= 0, "Reynolds number must be >= 0")
    _check(rho > 0, "density must be > 0")
    _check(v >= 0, "velocity must be >= 0")
    _check(n >= 0, "number of rows must be >= 0")
    _check((re > 0) == (v > 0), "Re and V_max must be zero together")
    flowing = re > 0
    f = friction_factor_jakob_1938(np.where(flowing, re, 1.0), a_t, b_l, staggered)
    return np.where(flowing, 4.0 * f * n * rho * v * v / 2.0, 0.0)


# --- pins as fins ---------------------------------------------------------------------------


def pin_fin_conductance(h, k, diameter, height, count, tip="corrected"):
    r"""Conductance of the pins of an array as fins, G = N η_f h π D H_c.

    .. math::

        G = N \, η_f \, h \, π D H_c, \quad
        η_f = \frac{\tanh(m H_c)}{m H_c}, \quad m = \sqrt{4h/(kD)},

    H_c = H + D/4 for ``tip="corrected"`` (convective tip moved onto the side) and H_c = H
    for ``"adiabatic"``; η_f from :func:`optifin.physics.fins.pin_fin_efficiency`.

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient on the pins [W/(m²·K)], >= 0.
    k : array_like
        Pin conductivity [W/(m·K)], > 0.
    diameter : array_like
        Pin diameter D [m], > 0.
    height : array_like
        Pin height H above the base [m], >= 0.
    count : array_like
        Number of pins N [-], >= 0.
    tip : {"corrected", "adiabatic"}
        Tip condition.

    Returns
    -------
    numpy.ndarray
        G [W/K], so that the pins carry G (T_base - T_air); 0 where h = 0.

    Notes
    -----
    One-dimensional fin conduction: valid for h D/(2k) < 0.1, and the corrected tip for
    h D/(2k) < 0.0625 (Incropera et al. 6e §3.6 [from memory]). Uniform h over the pin.
    """
    h, k, d, height, n = _floats(h, k, diameter, height, count)
    _check(h >= 0, "heat-transfer coefficient must be >= 0")
    _check(k > 0, "pin conductivity must be > 0")
    _check(d > 0, "pin diameter must be > 0")
    _check(height >= 0, "pin height must be >= 0")
    _check(n >= 0, "pin count must be >= 0")
    eta = pin_fin_efficiency(h, k, d, height, tip=tip)
    length = height + d / 4.0 if tip == "corrected" else height
    return n * eta * h * math.pi * d * length
