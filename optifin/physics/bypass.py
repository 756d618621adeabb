r"""Flow bypass: how much of the approach air goes through an unshrouded sink.

A sink in a duct with clearances beside and above it, or in an open stream, does not get
all of the approach flow: the fins resist the flow and part of the air goes around. The
split follows from two branches in parallel between a common upstream plane and a common
exit plane (the two-branch Bernoulli and continuity balance of Simons & Schmidt 1997):

.. math::

    V_{app} A_{duct} = V_s A_s + V_b A_b, \qquad A_{duct} = A_s + A_b,

    \tfrac{1}{2} \rho (V_b^2 - V_s^2) = \Delta p_{sink}(V_s),

with A_s the sink's frontal flow area (width times fin height), A_b the clearance around
it, V_s the frontal velocity at the sink, V_b the velocity in the bypass, and Δp_sink the
sink's static-to-static pressure drop at V_s (entrance, friction and exit losses); the
bypass is lossless. In an open stream (A_b infinite) the air around the sink keeps the
approach velocity, V_b = V_app.

Related models not implemented here: Lee (1995) adds the bypass to his sink resistance with a
similar momentum balance; Jonsson & Moshfegh (2001) give measured bypass correlations for
plate-, strip- and pin-fin sinks.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from optifin.errors import ModelError
from optifin.numerics import bracketed_root
from optifin.physics.registry import correlation

__all__ = ["bypass_area", "split_flow_bypass"]

#: Lower end of the bracket on V_s as a fraction of its upper end: the sink's pressure-drop
#: callable is never asked for zero velocity, where friction correlations are undefined.
LOW_VELOCITY_FRACTION = 1e-9


def _check(condition, message: str) -> None:
    """Raise :class:`ModelError` with ``message`` unless ``condition`` holds everywhere."""
    if not np.all(condition):
        raise ModelError(message)


def bypass_area(width, fin_height, side_clearance, top_clearance):
    """Duct and bypass flow areas around a sink with clearances beside and above it.

    .. math::

        A_{duct} = (W + 2 c_s)(H + c_t), \\qquad A_b = A_{duct} - W H

    Parameters
    ----------
    width : array_like
        Sink width W across the flow [m], > 0.
    fin_height : array_like
        Fin height H [m], > 0.
    side_clearance : array_like
        Gap c_s between each side of the sink and the duct wall [m], >= 0; ``inf`` for no
        side walls.
    top_clearance : array_like
        Gap c_t between the fin tips and the duct wall [m], >= 0; ``inf`` for no cover.

    Returns
    -------
    duct_area, bypass_area : numpy.ndarray
        A_duct and A_b [m²]; both ``inf`` where either clearance is (open stream), both
        with the sink area W H excluded from A_b. Zero clearances give A_b = 0 (shrouded).

    Notes
    -----
    The duct section is counted from the plane of the fin roots: the base and anything
    below it (board, side gaps beside the base) block or carry nothing here.
    """
    width = np.asarray(width, dtype=float)
    fin_height = np.asarray(fin_height, dtype=float)
    side = np.asarray(side_clearance, dtype=float)
    top = np.asarray(top_clearance, dtype=float)
    _check((width > 0) & np.isfinite(width), "sink width must be finite and > 0")
    _check((fin_height > 0) & np.isfinite(fin_height), "fin height must be finite and > 0")
    _check(side >= 0, "side clearance must be >= 0 (inf for an open stream)")
    _check(top >= 0, "top clearance must be >= 0 (inf for an open stream)")
    sink = width * fin_height
    # the product form never meets 0 * inf: W and H are finite and positive
    duct = (width + 2.0 * side) * (fin_height + top)
    return duct, duct - sink


@correlation(
    "split_flow_bypass",
    quantity="split of the approach flow between an unshrouded sink and its bypass",
    reference=(
        "Simons & Schmidt, 'A simple method to estimate heat sink air flow bypass', "
        "Electronics Cooling 3(2) (1997) [from memory]"
    ),
    validity_note=(
        "lossless bypass, uniform approach flow, common static pressure at the exit plane; "
        "no mixing loss behind the sink"
    ),
)
def split_flow_bypass(
    approach_velocity,
    sink_area,
    bypass_area,
    sink_pressure_drop: Callable[[np.ndarray], np.ndarray],
    density,
):
    r"""Velocities through and around a sink from the two-branch Bernoulli balance.

    Solves, for V_s on [0, V_app A_duct / A_s] (open stream: [0, V_app]),

    .. math::

        \tfrac{1}{2} \rho (V_b^2 - V_s^2) = \Delta p_{sink}(V_s), \qquad
        V_b = \frac{V_{app} (A_s + A_b) - V_s A_s}{A_b}

    (V_b = V_app for A_b = inf) with :func:`optifin.numerics.bracketed_root`. The residual
    falls monotonically in V_s: positive at V_s = 0 (all air in the bypass) and negative
    where the bypass runs empty, so the root is unique.

    Parameters
    ----------
    approach_velocity : array_like
        Mean velocity V_app of the approach flow over the duct section [m/s], >= 0.
    sink_area : array_like
        Frontal flow area of the sink A_s = W H [m²], > 0.
    bypass_area : array_like
        Clearance area A_b [m²], >= 0: 0 for a shrouded sink, ``inf`` for an open stream
        (:func:`bypass_area`).
    sink_pressure_drop : callable
        Maps the frontal velocity V_s [m/s] (an array of the broadcast shape of the other
        arguments) to the sink's static-to-static pressure drop of each design [Pa]; it must
        rise with V_s. It is only called with V_s > 0.
    density : array_like
        Air density ρ [kg/m³], > 0.

    Returns
    -------
    v_sink, v_bypass, dp, ok : numpy.ndarray
        Frontal velocity at the sink V_s [m/s], bypass velocity V_b [m/s], the sink's
        pressure drop Δp_sink(V_s) [Pa] and a convergence flag, all of the broadcast shape.
        A_b = 0 gives V_s = V_app and V_b = 0 exactly (no solve); V_app = 0 gives zeros.
        Where ``ok`` is False (no sign change: a callable that is negative or not finite)
        the three values are NaN.

    Notes
    -----
    From memory of Simons & Schmidt (1997): the sink branch and the bypass branch share the
    upstream total pressure and the exit static pressure; the bypass has no losses and the
    wake behind the sink does not mix before the exit plane. With a quadratic sink loss
    Δp = K ρ V_s²/2 the balance has the closed form V_b = sqrt(1 + K) V_s,
    V_s = V_app A_duct / (A_s + sqrt(1 + K) A_b) (checked in the tests). The lossless bypass
    overestimates the air through the sink a little when the clearances are narrow. The
    lower bracket end is 1e-9 of the upper one, so that the callable never sees V_s = 0;
    the root is converged to 1e-12 m/s or 1e-12 relative.

    References
    ----------
    .. [1] R. E. Simons, R. R. Schmidt, "A simple method to estimate heat sink air flow
       bypass", Electronics Cooling 3(2) (1997) [from memory].
    .. [2] S. Lee, "Optimum design and selection of heat sinks", IEEE Trans. Compon. Packag.
       Manuf. Technol. A 18(4) (1995) 812-817 [from memory].
    .. [3] H. Jonsson, B. Moshfegh, "Modeling of the thermal and hydraulic performance of
       plate fin, strip fin, and pin fin heat sinks - influence of flow bypass", IEEE Trans.
       Compon. Packag. Technol. 24(2) (2001) 142-149 [from memory].
    """
    v_app, a_s, a_b, rho = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (approach_velocity, sink_area, bypass_area, density))
    )
    _check((v_app >= 0) & np.isfinite(v_app), "approach velocity must be finite and >= 0")
    _check((a_s > 0) & np.isfinite(a_s), "sink frontal area must be finite and > 0")
    _check(a_b >= 0, "bypass area must be >= 0 (inf for an open stream)")
    _check((rho > 0) & np.isfinite(rho), "air density must be finite and > 0")
    shape = v_app.shape
    shrouded = a_b == 0
    open_stream = np.isinf(a_b)
    still = v_app == 0
    trivial = shrouded | still  # answers known exactly: no solve
    target = np.where(still, 0.0, v_app)
    a_b_safe = np.where(shrouded | open_stream, 1.0, a_b)  # divisor where finite and > 0
    a_duct = a_s + a_b_safe
    top = np.where(open_stream, v_app, v_app * a_duct / a_s)
    probe = np.where(v_app > 0, v_app, 1.0)  # what the callable sees for trivial designs

    def bypass_velocity(v_s):
        return np.where(open_stream, v_app, (v_app * a_duct - v_s * a_s) / a_b_safe)

    def pressure_drop(v_s):
        dp = np.asarray(sink_pressure_drop(v_s), dtype=float)
        try:
            return np.broadcast_to(dp, shape)
        except ValueError:
            raise ModelError(
                f"sink_pressure_drop returned shape {dp.shape} for designs of shape {shape}"
            ) from None

    def residual(v_s):
        dp = pressure_drop(np.where(trivial, probe, v_s))
        v_b = bypass_velocity(v_s)
        balance = 0.5 * rho * (v_b * v_b - v_s * v_s) - dp
        # trivial designs get a straight line through their known answer (found in one step)
        return np.where(trivial, target - v_s, balance)

    if trivial.all():
        root, ok = target.copy(), np.ones(shape, dtype=bool)
    else:
        low = np.where(trivial, target - 1.0, LOW_VELOCITY_FRACTION * top)
        high = np.where(trivial, target + 1.0, top)
        root, ok = bracketed_root(residual, low, high, xtol=1e-12, rtol=1e-12)
        ok = (ok & np.isfinite(root)) | trivial
    v_sink = np.where(trivial, target, root)
    v_bypass = np.where(shrouded | still, 0.0, bypass_velocity(np.where(ok, v_sink, 0.0)))
    dp = np.where(still, 0.0, pressure_drop(np.where(ok & ~still, v_sink, probe)))
    ok = ok & np.isfinite(dp)
    nan = np.nan
    return (
        np.where(ok, v_sink, nan),
        np.where(ok, v_bypass, nan),
        np.where(ok, dp, nan),
        ok,
    )
