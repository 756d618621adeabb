"""Single fins of uniform cross-section: one-dimensional conduction with convection.

Closed forms of the fin equation θ'' = m² θ, θ = T - T∞, m² = h P/(k A_c), for a fin of
perimeter P, cross-section A_c, conductivity k and uniform heat-transfer coefficient h
(Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed.,
Wiley 2007, section 3.6 [from memory]; Kraus, Aziz & Welty, Extended Surface Heat Transfer,
Wiley 2001 [from memory]). Every function broadcasts over numpy arrays; SI units.

Assumptions shared by every function: steady state; conduction along the fin only, which
needs a small transverse Biot number h t/(2k) (below about 0.1, see :func:`transverse_biot`);
constant k and h; no heat generation; radiation folded into h if at all.

Conventions for the two common shapes:

* plate fin of height (length from the base) H, thickness t and width w ≫ t (the width is
  the flow length in a heat sink): P = 2w, A_c = w t, the two thin edges of area H t are
  neglected, so m = √(2h/(k t)) does not depend on w. Heat rates of plate fins are then per
  unit width when P = 2 and A_c = t are passed.
* pin fin of diameter D: P = π D, A_c = π D²/4, m = √(4h/(k D)).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from optifin.errors import ModelError
from optifin.physics.registry import correlation

__all__ = [
    "SCHMIDT_ML",
    "conductance_with_root_resistance",
    "corrected_length",
    "efficiency_from_ml",
    "excess_temperature",
    "fin_effectiveness",
    "fin_parameter",
    "heat_rate_adiabatic_tip",
    "heat_rate_convective_tip",
    "heat_rate_corrected_length",
    "heat_rate_infinite",
    "least_material_plate_thickness",
    "pin_fin_efficiency",
    "pin_fin_parameter",
    "plate_fin_efficiency",
    "plate_fin_parameter",
    "transverse_biot",
]

_REFERENCE = (
    "Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., "
    "Wiley (2007), section 3.6 [from memory]; Kraus, Aziz & Welty, Extended Surface Heat "
    "Transfer, Wiley (2001) [from memory]"
)


def _schmidt_ml() -> float:
    """Positive root of sinh(2x) = 6x by Newton's method (f convex for x > 0, so monotone)."""
    x = 1.5  # right of the root: Newton on a convex increasing branch converges monotonically
    for _ in range(60):
        step = (math.sinh(2.0 * x) - 6.0 * x) / (2.0 * math.cosh(2.0 * x) - 6.0)
        x -= step
        if abs(step) <= 1e-16 * x:
            break
    return x


#: m L of the rectangular-profile fin with adiabatic tip that carries the most heat for a
#: given profile area t L (Schmidt 1926): the positive root of sinh(2 m L) = 6 m L,
#: 1.4192... (computed here, not typed in). Its efficiency tanh(mL)/(mL) is 0.6267.
SCHMIDT_ML: float = _schmidt_ml()


def fin_parameter(h, k, perimeter, cross_section):
    """Fin parameter m = √(h P/(k A_c)) of a fin of uniform cross-section.

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient on the fin surface [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    perimeter : array_like
        Wetted perimeter P of the cross-section [m].
    cross_section : array_like
        Cross-section area A_c [m²].

    Returns
    -------
    numpy.ndarray
        m [1/m].

    References
    ----------
    .. [1] Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed. (2007), §3.6
       [from memory].
    """
    h, k, perimeter, cross_section = _floats(h, k, perimeter, cross_section)
    return np.sqrt(h * perimeter / (k * cross_section))


def plate_fin_parameter(h, k, thickness):
    """Fin parameter of a plate fin, m = √(2h/(k t)), edges neglected.

    A plate of width w ≫ t has P = 2(w + t) and A_c = w t; dropping the two edges (P ≈ 2w)
    gives m = √(2h/(k t)), independent of w. The edges add t/w to P/(2w): for t = 1.5 mm and
    w = 50 mm, m grows by 1.5 % and q by about 2.7 % when they are counted.

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    thickness : array_like
        Fin thickness t [m].

    Returns
    -------
    numpy.ndarray
        m [1/m].
    """
    h, k, thickness = _floats(h, k, thickness)
    return np.sqrt(2.0 * h / (k * thickness))


