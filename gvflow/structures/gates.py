"""Vertical sluice gate in a rectangular channel: free and submerged flow.

Free flow: the jet leaves under the gate and contracts to the vena contracta
depth y2 = Cc a; energy is conserved from the upstream section to the vena
contracta (Henderson 1966, *Open Channel Flow*, ch. 6, sluice gates; the
relation as read in Ponce's notes and Novak et al. 2007, eq. 6.4), which gives

    q = Cd a sqrt(2 g y1),  Cd = Cc / sqrt(1 + Cc a / y1).

The gate flows free while the tailwater is no higher than the depth sequent
to the jet, y2s = (y2/2)(sqrt(1 + 8 F2²) - 1) (Belanger); above it the jump
is drowned against the gate and the flow is submerged. Submerged flow
(Henderson 1966, same section; from memory - verify): the jet still
contracts to Cc a but lies under a roller of depth y; energy is conserved
from upstream to the vena contracta,

    y1 + q²/(2 g y1²) = y + q²/(2 g (Cc a)²),

and momentum from the vena contracta to the tailwater depth y3,

    y²/2 + q²/(g Cc a) = y3²/2 + q²/(g y3).

The two balances fold near the free-flow limit: for a given upstream depth
and a tailwater a little above the sequent depth of the discharge, both a
free flow and a submerged flow can satisfy them (the submerged one carries
up to about a tenth less). :func:`gate_upstream_depth` (discharge given) is
single-valued and continuous across the limit; :func:`gate_discharge`
(upstream depth given) returns the free flow while the tailwater does not
exceed the sequent depth of the free jet, and the submerged root above it.

Contraction coefficient: Cc = 0.61 by default, user-settable. Ponce (SDSU
online notes on the sluice-gate equation) gives Cc between 0.598 and 0.611
and recommends 0.61 after Henderson (1966); Novak et al. (2007, *Hydraulic
Structures*, 4th ed., eq. 6.4) give 0.6 to 0.61 for a vertical gate. Stored
addresses in :mod:`gvflow.coefficients`.
"""

from __future__ import annotations

import math

import numpy as np

from .. import coefficients
from .._roots import bracketed_root
from .._validate import positive_array, scalar_or_array
from ..errors import InvalidInputError, NoSolutionError
from ..units import UnitsLike, resolve_units

__all__ = [
    "DEFAULT_CONTRACTION",
    "gate_jet_depth",
    "gate_discharge_coefficient",
    "gate_free_flow_limit",
    "gate_flows_free",
    "gate_contracted_depth",
    "gate_discharge",
    "gate_upstream_depth",
]

#: Default contraction coefficient of a vertical sluice gate, 0.61 (Henderson 1966, as given by Ponce, SDSU notes,
#: and Novak et al. 2007, *Hydraulic Structures*, eq. 6.4; sources in gvflow.coefficients).
DEFAULT_CONTRACTION = coefficients.value("gate.contraction")


def _contraction(contraction) -> float:
    try:
        cc = float(contraction)
    except (TypeError, ValueError):
        raise InvalidInputError(f"contraction must be a number; got {contraction!r}") from None
    if not (0.0 < cc <= 1.0) or not math.isfinite(cc):
        raise InvalidInputError(f"contraction (coefficient Cc) must lie in (0, 1]; got {contraction!r}")
    return cc


def gate_jet_depth(opening, contraction: float = DEFAULT_CONTRACTION):
    """Depth of the jet at the vena contracta below a free-flowing gate: y2 = Cc a [length].

    Examples
    --------
    >>> from gvflow.structures import gate_jet_depth
    >>> round(gate_jet_depth(0.5), 6)
    0.305
    """
    a = positive_array(opening, "opening")
    return scalar_or_array(_contraction(contraction) * a)


def _check_opening_below(y1, a):
    if np.any(a >= y1):
        i = int(np.flatnonzero(np.ravel(np.broadcast_to(a >= y1, np.broadcast(a, y1).shape)))[0])
        raise InvalidInputError(
            f"opening {float(np.ravel(np.broadcast_to(a, np.broadcast(a, y1).shape))[i]):g} must be below the "
            f"upstream_depth {float(np.ravel(np.broadcast_to(y1, np.broadcast(a, y1).shape))[i]):g}: a gate "
            "lifted clear of the water does not control the flow"
        )


def gate_discharge_coefficient(upstream_depth, opening, contraction: float = DEFAULT_CONTRACTION):
    """Free-flow discharge coefficient of a sluice gate, Cd = Cc / sqrt(1 + Cc a / y1) [-].

    From energy conservation between the upstream section and the vena
    contracta, with q = Cd a sqrt(2 g y1) (Henderson 1966, ch. 6; as given by
    Ponce's SDSU notes and Novak et al. 2007, eq. 6.4).

    Parameters
    ----------
    upstream_depth : float or ndarray
        Upstream depth y1 [length].
    opening : float or ndarray
        Gate opening a [length], below y1.
    contraction : float
        Contraction coefficient Cc [-].

    Examples
    --------
    >>> from gvflow.structures import gate_discharge_coefficient
    >>> round(gate_discharge_coefficient(2.0, 0.5), 4)
    0.5682
    """
    y1 = positive_array(upstream_depth, "upstream_depth")
    a = positive_array(opening, "opening")
    _check_opening_below(y1, a)
    cc = _contraction(contraction)
    return scalar_or_array(cc / np.sqrt(1.0 + cc * a / y1))


