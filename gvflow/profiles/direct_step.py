"""Direct-step method: step in depth, compute the distance each step covers.

Between two depths y1 and y2 of one profile in a prismatic channel,

    dx = (E2 - E1) / (S0 - Sf_avg)

with E the specific energy and Sf_avg a mean friction slope over the step
(Chow 1959, *Open-Channel Hydraulics*, §10-3, eq. 10-7). It needs no
iteration, but only works where the cross-section does not change along the
channel (prismatic segments), and gives depths at distances it chooses
rather than at stations given in advance. Every step is computed at once,
as numpy arrays over the depth sequence.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import optimize

from .._core.codes import AVERAGES, pass_cost
from .._core.records import fluid
from .._engine import core
from .._validate import finite_float, positive_array, positive_float
from ..errors import ConvergenceError, InvalidInputError, NoSolutionError
from ..friction import core_channel, section_roughness
from ..uniform import critical_depth, normal_depth
from ..units import UnitsLike, resolve_units

__all__ = ["direct_step", "FRICTION_AVERAGES"]


#: The mean friction slopes over a step, by name (the core's averages,
#: :func:`gvflow._core.resistance.sf_average`): arithmetic (S1 + S2)/2, geometric sqrt(S1 S2), harmonic
#: 2 S1 S2/(S1 + S2), conveyance (2Q/(K1 + K2))².
FRICTION_AVERAGES = AVERAGES


class _Flow:
    """One flow in one prismatic channel, on plain floats (built once per trace)."""

    def __init__(self, section, discharge, slope, roughness, units, alpha, friction_average):
        if friction_average not in FRICTION_AVERAGES:
            raise InvalidInputError(
                f"friction_average must be one of {sorted(FRICTION_AVERAGES)}; got {friction_average!r}")
        self.section = section
        self.q = float(positive_array(discharge, "discharge"))
        self.s0 = finite_float(slope, "slope")
        self.rough = section_roughness(section, roughness)
        self.u = resolve_units(units)
        self.alpha = positive_float(alpha, "alpha")
        self.avg = FRICTION_AVERAGES[friction_average]
        self._ch, self._fl = core_channel(section, self.rough), fluid(self.u)

    def energy_friction(self, y):
        """Specific energy and friction slope at the depths ``y`` (the core's relations)."""
        y = np.ascontiguousarray(y, dtype=float)
        e, sf = np.empty(y.size), np.empty(y.size)
        core("arrays", y.size * pass_cost(self._ch.kind, self._ch.par)).energy_friction_many(
            self._ch, self._fl, self.q, y, self.alpha, e, sf)
        return e, sf

    def steps(self, y):
        """Signed length of each depth step of the sequence ``y`` (x downstream)."""
        e, sf = self.energy_friction(y)
        mean = np.empty(sf.size - 1)
        core("arrays", sf.size).sf_average_many(self.avg, np.ascontiguousarray(sf[:-1]), np.ascontiguousarray(sf[1:]),
                                                mean)
        den = self.s0 - mean
        if np.any(den == 0):
            raise InvalidInputError("a depth step has a mean friction slope equal to the bed slope: the "
                                    "depths straddle normal depth; keep them on one side of it")
        return np.diff(e) / den


def direct_step(section, discharge, slope, roughness, depth, units: UnitsLike = "SI", alpha: float = 1.0,
                friction_average: str = "arithmetic"):
    """Distances along a profile at a sequence of depths, by the direct-step method.

    Parameters
    ----------
    section : Section
        Cross-section (prismatic: the method does not apply where it changes).
    discharge : float
        Discharge Q [length³/s].
    slope : float
        Bed slope S0 [-] (any sign).
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance law; a float is Manning's n.
    depth : array_like
        Depths y0, y1, ... [length], strictly monotone and all in one zone
        (neither normal nor critical depth strictly between any two of them).
    units : "SI", "US" or Units
        Unit system.
    alpha : float
        Energy coefficient [-].
    friction_average : {"arithmetic", "geometric", "harmonic", "conveyance"}
        Mean friction slope over a step; "arithmetic" (default) as in Chow's
        tables. All are second-order accurate in the depth step.

    Returns
    -------
    ndarray
        x_i - x_0 [length] for each depth, positive downstream.

    Raises
    ------
    InvalidInputError
        For non-monotone depths or depths on both sides of normal or critical depth.

    Notes
    -----
    dx = (E2 - E1) / (S0 - Sf_avg), E = y + alpha Q²/(2 g A²)
    (Chow 1959, *Open-Channel Hydraulics*, §10-3, eq. 10-7).

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> x = gv.direct_step(sec, 5.0, 0.001, 0.015, [2.0, 1.9, 1.8])
    >>> x.round(1).tolist()  # an M1 curve: depth falls upstream
    [0.0, -121.0, -246.0]
    """
    flow = _Flow(section, discharge, slope, roughness, units, alpha, friction_average)
    y = positive_array(depth, "depth")
    if y.ndim != 1 or y.size < 2:
        raise InvalidInputError(f"depth must be a 1-D sequence of at least two depths; got shape {y.shape}")
    d = np.diff(y)
    if not (np.all(d > 0) or np.all(d < 0)):
        raise InvalidInputError("depth must be strictly increasing or strictly decreasing")
    y = section._depth(y)
    lo, hi = float(y.min()), float(y.max())
    refs = [("critical", float(critical_depth(section, flow.q, flow.u, flow.alpha)))]
    if flow.s0 > 0:
        try:
            refs.append(("normal", float(normal_depth(section, flow.q, flow.s0, flow.rough, flow.u))))
        except NoSolutionError:
            pass  # a conduit above its uniform-flow capacity: no normal depth to span
    for name, ref in refs:
        if lo < ref < hi or (name == "normal" and ref in (lo, hi)):
            raise InvalidInputError(f"the depths span {name} depth {ref:g}: a direct-step profile stays in one "
                                    "zone (and never reaches normal depth); split the sequence there")
    return np.concatenate(([0.0], np.cumsum(flow.steps(y))))


def _grid(y0, ye, n, yn):
    """Depth sequence of n steps from y0 to ye, graded geometrically toward yn when yn is the limit."""
    if yn is not None:
        d0, de = y0 - yn, ye - yn
        return yn + d0 * (de / d0) ** (np.arange(n + 1) / n)
    return np.linspace(y0, ye, n + 1)


def trace_direct_step(flow: _Flow, y0: float, limit: float, limit_kind: str, yn: float, length: float,
                      n_steps: int):
    """Trace from y0 toward ``limit`` until the profile has covered ``length``.

    Returns (s, y, stop): distances from the control along the marching
    direction (ascending, from 0), depths, and why it stopped ("segment end"
    or ``limit_kind``).
    """
    grade = yn if limit_kind == "normal depth" else None

    def dist(ye):
        return abs(float(np.sum(flow.steps(_grid(y0, ye, n_steps, grade)))))

    if limit_kind == "unbounded":
        span = max(y0, 1e-3)
        ye = y0 + span
        for _ in range(80):
            if dist(ye) >= length:
                break
            span *= 2.0
            ye = y0 + span
        else:  # pragma: no cover - a rising profile always covers a finite length eventually
            raise ConvergenceError("the direct step could not cover the segment length")
        full = ye
    else:
        full = limit
    total = dist(full)
    if total >= length or limit_kind == "unbounded":
        if total == length:
            ye = full
        else:
            ye = optimize.brentq(lambda v: dist(v) - length, y0, full, xtol=1e-15 * y0, rtol=1e-15, maxiter=200)
        stop = "segment end"
    else:
        ye, stop = full, limit_kind
    y = _grid(y0, ye, n_steps, grade)
    s = np.concatenate(([0.0], np.cumsum(np.abs(flow.steps(y)))))
    if stop == "segment end":
        s[-1] = length
    return s, y, stop


def _limit_depth(y0, moving_up, yn, yc, ymax):
    """The next reference depth the profile meets as it moves up or down from y0."""
    cands = [(yc, "critical depth")]
    if math.isfinite(yn):
        cands.append((yn, "normal depth"))
    if moving_up:
        above = [c for c in cands if c[0] > y0]
        if above:
            return min(above)
        return (ymax, "conduit full") if math.isfinite(ymax) else (math.inf, "unbounded")
    below = [c for c in cands if c[0] < y0]
    return max(below) if below else (0.0, "zero depth")
