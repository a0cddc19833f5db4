"""Uniform flow and critical flow: the reference depths of every profile.

All functions take floats or NumPy arrays (broadcast together) and return a
float for scalar input. They raise a :class:`~gvflow.errors.GVFlowError`
(a ``ValueError``) with a plain message when no answer exists.
"""

from __future__ import annotations

import math
import warnings
from typing import Literal

import numpy as np

from ._core.codes import NO_ROOT, NOT_CONVERGED, SLOPE_CLASS_NAMES, pass_cost
from ._core.records import fluid
from ._engine import core
from ._roots import bracketed_root, expand_upper
from ._validate import (
    broadcast,
    finite_array,
    positive_array,
    positive_float,
    renamed_keyword,
    scalar_or_array,
    single_number,
)
from ._warn import warn
from .errors import ConvergenceError, GVFlowWarning, InvalidInputError, NoSolutionError
from .friction import Chezy, DarcyWeisbach, Manning, _kfactor, core_channel, section_roughness
from .units import UnitsLike, resolve_units

__all__ = [
    "normal_depth",
    "critical_depth",
    "critical_depths",
    "critical_slope",
    "froude_number",
    "specific_energy",
    "specific_force",
    "sequent_depth",
    "alternate_depth",
    "slope_class",
    "uniform_discharge",
    "uniform_velocity",
    "conduit_capacity",
    "ConduitCapacity",
    "CRITICAL_SLOPE_TOLERANCE",
]

#: Relative difference |yn - yc| / yc below which a slope is classed "critical".
CRITICAL_SLOPE_TOLERANCE = 1e-3

_TINY = 1e-12  # smallest depth tried, as a fraction of the reference depth


#: Bed slope above which the small-slope assumptions (depth measured vertically, hydrostatic pressure,
#: sin θ ≈ tan θ) start to err by more than about half a per cent (cos θ = 0.995 at a slope of 0.1),
#: and above which the weight of a jump's roller may no longer be neglected (FHWA 2006, HEC-14,
#: *Hydraulic Design of Energy Dissipators for Culverts and Channels*, FHWA-NHI-06-086, ch. 6,
#: eq. 6.7 and the text beside it: "may be neglected for slopes less than 10 percent").
STEEP_SLOPE = 0.1


def _shrink_lower(fun, lo, *, what: str, increasing: bool = True):
    """Lower ``lo`` (by factors of 1e4) until ``fun`` changes sign between it and the root.

    For very small discharges the root can lie below the first trial depth;
    without this the bracket would hold no sign change and the iteration
    would return the end of the bracket instead of the root.
    """
    lo = np.array(lo, dtype=float, copy=True)
    for _ in range(25):
        with np.errstate(all="ignore"):
            f = np.asarray(fun(lo))
        if not np.all(np.isfinite(f)):
            break  # below the depths the section's geometry resolves in floating point
        need = f > 0 if increasing else f < 0
        if not np.any(need):
            return lo
        lo = np.where(need, lo * 1e-4, lo)
    raise NoSolutionError(f"{what}: the depth is too small to resolve (below {float(np.min(lo)):.3g}); "
                          "check the units and magnitude of the discharge")


def _flat(**arrays):
    """Broadcast the named arrays to one shape (:func:`gvflow._validate.broadcast`) and return it with
    contiguous flat float copies."""
    b = broadcast(**arrays)
    return b[0].shape, [np.ascontiguousarray(a.reshape(-1), dtype=float) for a in b]


def _peak_conveyance_depth(section, rough, units, q):
    """Depth and conveyance of a closed conduit's largest conveyance, for each discharge."""
    shape, (qf,) = _flat(discharge=np.asarray(q, dtype=float))
    depth, k = np.empty(qf.size), np.empty(qf.size)
    ch = core_channel(section, rough)
    core("arrays", 100 * qf.size * pass_cost(ch.kind, ch.par)).peak_conveyance_many(ch, fluid(units), qf, depth, k)
    return depth.reshape(shape), k.reshape(shape)


def _check_status(status, values, what: str, inputs: str):
    """Raise ConvergenceError where a core root did not converge."""
    bad = status == NOT_CONVERGED
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise ConvergenceError(f"{what} did not converge for {inputs}", iterations=200, last=float(values[i]))