def pin_fin_parameter(h, k, diameter):
    """Fin parameter of a circular pin fin, m = √(4h/(k D)).

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    diameter : array_like
        Pin diameter D [m].

    Returns
    -------
    numpy.ndarray
        m [1/m].
    """
    h, k, diameter = _floats(h, k, diameter)
    return np.sqrt(4.0 * h / (k * diameter))


def heat_rate_infinite(h, k, perimeter, cross_section, theta_b):
    """Heat rate of an infinitely long fin, q_f = M = √(h P k A_c) θ_b.

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    perimeter : array_like
        Perimeter P [m].
    cross_section : array_like
        Cross-section A_c [m²].
    theta_b : array_like
        Base excess temperature T_b - T∞ [K].

    Returns
    -------
    numpy.ndarray
        q_f [W].

    Notes
    -----
    A fin of length L carries within 1 % of M once tanh(mL) > 0.99, i.e. L > 2.65/m.
    """
    h, k, perimeter, cross_section, theta_b = _floats(h, k, perimeter, cross_section, theta_b)
    return np.sqrt(h * perimeter * k * cross_section) * theta_b


def heat_rate_adiabatic_tip(h, k, perimeter, cross_section, length, theta_b):
    """Heat rate of a fin with an adiabatic tip, q_f = M tanh(m L).

    Parameters
    ----------
    h, k, perimeter, cross_section, theta_b : array_like
        As in :func:`heat_rate_infinite` [W/(m²·K)], [W/(m·K)], [m], [m²], [K].
    length : array_like
        Fin length L from the base to the tip [m].

    Returns
    -------
    numpy.ndarray
        q_f [W].
    """
    h, k, perimeter, cross_section, length, theta_b = _floats(
        h, k, perimeter, cross_section, length, theta_b
    )
    m = np.sqrt(h * perimeter / (k * cross_section))
    return np.sqrt(h * perimeter * k * cross_section) * theta_b * np.tanh(m * length)


def heat_rate_convective_tip(h, k, perimeter, cross_section, length, theta_b):
    r"""Heat rate of a fin whose tip convects with the same h (exact 1-D solution).

    .. math::

        q_f = M \frac{\sinh mL + (h/mk)\cosh mL}{\cosh mL + (h/mk)\sinh mL}
            = M \frac{\tanh mL + h/(mk)}{1 + (h/(mk)) \tanh mL}

    The second form, used here, cannot overflow for long fins.

    Parameters
    ----------
    h, k, perimeter, cross_section, theta_b : array_like
        As in :func:`heat_rate_infinite` [W/(m²·K)], [W/(m·K)], [m], [m²], [K].
    length : array_like
        Fin length L [m]; the tip area is A_c.

    Returns
    -------
    numpy.ndarray
        q_f [W].

    Notes
    -----
    h/(mk) = √(h A_c/(k P)) is computed in that form, so h = 0 gives q_f = 0 without 0/0.
    """
    h, k, perimeter, cross_section, length, theta_b = _floats(
        h, k, perimeter, cross_section, length, theta_b
    )
    m = np.sqrt(h * perimeter / (k * cross_section))
    ratio = np.sqrt(h * cross_section / (k * perimeter))  # h/(m k)
    tml = np.tanh(m * length)
    big_m = np.sqrt(h * perimeter * k * cross_section) * theta_b
    return big_m * (tml + ratio) / (1.0 + ratio * tml)


def corrected_length(length, perimeter, cross_section):
    """Corrected fin length L_c = L + A_c/P (tip area moved onto the side of the fin).

    L_c = L + t/2 for a plate fin (edges neglected: A_c/P = w t/(2w)) and L + D/4 for a pin.

    Parameters
    ----------
    length : array_like
        Fin length L [m].
    perimeter : array_like
        Perimeter P [m].
    cross_section : array_like
        Cross-section A_c [m²].

    Returns
    -------
    numpy.ndarray
        L_c [m].
    """
    length, perimeter, cross_section = _floats(length, perimeter, cross_section)
    return length + cross_section / perimeter


