"""Trace one gradually varied flow profile along one prismatic segment.

:func:`trace_profile` is the single-profile entry point: from a control depth
at one end of a segment, it traces the profile in the direction its regime
requires (subcritical upstream from the downstream end, supercritical
downstream from the upstream end) with the chosen method, and says why it
stopped.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._core.codes import REGIME_NAMES, REGIME_SUB, REGIME_SUPER
from .._validate import finite_float, positive_float, renamed_keyword
from ..errors import ControlError, ConvergenceError, InvalidInputError, NoSolutionError
from ..uniform import CRITICAL_SLOPE_TOLERANCE
from ..units import UnitsLike
from .base import MARCHERS, SUB, SUPER, SegmentBatch, get_marcher
from .classify import PROFILE_SHAPES, classify, classify_slope
from .direct_step import _Flow, _limit_depth, trace_direct_step
from .ivp import IVPMarcher

__all__ = ["ProfileTrace", "trace_profile", "NORMAL_DEPTH_TOLERANCE", "TRACE_METHODS"]

#: Relative distance |y - yn| <= NORMAL_DEPTH_TOLERANCE · yn at which a profile
#: counts as having reached normal depth (it only approaches it asymptotically).
NORMAL_DEPTH_TOLERANCE = 1e-3

TRACE_METHODS = ("standard_step", "ivp", "direct_step")

_AT_CRITICAL = 1e-9  # a control depth this close (relative) to critical depth is taken as critical

_STATUSES = ("segment end", "normal depth", "critical depth", "conduit full")


@dataclass(frozen=True, eq=False)
class ProfileTrace:
    """One traced profile on one segment (immutable).

    Attributes
    ----------
    x : ndarray
        Distance of each station from the segment's upstream end [length],
        ascending; the segment's downstream end is at ``length``.
    depth : ndarray
        Depth at each station [length].
    label : str
        Profile type, "M1" ... "A3" (see :data:`gvflow.profiles.PROFILE_SHAPES`).
    direction : str
        "upstream" (subcritical, traced from the downstream end) or
        "downstream" (supercritical, traced from the upstream end).
    status : str
        Why the trace stopped: "segment end" (it covered the segment),
        "normal depth" (its depth came within ``normal_tolerance`` of normal
        depth; uniform flow beyond), "critical depth" (the regime's branch
        ends there: a control, a jump or choking ahead), "conduit full" (the
        depth reached the crown of a closed conduit).
    x_stop : float
        Where it stopped [length] (the far end of the segment for "segment end").
    message : str
        The status in words.
    normal_depth, critical_depth : float
        Reference depths [length]; normal depth is NaN on horizontal and adverse beds.
    method : str
        Marching method used.
    slope_class : str
        "mild", "steep", "critical", "horizontal" or "adverse".
    control_depth, length : float
        The inputs [length].
    normal_tolerance : float
        The tolerance behind the "normal depth" status [-].
    """

    x: np.ndarray
    depth: np.ndarray
    label: str
    direction: str
    status: str
    x_stop: float
    message: str
    normal_depth: float
    critical_depth: float
    method: str
    slope_class: str
    control_depth: float
    length: float
    normal_tolerance: float

    @property
    def success(self) -> bool:
        """True when the trace covered the segment or ended at normal depth."""
        return self.status in ("segment end", "normal depth")

    @property
    def shape(self):
        """The theoretical shape of this profile type (:class:`~gvflow.profiles.ProfileShape`)."""
        return PROFILE_SHAPES[self.label]

    def __repr__(self) -> str:
        return (f"ProfileTrace({self.label}, {self.direction}, {self.x.size} stations, "
                f"x {self.x[0]:.6g}..{self.x[-1]:.6g}, depth {self.depth.min():.6g}..{self.depth.max():.6g}, "
                f"yn={self.normal_depth:.6g}, yc={self.critical_depth:.6g}, status={self.status!r} at "
                f"x={self.x_stop:.6g}, method={self.method!r})")


def _regime_name(branch):
    return REGIME_NAMES[REGIME_SUB if branch == SUB else REGIME_SUPER]


def trace_profile(section, discharge, slope, roughness, control_depth, length, *, direction=None,
                  method="standard_step", n_steps: int = 100, substeps: int = 4, units: UnitsLike = "SI",
                  alpha: float = 1.0,
                  normal_tolerance: float = NORMAL_DEPTH_TOLERANCE,
                  critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, slope_tolerance=None,
                  **method_options) -> ProfileTrace:
    """Trace one gradually varied flow profile along a prismatic segment from a control depth.

    A subcritical control depth (above critical depth) stands at the
    segment's downstream end (x = ``length``) and the profile is traced
    upstream; a supercritical one stands at the upstream end (x = 0) and the
    profile is traced downstream.

    Parameters
    ----------
    section : Section
        Cross-section.
    discharge : float
        Discharge Q [length³/s].
    slope : float
        Bed slope S0 [-], positive falling downstream, 0 horizontal, negative adverse.
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance law; a float is Manning's n.
    control_depth : float
        Depth at the control [length].
    length : float
        Segment length [length].
    direction : {"upstream", "downstream"}, optional
        Direction to trace in. By default it follows from the control depth's
        regime; a control exactly at critical depth is traced upstream (M2,
        H2, A2, C1 from a brink) except on a steep slope, where it is traced
        downstream (S2).
    method : {"standard_step", "ivp", "direct_step"} or Marcher
        "standard_step" (fixed distance steps, energy equation), "ivp"
        (``scipy.integrate.solve_ivp``) or "direct_step" (depth steps), or a
        :class:`~gvflow.profiles.Marcher` subclass or instance.
    n_steps : int
        Number of reported steps (n_steps + 1 stations over a trace that covers
        the segment): equal distance steps for the station marchers, depth
        steps for the direct step (graded toward normal depth when that is
        where the profile goes).
    substeps : int
        Each reported step is computed as ``substeps`` equal sub-steps (default
        4); the error of the second-order standard and direct steps falls
        with the square of the sub-step. The "ivp" method controls its own
        steps and reads the stations from its dense output.
    units : "SI", "US" or Units
        Unit system.
    alpha : float
        Energy coefficient [-].
    normal_tolerance : float
        The trace stops with status "normal depth" where |y - yn| <=
        normal_tolerance · yn (default :data:`NORMAL_DEPTH_TOLERANCE`, 1e-3).
    critical_tolerance : float
        Relative band |yn - yc| <= critical_tolerance · yc in which the slope is
        classed critical (default :data:`gvflow.CRITICAL_SLOPE_TOLERANCE`).
        ``slope_tolerance=`` is its former name (still accepted, with a FutureWarning).
    **method_options
        Passed to the marcher (e.g. ``friction_average``, ``eddy_loss`` for the
        standard step; ``ivp_method``, ``rtol``, ``atol`` for "ivp";
        ``friction_average`` for the direct step).

    Returns
    -------
    ProfileTrace

    Raises
    ------
    ControlError
        When the control depth is on the wrong side of critical depth for the
        requested direction (the message says which regime it belongs to).
    NoSolutionError
        In a closed conduit carrying more than its uniform-flow capacity on a
        positive slope (no normal depth), or a control above the crown.
    ConvergenceError
        When a marcher cannot meet its tolerance.

    Examples
    --------
    >>> import gvflow as gv
    >>> t = gv.trace_profile(gv.Rectangular(width=3.0), 5.0, 0.001, 0.015, 2.0, 1000.0)
    >>> t.label, t.direction, t.status
    ('M1', 'upstream', 'segment end')
    >>> round(float(t.depth[0]), 3), float(t.x[-1])
    (1.309, 1000.0)
    """
    critical_tolerance = renamed_keyword(critical_tolerance, slope_tolerance, old="slope_tolerance",
                                         new="critical_tolerance", default=CRITICAL_SLOPE_TOLERANCE)
    length = positive_float(length, "length")
    y0 = positive_float(control_depth, "control_depth")
    normal_tolerance = positive_float(normal_tolerance, "normal_tolerance")
    for val, nm in ((n_steps, "n_steps"), (substeps, "substeps")):
        if not isinstance(val, (int, np.integer)) or isinstance(val, bool) or val < 1:
            raise InvalidInputError(f"{nm} must be a positive integer; got {val!r}")
    s0 = finite_float(slope, "slope")
    seg = SegmentBatch.build(section, s0, roughness, discharge, units, alpha)
    yc, yn = float(seg.yc[0]), float(seg.yn[0])
    ymax = float(section.max_depth)
    if y0 > ymax:
        raise NoSolutionError(f"control_depth {y0:g} is above the crown of {section!r} ({ymax:g}): the conduit "
                              "would flow full; a pressure-flow analysis is needed")
    if s0 > 0 and not math.isfinite(yn):
        raise NoSolutionError(f"discharge {float(seg.discharge[0]):g} exceeds the uniform-flow capacity of "
                              f"{section!r} at slope {s0:g}: no normal depth, so no profile type; use a larger "
                              "conduit or a steeper slope")
    sclass = classify_slope(s0, yn, yc, critical_tolerance)
    if abs(y0 - yc) <= _AT_CRITICAL * yc:  # critical depth computed elsewhere: same depth to round-off
        y0 = yc

    if direction is None:
        if y0 > yc or (y0 == yc and sclass != "steep"):
            direction = "upstream"
        else:
            direction = "downstream"
    if direction not in ("upstream", "downstream"):
        raise InvalidInputError(f"direction must be 'upstream', 'downstream' or None; got {direction!r}")
    branch = SUB if direction == "upstream" else SUPER
    if (branch == SUB and y0 < yc) or (branch == SUPER and y0 > yc):
        own = REGIME_NAMES[REGIME_SUPER if y0 < yc else REGIME_SUB]
        own_dir = "downstream" if own == "supercritical" else "upstream"
        raise ControlError(
            f"control_depth {y0:g} is {'below' if y0 < yc else 'above'} critical depth {yc:.6g}: it is a {own} "
            f"depth, which governs the profile {own_dir} of it (direction={own_dir!r}); a {direction} trace needs "
            f"a {_regime_name(branch)} control depth ({'above' if branch == SUB else 'below'} critical depth)")

    name = method if isinstance(method, str) else getattr(method, "name", type(method).__name__)
    if isinstance(method, str) and method == "direct_step":
        sub = substeps
        s, y, stop = _trace_depth_steps(section, seg, s0, roughness, units, alpha, y0, yn, yc, ymax, branch,
                                        length, n_steps * sub, normal_tolerance, method_options)
    else:
        if isinstance(method, str) and method not in MARCHERS:
            raise InvalidInputError(f"method must be one of {sorted(set(MARCHERS) | {'direct_step'})} or a "
                                    f"Marcher subclass; got {method!r}")
        marcher = get_marcher(method, **method_options)
        sub = 1 if isinstance(marcher, IVPMarcher) else substeps
        s, y, stop = _trace_stations(seg, y0, yn, branch, length, n_steps * sub, normal_tolerance, marcher)
    s, y = _thin(s, y, sub)

    # label from a depth strictly inside the traced piece (mid first step) where there is one
    rep = 0.5 * float(y[0] + y[1]) if y.size > 1 else y0
    label = classify(sclass, rep, yn, yc)
    s_stop = float(s[-1])
    if branch == SUB:
        x, depth = (length - s)[::-1], y[::-1]
        x_stop = length - s_stop
    else:
        x, depth, x_stop = s, y, s_stop
    x = np.array(x, dtype=float)
    if stop == "segment end":
        x_stop = 0.0 if branch == SUB else length
        x[0 if branch == SUB else -1] = x_stop
    depth = np.array(depth, dtype=float)
    x.setflags(write=False)
    depth.setflags(write=False)
    message = _message(stop, label, direction, x_stop, yn, yc, normal_tolerance, ymax)
    return ProfileTrace(x, depth, label, direction, stop, float(x_stop), message, yn, yc, name, sclass, y0,
                        length, normal_tolerance)


def _message(stop, label, direction, x_stop, yn, yc, tol, ymax):
    if stop == "segment end":
        return f"{label} profile traced {direction} over the whole segment"
    if stop == "normal depth":
        return (f"{label} profile traced {direction} reached normal depth {yn:.6g} (within {tol:g} relative) at "
                f"x = {x_stop:.6g}; the flow is uniform beyond it")
    if stop == "critical depth":
        ahead = ("a jump or a control must stand there (the subcritical branch ends)" if direction == "upstream"
                 else "a hydraulic jump or choking must occur there (the supercritical branch ends)")
        return f"{label} profile traced {direction} reached critical depth {yc:.6g} at x = {x_stop:.6g}: {ahead}"
    return f"{label} profile traced {direction} reached the crown of the conduit ({ymax:.6g}) near x = {x_stop:.6g}"


def _thin(s, y, every):
    """Keep every ``every``-th station of a fine trace, plus its last point (the stop)."""
    if every == 1 or s.size <= 2:
        return s, y
    keep = np.zeros(s.size, dtype=bool)
    keep[::every] = True
    keep[-1] = True
    return s[keep], y[keep]


def _cut_at_normal(s, y, yn, tol):
    """Cut a traced (s, y) at the first point within tol of normal depth; return (s, y, hit)."""
    if not math.isfinite(yn):
        return s, y, False
    dev = np.abs(y - yn) - tol * yn
    inside = np.flatnonzero(dev <= 0)
    if inside.size == 0:
        return s, y, False
    j = int(inside[0])
    if j == 0:
        return s[:1], y[:1], True
    target = yn + math.copysign(tol * yn, y[j - 1] - yn)
    frac = (y[j - 1] - target) / (y[j - 1] - y[j]) if y[j - 1] != y[j] else 1.0
    sj = s[j - 1] + frac * (s[j] - s[j - 1])
    return np.append(s[:j], sj), np.append(y[:j], target), True


def _trace_stations(seg, y0, yn, branch, length, n_steps, tol, marcher):
    s = np.linspace(0.0, length, n_steps + 1)
    xm = (length - s) if branch == SUB else s
    r = marcher.march(seg, xm, np.array([y0]), branch)
    code = int(r.code[0])
    nv = int(r.n_valid[0])
    if code == 3:
        raise ConvergenceError(f"the {marcher.name} march did not converge at x = {xm[nv]:.6g}; try more steps "
                               "or a looser tolerance", last=float(r.depth[0, nv - 1]))
    s_t, y_t = s[:nv].copy(), r.depth[0, :nv].copy()
    s_t, y_t, hit = _cut_at_normal(s_t, y_t, yn, tol)
    if hit:
        return s_t, y_t, "normal depth"
    if code == 1:
        sc = abs(float(r.x_critical[0]) - xm[0])
        if sc > s_t[-1]:
            s_t, y_t = np.append(s_t, sc), np.append(y_t, float(seg.yc[0]))
        return s_t, y_t, "critical depth"
    if code == 2:
        return s_t, y_t, "conduit full"
    return s_t, y_t, "segment end"


def _trace_depth_steps(section, seg, s0, roughness, units, alpha, y0, yn, yc, ymax, branch, length, n_steps,
                       tol, options):
    unknown = set(options) - {"friction_average"}
    if unknown:
        raise InvalidInputError(f"the direct step takes only friction_average as an option; got {sorted(unknown)}")
    flow = _Flow(section, float(seg.discharge[0]), s0, roughness, units, alpha,
                 options.get("friction_average", "arithmetic"))
    if math.isfinite(yn) and abs(y0 - yn) <= tol * yn:
        return np.array([0.0]), np.array([y0]), "normal depth"
    dirn = 1.0 if branch == SUPER else -1.0  # marching direction in x
    probe = y0 if y0 != yc else yc * (1.0 + branch * 1e-9)
    num = s0 - float(flow.energy_friction(np.array([probe]))[1][0])
    a, _, t = section._geometry(np.array([probe]))[:3]
    den = 1.0 - flow.alpha * flow.q ** 2 * float(t[0]) / (flow.u.g * float(a[0]) ** 3)
    moving_up = (num / den) * dirn > 0
    limit, kind = _limit_depth(y0, moving_up, yn, yc, ymax)
    if kind == "critical depth" and limit == y0:
        return np.array([0.0]), np.array([y0]), "critical depth"
    if kind == "zero depth":  # pragma: no cover - a traced branch never dries out in its own direction
        raise NoSolutionError("the profile would run dry in the direction traced")
    if kind == "normal depth":
        limit = yn * (1.0 + tol) if y0 > yn else yn * (1.0 - tol)
    return trace_direct_step(flow, y0, limit, kind, yn, length, n_steps)

