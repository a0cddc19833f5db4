"""Reservoir or pool at the upstream end of a channel.

The pool holds a level ``pool_head`` above the channel bed at the entrance and
negligible velocity. Between the pool and the first section of the channel
the energy equation holds with an entrance loss ke V²/2g:

    H = y + (1 + ke) Q² / (2 g A(y)²)

(Chow 1959, *Open-Channel Hydraulics*, ch. 10-11, flow from a reservoir
into a channel; Henderson 1966, *Open Channel Flow*, ch. 4; from memory -
verify). For a mild channel the entrance depth is subcritical and,
in a long channel, equal to the normal depth; for a steep channel the flow
passes through critical depth at the entrance and the channel cannot draw
more water than that critical section lets through.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._roots import bracketed_root
from .._validate import finite_array, positive_array, scalar_or_array
from ..errors import InvalidInputError, NoSolutionError
from ..friction import _kfactor, as_roughness
from ..uniform import critical_depth
from ..units import UnitsLike, resolve_units

__all__ = ["entrance_depth", "critical_entry_head", "pool_discharge", "PoolOutflow"]

_TINY = 1e-12


def _loss(entrance_loss) -> float:
    try:
        ke = float(entrance_loss)
    except (TypeError, ValueError):
        raise InvalidInputError(f"entrance_loss must be a number; got {entrance_loss!r}") from None
    if not math.isfinite(ke) or ke < 0:
        raise InvalidInputError(f"entrance_loss (coefficient ke) must be finite and non-negative; got "
                                f"{entrance_loss!r}")
    return ke


def _check_below_crown(section, head, name="pool_head"):
    if section.closed and np.any(head >= section.max_depth):
        raise InvalidInputError(
            f"{name} {float(np.max(head)):g} reaches the crown of {section!r}: the entrance is submerged and "
            "flows as an orifice or a culvert, not as an open channel; use the culvert relations"
        )


def entrance_depth(discharge, section, pool_head, *, entrance_loss: float = 0.0, units: UnitsLike = "SI"):
    """Depth at the entrance of a channel fed by a pool, subcritical entry [length].

    The subcritical root of H = y + (1 + ke) Q² / (2 g A²), on the branch
    above the depth where the right-hand side is least (the critical depth
    of the flow with energy coefficient 1 + ke; equal to the critical depth
    when ke = 0).

    Parameters
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    section : Section
        Channel cross-section at the entrance.
    pool_head : float or ndarray
        Pool level above the channel bed at the entrance H [length].
    entrance_loss : float
        Entrance loss coefficient ke [-] on the channel velocity head.
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Entrance depth y [length].

    Raises
    ------
    NoSolutionError
        When the pool is too low to deliver the discharge (H below the least
        value of the right-hand side): the entrance would choke.

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import entrance_depth
    >>> round(entrance_depth(4.0, gv.Rectangular(width=3.0), 1.5, entrance_loss=0.2), 4)
    1.4481
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    h = positive_array(pool_head, "pool_head")
    ke = _loss(entrance_loss)
    _check_below_crown(section, h)
    q, h = np.broadcast_arrays(q, h)
    ys = np.asarray(critical_depth(section, q, u, alpha=1.0 + ke), dtype=float)

    def fun(y):
        a = section._geometry(y)[0]
        return y + (1.0 + ke) * q * q / (2.0 * u.g * a * a) - h

    low = fun(ys)
    if np.any(low > 0):
        i = int(np.flatnonzero(np.ravel(low > 0))[0])
        raise NoSolutionError(
            f"pool_head {float(np.ravel(h)[i]):g} is too low to deliver discharge {float(np.ravel(q)[i]):g} into "
            f"{section!r}: the entrance needs at least {float(np.ravel(low + h)[i]):.6g}; raise the pool or "
            "reduce the discharge"
        )
    y = bracketed_root(fun, ys, np.maximum(h, ys), rtol=1e-14, what="entrance depth")
    return scalar_or_array(y)