def normal_depth(section, discharge, slope, roughness=None, units: UnitsLike = "SI"):
    """Normal (uniform-flow) depth yn [length]: the depth at which Sf equals the bed slope.

    Solves Q = K(y) sqrt(S0) for y, with K the conveyance of the roughness law
    (Manning: K = (k/n) A R^(2/3); Chow 1959, *Open-Channel Hydraulics*, §6-2).

    Parameters
    ----------
    section : Section
        Cross-section.
    discharge : float or ndarray
        Discharge Q [length³/s], positive.
    slope : float or ndarray
        Bed slope S0 [-], positive (falling downstream).
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance; a float is Manning's n.
    units : "SI", "US" or Units
        Unit system.

    Returns
    -------
    float or ndarray
        Normal depth [length].

    Raises
    ------
    NoSolutionError
        On a horizontal or adverse bed (no uniform flow exists), or in a
        circular conduit when Q exceeds the peak uniform-flow capacity (about
        1.076 times the full-pipe discharge, at y/D = 0.938). Between the
        full-pipe discharge and that peak two depths carry Q: the lower is
        returned.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.normal_depth(gv.Rectangular(width=3.0), 5.0, 0.001, 0.015), 4)
    1.0787
    """
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    q = positive_array(discharge, "discharge")
    s = finite_array(slope, "slope")
    if np.any(s <= 0):
        kind = "a horizontal" if np.any(s == 0) else "an adverse"
        raise NoSolutionError(
            f"normal depth does not exist on {kind} bed (slope={float(np.min(s)):g}); uniform flow "
            "needs a bed falling downstream (slope > 0)"
        )
    shape, (qf, sf) = _flat(discharge=q, slope=s)
    ch = core_channel(section, rough)
    out, status = np.empty(qf.size), np.zeros(qf.size, dtype=np.int64)
    core("arrays", 100 * qf.size * pass_cost(ch.kind, ch.par)).normal_depth_many(ch, fluid(u), qf, sf, out, status)
    none = status == NO_ROOT
    if np.any(none):
        i = int(np.flatnonzero(none)[0])
        if not section.closed:
            raise NoSolutionError(f"discharge {qf[i]:g} is too large for any depth of {section!r} at slope "
                                  f"{sf[i]:g}; check the units and magnitude of the discharge")
        k_peak = _peak_conveyance_depth(section, rough, u, qf[i:i + 1])[1][0]
        cap = float(k_peak * math.sqrt(sf[i]))
        raise NoSolutionError(
            f"discharge {qf[i]:g} exceeds the uniform-flow capacity {cap:.6g} of "
            f"{section!r} at slope {sf[i]:g}: the conduit would surcharge; use a larger "
            "conduit or a steeper slope"
        )
    _check_status(status, out, "normal depth", f"{section!r}")
    section.warn_above_ends(out, "normal depth")
    if np.any(sf > STEEP_SLOPE):
        warn(f"slope: bed slope {float(np.max(sf)):g} is above {STEEP_SLOPE:g}, where the small-slope assumptions of "
             "uniform flow (depth measured vertically, sin θ = tan θ) start to err")
    return scalar_or_array(out.reshape(shape))