def heat_rate_corrected_length(h, k, perimeter, cross_section, length, theta_b):
    """Heat rate of a convective-tip fin by the corrected length, q_f ≈ M tanh(m L_c).

    Parameters
    ----------
    h, k, perimeter, cross_section, theta_b : array_like
        As in :func:`heat_rate_infinite` [W/(m²·K)], [W/(m·K)], [m], [m²], [K].
    length : array_like
        Fin length L [m]; L_c = L + A_c/P.

    Returns
    -------
    numpy.ndarray
        q_f [W].

    Notes
    -----
    Incropera et al. (6th ed., §3.6 [from memory]) call the error negligible for
    h t/k < 0.0625 (plate) or h D/(2k) < 0.0625 (pin). For the fins in the tests the
    difference from :func:`heat_rate_convective_tip` is below 1e-5 relative.
    """
    lc = corrected_length(length, perimeter, cross_section)
    return heat_rate_adiabatic_tip(h, k, perimeter, cross_section, lc, theta_b)


def excess_temperature(h, k, perimeter, cross_section, length, theta_b, x, tip="convective"):
    r"""Excess temperature θ(x) = T(x) - T∞ along a fin of uniform cross-section.

    .. math::

        \frac{θ}{θ_b} = \frac{\cosh m(L-x) + (h/mk)\sinh m(L-x)}{\cosh mL + (h/mk)\sinh mL}

    for ``tip="convective"``; h/(mk) = 0 for ``"adiabatic"``; e^{-mx} for ``"infinite"``
    (``length`` then unused). Evaluated with decaying exponentials only, so long fins do not
    overflow.

    Parameters
    ----------
    h, k, perimeter, cross_section, theta_b : array_like
        As in :func:`heat_rate_infinite` [W/(m²·K)], [W/(m·K)], [m], [m²], [K].
    length : array_like
        Fin length L [m].
    x : array_like
        Distance from the base, 0 <= x <= L [m].
    tip : {"convective", "adiabatic", "infinite"}
        Tip condition.

    Returns
    -------
    numpy.ndarray
        θ(x) [K].
    """
    h, k, perimeter, cross_section, length, theta_b, x = _floats(
        h, k, perimeter, cross_section, length, theta_b, x
    )
    m = np.sqrt(h * perimeter / (k * cross_section))
    if tip == "infinite":
        return theta_b * np.exp(-m * x)
    if tip == "convective":
        r = np.sqrt(h * cross_section / (k * perimeter))
    elif tip == "adiabatic":
        r = np.zeros_like(m)
    else:
        raise ValueError(f"tip must be 'convective', 'adiabatic' or 'infinite', not {tip!r}")
    # numerator and denominator divided by e^{mL}/2
    num = (1.0 + r) * np.exp(-m * x) + (1.0 - r) * np.exp(-m * (2.0 * length - x))
    den = (1.0 + r) + (1.0 - r) * np.exp(-2.0 * m * length)
    return theta_b * num / den


def efficiency_from_ml(ml):
    """Efficiency of a straight fin with adiabatic tip, η = tanh(x)/x, x = m L.

    Exactly 1 at x = 0 (series 1 - x²/3 + 2x⁴/15 below |x| = 1e-4, no 0/0).

    Parameters
    ----------
    ml : array_like
        m L (or m L_c) [-], >= 0.

    Returns
    -------
    numpy.ndarray
        η [-].
    """
    x = np.asarray(ml, dtype=float)
    small = np.abs(x) < 1e-4
    if not small.any():  # the usual case: skip the guards (np.where is costly in hot loops)
        return np.tanh(x) / x
    safe = np.where(small, 1.0, x)
    x2 = x * x
    return np.where(small, 1.0 - x2 / 3.0 + 2.0 * x2 * x2 / 15.0, np.tanh(safe) / safe)


