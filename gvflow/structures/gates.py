"""Vertical sluice gate: free and submerged flow, in a rectangular channel and in any section.

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

The same balances hold in any section with areas and specific forces in
place of the per-width terms: :func:`gate_pool_depth` solves them for a
batch of scenarios in the sections of a reach (the pool above the gate in
one section, the jet below it in another) and is the one gate model of the
reach solver, for a gate at the upstream end and a gate between segments.

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
from .._core.codes import SUB
from .._roots import bracketed_root
from .._validate import positive_array, scalar_or_array
from ..errors import InvalidInputError, NoSolutionError
from ..profiles.base import depth_with_energy, pressure_head_with_energy, subset
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
    "gate_pool_depth",
    "gate_sequent_depth",
]

#: Relative margin when comparing specific forces (round-off of the force of one depth computed twice).
_M_TOL = 1e-12

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




def gate_pool_depth(seg_up, seg_dn, jet, tail=None, *, opening):
    """Depth of the pool above a sluice gate in any section, free or submerged, for a batch of scenarios.

    Energy is conserved from the pool (section of ``seg_up``) to the vena
    contracta (section of ``seg_dn``), where the jet (depth ``jet``, area
    A_j) runs under water standing at depth y_v; the momentum balance from
    there to the subcritical depth ``tail`` downstream gives y_v:
    A ȳ(y_v) + Q²/(g A_j) = M(tail). The gate flows free while the tailwater's
    specific force does not exceed the jet's (y_v = jet); then the jump
    stands clear of the gate (Henderson 1966, *Open Channel Flow*, §6.5; from
    memory). In a rectangular channel with alpha = 1 these are the balances
    of :func:`gate_upstream_depth`.

    Parameters
    ----------
    seg_up, seg_dn : gvflow.profiles.SegmentBatch
        The sections (with discharge, alpha and units per scenario) of the pool
        and of the jet; the same batch for a gate at the head of a reach.
    jet : ndarray
        Jet depth Cc·a per scenario [length].
    tail : ndarray, optional
        Depth of the water below the gate per scenario [length]; NaN or None
        where there is none (free flow).
    opening : float or None
        Gate opening a [length]: the pool must stand above its lip (None: not
        checked).

    Returns
    -------
    (ndarray, ndarray of bool)
        Pool depth per scenario and where the gate is submerged.

    Raises
    ------
    NoSolutionError
        When the jet carries less energy than critical flow in the pool needs,
        or the pool would stand below the gate lip (the opening is too large
        for the discharge).
    """
    jet = np.asarray(jet, dtype=float)
    tail = np.full(jet.shape, np.nan) if tail is None else np.asarray(tail, dtype=float)
    g, q = seg_dn.units.g, seg_dn.discharge
    a_j = seg_dn.properties(jet)[0]
    wet = np.isfinite(tail)
    m_tail = np.where(wet, seg_dn.specific_force(np.where(wet, tail, jet)), -np.inf)
    submerged = m_tail > seg_dn.specific_force(jet) * (1 + _M_TOL)
    y_v = jet.copy()
    if np.any(submerged):
        idx = np.flatnonzero(submerged)
        sub = subset(seg_dn, idx)
        target = m_tail[idx] - q[idx] ** 2 / (g * a_j[idx])

        def fun(z):
            return sub.properties(z)[3] - target

        y_v[idx] = bracketed_root(fun, jet[idx], tail[idx], rtol=1e-13, what="water level at a submerged gate")
    e = y_v + seg_dn.alpha * q * q / (2.0 * g * a_j * a_j)
    # (in a conduit the pool may stand above the crown: the conduit runs full behind the gate, at a pressure head)
    y_up, none = pressure_head_with_energy(seg_up, e) if seg_up.section.closed else depth_with_energy(seg_up, e, SUB)
    if np.any(none):
        i = int(np.flatnonzero(none)[0])
        raise NoSolutionError(f"the gate does not hold the water back at discharge {q[i]:g}: the jet carries less "
                              "energy than critical flow upstream needs; the opening is too large")
    if opening is not None and np.any(y_up <= opening):
        i = int(np.flatnonzero(y_up <= opening)[0])
        raise NoSolutionError(f"the water upstream ({y_up[i]:.4g}) would stand below the gate lip at discharge "
                              f"{q[i]:g}; the opening is too large for this discharge")
    return y_up, submerged


def gate_sequent_depth(seg, jet):
    """Highest depth below a gate that leaves it free, per scenario, in any section [length].

    The depth on the subcritical branch whose specific force equals the
    jet's (in a rectangular channel Belanger's sequent depth,
    :func:`gate_free_flow_limit`); NaN where it would stand above a closed
    section's crown.
    """
    jet = np.asarray(jet, dtype=float)
    target = seg.specific_force(jet)
    top = seg.section.max_depth
    lo = np.maximum(seg.yc, jet)
    hi = lo * 2.0
    for _ in range(200):
        hi = np.minimum(hi, top)
        short = seg.specific_force(hi) < target
        if not np.any(short & (hi < top)):
            break
        hi = np.where(short, hi * 2.0, hi)
    ok = seg.specific_force(hi) >= target
    out = np.full(jet.shape, np.nan)
    if np.any(ok):
        idx = np.flatnonzero(ok)
        sub = subset(seg, idx)

        def fun(z):
            return sub.specific_force(z) - target[idx]

        out[idx] = bracketed_root(fun, lo[idx], hi[idx], rtol=1e-13, what="sequent depth of a gate's jet")
    return out
