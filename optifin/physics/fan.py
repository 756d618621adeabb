r"""Fans and system curves: the operating point where a fan curve meets the system's loss.

A fan curve is the table of static pressure against volumetric flow that a fan data sheet
gives, from shut-off (no flow) to free delivery (no pressure). The system curve is the
static-pressure loss of everything the fan pushes the air through (the sink, ducts,
grilles) as a function of the flow; it rises with the flow. The fan runs where the two meet,

.. math::

    \Delta p_{fan}(\dot V) = \Delta p_{system}(\dot V),

solved here for a whole population of designs at once. Culham & Muzychka (2001) couple their
heat-sink model to a fan curve in this way; they also weigh the thermal resistance against
the pumping loss through the entropy generation rate (:func:`entropy_generation_rate`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from optifin.errors import ModelError
from optifin.numerics import bracketed_root
from optifin.physics.registry import correlation

__all__ = [
    "ARRANGEMENTS",
    "FanCurve",
    "combine",
    "entropy_generation_rate",
    "fan_curve",
    "fan_pressure",
    "operating_point",
    "system_loss_coefficient",
    "system_loss_reference",
]

#: How several identical fans may be combined by :func:`combine`.
ARRANGEMENTS = ("parallel", "series")

#: Lower end of the operating-point bracket as a fraction of the free delivery. The system
#: curve is never evaluated at exactly zero flow, where channel Reynolds numbers vanish and
#: friction correlations are undefined; a crossing below this flow counts as a stall.
LOW_FLOW_FRACTION = 1e-9


def _check(condition, message: str) -> None:
    """Raise :class:`ModelError` with ``message`` unless ``condition`` holds everywhere."""
    if not np.all(condition):
        raise ModelError(message)


@dataclass(frozen=True, eq=False)
class FanCurve:
    """A fan's static pressure against volumetric flow, from shut-off to free delivery.

    Build it with :func:`fan_curve` (or directly: the same checks run either way). The
    arrays are stored as read-only float copies.

    Attributes
    ----------
    flow : numpy.ndarray
        Volumetric flows of the table [m³/s], strictly increasing, the first one 0.
    pressure : numpy.ndarray
        Static pressures at those flows [Pa], non-increasing, the last one 0.
    name : str
        A label for messages and reports.

    Notes
    -----
    The table must start at shut-off (flow 0) and end at free delivery (pressure 0), as fan
    data sheets draw it: the curve is not extrapolated to either end, because a fan curve
    often bends near both (stall near shut-off, a steep drop near free delivery) and a
    straight-line guess there is invented data. A fan with a stall dip (pressure rising
    again with flow) is rejected; give its non-increasing envelope if it should be used.
    """

    flow: np.ndarray
    pressure: np.ndarray
    name: str = ""

    def __post_init__(self):
        flow, pressure = _validated(self.flow, self.pressure, self.name)
        object.__setattr__(self, "flow", flow)
        object.__setattr__(self, "pressure", pressure)

    @property
    def free_delivery(self) -> float:
        """Flow at zero static pressure [m³/s]: the last point of the table."""
        return float(self.flow[-1])

    @property
    def shutoff_pressure(self) -> float:
        """Static pressure at zero flow [Pa]: the first point of the table."""
        return float(self.pressure[0])

    def __eq__(self, other) -> bool:
        if not isinstance(other, FanCurve):
            return NotImplemented
        return (
            self.name == other.name
            and np.array_equal(self.flow, other.flow)
            and np.array_equal(self.pressure, other.pressure)
        )

    def __hash__(self) -> int:
        return hash((self.name, self.flow.tobytes(), self.pressure.tobytes()))


_CFM = 0.3048**3 / 60.0  #: one cubic foot per minute [m³/s], for messages


def _listed(values) -> str:
    """Values for a message, four significant digits (no float noise)."""
    return "[" + ", ".join(f"{v:.4g}" for v in values) + "]"


def _validated(flow, pressure, name: str) -> tuple[np.ndarray, np.ndarray]:
    """Checked, read-only float copies of a fan table; :class:`ModelError` if it is invalid."""
    label = f"fan curve {name!r}" if name else "fan curve"
    try:
        q = np.array(flow, dtype=float)
        p = np.array(pressure, dtype=float)
    except (TypeError, ValueError):
        raise ModelError(f"{label}: flow and pressure must be sequences of numbers") from None
    if q.ndim != 1 or p.ndim != 1:
        raise ModelError(f"{label}: flow and pressure must be 1-D sequences")
    if q.size != p.size:
        raise ModelError(f"{label}: {q.size} flows but {p.size} pressures; every point needs both")
    if q.size < 2:
        raise ModelError(f"{label}: needs at least 2 points, found {q.size}")
    _check(np.isfinite(q) & np.isfinite(p), f"{label}: flow and pressure must be finite")
    _check(q >= 0, f"{label}: flows must be >= 0, found {q.min()} m^3/s")
    _check(p >= 0, f"{label}: pressures must be >= 0, found {p.min()} Pa")
    _check(
        np.diff(q) > 0,
        f"{label}: flows must be strictly increasing, found {_listed(q / _CFM)} CFM",
    )
    _check(
        np.diff(p) <= 0,
        f"{label}: pressures must not increase with flow (a stall dip is not supported), "
        f"found {_listed(p)} Pa",
    )
    if q[0] != 0:
        raise ModelError(
            f"{label}: the first point must be shut-off (flow 0), found {q[0] / _CFM:.4g} CFM; "
            "add the shut-off pressure at zero flow"
        )
    if p[-1] != 0:
        raise ModelError(
            f"{label}: the last point must be free delivery (pressure 0), found {p[-1]:.4g} Pa; "
            "add the free-delivery flow at zero pressure"
        )
    if p[-2] <= 0:
        raise ModelError(f"{label}: only the last point (free delivery) may have pressure 0")
    q.flags.writeable = False
    p.flags.writeable = False
    return q, p


def fan_curve(flow, pressure, name: str = "") -> FanCurve:
    """A validated fan curve from a table of flows and static pressures.

    Parameters
    ----------
    flow : array_like
        Volumetric flows [m³/s], strictly increasing, starting at 0 (shut-off).
    pressure : array_like
        Static pressures at those flows [Pa], non-increasing, ending at 0 (free delivery);
        only the last point may be 0.
    name : str
        A label for messages.

    Returns
    -------
    FanCurve

    Raises
    ------
    ModelError
        With fewer than 2 points, flows not strictly increasing, pressures increasing with
        flow, negative or non-finite values, or a table that does not run from shut-off to
        free delivery; the message names the curve and the values found.
    """
    return FanCurve(flow, pressure, name)


def combine(curve: FanCurve, count: int, arrangement: str = "parallel") -> FanCurve:
    """The curve of ``count`` identical fans side by side or one behind the other.

    ``"parallel"``: the flows add at the same pressure, V̇ -> n V̇. ``"series"``: the
    pressures add at the same flow, Δp -> n Δp.

    Parameters
    ----------
    curve : FanCurve
        One fan.
    count : int
        Number of identical fans, >= 1.
    arrangement : {"parallel", "series"}
        How they are combined.

    Returns
    -------
    FanCurve
        The combined curve (``curve`` itself for ``count == 1``).

    Notes
    -----
    Ideal combination (common practice, no source): the fans do not disturb each other's
    inflow, and in series the second fan sees the first one's swirl as if it were uniform
    flow. Real combinations deliver somewhat less.
    """
    if arrangement not in ARRANGEMENTS:
        raise ModelError(
            f"unknown fan arrangement {arrangement!r} (valid: {', '.join(ARRANGEMENTS)})"
        )
    if isinstance(count, bool) or not isinstance(count, int | np.integer) or count < 1:
        raise ModelError(f"fan count must be an integer >= 1, found {count!r}")
    if count == 1:
        return curve
    name = f"{count} x {curve.name} ({arrangement})" if curve.name else ""
    if arrangement == "parallel":
        return FanCurve(curve.flow * count, curve.pressure, name)
    return FanCurve(curve.flow, curve.pressure * count, name)


def fan_pressure(curve: FanCurve, flow) -> np.ndarray:
    """Static pressure of the fan at the given flows, linear between the table's points.

    Parameters
    ----------
    curve : FanCurve
        The fan.
    flow : array_like
        Volumetric flow [m³/s], >= 0.

    Returns
    -------
    numpy.ndarray
        Δp [Pa]. Beyond free delivery the last segment of the table is continued as a
        straight line, so the pressure turns negative there (it is not clipped at 0): a
        residual fan minus system then keeps changing sign for root finding on brackets
        that reach past free delivery. The negative values have no physical meaning (a fan
        driven beyond free delivery acts as a resistance, with a curve of its own).
    """
    q = np.asarray(flow, dtype=float)
    _check(~(q < 0), "flow through a fan must be >= 0")
    p = np.interp(q, curve.flow, curve.pressure)
    beyond = q > curve.flow[-1]
    if not np.any(beyond):
        return p
    slope = (curve.pressure[-1] - curve.pressure[-2]) / (curve.flow[-1] - curve.flow[-2])
    return np.where(beyond, slope * (q - curve.flow[-1]), p)


def system_loss_coefficient(flow, k, area, density) -> np.ndarray:
    r"""Quadratic loss of a duct, grille or filter given as a loss coefficient.

    .. math::

        \Delta p = K \frac{\rho}{2} \left(\frac{\dot V}{A}\right)^2

    Parameters
    ----------
    flow : array_like
        Volumetric flow V̇ [m³/s].
    k : array_like
        Loss coefficient K [-], >= 0, on the mean velocity in ``area``.
    area : array_like
        Flow area A the coefficient refers to [m²], > 0.
    density : array_like
        Air density ρ [kg/m³], > 0.

    Returns
    -------
    numpy.ndarray
        Δp [Pa].

    Notes
    -----
    A constant K describes fully turbulent losses (common practice, no source); at low
    Reynolds numbers K of real grilles and filters grows as the flow falls.
    """
    flow = np.asarray(flow, dtype=float)
    k = np.asarray(k, dtype=float)
    area = np.asarray(area, dtype=float)
    density = np.asarray(density, dtype=float)
    _check(k >= 0, "loss coefficient K must be >= 0")
    _check(area > 0, "loss-coefficient area must be > 0")
    _check(density > 0, "air density must be > 0")
    velocity = flow / area
    return k * 0.5 * density * velocity * velocity


def system_loss_reference(flow, dp_ref, flow_ref) -> np.ndarray:
    r"""Quadratic loss scaled from one measured point.

    .. math::

        \Delta p = \Delta p_{ref} \left(\frac{\dot V}{\dot V_{ref}}\right)^2

    Parameters
    ----------
    flow : array_like
        Volumetric flow V̇ [m³/s].
    dp_ref : array_like
        Loss measured at ``flow_ref`` [Pa], >= 0.
    flow_ref : array_like
        Flow of the measurement [m³/s], > 0.

    Returns
    -------
    numpy.ndarray
        Δp [Pa].

    Notes
    -----
    The square law of fully turbulent losses (common practice, no source), the same model
    as :func:`system_loss_coefficient` with K fixed by one point.
    """
    flow = np.asarray(flow, dtype=float)
    dp_ref = np.asarray(dp_ref, dtype=float)
    flow_ref = np.asarray(flow_ref, dtype=float)
    _check(dp_ref >= 0, "reference pressure drop must be >= 0")
    _check(flow_ref > 0, "reference flow must be > 0")
    ratio = flow / flow_ref
    return dp_ref * ratio * ratio


def operating_point(
    curve: FanCurve, system_pressure: Callable[[np.ndarray], np.ndarray], n: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Flow and pressure where the fan curve meets each of ``n`` system curves.

    Solves fan_pressure(V̇) = system_pressure(V̇) for all designs at once with
    :func:`optifin.numerics.bracketed_root` on [1e-9 V̇_fd, V̇_fd], V̇_fd the free delivery.

    Parameters
    ----------
    curve : FanCurve
        The fan (already combined with :func:`combine` for several fans).
    system_pressure : callable
        Maps a flow array of shape ``(n,)`` [m³/s] to the system's static-pressure loss of
        each design [Pa], shape ``(n,)`` (or anything that broadcasts to it). It must rise
        with the flow; it is never called with a flow of exactly 0.
    n : int
        Number of designs.

    Returns
    -------
    flow, pressure, ok : numpy.ndarray
        Operating flow [m³/s] and static pressure [Pa], shape ``(n,)``; ``ok`` is False
        where the curves do not cross (the system loss near zero flow exceeds the shut-off
        pressure: the fan stalls), and flow and pressure are NaN there.

    Notes
    -----
    The fan curve does not increase and the system curve rises, so a crossing is unique
    when it exists. The residual at free delivery is minus the system loss there, never
    positive, so the bracket holds a sign change exactly when the system loss at the low end
    is at most the shut-off pressure. The low end is 1e-9 of the free delivery, not 0,
    because the sink's friction correlations have no value at zero flow; a crossing below it
    is reported as a stall. Converged to a bracket width of 1e-12 of the free delivery or
    1e-12 relative.
    """
    if isinstance(n, bool) or not isinstance(n, int | np.integer) or n < 0:
        raise ModelError(f"number of designs must be an integer >= 0, found {n!r}")
    q_fd = curve.free_delivery
    shape = (int(n),)

    def residual(q):
        sp = np.asarray(system_pressure(q), dtype=float)
        try:
            sp = np.broadcast_to(sp, shape)
        except ValueError:
            raise ModelError(
                f"system_pressure returned shape {sp.shape} for {shape[0]} designs"
            ) from None
        return fan_pressure(curve, q) - sp

    low = np.full(shape, LOW_FLOW_FRACTION * q_fd)
    high = np.full(shape, q_fd)
    flow, ok = bracketed_root(residual, low, high, xtol=1e-12 * q_fd, rtol=1e-12)
    ok = ok & np.isfinite(flow)
    flow = np.where(ok, flow, np.nan)
    pressure = np.where(ok, fan_pressure(curve, np.where(ok, flow, 0.0)), np.nan)
    return flow, pressure, ok