def critical_depth(section, discharge, units: UnitsLike = "SI", alpha: float = 1.0):
    """Critical depth yc [length]: minimum specific energy, Froude number 1.

    Solves alpha Q² T / (g A³) = 1 (Chow 1959, eq. 4-5). In a circular
    conduit a critical depth exists for any discharge (A³/T grows without
    bound toward the crown).

    Parameters
    ----------
    section : Section
    discharge : float or ndarray
        Discharge Q [length³/s].
    units : "SI", "US" or Units
    alpha : float
        Energy (Coriolis) coefficient [-], default 1.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.critical_depth(gv.Rectangular(width=2.0), 4.0), 6)  # (q²/g)^(1/3)
    0.741617
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    a_ = float(positive_array(alpha, "alpha"))
    shape, (qf,) = _flat(discharge=q)
    out, status, count = np.empty(qf.size), np.zeros(qf.size, dtype=np.int64), np.zeros(qf.size, dtype=np.int64)
    ch = core_channel(section)  # critical flow does not depend on the roughness
    core("arrays", 100 * qf.size * pass_cost(ch.kind, ch.par)).critical_depth_many(
        ch, fluid(u), qf, a_, out, status, count)
    none = status == NO_ROOT
    if np.any(none):
        i = int(np.flatnonzero(none)[0])
        if section.closed:
            raise NoSolutionError(
                f"discharge {qf[i]:g} is too large for free-surface flow in {section!r}: "
                "its critical depth would be at the crown (the conduit flows full); use a larger conduit"
            )
        raise NoSolutionError(f"no critical depth found for discharge {qf[i]:g} in {section!r}; check the "
                              "units and magnitude of the discharge")
    if np.any(count > 1):
        i = int(np.flatnonzero(count > 1)[0])
        warnings.warn(f"{section!r} has {int(count[i])} critical depths at discharge {qf[i]:g} (specific energy "
                      "has several minima); returning the one of least specific energy, "
                      f"{out[i]:.6g}: gv.critical_depths gives them all", GVFlowWarning, stacklevel=2)
    _check_status(status, out, "critical depth", f"{section!r}")
    section.warn_above_ends(out, "critical depth")
    return scalar_or_array(out.reshape(shape))


def critical_depths(section, discharge, units: UnitsLike = "SI", alpha: float = 1.0) -> np.ndarray:
    """Every critical depth of a section at one discharge: the local minima of specific energy [length].

    In a compound section (a main channel with floodplains) the specific energy, with the
    energy coefficient varying with depth, can have two minima with a local maximum between
    them; at each the compound Froude number is 1 (Blalock & Sturm 1981, J. Hydraul. Div.
    ASCE 107(HY6), from memory). Geometric shapes have one. Found by scanning dE/dy on a
    grid that holds every breakpoint elevation, then polishing each sign change.

    Parameters
    ----------
    section : Section
    discharge : float
        Discharge Q [length³/s].
    units : "SI", "US" or Units
    alpha : float
        Energy coefficient of a geometric section [-]; a surveyed section uses its own.

    Returns
    -------
    ndarray
        The critical depths, ascending.

    Examples
    --------
    >>> import gvflow as gv
    >>> channel = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110],
    ...                       elevation=[5, 2, 2, 0, 0, 2, 2, 5], roughness=[0.05, 0.03, 0.05],
    ...                       zone_edges=[0, 10])
    >>> gv.critical_depths(channel, 80.0).round(4)
    array([1.8688, 2.3044])
    """
    u = resolve_units(units)
    q = float(positive_array(discharge, "discharge"))
    a_ = float(positive_array(alpha, "alpha"))
    out = np.empty(64)
    ch = core_channel(section)
    n, status = core("arrays", 1000 * pass_cost(ch.kind, ch.par)).all_critical_depths(ch, fluid(u), q, a_, out)
    if status == NO_ROOT or n == 0:
        raise NoSolutionError(f"no critical depth found for discharge {q:g} in {section!r}")
    _check_status(np.array([status]), out, "critical depth", f"{section!r}")
    return out[:n].copy()


def critical_slope(section, discharge, roughness=None, units: UnitsLike = "SI", alpha: float = 1.0):
    """Critical slope Sc [-]: the bed slope whose normal depth equals the critical depth.

    Sc = (Q / K(yc))² (Chow 1959, §6-5).

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.critical_slope(gv.Rectangular(width=2.0), 4.0, 0.015), 6)
    0.005108
    """
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    q = positive_array(discharge, "discharge")
    yc = np.asarray(critical_depth(section, q, u, alpha))
    return scalar_or_array((q / _kfactor(section, yc, rough, u, q)) ** 2)


def _qy(section, discharge, depth):
    q = positive_array(discharge, "discharge")
    y = section._depth(depth)
    q, y = broadcast(discharge=q, depth=y)
    return q, y


def froude_number(section, discharge, depth, units: UnitsLike = "SI"):
    """Froude number Fr = V / sqrt(g A/T) [-], based on the hydraulic depth A/T.

    Examples
    --------
    >>> import gvflow as gv
    >>> g1 = gv.Units(g=1.0, manning_k=1.0, length="L")
    >>> round(gv.froude_number(gv.Rectangular(width=1.0), 1.0, 1.0, units=g1), 12)
    1.0
    """
    return _station_values(section, discharge, depth, units, 1.0, "froude_many")


def _station_values(section, discharge, depth, units, alpha, loop, check=True):
    """One core relation of (discharge, depth) evaluated over broadcast arrays; ``check``: warn of a depth
    above what the section describes (off for the trial depths of a root search)."""
    u = resolve_units(units)
    q, y = _qy(section, discharge, depth)
    shape, (qf, yf) = _flat(discharge=q, depth=y)
    out = np.empty(qf.size)
    ch = core_channel(section)
    with np.errstate(over="ignore"):
        getattr(core("arrays", qf.size * pass_cost(ch.kind, ch.par)), loop)(ch, fluid(u), qf, yf, alpha, out)
    if check and not np.all(np.isfinite(out)):
        i = int(np.flatnonzero(~np.isfinite(out))[0])
        raise InvalidInputError(f"discharge {qf[i]:.4g} and depth {yf[i]:.4g} give a value beyond the range of "
                                "floating point numbers; check them and their units")
    if check:
        section.warn_above_ends(yf, "depth")
    return scalar_or_array(out.reshape(shape))


def specific_energy(section, discharge, depth, units: UnitsLike = "SI", alpha: float = 1.0):
    """Specific energy E = y + alpha Q²/(2 g A²) [length] (Chow 1959, eq. 3-5).

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.specific_energy(gv.Rectangular(width=1.0), 1.0, 0.5, units=gv.Units(g=10.0, manning_k=1.0)), 6)
    0.7
    """
    alpha = float(positive_array(alpha, "alpha"))
    return _station_values(section, discharge, depth, units, alpha, "energy_many")


def specific_force(section, discharge, depth, units: UnitsLike = "SI"):
    """Specific force (momentum function) M = beta Q²/(g A) + A ȳ [length³] (Chow 1959, eq. 3-20).

    ȳ is the depth of the centroid of the flow area below the surface; beta is
    the section's momentum coefficient (1 for a single zone, from the zone
    conveyances of a compound section). Two depths with equal M are the
    sequent depths of a hydraulic jump (:func:`sequent_depth`).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.specific_force(gv.Rectangular(width=1.0), 1.0, 1.0, units=gv.Units(g=1.0, manning_k=1.0, length="L"))
    1.5
    """
    return _station_values(section, discharge, depth, units, 1.0, "force_many")


def _other_branch(section, q, y, units, value_fn, name, alpha=1.0):
    """Depth on the other side of critical depth with the same value of ``value_fn``."""
    yc = np.asarray(critical_depth(section, q, units, alpha))
    target = value_fn(y)
    sub = y > yc
    out = np.empty_like(y)

    def fun(z):
        return value_fn(z) - target_b

    if np.any(~sub):  # supercritical given: find the subcritical depth above yc
        idx = ~sub
        target_b = target[idx]
        qb, ycb = q[idx], yc[idx]

        def fun_up(z):
            return value_fn(z, qb) - target_b

        if section.closed:
            top = np.full(ycb.shape, section.max_depth)
            if np.any(fun_up(top) < 0):
                raise NoSolutionError(
                    f"the {name} depth lies above the crown of {section!r}: the conduit would flow full; "
                    "a pressure-flow analysis is needed"
                )
            hi = top
        else:
            hi = expand_upper(fun_up, None, 2.0 * ycb, what=f"{name} depth")
        out[idx] = bracketed_root(fun_up, ycb, hi, what=f"{name} depth")
    if np.any(sub):  # subcritical given: find the supercritical depth below yc
        idx = sub
        target_b = target[idx]
        qb, ycb = q[idx], yc[idx]

        def fun_dn(z):
            return value_fn(z, qb) - target_b

        lo = _shrink_lower(fun_dn, ycb * _TINY * 1e3, what=f"{name} depth", increasing=False)
        out[idx] = bracketed_root(fun_dn, lo, ycb, what=f"{name} depth")
    del fun
    return out


def sequent_depth(section, discharge, depth, units: UnitsLike = "SI"):
    """Sequent (conjugate) depth of a hydraulic jump by the specific-force balance [length].

    Given the supercritical depth, returns the subcritical one, and vice versa:
    the depth on the other side of critical with the same :func:`specific_force`
    (with the section's momentum coefficient beta, as the solver's jumps).
    In a rectangle this reproduces Belanger's y2/y1 = (sqrt(1 + 8 F1²) - 1)/2
    (Chow 1959, eq. 15-3).

    Raises
    ------
    NoSolutionError
        When the subcritical sequent depth would be above the crown of a closed conduit.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=1.0)
    >>> g1 = gv.Units(g=1.0, manning_k=1.0, length="L")
    >>> round(gv.sequent_depth(sec, 10 ** 0.5, 1.0, units=g1), 10)  # F1² = 10 gives y2/y1 = 4
    4.0
    """
    u = resolve_units(units)
    q, y = _qy(section, discharge, depth)
    q1, y1 = np.atleast_1d(q).astype(float), np.atleast_1d(y).astype(float)

    def m(z, qq=q1):
        return np.asarray(_station_values(section, qq, z, u, 1.0, "force_many", check=False), dtype=float)

    out = _other_branch(section, q1, y1, u, m, "sequent")
    section.warn_above_ends(out, "sequent depth")
    return scalar_or_array(out.reshape(np.shape(y)))


def alternate_depth(section, discharge, depth, units: UnitsLike = "SI", alpha: float = 1.0):
    """Alternate depth: the depth on the other side of critical with the same specific energy [length].

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=1.0)
    >>> y2 = gv.alternate_depth(sec, 1.0, 0.3)
    >>> bool(abs(gv.specific_energy(sec, 1.0, y2) - gv.specific_energy(sec, 1.0, 0.3)) < 1e-10)
    True
    """
    u = resolve_units(units)
    alpha = float(positive_array(alpha, "alpha"))
    q, y = _qy(section, discharge, depth)
    q1, y1 = np.atleast_1d(q).astype(float), np.atleast_1d(y).astype(float)

    def e(z, qq=q1):
        return np.asarray(_station_values(section, qq, z, u, alpha, "energy_many", check=False), dtype=float)

    out = _other_branch(section, q1, y1, u, e, "alternate", alpha)
    section.warn_above_ends(out, "alternate depth")
    return scalar_or_array(out.reshape(np.shape(y)))


SlopeClass = Literal["mild", "steep", "critical", "horizontal", "adverse"]


def slope_class(section, discharge, slope, roughness=None, units: UnitsLike = "SI",
                critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, *, tolerance=None) -> SlopeClass:
    """Classify a bed slope for a discharge: mild, steep, critical, horizontal or adverse.

    Mild: yn > yc; steep: yn < yc; critical: |yn - yc| <= critical_tolerance * yc
    (Chow 1959, §9-2). For a closed conduit whose discharge exceeds its
    uniform-flow capacity no normal depth exists and the class is undefined:
    :class:`NoSolutionError` is raised.

    Parameters
    ----------
    critical_tolerance : float
        Relative band |yn - yc| <= critical_tolerance · yc in which the slope
        counts as critical (default :data:`CRITICAL_SLOPE_TOLERANCE`, 1e-3).
        ``tolerance=`` is its former name (still accepted, with a FutureWarning).

    Returns
    -------
    str or ndarray of str
        The class; an array of classes where discharge or slope is an array
        (they broadcast together).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.slope_class(gv.Rectangular(width=3.0), 5.0, 0.001, 0.015)
    'mild'
    >>> gv.slope_class(gv.Rectangular(width=3.0), 5.0, [0.001, 0.02, 0.0], 0.015).tolist()
    ['mild', 'steep', 'horizontal']
    """
    critical_tolerance = renamed_keyword(critical_tolerance, tolerance, old="tolerance", new="critical_tolerance",
                                         default=CRITICAL_SLOPE_TOLERANCE)
    tol = positive_float(critical_tolerance, "critical_tolerance", allow_zero=True)
    q = positive_array(discharge, "discharge")
    section_roughness(section, roughness)
    s = finite_array(slope, "slope")
    shape, (qf, sf) = _flat(discharge=q, slope=s)
    yn, yc = np.full(qf.size, np.nan), np.ones(qf.size)
    pos = sf > 0  # (on a level or adverse bed the class needs neither depth)
    if np.any(pos):
        yn[pos] = normal_depth(section, qf[pos], sf[pos], roughness, units)
        yc[pos] = critical_depth(section, qf[pos], units)
    out = slope_classes(sf, yn, yc, tol)
    return str(out[0]) if shape == () else out.reshape(shape)


def slope_classes(slope, normal_depth, critical_depth, critical_tolerance) -> np.ndarray:
    """Slope class names of flat arrays of bed slope, normal depth (NaN: none) and critical depth: the rule
    of :func:`gvflow._core.flow.slope_class_code`, the one used by the solver (private)."""
    slope = np.ascontiguousarray(slope, dtype=float)
    code = np.empty(slope.size, dtype=np.int64)
    core("arrays", slope.size).slope_class_many(slope, np.ascontiguousarray(normal_depth, dtype=float),
                                                np.ascontiguousarray(critical_depth, dtype=float),
                                                float(critical_tolerance), code)
    return np.array(SLOPE_CLASS_NAMES)[code]


def uniform_discharge(section, depth, slope, roughness=None, units: UnitsLike = "SI"):
    """Discharge carried in uniform flow at a depth: Q = K(y) sqrt(S0) [length³/s].

    Darcy-Weisbach roughness is solved for the Q whose friction factor matches.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> q = gv.uniform_discharge(sec, 1.2, 0.001, 0.015)
    >>> round(gv.normal_depth(sec, q, 0.001, 0.015), 10)
    1.2
    """
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    y = section._depth(depth)
    s = positive_array(slope, "slope")
    y, s = np.broadcast_arrays(y, s)
    if not isinstance(rough, DarcyWeisbach):
        return scalar_or_array(_kfactor(section, y, rough, u, None) * np.sqrt(s))
    q = np.ones(y.shape)
    for _ in range(100):  # fixed point: f depends weakly on Q through Re
        q_new = _kfactor(section, y, rough, u, q) * np.sqrt(s)
        if np.all(np.abs(q_new - q) <= 1e-14 * q_new):
            break
        q = q_new
    return scalar_or_array(q_new)


def uniform_velocity(section, depth, slope, roughness=None, units: UnitsLike = "SI"):
    """Mean velocity in uniform flow at a depth: V = K(y) sqrt(S0) / A [length/s].

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.uniform_velocity(gv.Rectangular(width=2.0), 1.0, 0.001, 0.013), 6)
    1.532392
    """
    q = uniform_discharge(section, depth, slope, roughness, units)
    return scalar_or_array(np.asarray(q) / np.asarray(section.area(depth)))


class ConduitCapacity(tuple):
    """Uniform-flow capacity of a closed conduit (a named tuple-like result)."""

    __slots__ = ()
    _fields = ("full_discharge", "peak_discharge", "peak_depth", "full_velocity")

    def __new__(cls, full_discharge, peak_discharge, peak_depth, full_velocity):
        return tuple.__new__(cls, (full_discharge, peak_discharge, peak_depth, full_velocity))

    full_discharge = property(lambda self: self[0], doc="Discharge flowing just full [length³/s].")
    peak_discharge = property(lambda self: self[1], doc="Largest uniform-flow discharge [length³/s].")
    peak_depth = property(lambda self: self[2], doc="Depth carrying the peak discharge [length].")
    full_velocity = property(lambda self: self[3], doc="Mean velocity flowing just full [length/s].")

    def __repr__(self):
        return ("ConduitCapacity(full_discharge={:.6g}, peak_discharge={:.6g}, peak_depth={:.6g}, "
                "full_velocity={:.6g})".format(*self))


def conduit_capacity(section, slope, roughness=None, units: UnitsLike = "SI") -> ConduitCapacity:
    """Uniform-flow capacity of a closed conduit flowing partly full.

    With constant Manning n the discharge peaks at y/D = 0.938 at 1.076 times
    the full-pipe discharge (Chow 1959, ch. 6; exact optimisation).

    Examples
    --------
    >>> import gvflow as gv
    >>> cap = gv.conduit_capacity(gv.Circular(diameter=1.0), 0.001, 0.013)
    >>> round(cap.peak_discharge / cap.full_discharge, 4), round(cap.peak_depth, 4)
    (1.0757, 0.9382)
    """
    if not section.closed:
        raise InvalidInputError(f"conduit_capacity needs a closed conduit (e.g. gv.Circular); got {section!r}")
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    s = single_number(positive_array(slope, "slope"), "slope")
    d = section.max_depth
    q_full = float(uniform_discharge(section, d, s, rough, u))
    qref = np.array([q_full])
    y_peak, k_peak = _peak_conveyance_depth(section, rough, u, qref)
    if isinstance(rough, DarcyWeisbach):
        q_peak = float(uniform_discharge(section, float(y_peak[0]), s, rough, u))
    else:
        q_peak = float(k_peak[0] * np.sqrt(s))
    return ConduitCapacity(q_full, q_peak, float(y_peak[0]), q_full / float(section.area(d)))


del Chezy, Manning