@correlation(
    "fin_1d_uniform",
    quantity="efficiency and heat rate of a single fin of uniform cross-section (1-D)",
    reference=_REFERENCE,
    validity={"biot": (None, 0.1)},
    validity_note=(
        "biot is the transverse Biot number h t/(2k) (h D/(2k) for a pin), see "
        "transverse_biot; 0.1 is common practice for the 1-D assumption, no source. The "
        "corrected-length tip is accurate for h t/k < 0.0625 (plate) or h D/(2k) < 0.0625 "
        "(pin) after Incropera et al. [from memory]. Uniform h and k, no radiation."
    ),
)
def plate_fin_efficiency(h, k, thickness, height, tip="corrected"):
    r"""Efficiency of a straight rectangular plate fin (edges neglected).

    .. math::

        η_f = \frac{\tanh(m H_c)}{m H_c}, \quad m = \sqrt{2h/(k t)}, \quad H_c = H + t/2

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    thickness : array_like
        Fin thickness t [m].
    height : array_like
        Fin height H from the base to the tip [m].
    tip : {"corrected", "adiabatic"}
        ``"corrected"``: convective tip by the corrected height H_c = H + t/2. The efficiency
        belongs to the fin area 2 H_c per unit flow length (= 2H + t, both faces plus the
        tip), i.e. q_f = η h (2 H_c w) θ_b. ``"adiabatic"``: tanh(mH)/(mH), belonging to the
        area 2H per unit flow length (faces only, tip ignored).

    Returns
    -------
    numpy.ndarray
        η_f [-].

    Notes
    -----
    Valid where the transverse Biot number h t/(2k) < 0.1 (1-D conduction, common practice)
    and, for the corrected tip, h t/k < 0.0625 (Incropera et al. [from memory]).

    References
    ----------
    .. [1] Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th
       ed., Wiley (2007), §3.6 [from memory].
    .. [2] Kraus, Aziz & Welty, Extended Surface Heat Transfer, Wiley (2001).
    """
    h, k, thickness, height = _floats(h, k, thickness, height)
    m = np.sqrt(2.0 * h / (k * thickness))
    return efficiency_from_ml(m * _tip_length(height, thickness / 2.0, tip))


def pin_fin_efficiency(h, k, diameter, length, tip="corrected"):
    r"""Efficiency of a circular pin fin.

    .. math::

        η_f = \frac{\tanh(m L_c)}{m L_c}, \quad m = \sqrt{4h/(k D)}, \quad L_c = L + D/4

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    diameter : array_like
        Pin diameter D [m].
    length : array_like
        Pin length L [m].
    tip : {"corrected", "adiabatic"}
        ``"corrected"``: belongs to the area π D L_c (= π D L + π D²/4, side plus tip).
        ``"adiabatic"``: tanh(mL)/(mL), belonging to the side area π D L.

    Returns
    -------
    numpy.ndarray
        η_f [-].

    Notes
    -----
    Valid for h D/(2k) < 0.1 (1-D conduction); the corrected tip for h D/(2k) < 0.0625
    (Incropera et al. [from memory]).
    """
    h, k, diameter, length = _floats(h, k, diameter, length)
    m = np.sqrt(4.0 * h / (k * diameter))
    return efficiency_from_ml(m * _tip_length(length, diameter / 4.0, tip))


def fin_effectiveness(heat_rate, h, cross_section, theta_b):
    """Fin effectiveness ε_f = q_f/(h A_c θ_b): heat rate against the bare base it covers.

    Parameters
    ----------
    heat_rate : array_like
        Fin heat rate q_f [W].
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    cross_section : array_like
        Base cross-section A_c [m²].
    theta_b : array_like
        Base excess temperature [K].

    Returns
    -------
    numpy.ndarray
        ε_f [-]. An infinite fin has √(k P/(h A_c)).
    """
    heat_rate, h, cross_section, theta_b = _floats(heat_rate, h, cross_section, theta_b)
    return heat_rate / (h * cross_section * theta_b)


def conductance_with_root_resistance(fin_conductance, root_resistance):
    """Conductance of a fin in series with a root resistance, G/(1 + G R).

    A bond line, braze or press-fit joint of resistance R between base and fin root.

    Parameters
    ----------
    fin_conductance : array_like
        Fin conductance G = q_f/θ_root [W/K], >= 0 (inf allowed: gives 1/R).
    root_resistance : array_like
        Root resistance R [K/W], >= 0.

    Returns
    -------
    numpy.ndarray
        Series conductance [W/K].
    """
    g, r = _floats(fin_conductance, root_resistance)
    with np.errstate(divide="ignore", invalid="ignore"):
        finite = g / (1.0 + g * r)
        infinite = 1.0 / r
    return np.where(np.isinf(g), infinite, finite)