def critical_entry_head(discharge, section, *, entrance_loss: float = 0.0, units: UnitsLike = "SI"):
    """Pool level that passes a discharge through critical depth at the channel entrance [length].

    H = yc + (1 + ke) Vc² / (2 g), yc the critical depth of the section: the
    pool level a steep channel needs to draw the discharge.

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import critical_entry_head
    >>> sec = gv.Rectangular(width=2.0)
    >>> yc = gv.critical_depth(sec, 3.0)
    >>> round(critical_entry_head(3.0, sec) / yc, 12)  # 1.5 yc for a rectangle without loss
    1.5
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    ke = _loss(entrance_loss)
    yc = np.asarray(critical_depth(section, q, u), dtype=float)
    a = section._geometry(yc)[0]
    return scalar_or_array(yc + (1.0 + ke) * q * q / (2.0 * u.g * a * a))


@dataclass(frozen=True)
class PoolOutflow:
    """Discharge drawn from a pool by a channel, with the entrance state.

    Attributes
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    entrance_depth : float or ndarray
        Depth at the channel entrance [length]: the critical depth for a
        steep channel, the normal depth for a mild one.
    control : str or ndarray of str
        ``"critical"`` when the entrance passes through critical depth (steep
        channel), ``"normal"`` when the channel's normal depth sets the flow
        (mild channel).
    """

    discharge: object
    entrance_depth: object
    control: object

    def __repr__(self) -> str:
        if np.ndim(self.discharge) == 0:
            return (f"PoolOutflow(discharge={self.discharge:.6g}, entrance_depth={self.entrance_depth:.6g}, "
                    f"control={self.control!r})")
        return f"PoolOutflow({np.size(self.discharge)} cases)"


def pool_discharge(pool_head, section, slope, roughness, *, entrance_loss: float = 0.0,
                   units: UnitsLike = "SI") -> PoolOutflow:
    """Discharge a prismatic channel draws from a pool at a given level.

    At a fixed pool level H the energy equation gives the discharge a depth y
    at the entrance can carry, Q_E(y) = A sqrt(2 g (H - y) / (1 + ke)). The
    Froude number along that curve falls as y rises; it equals 1 at the
    critical-entry depth yE (2 (H - y) T = (1 + ke) A).

    * Steep channel (the normal depth of Q_E(yE) is at or below yE): the
      entrance is a critical section and Q = Q_E(yE), the critical-flow energy
      balance H = yc + (1 + ke) Vc²/2g.
    * Mild channel: the entrance depth is the normal depth, the root y > yE
      of K(y) sqrt(S0) = Q_E(y), and Q = K(y) sqrt(S0): the energy balance
      with the channel's normal depth, H = yn + (1 + ke) Vn²/2g.

    Both branches meet at the critical slope. The channel is assumed long
    enough for uniform flow to establish (no downstream control reaching
    the entrance); with a downstream control, solve the reach instead.

    Parameters
    ----------
    pool_head : float or ndarray
        Pool level above the channel bed at the entrance H [length].
    section : Section
        Channel cross-section.
    slope : float or ndarray
        Bed slope S0 [-], positive.
    roughness : float, Manning, Chezy or DarcyWeisbach
        Channel resistance; a float is Manning's n.
    entrance_loss : float
        Entrance loss coefficient ke [-].
    units : "SI", "US" or Units

    Returns
    -------
    PoolOutflow

    Raises
    ------
    NoSolutionError
        On a horizontal or adverse bed (no normal depth: the discharge is set
        by a downstream control, so solve the reach).

    References
    ----------
    Chow, V. T. (1959). *Open-Channel Hydraulics*, ch. 10-11 (flow from a
    reservoir into a mild or steep channel; from memory - verify).

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import pool_discharge
    >>> sec = gv.Rectangular(width=3.0)
    >>> steep = pool_discharge(1.5, sec, 0.02, 0.013)
    >>> steep.control, round(steep.discharge, 4)  # b sqrt(g) (2H/3)^1.5
    ('critical', 9.3947)
    >>> mild = pool_discharge(1.5, sec, 0.0005, 0.013)
    >>> mild.control, round(mild.discharge, 4)
    ('normal', 5.8358)
    """
    u = resolve_units(units)
    h = positive_array(pool_head, "pool_head")
    s = finite_array(slope, "slope")
    if np.any(s <= 0):
        raise NoSolutionError(
            f"a channel with bed slope {float(np.min(s)):g} has no normal depth, so the pool alone does not "
            "set its discharge: a downstream control does; solve the reach with that control"
        )
    rough = as_roughness(roughness)
    ke = _loss(entrance_loss)
    _check_below_crown(section, h)
    h, s = np.broadcast_arrays(h, s)
    g = u.g

    def q_energy(y):
        a = section._geometry(y)[0]
        return a * np.sqrt(np.maximum(2.0 * g * (h - y) / (1.0 + ke), 0.0))

    def froude_residual(y):
        a, _, t = section._geometry(y)[:3]
        return 2.0 * (h - y) * t - (1.0 + ke) * a

    lo = np.full(h.shape, _TINY) * h
    y_e = bracketed_root(froude_residual, lo, h, rtol=1e-14, what="critical entry depth")
    q_c = q_energy(y_e)

    def uniform_residual(y):
        qe = q_energy(y)
        return _kfactor(section, y, rough, u, np.maximum(qe, 1e-300)) * np.sqrt(s) - qe

    steep = uniform_residual(y_e) >= 0
    y = np.array(y_e, dtype=float, copy=True)
    if np.any(~steep):
        mild = ~steep
        hm, sm = h[mild], s[mild]

        def fun(z):
            a = section._geometry(z)[0]
            qe = a * np.sqrt(np.maximum(2.0 * g * (hm - z) / (1.0 + ke), 0.0))
            return _kfactor(section, z, rough, u, np.maximum(qe, 1e-300)) * np.sqrt(sm) - qe

        y[mild] = bracketed_root(fun, y_e[mild], hm, rtol=1e-14, what="pool entrance normal depth")
    q = np.where(steep, q_c, q_energy(y))
    control = np.where(steep, "critical", "normal")
    ctrl = str(control) if control.ndim == 0 else control
    return PoolOutflow(discharge=scalar_or_array(np.asarray(q, dtype=float)),
                       entrance_depth=scalar_or_array(y), control=ctrl)