@correlation(
    "entropy_generation_rate",
    quantity="entropy generation rate of a heat sink: heat transfer plus fluid friction",
    reference=(
        "Culham & Muzychka, IEEE Trans. Compon. Packag. Technol. 24(2) (2001) 159-165, after "
        "Bejan, Entropy Generation Minimization, CRC Press (1996) [form and DOI from memory]"
    ),
    doi="10.1109/6144.926378",
    validity_note="definition; the heat leaves through one resistance to air at T_inf",
)
def entropy_generation_rate(
    heat, resistance, ambient_temperature, pressure_drop, flow
) -> np.ndarray:
    r"""Entropy generation rate of a heat sink (Culham & Muzychka 2001, after Bejan).

    .. math::

        \dot S_{gen} = \frac{Q^2 R}{T_\infty^2} + \frac{\Delta p \, \dot V}{T_\infty}

    The first term is the heat crossing the temperature difference Q R, the second the
    pumping power dissipated by friction. Culham & Muzychka write the second as
    F_d V_f / T∞ with the drag F_d = Δp A_f on the frontal area A_f and the approach velocity
    V_f, which is the same product since V̇ = V_f A_f.

    Parameters
    ----------
    heat : array_like
        Heat flow Q [W].
    resistance : array_like
        Thermal resistance of the sink R [K/W], >= 0.
    ambient_temperature : array_like
        Ambient (inlet) air temperature T∞ [K], > 0.
    pressure_drop : array_like
        Static-pressure drop the air suffers Δp [Pa].
    flow : array_like
        Volumetric flow V̇ [m³/s].

    Returns
    -------
    numpy.ndarray
        Ṡ_gen [W/K].

    Notes
    -----
    A definition, valid for small temperature rises (Q R << T∞), to which the form is the
    leading term.

    References
    ----------
    .. [1] J. R. Culham, Y. S. Muzychka, "Optimization of plate fin heat sinks using entropy
       generation minimization", IEEE Trans. Compon. Packag. Technol. 24(2) (2001) 159-165,
       doi:10.1109/6144.926378 [DOI from memory].
    .. [2] A. Bejan, Entropy Generation Minimization, CRC Press (1996).
    """
    heat = np.asarray(heat, dtype=float)
    resistance = np.asarray(resistance, dtype=float)
    t_inf = np.asarray(ambient_temperature, dtype=float)
    _check(t_inf > 0, "ambient temperature must be > 0 K")
    _check(~(resistance < 0), "thermal resistance must be >= 0")
    return heat * heat * resistance / (t_inf * t_inf) + (
        np.asarray(pressure_drop, dtype=float) * np.asarray(flow, dtype=float) / t_inf
    )