def transverse_biot(h, k, thickness):
    """Transverse Biot number h t/(2k) of a plate fin (half-thickness based).

    Pass the diameter of a pin as ``thickness`` to get h D/(2k) (radius based).

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    thickness : array_like
        Plate thickness t (or pin diameter D) [m].

    Returns
    -------
    numpy.ndarray
        Bi [-].

    Notes
    -----
    The 1-D fin model needs Bi ≪ 1; optifin flags Bi > 0.1 (common practice, no source).
    Incropera et al. give h t/k < 0.0625 (plate, i.e. this Bi < 0.03125) and
    h D/(2k) < 0.0625 (pin) as the range where the corrected-length tip is accurate
    [from memory].
    """
    h, k, thickness = _floats(h, k, thickness)
    return h * thickness / (2.0 * k)


def least_material_plate_thickness(h, k, height):
    r"""Thickness of the plate fin that carries the most heat per profile area (Schmidt 1926).

    For a rectangular profile with adiabatic tip at fixed profile area t H, q is largest
    where sinh(2 m H) = 6 m H, m H = :data:`SCHMIDT_ML`; with m² = 2h/(k t):

    .. math::

        t = \frac{2 h H^2}{k (mH)^2} ≈ 0.99295 \frac{h H^2}{k}

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient [W/(m²·K)].
    k : array_like
        Fin conductivity [W/(m·K)].
    height : array_like
        Fin height H [m].

    Returns
    -------
    numpy.ndarray
        t [m].

    References
    ----------
    .. [1] E. Schmidt, "Die Wärmeübertragung durch Rippen", Z. VDI 70 (1926) 885 [from
       memory].
    """
    h, k, height = _floats(h, k, height)
    return 2.0 * h * height**2 / (k * SCHMIDT_ML**2)


def _tip_length(length, correction, tip):
    if tip == "corrected":
        return length + correction
    if tip == "adiabatic":
        return length
    raise ValueError(f"tip must be 'corrected' or 'adiabatic', not {tip!r}")


def _floats(*values):
    return tuple(np.asarray(v, dtype=float) for v in values)


# --------------------------------------------------------------------------------------
# longitudinal fin of trapezoidal profile (thickness falling linearly from root to tip)

__all__ += [
    "tapered_fin_cross_section",
    "tapered_fin_half_angle",
    "trapezoidal_fin_efficiency",
]

_TAPER_REFERENCE = (
    "K. A. Gardner, Efficiency of extended surface, Trans. ASME 67 (1945) 621-631 [from "
    "memory]; Kraus, Aziz & Welty, Extended Surface Heat Transfer, Wiley (2001), ch. 2 "
    "[from memory]; the Bessel form re-derived here and checked against solve_bvp"
)

# below this relative taper 1 - t_tip/t_root the first-order expansion about the uniform
# fin is used (its error is O(taper²) < 1e-12; the Bessel form is exact but has u → ∞)
_NEAR_UNIFORM = 1e-6
# below this m_r H the series 1 - (m_r H)² g(taper) is used (error O((m_r H)⁴) < 1e-16)
_SHORT_FIN = 1e-4


def tapered_fin_cross_section(t_root, t_tip, height):
    """Profile area of a trapezoidal fin, A_p = (t_root + t_tip) H/2.

    The area of the fin's section normal to the flow, i.e. its volume per unit flow length
    (for mass, cost and the blockage of the channel).

    Parameters
    ----------
    t_root : array_like
        Thickness at the base [m].
    t_tip : array_like
        Thickness at the tip [m].
    height : array_like
        Fin height H from the base to the tip [m].

    Returns
    -------
    numpy.ndarray
        A_p [m²] (m³ of metal per metre of flow length).
    """
    t_root, t_tip, height = _floats(t_root, t_tip, height)
    return 0.5 * (t_root + t_tip) * height


