"""Scale limits and plausibility checks of a reach before it is solved (private).

Two kinds of check, in one place:

* **Refusals** (:class:`~gvflow.errors.InvalidInputError`) of what no channel
  can hold and floating point cannot carry: a reach longer than ten thousand
  kilometres, a segment shorter than the resolution of its position, a
  critical or normal depth above ten kilometres or a critical depth below
  1e-15 m, a critical slope outside 1e-10-1e3, end depths, gate jets and
  culvert tailwaters beyond the same depth limits. Each message names the
  field and the remedy; :func:`arithmetic_guard` turns any arithmetic failure
  left in a solve into an InvalidInputError. The limits are
  physical, stated in metres and converted to the reach's length unit.
* **Warnings** (:class:`~gvflow.errors.GVFlowWarning`) of legal but unusual
  input: Manning's n outside 0.008-0.20, a bed slope above 0.1, a depth many
  times the channel's width (a sign of mixed units). One warning per kind and
  call, attributed to the caller's line (the first frame outside gvflow).

:func:`note_sloping_jumps` gives the notes on jumps located on a steep floor.
"""

from __future__ import annotations

import contextlib
import math

import numpy as np

from ._notes import note
from ._warn import warn
from .controls import Culvert, FixedDepth, FixedStage, SluiceGate
from .errors import InvalidInputError
from .friction import Manning
from .sections import Surveyed
from .uniform import STEEP_SLOPE
from .units import MAX_DEPTH_M

#: Longest reach accepted [m]: ten thousand kilometres, longer than the longest river
#: (about 6,700 km, from memory).
MAX_REACH_LENGTH_M = 1.0e7
#: Shortest segment accepted, as a fraction of the reach length: positions carry about 16 significant
#: digits, and a segment must span many of their last units to hold evenly spaced stations.
MIN_SEGMENT_FRACTION = 1.0e-9
#: Shallowest critical depth accepted [m]: far thinner than a molecule of water (about 3e-10 m), and
#: still far above the floating-point floor. Not a physical bound on useful results (nothing that thin
#: is open-channel flow) but the bound of what is computed: solvers probing small discharges (the pool
#: discharge search) pass through depths of 1e-10 m.
MIN_DEPTH_M = 1.0e-15

#: Critical slopes accepted (the friction slope at critical depth). Real channels lie within about
#: 1e-5 (very smooth and deep) to 1 (very rough and shallow); outside 1e-10-1e3 the roughness is far
#: beyond any surface (Manning's n of 1e-4 at a critical depth of 10 km gives 4e-9) and the friction
#: terms of the marchers lose their meaning.
CRITICAL_SLOPE_RANGE = (1.0e-10, 1.0e3)

#: Usual range of Manning's n [s/m^(1/3)]: from smooth lined channels (glass, finished metal) to
#: channels dense with brush and trees (Chow 1959, table 5-6, from memory).
MANNING_N_USUAL = (0.008, 0.20)
#: A depth more than this many times the water-surface width looks like mixed units (common practice).
DEPTH_TO_WIDTH_SUSPECT = 10.0

@contextlib.contextmanager
def arithmetic_guard():
    """Turn an arithmetic failure of a solve into an InvalidInputError (a backstop behind
    :func:`check_reach`: extreme numbers that pass its limits and still overflow the computation)."""
    try:
        yield
    except (ZeroDivisionError, OverflowError, FloatingPointError) as exc:
        raise InvalidInputError(
            f"the reach's numbers lie beyond what the computation can carry ({type(exc).__name__}: {exc}); "
            "check for extreme values (lengths, sizes, roughness, depths and their units)") from None


def check_reach(reach) -> None:
    """Refuse reaches no channel can hold (length, datum, end depths); the depths are checked, and
    unusual input warned of, by :func:`check_segments` once the solver has built its per-segment
    constants."""
    units = reach.resolved_units
    per_m = units.length_per_metre
    L = units.length
    segments = reach.segments
    total = reach.length
    if not total <= MAX_REACH_LENGTH_M * per_m:
        raise InvalidInputError(
            f"the reach is {total:.4g} {L} long, more than any channel ({MAX_REACH_LENGTH_M * per_m:.4g} {L}, ten "
            "thousand kilometres): check the segment lengths and their unit")
    top = abs(reach.datum) + sum(abs(s.slope) * s.length for s in segments)
    if not top <= MAX_REACH_LENGTH_M * per_m:
        raise InvalidInputError(
            f"datum: bed elevations reach {top:.4g} {L}, beyond ten thousand kilometres from zero, where the "
            "depths would lose their digits: give elevations from a local datum")
    for k, s in enumerate(segments):
        if s.drop > MAX_DEPTH_M * per_m:
            raise InvalidInputError(
                f"segments.{k}.drop: an invert drop of {s.drop:.4g} {L} is more than any channel holds "
                f"({MAX_DEPTH_M * per_m:.4g} {L}): check the value and its unit")
        if s.length < MIN_SEGMENT_FRACTION * total:
            raise InvalidInputError(
                f"segments.{k}.length: {s.length:.4g} {L} is too short against the reach length {total:.4g} {L} "
                f"(at least {MIN_SEGMENT_FRACTION:g} of it) for its stations to be told apart: merge this segment "
                "into its neighbour or remove it")

    _check_end_depths(reach, units, per_m)