def _per_width(discharge, width):
    q = positive_array(discharge, "discharge")
    b = positive_array(width, "width")
    return q / b


def _sequent(y, q, g):
    f2 = q * q / (g * y ** 3)
    return 0.5 * y * (np.sqrt(1.0 + 8.0 * f2) - 1.0)


def gate_free_flow_limit(discharge, opening, width, *, contraction: float = DEFAULT_CONTRACTION,
                         units: UnitsLike = "SI"):
    """Highest tailwater depth at which a sluice gate still flows free [length].

    It is the depth sequent to the jet depth Cc a (Belanger's equation,
    y2s = (y/2)(sqrt(1 + 8 F²) - 1), Chow 1959, eq. 15-3). A higher tailwater
    drowns the jump against the gate.

    Parameters
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    opening : float or ndarray
        Gate opening a [length].
    width : float or ndarray
        Gate (channel) width b [length].
    contraction : float
        Contraction coefficient Cc [-].
    units : "SI", "US" or Units

    Examples
    --------
    >>> from gvflow.structures import gate_free_flow_limit
    >>> round(gate_free_flow_limit(3.0, 0.4, 2.0), 4)
    1.2548
    """
    u = resolve_units(units)
    q = _per_width(discharge, width)
    a = positive_array(opening, "opening")
    yj = _contraction(contraction) * a
    return scalar_or_array(np.asarray(_sequent(yj, q, u.g)))


def gate_flows_free(discharge, opening, width, tailwater, *, contraction: float = DEFAULT_CONTRACTION,
                    units: UnitsLike = "SI"):
    """Whether the gate flows free against a tailwater depth (bool or bool array).

    Free when the tailwater depth is at most :func:`gate_free_flow_limit`.

    Examples
    --------
    >>> from gvflow.structures import gate_flows_free
    >>> gate_flows_free(3.0, 0.4, 2.0, tailwater=1.2), gate_flows_free(3.0, 0.4, 2.0, tailwater=1.4)
    (True, False)
    """
    tw = positive_array(tailwater, "tailwater")
    limit = np.asarray(gate_free_flow_limit(discharge, opening, width, contraction=contraction, units=units))
    free = tw <= limit
    return bool(free) if free.ndim == 0 else free


def _roller_depth(q, yj, y3, g):
    """Depth y at the vena contracta of a submerged gate from the momentum balance."""
    return np.sqrt(np.maximum(y3 * y3 + 2.0 * q * q / g * (1.0 / y3 - 1.0 / yj), 0.0))


def gate_contracted_depth(discharge, opening, width, *, tailwater=None,
                          contraction: float = DEFAULT_CONTRACTION, units: UnitsLike = "SI"):
    """Water depth just downstream of the gate, at the vena contracta [length].

    Free flow: the jet depth Cc a. Submerged flow (tailwater above
    :func:`gate_free_flow_limit`): the depth y of the roller over the jet,
    from the momentum balance y²/2 + q²/(g Cc a) = y3²/2 + q²/(g y3).

    Examples
    --------
    >>> from gvflow.structures import gate_contracted_depth
    >>> round(gate_contracted_depth(3.0, 0.4, 2.0), 4), round(gate_contracted_depth(3.0, 0.4, 2.0, tailwater=1.5), 4)
    (0.244, 0.8218)
    """
    u = resolve_units(units)
    q = _per_width(discharge, width)
    a = positive_array(opening, "opening")
    yj = _contraction(contraction) * a
    if tailwater is None:
        return scalar_or_array(np.asarray(np.broadcast_to(yj, np.broadcast(q, yj).shape), dtype=float))
    y3 = positive_array(tailwater, "tailwater")
    limit = _sequent(yj, q, u.g)
    y = np.where(y3 > limit, _roller_depth(q, yj, y3, u.g), yj)
    return scalar_or_array(np.asarray(y, dtype=float))