def tapered_fin_half_angle(t_root, t_tip, height):
    """Tangent of the half-angle between the faces of a trapezoidal fin, (t_root - t_tip)/(2H).

    The validity group ``half_angle`` of :func:`trapezoidal_fin_efficiency`: its 1-D model
    takes the face area per unit length as 2H, which is low by the factor cos φ; at
    tan φ = 0.1 the face is 0.5 % longer than H.

    Parameters
    ----------
    t_root, t_tip, height : array_like
        Root and tip thickness and fin height [m].

    Returns
    -------
    numpy.ndarray
        tan φ [-].
    """
    t_root, t_tip, height = _floats(t_root, t_tip, height)
    return (t_root - t_tip) / (2.0 * height)


@correlation(
    "fin_1d_trapezoidal",
    quantity="efficiency of a longitudinal fin of trapezoidal profile (1-D, exact Bessel form)",
    reference=_TAPER_REFERENCE,
    validity={"biot": (None, 0.1), "half_angle": (None, 0.1)},
    validity_note=(
        "biot is the transverse Biot number on the root thickness, h t_root/(2k) (see "
        "transverse_biot), 0.1 as for the uniform fin (common practice, no source); "
        "half_angle = (t_root - t_tip)/(2H) (tapered_fin_half_angle), 0.1 keeps the neglected "
        "slope of the faces below 0.5 % of their area (common practice, no source). "
        "0 <= t_tip <= t_root; uniform h and k."
    ),
)
def trapezoidal_fin_efficiency(h, k, t_root, t_tip, height, tip="adiabatic"):
    r"""Efficiency of a straight fin whose thickness falls linearly from root to tip.

    The 1-D fin equation for a thickness t(x) = t_root - (t_root - t_tip) x/H,

    .. math::

        \frac{d}{dx}\Big(t(x) \frac{dθ}{dx}\Big) = \frac{2h}{k} θ, \quad θ(0) = θ_b,
        \quad θ'(H) = 0,

    becomes Bessel's modified equation of order 0 in u = 2√(p ξ), with ξ the distance from
    the apex where the faces would meet and p = 2h/(k δ), δ = (t_root - t_tip)/H. With
    m_r = √(2h/(k t_root)), r = t_tip/t_root, u_b = 2 m_r H/(1 - r) at the base and
    u_t = u_b √r at the tip (Gardner 1945; Kraus, Aziz & Welty 2001, ch. 2 [from memory];
    derived again here):

    .. math::

        η = \frac{q_f}{2 h H θ_b} = \frac{1}{m_r H}\,
            \frac{I_1(u_b) K_1(u_t) - K_1(u_b) I_1(u_t)}{I_0(u_b) K_1(u_t) + K_0(u_b) I_1(u_t)}

    The limits: r → 1 gives the plate fin tanh(m_r H)/(m_r H); r = 0 (triangular
    profile, u_t = 0) gives the classical η = I_1(2 m_r H)/(m_r H I_0(2 m_r H)).

    Parameters
    ----------
    h : array_like
        Heat-transfer coefficient on the faces [W/(m²·K)], >= 0.
    k : array_like
        Fin conductivity [W/(m·K)].
    t_root : array_like
        Thickness at the base [m], > 0.
    t_tip : array_like
        Thickness at the tip [m], 0 <= t_tip <= t_root.
    height : array_like
        Fin height H from the base to the tip [m].
    tip : {"adiabatic", "corrected"}
        ``"adiabatic"``: the tip face carries no heat; η belongs to the face area 2H per unit
        flow length. ``"corrected"``: a convective tip (same h) by the corrected height
        H_c = H + t_tip/2, the fin continued at its own taper to H_c (tip thickness
        t_tip - (t_root - t_tip) t_tip/(2H)) with an adiabatic end; η belongs to
        2 H_c = 2H + t_tip per unit length. Nothing changes for t_tip = 0; for
        t_tip = t_root it is :func:`plate_fin_efficiency` with ``tip="corrected"``. Against
        the exact convective tip (solve_bvp) within 2e-5 for h t_tip/k <= 0.003, the
        accuracy of the uniform fin's corrected length; keeping t_root and t_tip and
        stretching the fin instead is 50 times worse.

    Returns
    -------
    numpy.ndarray
        η [-], the broadcast shape of the arguments.

    Notes
    -----
    Assumptions: 1-D conduction along the fin (transverse Biot number h t_root/(2k) small)
    and faces of small slope: the convecting area per unit length is taken as 2 dx, not
    2 dx/cos φ, tan φ = (t_root - t_tip)/(2H). Uniform h and k.

    Numerics: modified Bessel functions scaled by e^{∓u} (scipy.special i0e, i1e, k0e, k1e);
    the ratio is formed with the factor e^{-2(u_b - u_t)}, u_b - u_t = 2 m_r H/(1 + √r), so
    nothing overflows. For 1 - r < 1e-6 (u_b > 2e6 m_r H) the first-order expansion about
    the uniform fin,

    .. math::

        η ≈ \frac{\tanh X}{X} - \frac{1 - r}{4}\Big(\frac{\tanh^2 X}{X^2} -
            \mathrm{sech}^2 X\Big), \quad X = m_r H

    (derived here by the reciprocity of the perturbed fin equation), and for X < 1e-4 the
    series η ≈ 1 - X² g with g = ∫_0^1 (1 - s)²/(1 - (1 - r)s) ds (1/3 uniform, 1/2
    triangular). Both switches are continuous to 1e-12.

    References
    ----------
    .. [1] K. A. Gardner, "Efficiency of extended surface", Trans. ASME 67 (1945) 621-631.
    .. [2] A. D. Kraus, A. Aziz, J. Welty, Extended Surface Heat Transfer, Wiley (2001).
    """
    h, k, t_root, t_tip, height = _floats(h, k, t_root, t_tip, height)
    if np.any(t_root <= 0) or np.any(t_tip < 0) or np.any(t_tip > t_root):
        raise ModelError("trapezoidal fin needs t_root > 0 and 0 <= t_tip <= t_root")
    length = _tip_length(height, t_tip / 2.0, tip)
    if tip == "corrected":  # continue the taper over the added t_tip/2
        slope = (t_root - t_tip) / np.where(height > 0, height, np.inf)
        t_tip = np.maximum(t_tip - 0.5 * slope * t_tip, 0.0)
    x = np.sqrt(2.0 * h / (k * t_root)) * length  # m_r H (or m_r H_c)
    ratio = t_tip / t_root
    taper = 1.0 - ratio
    short = x < _SHORT_FIN
    uniform = taper < _NEAR_UNIFORM
    xs = np.where(short, 1.0, x)

    # near-uniform: first-order expansion in the taper
    th = np.tanh(xs)
    near = th / xs - 0.25 * taper * ((th / xs) ** 2 - 1.0 / np.cosh(np.minimum(xs, 350.0)) ** 2)

    # exact Bessel form
    ts = np.where(uniform, 1.0, taper)
    root = np.sqrt(ratio)
    u_b = 2.0 * xs / ts
    u_t = u_b * root
    gap = 2.0 * xs / (1.0 + root)  # u_b - u_t without cancellation
    u_t_safe = np.where(u_t > 0, u_t, 1.0)
    w = np.where(u_t > 0, special.i1e(u_t_safe) / special.k1e(u_t_safe), 0.0) * np.exp(-2 * gap)
    num = special.i1e(u_b) - special.k1e(u_b) * w
    den = special.i0e(u_b) + special.k0e(u_b) * w
    exact = num / (den * xs)

    # short fin (or h -> 0): 1 - X² g(taper)
    g_series = 1.0 / 3.0 + taper * (1 / 12 + taper * (1 / 30 + taper * (1 / 60 + taper / 105)))
    rs = np.where(ratio > 0, ratio, 1.0)
    tc = np.where(taper >= 0.05, taper, 1.0)
    g_closed = (0.5 * (1.0 - rs**2) - 2.0 * rs * (1.0 - rs) - rs**2 * np.log(rs)) / tc**3
    g_closed = np.where(ratio > 0, g_closed, 0.5)  # triangular: ∫(1 - s) ds
    g = np.where(taper >= 0.05, g_closed, g_series)
    series = 1.0 - x * x * g

    return np.where(short, series, np.where(uniform, near, exact))