def check_segments(reach, segs, sf_c, coef=None) -> None:
    """Refuse critical and normal depths and critical slopes beyond any channel, and warn of depths many
    times the channel's width, from the per-segment constants the solver built (``segs``: one
    SegmentBatch per segment; ``sf_c``: friction slope at critical depth per segment and scenario;
    ``coef``: the roughness coefficients (n, K) of a sweep, or None)."""
    units = reach.resolved_units
    per_m = units.length_per_metre
    for k, (s, batch) in enumerate(zip(reach.segments, segs, strict=True)):
        _check_depths(k, s, batch, batch.discharge, units, per_m)
        _check_critical_slope(k, s, np.asarray(sf_c[k], dtype=float), batch, units)
    _warn_unusual(reach.segments, coef)
    _warn_mixed_units(segs, units.length, units.g)


def _check_critical_slope(k, s, sf_c, batch, units):
    """The friction slope at critical depth (the critical slope) must lie in :data:`CRITICAL_SLOPE_RANGE`.
    In a closed conduit a discharge far above what it carries puts critical depth at (or within round-off
    of) the crown, where that slope is the full-flow friction slope: one above the range there points at
    the discharge first."""
    lo, hi = CRITICAL_SLOPE_RANGE
    bad = ~((sf_c >= lo) & (sf_c <= hi))
    if bad.any():
        value = float(sf_c[bad][0])
        i = int(np.flatnonzero(bad)[0])
        if s.section.closed and value > hi:
            raise InvalidInputError(
                f"discharge: {batch.discharge[i]:.4g} {units.discharge} is far more than {s.section!r} of segment "
                f"{k} carries: near its crown the friction slope would be {value:.4g}; check the discharge and its "
                f"unit, the conduit's size, and its roughness {s.roughness!r}")
        what = "smoother" if not value >= lo else "rougher"
        raise InvalidInputError(
            f"segments.{k}.roughness: {s.roughness!r} gives a critical slope (friction slope at critical depth) "
            f"of {value:.4g}, outside {lo:g}-{hi:g}: {what} than any real channel; check the value, its law "
            "(Manning's n, Chezy's C, Darcy-Weisbach's roughness height) and its unit")


def _check_end_depths(reach, units, per_m):
    """A fixed depth or water level at an end must stand less than :data:`MAX_DEPTH_M` above the bed."""
    y_max, y_min = MAX_DEPTH_M * per_m, MIN_DEPTH_M * per_m
    L = units.length
    last = len(reach.segments) - 1
    ends = [("upstream", reach.upstream, (0.0, 0)), ("downstream", reach.downstream, (reach.length, last))]
    ends += [(f"segments.{k}.gate", s.gate, None) for k, s in enumerate(reach.segments) if s.gate is not None]
    for end, ctrl, where in ends:
        if isinstance(ctrl, FixedDepth):
            depth, field = ctrl.depth, f"{end}.depth"
        elif isinstance(ctrl, FixedStage):
            bed = float(reach.bed_elevation([where[0]], [where[1]])[0])
            depth, field = ctrl.elevation - bed, f"{end}.elevation"
        elif isinstance(ctrl, SluiceGate):
            depth, field = ctrl.contraction * ctrl.opening, f"{end}.opening"
        elif isinstance(ctrl, Culvert) and ctrl.tailwater is not None:
            depth, field = max(ctrl.tailwater, y_min), f"{end}.tailwater"
        else:
            continue
        if depth > y_max:
            raise InvalidInputError(
                f"{field}: the water would stand {depth:.4g} {L} deep, more than any channel holds ({y_max:.4g} {L}): "
                "check the value, its unit and the datum")
        if 0 < depth < y_min:
            raise InvalidInputError(
                f"{field}: the water would stand {depth:.4g} {L} deep, thinner than {y_min:.4g} {L}, not "
                "open-channel flow: check the value and its unit")