def gate_upstream_depth(discharge, opening, width, *, tailwater=None,
                        contraction: float = DEFAULT_CONTRACTION, units: UnitsLike = "SI"):
    """Depth upstream of a sluice gate for a discharge, free or submerged [length].

    Free flow (no tailwater, or tailwater at most the jet's sequent depth):
    the closed form of energy conservation to the vena contracta,
    y1 = [q² + sqrt(q⁴ + 8 g y2³ q²)] / (4 g y2²), y2 = Cc a.
    Submerged flow: the roller depth y from momentum (see
    :func:`gate_contracted_depth`), then the subcritical root of
    y1 + q²/(2 g y1²) = y + q²/(2 g y2²).

    Parameters
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    opening : float or ndarray
        Gate opening a [length].
    width : float or ndarray
        Gate width b [length].
    tailwater : float or ndarray, optional
        Tailwater depth downstream of the gate y3 [length].
    contraction : float
        Contraction coefficient Cc [-].
    units : "SI", "US" or Units

    Raises
    ------
    NoSolutionError
        When the upstream depth would not reach the gate lip (the discharge is
        too small for the opening: the gate does not control the flow).

    Examples
    --------
    >>> from gvflow.structures import gate_upstream_depth
    >>> round(gate_upstream_depth(3.0, 0.4, 2.0), 4)
    2.146
    """
    u = resolve_units(units)
    q = _per_width(discharge, width)
    a = positive_array(opening, "opening")
    yj = _contraction(contraction) * a
    g = u.g
    y3 = None if tailwater is None else positive_array(tailwater, "tailwater")
    q, yj, a = np.broadcast_arrays(q, yj, a, *(() if y3 is None else (y3,)))[:3]
    y1 = (q * q + np.sqrt(q ** 4 + 8.0 * g * yj ** 3 * q * q)) / (4.0 * g * yj * yj)
    if y3 is not None:
        y3 = np.broadcast_to(y3, q.shape)
        sub = y3 > _sequent(yj, q, g)
        if np.any(sub):
            qs, yjs, y3s = q[sub], yj[sub], y3[sub]
            y = _roller_depth(qs, yjs, y3s, g)
            e = y + qs * qs / (2.0 * g * yjs * yjs)
            yc = np.cbrt(qs * qs / g)

            def fun(z):
                return z + qs * qs / (2.0 * g * z * z) - e

            y1 = np.array(y1, copy=True)
            y1[sub] = bracketed_root(fun, yc, np.maximum(e, yc), rtol=1e-14, what="submerged gate upstream depth")
    if np.any(y1 <= a):
        raise NoSolutionError(
            "the discharge is too small for the gate opening: the upstream water would stand below the gate "
            "lip, so the gate does not control the flow; reduce the opening"
        )
    return scalar_or_array(np.asarray(y1, dtype=float))


def gate_discharge(upstream_depth, opening, width, *, tailwater=None, contraction: float = DEFAULT_CONTRACTION,
                   units: UnitsLike = "SI"):
    """Discharge through a sluice gate for an upstream depth, free or submerged [length³/s].

    Free: Q = b Cd a sqrt(2 g y1) with Cd from :func:`gate_discharge_coefficient`.
    If a tailwater above the free-flow limit is given, the submerged
    discharge solves the energy and momentum balances of the module notes.

    Parameters
    ----------
    upstream_depth : float or ndarray
        Upstream depth y1 [length].
    opening : float or ndarray
        Gate opening a [length], below y1.
    width : float or ndarray
        Gate width b [length].
    tailwater : float or ndarray, optional
        Tailwater depth y3 [length]; must be below y1.
    contraction : float
        Contraction coefficient Cc [-].
    units : "SI", "US" or Units

    Raises
    ------
    InvalidInputError
        When the opening is not below the upstream depth.
    NoSolutionError
        When the tailwater is not below the upstream depth (no flow).

    Examples
    --------
    >>> from gvflow.structures import gate_discharge
    >>> round(gate_discharge(2.0, 0.5, 2.0), 4)
    3.5588
    >>> round(gate_discharge(2.0, 0.5, 2.0, tailwater=1.6), 4)
    2.1238
    """
    u = resolve_units(units)
    g = u.g
    y1 = positive_array(upstream_depth, "upstream_depth")
    a = positive_array(opening, "opening")
    b = positive_array(width, "width")
    _check_opening_below(y1, a)
    cc = _contraction(contraction)
    y3 = None if tailwater is None else positive_array(tailwater, "tailwater")
    y1, a, b = np.broadcast_arrays(y1, a, b, *(() if y3 is None else (y3,)))[:3]
    yj = cc * a
    qf = cc / np.sqrt(1.0 + yj / y1) * a * np.sqrt(2.0 * g * y1)  # per unit width
    q = qf
    if y3 is not None:
        y3 = np.broadcast_to(y3, y1.shape)
        if np.any(y3 >= y1):
            raise NoSolutionError(
                f"tailwater {float(np.max(y3)):g} is not below the upstream depth: no flow passes the gate; "
                "check the tailwater"
            )
        sub = y3 > _sequent(yj, qf, g)
        if np.any(sub):
            y1s, yjs, y3s, qfs = y1[sub], yj[sub], y3[sub], qf[sub]

            def fun(qq):
                y = _roller_depth(qq, yjs, y3s, g)
                return y + qq * qq / (2.0 * g * yjs * yjs) - y1s - qq * qq / (2.0 * g * y1s * y1s)

            q = np.array(qf, copy=True)
            q[sub] = bracketed_root(fun, np.zeros(qfs.shape), qfs, rtol=1e-14, what="submerged gate discharge")
    return scalar_or_array(np.asarray(q * b, dtype=float))