def _check_depths(k, s, batch, q_ext, units, per_m):
    L = units.length
    y_max, y_min = MAX_DEPTH_M * per_m, MIN_DEPTH_M * per_m
    yc = batch.yc
    if ((yc <= y_max) & (yc >= y_min)).all() and not (s.slope > 0 and (batch.yn > y_max).any()):
        return  # (the usual case, in one pass; the checks below say what is wrong)
    big = ~(yc <= y_max)
    if big.any():
        i = int(np.flatnonzero(big)[0])
        raise InvalidInputError(
            f"discharge: {q_ext[i]:.4g} {units.discharge} needs a critical depth of {yc[i]:.4g} {L} in segment {k}'s "
            f"section ({s.section!r}), more than any channel holds ({y_max:.4g} {L}): check the discharge, the "
            "section's dimensions and their units")
    small = ~(yc >= y_min)
    if small.any():
        i = int(np.flatnonzero(small)[0])
        raise InvalidInputError(
            f"discharge: {q_ext[i]:.4g} {units.discharge} flows at a critical depth of {yc[i]:.4g} {L} in segment "
            f"{k}'s section ({s.section!r}), thinner than {y_min:.4g} {L} (a molecule of water is about 3e-10 m "
            "across), not open-channel flow: check "
            "the discharge, the section's dimensions and their units")
    if s.slope > 0:
        yn = batch.yn
        deep = np.isfinite(yn) & (yn > y_max)
        if deep.any():
            i = int(np.flatnonzero(deep)[0])
            raise InvalidInputError(
                f"segments.{k}: the normal depth would be {yn[i]:.4g} {L}, more than any channel holds "
                f"({y_max:.4g} {L}): the bed slope {s.slope:g} is too small or the roughness too large for "
                f"{q_ext[i]:.4g} {units.discharge}; check them and their units, or give slope=0 for a horizontal bed")


def _warn_unusual(segments, coef):
    # Manning's n is the same number in every unit system (the factor k absorbs the units), so it is
    # compared as given.
    lo, hi = MANNING_N_USUAL
    odd_n = []
    for k, s in enumerate(segments):
        if not isinstance(s.roughness, Manning):
            continue
        if coef is None:
            n_lo = n_hi = float(s.roughness.n)
        else:
            n_lo, n_hi = float(coef[:, k].min()), float(coef[:, k].max())
        if n_lo < lo or n_hi > hi:
            odd_n.append(f"segment {k}: n = {n_lo:g}" if n_lo == n_hi else f"segment {k}: n {n_lo:g}-{n_hi:g}")
    if odd_n:
        warn(f"roughness: Manning's n outside its usual range {lo:g}-{hi:g} (Chow 1959, table 5-6) in "
             f"{', '.join(odd_n)}: check the value and that it is Manning's n (not Chezy's C or a "
             "Strickler coefficient)")
    steep = [f"segment {k}: {s.slope:g}" for k, s in enumerate(segments) if abs(s.slope) > STEEP_SLOPE]
    if steep:
        warn(f"slope: bed slope above {STEEP_SLOPE:g} ({', '.join(steep)}), where the small-slope assumptions "
             "(depth measured vertically, hydrostatic pressure) start to err; depths are vertical depths and "
             "a jump's sequent depth is taken from the level-floor momentum balance")


#: a grade line more than this many conduit heights above the crown is no sewer's or culvert's: a warning
FULL_HEAD_RISES = 100.0


def check_solved_depths(reach, x, bounds, depth) -> None:
    """Refuse a solved profile whose water stands deeper than :data:`MAX_DEPTH_M` in an open section (a
    conduit running full is left to :func:`warn_pressure_heads`): no channel holds it, and some input (a
    gate opening, a tailwater, a unit) is not what was meant."""
    units = reach.resolved_units
    y_max, L = MAX_DEPTH_M * units.length_per_metre, units.length
    if depth.max() <= y_max:  # (the usual case at once; NaN, where a march stopped, goes on to the check)
        return
    for k, seg in enumerate(reach.segments):
        if seg.section.closed:
            continue
        i0, m = bounds[k]
        deep = np.nanmax(depth[:, i0:i0 + m], axis=0, initial=-np.inf)
        if np.any(deep > y_max):
            j = int(np.argmax(deep))
            raise InvalidInputError(
                f"segments.{k}: the water would stand {deep[j]:.4g} {L} deep at x = {x[i0 + j]:.1f} {L}, more than "
                f"any channel holds ({y_max:.4g} {L}); check what holds it up there (a gate opening, a control "
                "downstream, the roughness) and the units")


def warn_pressure_heads(reach, bounds, depth) -> None:
    """Warn where a conduit running full has its grade line more than :data:`FULL_HEAD_RISES` heights above
    its crown: legal, but no real system stands so, and a discharge in the wrong unit gives it."""
    L = reach.resolved_units.length
    high = []
    for k, seg in enumerate(reach.segments):
        top = seg.section.max_depth
        if not top < np.inf:
            continue
        i0, m = bounds[k]
        head = np.nanmax(depth[:, i0:i0 + m], initial=-np.inf) - top
        if head > FULL_HEAD_RISES * top:
            high.append(f"segment {k}: {head:.4g} {L}, {head / top:.3g} times its height")
    if high:
        warn(f"discharge: the grade line of a conduit running full stands far above its crown ({'; '.join(high)}); "
             "check the discharge and its unit, and the conduit's size")


def warn_above_surveys(reach, x, bounds, depth) -> None:
    """Warn where the solved water stands above the lower end point of a surveyed section: the survey stops
    there and the section is taken as closed by a vertical wall (:class:`gvflow.Surveyed`). Between two
    surveyed sections the height of that point above the invert is interpolated along the segment."""
    high = []
    for k, seg in enumerate(reach.segments):
        if not isinstance(seg.section, Surveyed):
            continue
        top = seg.section.bank_depth
        i0, m = bounds[k]
        xs = x[i0:i0 + m]
        if seg.section_downstream is not None:
            top = top + (seg.section_downstream.bank_depth - top) * (xs - xs[0]) / (xs[-1] - xs[0])
        over = np.nanmax(depth[:, i0:i0 + m] - top, axis=0, initial=-np.inf)
        if np.any(over > 1e-9 * np.max(top)):
            j = int(np.argmax(over))
            high.append((k, over[j], xs[j]))
    if high:
        L = reach.resolved_units.length
        where = "; ".join(f"segment {k}: {h:.3g} {L} above it at x = {xk:.1f} {L}" for k, h, xk in high)
        warn(f"section: the water rises above the lower end point of a surveyed section ({where}), "
             "where the survey stops and the section is taken as closed by a vertical wall; extend the survey "
             "over the ground the water reaches")


def _warn_mixed_units(segs, L, g) -> None:
    """Warn where a segment's normal or critical depth is many times its water-surface width (open
    sections only: a conduit's water surface narrows to nothing at its crown)."""
    odd = []
    for k, seg in enumerate(segs):
        if seg.section.closed:
            continue
        # Cheap pass first: in an open section whose width never narrows upwards the hydraulic depth
        # A/T is at most the depth, so at critical depth (alpha Q² T = g A³) T >= Q / sqrt(g yc³), and
        # the width only grows above it. Depths below ten times that bound cannot be suspect.
        if seg.n == 1:  # (one scenario: plain floats, a fraction of the cost of numpy on one element)
            y = [v for v in (float(seg.yn[0]), float(seg.yc[0])) if 0.0 < v < math.inf]
            if not y:
                continue
            deepest = max(y)
            least_bound = float(seg.discharge[0]) / math.sqrt(g * float(seg.yc[0]) ** 3)
        else:
            y = np.concatenate([seg.yn, seg.yc])
            y = y[np.isfinite(y) & (y > 0)]
            if not y.size:
                continue
            deepest = float(y.max())
            least_bound = float((seg.discharge / np.sqrt(g * seg.yc ** 3)).min())
        if deepest < DEPTH_TO_WIDTH_SUSPECT * least_bound:
            continue
        try:
            top = float(seg.section.top_width(deepest))
        except ValueError:
            continue
        if np.isfinite(top) and top > 0 and deepest > DEPTH_TO_WIDTH_SUSPECT * top:
            name = "normal" if deepest in seg.yn else "critical"
            odd.append(f"segment {k}: {name} depth {deepest:.4g} {L} in a channel {top:.4g} {L} wide")
    if odd:
        warn(f"section: depths many times the channel's width ({'; '.join(odd)}): this often means mixed "
             "units (a width in feet with a discharge in m³/s, say); check the section, the discharge and units")


def note_sloping_jumps(scenario, x, segment, reach) -> list:
    """(scenario, note) for every jump (``scenario``, ``x``, ``segment`` arrays, one entry a jump) located on
    a floor sloping down more steeply than :data:`STEEP_SLOPE`.

    The jump location solver balances the level-floor specific forces. On a sloping floor the weight
    of the water in the roller has a component along the bed that the balance leaves out, so the
    subcritical sequent depth needed to hold a jump there is larger than the one reported (FHWA 2006,
    HEC-14, ch. 6, eq. 6.7; the USBR model tests of jumps on sloping aprons, Peterka 1958, Engineering
    Monograph 25, show the same trend).
    """
    out = []
    for s, xj, k in zip(scenario, x, segment, strict=True):
        slope = reach.segments[int(k)].slope
        if slope > STEEP_SLOPE:
            out.append((int(s), note(float(xj), "jump on a sloping floor", k=int(k), slope=slope, steep=STEEP_SLOPE)))
    return out
