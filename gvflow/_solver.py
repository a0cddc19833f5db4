"""Mixed-regime solution of a reach for a batch of scenarios (private).

The method (DESIGN.md, "Mixed regime on a reach"):

1. Subcritical pass, downstream to upstream: from the downstream control (or
   critical depth where none can govern) march the subcritical branch of
   every segment; where it has no solution, the depth falls back to critical
   and the march restarts from critical depth where the slope allows it.
2. Supercritical pass, upstream to downstream: from a supercritical upstream
   control, or from critical depth where the subcritical pass fell back to
   critical at the head of a steep segment, march the supercritical branch.
3. At every station the profile with the larger specific force
   M = Q²/(gA) + A ȳ governs. Where governance passes from the supercritical
   to the subcritical profile a hydraulic jump stands; its location is
   refined by root finding on M_super(x) - M_sub(x) between the two stations.

Everything is vectorised over scenarios (discharges, roughness samples):
one march per segment and pass serves them all.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ._core.codes import REGIME_CRITICAL, REGIME_SUB, REGIME_SUPER, SUB, SUPER  # noqa: F401
from ._core.records import Channel
from ._engine import core
from ._near_critical import near_critical_notes
from ._notes import note
from ._plausible import (
    check_reach,
    check_segments,
    check_solved_depths,
    note_sloping_jumps,
    warn_above_surveys,
    warn_pressure_heads,
)
from ._validate import positive_array
from .controls import EndState
from .errors import ControlError, ConvergenceError, InvalidInputError, NoSolutionError
from .profiles.base import SegmentBatch
from .profiles.base import depth_with_energy as _depth_with_energy
from .profiles.base import depth_with_force as _depth_with_force
from .profiles.base import pressure_head_with_energy as _pressure_head_with_energy
from .profiles.base import subset as _subset
from .profiles.classify import SLOPE_CLASSES
from .structures.gates import gate_pool_depth
from .uniform import CRITICAL_SLOPE_TOLERANCE

_M_TOL = 1e-12  # relative tolerance when comparing specific forces
#: a jump inside a segment whose specific forces differ by more than this (relative) is noted as unbalanced
JUMP_BALANCE_TOLERANCE = 1e-6


@dataclass(frozen=True, eq=False)
class BatchSolution:
    """Governing solution of n scenarios on shared base stations (frozen: every field, the jumps included, is
    given at construction; the notes may be given as the function that makes them, called when they are
    first read, see :attr:`notes`)."""

    x: np.ndarray  # (M,)
    segment: np.ndarray  # (M,) segment index of each station
    bed: np.ndarray  # (M,) bed elevation
    depth: np.ndarray  # (n, M) governing depth
    regime: np.ndarray  # (n, M) +1 sub, 0 critical, -1 super
    segs: list  # SegmentBatch per segment
    slope_class: np.ndarray  # (n, K) str
    # jumps, flat: one row per jump
    jump_scenario: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    jump_x: np.ndarray = field(default_factory=lambda: np.zeros(0))
    jump_y1: np.ndarray = field(default_factory=lambda: np.zeros(0))
    jump_y2: np.ndarray = field(default_factory=lambda: np.zeros(0))
    jump_segment: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    jump_after: np.ndarray = field(default_factory=lambda: np.zeros(0, int))  # base station index before it
    jump_at_junction: np.ndarray = field(default_factory=lambda: np.zeros(0, bool))
    # per scenario: a tuple of Note (x, kind, values; gvflow._notes), or a function returning them (:attr:`notes`)
    _notes: object = ()
    # per scenario: a tuple of (segment, x_up, x_down) where the subcritical pass found the conduit full
    # (pressure flow), before the supercritical profile governs any of it
    pressure_runs: tuple = ()

    _PER_SCENARIO = ("depth", "regime", "slope_class")
    _JUMPS = ("jump_x", "jump_y1", "jump_y2", "jump_segment", "jump_after", "jump_at_junction")
    #: the jump fields in the order of the solver's jump tuples
    _JUMP_ROWS = ("jump_scenario",) + _JUMPS

    @property
    def notes(self) -> tuple:
        """Per scenario: a tuple of Note (x, kind, values; gvflow._notes). Made when first read: a small
        solve would spend more on writing its notes than on its march, and a sweep rarely reads them."""
        if callable(self._notes):
            object.__setattr__(self, "_notes", self._notes())
        return self._notes

    def __getstate__(self):
        # (pickled with its notes made: the function that makes them holds the solver's working state)
        return {**self.__dict__, "_notes": self.notes}

    @classmethod
    def concatenate(cls, parts: list[BatchSolution]) -> BatchSolution:
        """One solution from solutions of consecutive blocks of scenarios of the same reach and stations."""
        if len(parts) == 1:
            return parts[0]
        first = parts[0]
        sizes = [p.depth.shape[0] for p in parts]
        offsets = np.concatenate([[0], np.cumsum(sizes)[:-1]])
        segs = []
        for k, s0 in enumerate(first.segs):
            cat = {a: np.concatenate([getattr(p.segs[k], a) for p in parts]) for a in ("coef", "discharge", "yc", "yn")}
            cb = s0.cb._replace(rough=np.concatenate([p.segs[k].cb.rough for p in parts]))
            segs.append(SegmentBatch(s0.section, s0.slope, s0.law, cat["coef"], cat["discharge"], s0.units, s0.alpha,
                                     cat["yc"], cat["yn"], cb, s0.fl))
        out = cls(x=first.x, segment=first.segment, bed=first.bed, segs=segs,
                  _notes=tuple(note for p in parts for note in p.notes),
                  pressure_runs=tuple(run for p in parts for run in p.pressure_runs),
                  jump_scenario=np.concatenate([p.jump_scenario + o for p, o in zip(parts, offsets, strict=True)]),
                  **{f: np.concatenate([getattr(p, f) for p in parts], axis=0) for f in cls._PER_SCENARIO},
                  **{f: np.concatenate([getattr(p, f) for p in parts]) for f in cls._JUMPS})
        return out


#: most stations of one scenario's profile: a 1 km reach at 1 mm, about 0.5 GB of work arrays
MAX_STATIONS = 1_000_000


def station_layout(reach, n_steps: int, max_step: float | None):
    """Base stations: every segment gets its own stations, junctions appear twice.

    Returns (x, segment index of each station, bed elevation, [(first index, count)] per segment).
    """
    lengths = [s.length for s in reach.segments]
    steps = [n_steps if max_step is None else max(n_steps, math.ceil(length / max_step)) for length in lengths]
    count = sum(steps) + len(steps)
    if count > MAX_STATIONS:
        raise InvalidInputError(
            f"n_steps={n_steps}" + ("" if max_step is None else f", max_step={max_step:g}") + f" would give "
            f"{count:,} stations, more than the {MAX_STATIONS:,} of one reach's profile; use fewer steps per "
            "segment (n_steps) or a longer max_step")
    x_end, z_end = reach._segment_ends()
    slopes = np.array([s.slope for s in reach.segments])
    x, seg_ix, bed = core("stations", 1).layout(np.array(lengths), np.array(steps), slopes, np.array(x_end),
                                                np.array(z_end))
    bounds, i0 = [], 0
    for n in steps:
        bounds.append((i0, n + 1))
        i0 += n + 1
    return x, seg_ix, bed, bounds


_SLOPE_CLASS_NAMES = np.array(SLOPE_CLASSES, dtype=object)  # indexed by SegmentBatch._checked's class codes
_MILD, _STEEP, _CRITICAL = (SLOPE_CLASSES.index(c) for c in ("mild", "steep", "critical"))


def _check_inside(seg, y, ctrl, end):
    top = seg.section.max_depth
    if (y > top).any():
        raise ControlError(
            f"{end} control {ctrl!r} puts the water {float(np.max(y)):.4g} deep in {seg.section!r}, above its "
            "crown: the conduit would flow full (pressure flow is outside gvflow's free-surface model)")


def _transfer(seg_from: SegmentBatch, seg_to: SegmentBatch, y, branch, gain: float = 0.0):
    """Depth in ``seg_to`` across the junction from depth ``y`` in ``seg_from``.

    ``gain`` is how far the bed of ``seg_to`` lies below that of ``seg_from`` at the junction (an invert
    drop: +drop passing downstream, -drop passing upstream); the energy crosses it without loss. Where
    the discharge changes (an inflow at the junction) and the flow is supercritical on a level junction,
    the specific force is conserved instead (the inflow brings no momentum along the channel); otherwise
    the specific energy is (no loss; for a tributary in subcritical flow, Akan 2006, *Open Channel
    Hydraulics*, §4.7). Returns (depth, critical_flag): where the branch has no root the depth is
    critical and the flag is set. On the subcritical branch a closed ``seg_to`` that the energy fills
    runs full: its depth is the pressure head above the invert, E - alpha Q²/(2 g A_full²)
    (:func:`_pressure_head_with_energy`).
    """
    qa, qb = seg_from.discharge, seg_to.discharge
    same_q = qa is qb or (qa.shape == qb.shape and bool((qa == qb).all()))  # (np.array_equal, cheaper)
    if gain == 0.0 and same_q and seg_from.same_section(seg_to):
        return y.copy(), np.zeros(y.shape, bool)
    if branch == SUPER and not same_q and gain == 0.0:
        return _depth_with_force(seg_to, seg_from.specific_force(y))
    e = seg_from.specific_energy(y) + gain
    if branch == SUB and seg_to.section.closed:
        return _pressure_head_with_energy(seg_to, e)
    return _depth_with_energy(seg_to, e, branch)


def _through_gate(gate, seg_up: SegmentBatch, seg_dn: SegmentBatch, jet, tail):
    """Depth upstream of a gate between two segments, free or submerged by the water below it, and the
    submerged mask: :func:`gvflow.structures.gates.gate_pool_depth` with the gate named in its errors."""
    try:
        return gate_pool_depth(seg_up, seg_dn, jet, tail, opening=gate.opening)
    except NoSolutionError as exc:
        raise ControlError(f"{gate!r} between segments: {exc}") from None


def _check_stop_codes(marcher, seg, code, stop, grp, x_order, full_ok=False):
    """Raise for the scenarios whose march stopped at a conduit's crown (code 2, unless ``full_ok``: the
    caller continues in pressure flow) or without convergence (3)."""
    m = x_order.shape[0]
    full = code == 2
    if full.any() and not full_ok:
        r = int(np.flatnonzero(full)[0])
        raise NoSolutionError(
            f"the water surface reaches the crown of {seg.section!r} near x = "
            f"{x_order[min(stop[r], m - 1)]:.2f} (discharge {seg.discharge[grp[r]]:g}): the conduit flows "
            "full there; pressure flow is outside gvflow's free-surface model. Use a larger conduit or "
            "a lower downstream level")
    if (code == 3).any():
        r = int(np.flatnonzero(code == 3)[0])
        raise ConvergenceError(
            f"the {getattr(marcher, 'name', 'profile')} marcher could not meet its tolerance near x = "
            f"{x_order[min(stop[r], m - 1)]:.2f}; try more steps (n_steps), a looser tolerance or the other "
            "method")


def _march_changing(marcher, seg, x_order, y0, crit0, branch, rival):
    """March a branch through a segment whose section changes (the marcher's ``march_changing``); where the
    branch fails the depth is critical there and beyond, flagged (no restart: the other pass takes over)."""
    n, m = seg.n, x_order.shape[0]
    res = marcher.march_changing(seg, x_order, np.asarray(y0, dtype=float), branch, rival, _M_TOL)
    if np.any(res.code == 3):
        _check_stop_codes(marcher, seg, res.code, res.n_valid, np.arange(n), x_order)
    crit = np.zeros((n, m), bool)
    crit[:, 0] = crit0
    failed = (np.arange(m)[None, :] >= res.n_valid[:, None]) & (res.code == 1)[:, None]
    y = res.depth
    t = seg.fractions(x_order)
    rows = np.flatnonzero(seg.several_critical())
    if rows.size:  # the critical depth of the branch each march starts on, carried along the segment
        sub = seg.take(rows)
        y0r = np.broadcast_to(np.asarray(y0, dtype=float), (n,))[rows]
        carried = sub.critical_depths_along(t, sub.start_critical_depth(x_order[0], y0r, branch))
    if np.any(failed):
        fill = seg.critical_depths_at(t)
        if rows.size:
            fill[rows] = carried
        y = np.where(failed, fill, y)
        crit |= failed
    if rows.size:
        _keep_to_branch(sub, rows, t, y, crit, res.n_valid, branch)
    return y, crit


def _keep_to_branch(sub, rows, t, y, crit, n_valid, branch):
    """Scenarios ``rows`` (the batch ``sub``) of a changing segment with several critical depths: from the
    first station where the march left the branch it was on, past a maximum of specific energy
    (:func:`gvflow._core.changing.left_branch`), which bounds the branch as critical depth does, the depth
    is that limit, flagged critical, as in a prismatic segment."""
    out_j, out_far = np.empty(rows.size, np.int64), np.empty(rows.size)
    core("changing", 200 * y.shape[1] * rows.size * sub.cost).left_branch(
        sub.cb, sub.change.along, sub.fl, np.ascontiguousarray(sub.discharge), t, sub.alpha,
        np.ascontiguousarray(y[rows]), np.ascontiguousarray(np.minimum(n_valid[rows], y.shape[1])), int(branch),
        out_j, out_far)
    for r, j, far in zip(rows.tolist(), out_j.tolist(), out_far.tolist(), strict=True):
        if j < y.shape[1]:
            y[r, j:] = far if far == far and 0.0 < far < np.inf else y[r, j - 1]
            crit[r, j:] = True


def _place_changing_jumps(jumps, k, act, i0, x, ysup, sub_y, msup, msub, only=None):
    """Place each new jump of a changing segment k (of the scenarios ``only``, where given) between its two
    stations, where the difference of the two profiles' specific forces (linear between the stations)
    vanishes. A prismatic segment whose section has several critical depths places its jumps so too: a
    search by marching between the stations could leave a profile's branch."""
    for j, (s, xj, _, _, kk, after, junc) in enumerate(jumps):
        if kk != k or not math.isnan(xj) or (only is not None and s not in only):
            continue
        r = int(np.flatnonzero(act == s)[0])
        i = after - i0  # local index of the last station where the supercritical profile governs
        d0 = msup[r, i] - msub[r, i]
        d1 = msup[r, i + 1] - msub[r, i + 1]
        f = d0 / (d0 - d1) if np.isfinite(d0) and np.isfinite(d1) and d0 != d1 else 1.0
        f = min(max(f, 0.0), 1.0) if np.isfinite(f) else 1.0
        ya = ysup[r, i] if not np.isfinite(ysup[r, i + 1]) else ysup[r, i] + f * (ysup[r, i + 1] - ysup[r, i])
        yb = sub_y[s, after] + f * (sub_y[s, after + 1] - sub_y[s, after])
        jumps[j] = (s, float(x[after] + f * (x[after + 1] - x[after])), float(ya), float(yb), kk, after, junc)


def _march_with_fallback(marcher, seg, x_order, y0, crit0, branch, can_restart, rival=None, full_at=None):
    """March a branch; where it fails fill critical depth, restarting where the slope allows.

    A scenario whose section has several critical depths marches on the branch its start stands on:
    between that branch's critical depth and the other limit of the branch, a maximum of specific energy
    (:meth:`SegmentBatch.branch_limits`), which the profile cannot pass either; from the first station
    beyond that limit on, the depth is the limit, flagged critical (the compound Froude number is 1
    there).

    ``rival`` (n, m): specific force of the competing profile at each station; a
    scenario whose branch falls below it there may stop (depths NaN beyond).
    ``full_at`` (n,) int, optional: where given, a scenario whose water reaches a
    conduit's crown stops there (depths NaN beyond) and ``full_at`` receives the
    first station it could not reach (-1 for the others); without it, that raises.
    """
    if seg.change is not None:
        return _march_changing(marcher, seg, x_order, y0, crit0, branch, rival)
    several = seg.several_critical()
    if not several.any():
        return _march_prismatic(marcher, seg, x_order, y0, crit0, branch, can_restart, rival, full_at)
    near, far = seg.branch_limits(y0, branch)
    y, crit = _march_prismatic(marcher, replace(seg, yc=near, far=far), x_order, y0, crit0, branch, can_restart,
                               rival, full_at)
    with np.errstate(invalid="ignore"):
        beyond = (y > far[:, None]) if branch == SUB else (y < far[:, None])
        # a march that stopped heading for the far limit (closer to it than to critical depth) ended there
        stopped = crit[:, 1:] & ~crit[:, :-1] & (np.abs(y[:, :-1] - far[:, None]) < np.abs(y[:, :-1] - near[:, None]))
    beyond[:, 1:] |= stopped & ((far > 0) & (far < np.inf))[:, None]
    beyond &= several[:, None]
    for r in np.flatnonzero(beyond.any(axis=1)):
        j = int(np.flatnonzero(beyond[r])[0])
        y[r, j:] = far[r]
        crit[r, j:] = True
    return y, crit


def _march_prismatic(marcher, seg, x_order, y0, crit0, branch, can_restart, rival, full_at):
    """:func:`_march_with_fallback` in a prismatic segment, on the branch bounded by ``seg.yc``."""
    n, m = seg.n, x_order.shape[0]
    crit = np.zeros((n, m), bool)
    crit[:, 0] = crit0

    def march(sub, start, y_start, rows):
        if rival is None:
            return marcher.march(sub, x_order[start:], y_start, branch)
        return marcher.march_until(sub, x_order[start:], y_start, branch, rival[rows, start:], _M_TOL)

    res = march(seg, 0, np.asarray(y0, dtype=float), slice(None))
    if not res.code.any() and res.n_valid.min() == m:  # (the usual case: every scenario reached the end)
        if full_at is not None:
            full_at[:] = -1
        return res.depth, crit
    if res.code.max() >= 2:
        _check_stop_codes(marcher, seg, res.code, res.n_valid, np.arange(n), x_order, full_at is not None)
    # first station each scenario's branch could not reach (an overtaken one needs no more)
    stop = np.where(res.code == 4, m, res.n_valid)
    if full_at is not None:
        full_at[:] = np.where(res.code == 2, res.n_valid, -1)
        stop[res.code == 2] = m
    if stop.min() == m:  # every scenario reached the end of the segment or was overtaken
        return res.depth, crit
    cols = np.arange(m)
    failed = cols[None, :] >= stop[:, None]
    y = np.where(failed, seg.yc[:, None], res.depth)
    crit[:, 1:] = failed[:, 1:]
    again = (stop < m - 1) & can_restart
    # restart from critical depth where the slope lets the branch leave it again
    idx, j0 = again.nonzero()[0], stop[again]
    while idx.size:
        restart_idx, restart_j = [], []
        for start in np.unique(j0):
            grp = idx[j0 == start]
            res = march(seg.take(grp), start, seg.yc[grp], grp)
            stop = start + res.n_valid
            if res.code.max() >= 2:
                _check_stop_codes(marcher, seg, res.code, stop, grp, x_order, full_at is not None)
            stop[res.code == 4] = m
            if full_at is not None:
                full_at[grp[res.code == 2]] = stop[res.code == 2]
                stop[res.code == 2] = m
            failed = cols[None, start:] >= stop[:, None]
            y[grp, start:] = np.where(failed, seg.yc[grp, None], res.depth)
            crit[grp, start + 1:] = failed[:, 1:]  # a restart station stays critical
            again = (stop < m - 1) & can_restart[grp]
            restart_idx.append(grp[again])
            restart_j.append(stop[again])
        idx, j0 = np.concatenate(restart_idx), np.concatenate(restart_j)
        order = np.argsort(idx)
        idx, j0 = idx[order], j0[order]
    return y, crit


#: Gauss-Legendre panels of the crown-crossing integral (:func:`gvflow._core.march.crown_distance`)
_CROWN_PANELS = 8


def _crown_crossing(marcher, seg, rows, x1, y1, x2):
    """Where the subcritical profile from depth ``y1`` at station ``x1`` (rows ``rows`` of ``seg``) rises to
    the crown on its way upstream to station ``x2`` < ``x1``: x1 less the x(y) integral from y1 to the
    crown, kept within [x2, x1] (x2 where the integral finds no crossing: the discrete step overshot)."""
    out = np.empty(rows.size)
    core("march", 50 * rows.size * seg.cost).crown_distances(
        seg.cb, seg.fl, np.ascontiguousarray(rows, np.int64), np.ascontiguousarray(seg.discharge[rows]),
        seg.slope, np.ascontiguousarray(y1, float), float(seg.section.max_depth), seg.alpha,
        float(getattr(marcher, "eddy_loss", 0.0)), _CROWN_PANELS, out)
    out = np.where(np.isfinite(out), out, x1 - x2)
    return x1 - np.clip(out, 0.0, x1 - x2)


def _sub_segment(marcher, seg, xs, y0, c0, can_restart, k, runs):
    """Subcritical pass over one segment, stations ``xs`` in marching order (upstream), from ``y0``.

    Returns (depth, critical flags) as :func:`_march_with_fallback`. In a closed conduit the water may
    fill the section: where the free surface reaches the crown (or the depth handed in from below
    stands above it) the conduit runs full and the depth is the pressure head h above the invert, so
    the stage is the hydraulic grade line. With the velocity Q/A_full fixed, the energy equation
    between two stations Δx apart reduces to h_up = h_down + (Sf_full - S0) Δx, Sf_full = (Q/K_full)²,
    K_full the conveyance at the crown (exact for any friction-slope average, since Sf is constant).
    Where Sf_full < S0 the grade line falls back to the crown going upstream and the free-surface
    march resumes there from the crown. Each full stretch is appended to ``runs[s]`` as
    (k, x_up, x_down).
    """
    if not seg.section.closed:
        return _march_with_fallback(marcher, seg, xs, y0, c0, SUB, can_restart)
    n, m = seg.n, xs.shape[0]
    top = seg.section.max_depth
    rise = seg.friction_slope(np.full(n, top)) - seg.slope  # rise of the pressure head per length upstream
    y0 = np.asarray(y0, dtype=float)
    y = np.full((n, m), np.nan)
    c = np.zeros((n, m), bool)
    pressure = []  # (scenario, x where the full stretch starts, first station index at or above it, head there)

    def free_run(rows, x_start, j0, y_start, crit0):
        """March rows from (x_start, y_start); station columns from j0 on (x_start is station j0 itself
        when x_start == xs[j0])."""
        on_station = x_start == xs[j0]
        xarr = xs[j0:] if on_station else np.concatenate([[x_start], xs[j0:]])
        full_at = np.full(rows.size, -1)
        yy, cc = _march_with_fallback(marcher, _subset(seg, rows), xarr, np.full(rows.size, y_start) if
                                      np.ndim(y_start) == 0 else y_start, crit0, SUB, can_restart[rows],
                                      full_at=full_at)
        skip = 0 if on_station else 1
        y[rows, j0:] = yy[:, skip:]
        c[rows, j0:] = cc[:, skip:]
        hit = np.flatnonzero(full_at >= 0)
        if hit.size:
            jj = full_at[hit]  # first station of xarr not reached, >= 1
            xt = _crown_crossing(marcher, seg, rows[hit], xarr[jj - 1], yy[hit, jj - 1], xarr[jj])
            for r, j, x_t in zip(hit.tolist(), jj.tolist(), xt.tolist(), strict=True):
                pressure.append((int(rows[r]), x_t, j0 + j - skip, top))

    # a depth handed in above the crown, or at the crown where the grade line of full flow rises upstream
    # (Sf_full > S0), starts full; at the crown with Sf_full <= S0 the free surface falls away upstream
    full = (y0 > top) | ((y0 >= top) & (rise > 0.0))
    free = np.flatnonzero(~full)
    if free.size:
        free_run(free, xs[0], 0, y0[free], np.asarray(c0)[free])
    pressure += [(int(r), xs[0], 0, float(y0[r])) for r in np.flatnonzero(full)]
    # a full stretch ends where the grade line meets the crown (only where Sf_full < S0), and the free
    # surface resumes there; each scenario switches at most once each way (rise keeps its sign)
    while pressure:
        s_, x0, j0, h0 = pressure.pop()
        h = h0 + rise[s_] * (x0 - xs[j0:])
        x_up = xs[-1]
        if rise[s_] < 0.0:
            x_r = x0 + (h0 - top) / rise[s_]  # the grade line meets the crown here
            back = np.flatnonzero(xs[j0:] < x_r)
            if back.size:
                jb = j0 + int(back[0])
                y[s_, j0:jb] = h[:jb - j0]
                x_up = x_r
                free_run(np.array([s_]), x_r, jb, np.array([top]), np.zeros(1, bool))
            else:
                y[s_, j0:] = h
        else:
            y[s_, j0:] = h
        runs[s_].append((k, float(x_up), float(x0)))
    return y, c


def _one(ctrl, s):
    """The control of scenario ``s``: ``ctrl`` itself, or its scenario's control when it varies per scenario."""
    # (looked up on the class: a model's own lookup of a name it lacks is slow)
    return ctrl if getattr(type(ctrl), "for_scenario", None) is None else ctrl.for_scenario(s)


@dataclass(frozen=True)
class _Setup:
    """What both passes share: the reach, its segments as batches of scenarios, their slope classes, the
    base stations, and the per-scenario lists the passes add notes and full stretches to."""

    reach: object
    marcher: object
    controls: dict  # replacements of the reach's controls for this batch (see solve_batch)
    q: np.ndarray  # (n,) discharge entering the reach
    segs: list  # SegmentBatch per segment
    classes: np.ndarray  # (n, K) slope class names
    class_code: np.ndarray  # (n, K) the same as indices into SLOPE_CLASSES
    can_sub_restart: list  # per segment, (n,) bool: the subcritical march may leave critical depth again
    can_sup_start: list  # per segment, (n,) bool: the supercritical march may start from critical depth
    x: np.ndarray  # (M,) base stations
    seg_ix: np.ndarray  # (M,) segment of each station
    bed: np.ndarray  # (M,) bed elevation
    bounds: list  # (first station, count) per segment
    notes: list  # per scenario: list of Note (gvflow._notes)
    pressure_runs: list  # per scenario: list of (segment, x_up, x_down) found full by the subcritical pass

    @property
    def n(self) -> int:
        return self.q.size

    @property
    def segments(self):
        return self.reach.segments

    def control(self, key, default):
        return self.controls.get(key, default)


@dataclass(frozen=True)
class _Downstream:
    """The downstream end: its control (None: normal or critical depth), where it governs, and the start of
    the subcritical pass."""

    ctrl: object
    end_state: EndState
    y_down: np.ndarray  # (n,) depth the control sets (or normal/critical depth without one)
    governs: np.ndarray  # (n,) bool
    y_start: np.ndarray  # (n,) depth the subcritical pass starts from
    c_start: np.ndarray  # (n,) bool: that depth is critical


@dataclass(frozen=True)
class _SubPass:
    """The subcritical pass: depth and critical flags at every station, and the gates it met."""

    y: np.ndarray  # (n, M)
    c: np.ndarray  # (n, M) bool
    gate_jet: dict  # segment -> (n,) jet depth below the gate at its head
    gate_submerged: dict  # segment -> (n,) bool


@dataclass(frozen=True)
class _Upstream:
    """The upstream end: its control, and the supercritical pass's starting depth (NaN: none)."""

    ctrl: object
    state: EndState | None
    sup_state: np.ndarray  # (n,)
    from_control: np.ndarray  # (n,) bool: the control starts supercritical flow (cleared where drowned)


@dataclass(frozen=True)
class _Governed:
    """The governing depth and regime at every station, and the jumps (scenario, x, y1, y2, segment,
    after_index, at_junction)."""

    depth: np.ndarray
    regime: np.ndarray
    jumps: list


def solve_batch(reach, marcher, discharge, coef=None, n_steps: int = 100, max_step=None,
                critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, controls=None) -> BatchSolution:
    """Solve the reach for every scenario (``discharge`` (n,), ``coef`` (n, K) roughness values or None).

    ``coef`` may also be a list of K arrays, one per segment: (n,) for a geometric section, (n, zones) for a
    surveyed one (one coefficient per core zone, :meth:`gvflow.Surveyed.core_zone_rows`), or None to keep
    the segment's own roughness.

    ``controls`` replaces controls of the reach for this batch: a dict with keys "upstream",
    "downstream" or a segment index (the gate at its head), each value a control or a set of
    per-scenario controls with the same methods (``depth_at`` and ``notes`` answer per scenario,
    ``for_scenario(s)`` gives one scenario's control, attributes are per-scenario arrays).
    """
    st = _build_segments(reach, marcher, discharge, coef, n_steps, max_step, critical_tolerance,
                         {} if controls is None else controls)
    down = _downstream_start(st)
    sub = _subcritical_pass(st, down)
    up = _upstream_start(st, sub)
    gov = _supercritical_pass(st, down, sub, up)
    if up.ctrl is not None:
        up.ctrl.check_solved(up.state, gov.depth[:, 0])
    check_solved_depths(reach, st.x, st.bounds, gov.depth)
    warn_above_surveys(reach, st.x, st.bounds, gov.depth)
    warn_pressure_heads(reach, st.bounds, gov.depth)
    # (the notes are written when first read: keep only the gates of the subcritical pass for them)
    return _solution(st, down, _SubPass(None, None, sub.gate_jet, sub.gate_submerged), up, gov)


def _build_segments(reach, marcher, discharge, coef, n_steps, max_step, critical_tolerance, controls) -> _Setup:
    """Validate the scenarios, build each segment's batch (normal and critical depths, slope classes) and
    lay out the base stations."""
    units = reach.resolved_units
    segments = reach.segments
    nseg = len(segments)
    q = np.array(positive_array(discharge, "discharge"), dtype=float, ndmin=1).ravel()
    n = q.size
    cols = [None] * nseg
    if isinstance(coef, list):
        cols = [None if c is None else np.array(positive_array(c, "roughness"), dtype=float).reshape(n, -1)
                for c in coef]
        cols = [c if segments[k].roughness is None else
                np.full(n, segments[k].roughness.kernel_spec()[1]) if c is None else c[:, 0].copy()
                for k, c in enumerate(cols)]
        # the one-coefficient columns for the plausibility checks (zone rows are checked by the caller)
        coef = np.stack([c if c is not None and c.ndim == 1 else np.full(n, np.nan) for c in cols], axis=1)
    elif coef is not None:
        coef = np.array(positive_array(coef, "roughness"), dtype=float).reshape(n, nseg)
        cols = [coef[:, k].copy() for k in range(nseg)]
    check_reach(reach)  # refuse lengths and end depths no channel holds
    q_seg = reach.segment_discharges(q)  # (n, K): continuity at every inflow
    if (q_seg <= 0).any():
        s, k = (int(v[0]) for v in np.nonzero(q_seg <= 0))
        raise InvalidInputError(f"segments[{k}].inflow: at discharge {q[s]:g} the withdrawals leave no discharge in "
                                f"segment {k}; the discharge must stay positive along the reach")
    xb = reach.boundaries if any(s.changes for s in segments) else None
    memo = {}  # critical depths of a section met twice (the end of one changing segment, the head of the next)
    built = [SegmentBatch._changing(s, q_seg[:, k].copy(), units, reach.alpha, cols[k], critical_tolerance, xb[k],
                                    xb[k + 1] - xb[k], strict=False, memo=memo)
             if s.changes else
             SegmentBatch._checked(s.section, s.slope, s.roughness, q_seg[:, k].copy(), units, reach.alpha,
                                   cols[k], critical_tolerance, strict=False)
             for k, s in enumerate(segments)]
    segs = [b[0] for b in built]
    sf_c = [b[1] for b in built]  # friction slope at critical depth
    code = np.empty((n, nseg), np.int64)
    for k, b in enumerate(built):
        code[:, k] = b[2]
    for k, seg in enumerate(segs):
        if not seg.several_critical().any():
            continue
        if seg.change is None:
            segs[k], sf_c[k], code[:, k] = _uniform_flow_branch(seg, sf_c[k], code[:, k], critical_tolerance)
            continue
        # a changing segment: its slope class is its downstream end's; either end gets its branch's yc
        tail, sf_c[k], code[:, k] = _uniform_flow_branch(seg.tail, sf_c[k], code[:, k], critical_tolerance)
        head = _uniform_flow_branch(replace(seg, change=None), sf_c[k], code[:, k], critical_tolerance)[0]
        segs[k] = replace(head, change=replace(seg.change, tail=tail))
    check_segments(reach, segs, sf_c, coef)  # depths and critical slopes no channel holds; warnings
    for seg in segs:
        seg.require_converged()
    x, seg_ix, bed, bounds = station_layout(reach, n_steps, max_step)
    return _Setup(reach=reach, marcher=marcher, controls=controls, q=q, segs=segs,
                  classes=_SLOPE_CLASS_NAMES[code], class_code=code,
                  can_sub_restart=[sf_c[k] > segs[k].slope for k in range(nseg)],
                  can_sup_start=[sf_c[k] < segs[k].slope for k in range(nseg)],
                  x=x, seg_ix=seg_ix, bed=bed, bounds=bounds, notes=[[] for _ in range(n)],
                  pressure_runs=[[] for _ in range(n)])


def _uniform_flow_branch(seg, sf_c, code, tol):
    """A section with several critical depths at a scenario's discharge: its critical depth is the one on
    the branch of the uniform flow, where the flow passes critical at a brink (a subcritical normal depth) or
    from a pool (a supercritical one), and its slope class follows the compound Froude number at normal
    depth, not the comparison with the least-energy critical depth (:meth:`SegmentBatch.branch_limits`).
    Returns the segment with those critical depths, the friction slopes there and the slope classes."""
    rows = np.flatnonzero(seg.several_critical() & np.isfinite(seg.yn) & (seg.slope > 0))
    if not rows.size:
        return seg, sf_c, code
    yn = seg.yn
    near_sub, far_sub = seg.branch_limits(yn, SUB)
    critical = np.abs(yn - near_sub) <= tol * near_sub
    sub = ~critical & (yn > near_sub) & (yn <= far_sub)
    yc = seg.yc.copy()
    yc[rows] = near_sub[rows]
    steep = rows[~(sub | critical)[rows]]
    if steep.size:  # a supercritical normal depth: the critical depth above it, passed leaving a pool
        yc[steep] = seg.take(steep).branch_limits(yn[steep], SUPER)[0]
    seg = replace(seg, yc=yc)
    sf_c = np.asarray(sf_c, dtype=float).copy()
    sf_c[rows] = seg.friction_slope(yc)[rows]
    code = code.copy()
    code[rows] = np.where(critical, _CRITICAL, np.where(sub, _MILD, _STEEP))[rows]
    return seg, sf_c, code


def _downstream_start(st: _Setup) -> _Downstream:
    """The depth the subcritical pass starts from: the downstream control's where it governs, else
    critical depth (normal or critical depth where the reach gives no control)."""
    last = st.segs[-1].tail  # the reach's downstream end
    classes = st.classes
    end_state = EndState("downstream", last, float(st.bed[-1]), classes[:, -1])
    ctrl = st.control("downstream", st.reach.downstream)
    code = st.class_code[:, -1]
    if ctrl is None:
        y_down = np.where(code == _MILD, last.yn, last.yc)
        governs_down = code != _STEEP
    else:
        ctrl.check_end("downstream")
        y_down = np.asarray(ctrl.depth_at(end_state), dtype=float)
        # (a control above a conduit's crown submerges its outlet: the conduit starts full, see _sub_segment)
        governs_down = last.subcritical_at(y_down)
        # a depth below the lowest critical depth cannot govern: the flow leaves through critical depth (a free
        # overfall) and the control is unused, as at the end of a steep segment. A depth in the supercritical
        # band between two critical depths of a compound section is refused: which way the water leaves is
        # not clear there.
        must_be_sub = False if governs_down.all() else (code != _STEEP) & (code != _CRITICAL) & ~governs_down
        if must_be_sub is not False and must_be_sub.any():
            several = must_be_sub & last.several_critical() & ~(y_down < last.yc)
            if several.any():
                i = int(np.flatnonzero(several)[0])
                near, far = (v[i] for v in last.branch_limits(y_down, SUPER))
                raise ControlError(
                    f"downstream control {_one(ctrl, i)!r} gives depth {y_down[i]:.4g}, where the flow in this "
                    f"compound section is supercritical (discharge {st.q[i]:g}: between {far:.4g}, a maximum of "
                    f"specific energy, and critical depth {near:.4g} the compound Froude number exceeds 1); the "
                    f"flow leaving a {classes[i, -1]} segment is subcritical, so its downstream control must give "
                    "a subcritical depth. For a free overfall or a drop use gv.CriticalFlow()")
    if not np.isfinite(y_down).all():
        i = int(np.flatnonzero(~np.isfinite(y_down))[0])
        raise NoSolutionError(
            f"no downstream depth for discharge {st.q[i]:g}: {last.section!r} cannot carry it in uniform flow at "
            f"slope {last.slope:g} (see gv.conduit_capacity); give the reach a downstream control or a larger "
            "section")
    # a control at critical depth (a brink) makes the end station critical
    return _Downstream(ctrl=ctrl, end_state=end_state, y_down=y_down, governs=governs_down,
                       y_start=np.where(governs_down, y_down, last.yc),
                       c_start=~governs_down | (np.abs(y_down - last.yc) <= 1e-12 * last.yc))


def _subcritical_pass(st: _Setup, down: _Downstream) -> _SubPass:
    """March the subcritical branch segment by segment, downstream to upstream, carrying the depth across
    every junction (:func:`_transfer`) and gate (:func:`_through_gate`)."""
    segs, segments, x, n = st.segs, st.segments, st.x, st.n
    sub_y = np.full((n, x.size), np.nan)
    sub_c = np.zeros((n, x.size), bool)
    gate_jet, gate_submerged = {}, {}  # per segment with a gate at its head
    y_start, c_start = down.y_start, down.c_start
    for k in range(len(segs) - 1, -1, -1):
        i0, m = st.bounds[k]
        xs = x[i0:i0 + m][::-1]
        y, c = _sub_segment(st.marcher, segs[k], xs, y_start, c_start, st.can_sub_restart[k], k, st.pressure_runs)
        sub_y[:, i0:i0 + m] = y[:, ::-1]
        sub_c[:, i0:i0 + m] = c[:, ::-1]
        if k > 0 and segments[k].gate is not None:
            gate = st.control(k, segments[k].gate)
            jet = np.asarray(gate.depth_at(EndState("upstream", segs[k], float(st.bed[i0]), st.classes[:, k])),
                             float)
            gate_jet[k] = jet
            tail = np.where(sub_c[:, i0], np.nan, sub_y[:, i0])  # no subcritical water below: free flow
            y_start, gate_submerged[k] = _through_gate(gate, segs[k - 1].tail, segs[k], jet, tail)
            c_start = np.zeros(n, bool)
        elif k > 0:
            drop = segments[k].drop
            y_start, flag = _transfer(segs[k], segs[k - 1].tail, sub_y[:, i0], SUB, -drop)
            # critical on the upstream side too where the section and bed are the same, or where it has no
            # subcritical root
            c_start = flag | (sub_c[:, i0] & segs[k].same_section(segs[k - 1].tail) & (drop == 0)
                              & (segments[k].inflow == 0))
    return _SubPass(y=sub_y, c=sub_c, gate_jet=gate_jet, gate_submerged=gate_submerged)


def _upstream_start(st: _Setup, sub: _SubPass) -> _Upstream:
    """The depth the supercritical pass starts from: a supercritical upstream control's, or critical depth
    where the subcritical pass fell back to it at the head of a steep first segment (NaN: neither)."""
    first, n, notes = st.segs[0], st.n, st.notes
    sup_state = np.full(n, np.nan)
    sup_from_control = np.zeros(n, bool)
    up = st.control("upstream", st.reach.upstream)
    up_state = None
    if up is not None:
        up.check_end("upstream")
        up_state = EndState("upstream", first, float(st.bed[0]), st.classes[:, 0])
        y_up = np.asarray(up.depth_at(up_state), dtype=float)
        _check_inside(first, y_up, up, "upstream")
        ok = (y_up < first.yc * (1 - 1e-9)) | (np.isclose(y_up, first.yc, rtol=1e-9) & st.can_sup_start[0])
        several = first.several_critical()
        if several.any():  # supercritical where the compound Froude number exceeds 1
            ok = np.where(several, ~first.subcritical_at(y_up) | (np.isclose(y_up, first.yc, rtol=1e-9)
                                                                  & st.can_sup_start[0]), ok)
        sup_state = np.where(ok, y_up, np.nan)
        sup_from_control = ok.copy()
        for s in (~ok).nonzero()[0]:
            notes[s].append(note(0.0, "unused control", end="upstream", control=_one(up, s)))
    entry = np.isnan(sup_state) & sub.c[:, 0] & st.can_sup_start[0]
    sup_state = np.where(entry, first.yc, sup_state)
    for s in entry.nonzero()[0]:
        notes[s].append(note(0.0, "critical control", where="steep head"))
    return _Upstream(ctrl=up, state=up_state, sup_state=sup_state, from_control=sup_from_control)


def _supercritical_pass(st: _Setup, down: _Downstream, sub: _SubPass, up: _Upstream) -> _Governed:
    """March the supercritical branch segment by segment, upstream to downstream, where it starts or is
    carried over; govern each segment's stations and locate its jumps (:func:`_govern_segment`), then hand
    the state on to the next segment's head (:func:`_next_head`)."""
    gov = _Governed(depth=sub.y.copy(), regime=np.where(sub.c, REGIME_CRITICAL, REGIME_SUB), jumps=[])
    sup_state = up.sup_state
    carried = np.zeros(st.n, bool)  # supercritical flow carried over from the previous segment
    for k in range(len(st.segs)):
        act = np.isfinite(sup_state).nonzero()[0]
        if act.size:
            gov_sup_end, y_end = _govern_segment(st, k, sub, up, gov, act, sup_state[act], carried)
        else:
            gov_sup_end, y_end = np.zeros(0, bool), np.zeros(0)
        if k + 1 < len(st.segs):
            sup_state, carried = _next_head(st, k, sub, gov, act, gov_sup_end, y_end)
        else:
            _note_swept_out(st, down, act, gov_sup_end)
    return gov


def _govern_segment(st: _Setup, k, sub: _SubPass, up: _Upstream, gov: _Governed, act, y0, carried):
    """Segment k: march the supercritical branch of scenarios ``act`` from ``y0``, let the larger specific
    force govern each station, collect and locate the jumps. Returns which of ``act`` leave the segment
    supercritical and their depth at its end."""
    i0, m = st.bounds[k]
    seg = st.segs[k]
    depth, regime, jumps, notes, n = gov.depth, gov.regime, gov.jumps, st.notes, st.n
    xs = st.x[i0:i0 + m]
    from_critical = np.abs(y0 - seg.yc[act]) <= 1e-12 * seg.yc[act]
    seg_act = _subset(seg, act)
    t = seg.fractions(xs) if seg.change is not None else None  # a changing segment: its section at each station
    msub = seg_act.specific_force(sub.y[act, i0:i0 + m], t)
    several = seg_act.several_critical()
    if several.any():
        # where the subcritical branch gave out, its critical depth only holds the place: with several
        # critical depths the specific force need not be least there, so it must not overtake a profile
        msub = np.where(sub.c[act, i0:i0 + m] & several[:, None], -np.inf, msub)
    # (the supercritical march may stop where the subcritical profile overtakes it: NaN beyond)
    ysup, csup = _march_with_fallback(st.marcher, seg_act, xs, y0, from_critical, SUPER, st.can_sup_start[k][act],
                                      rival=msub)
    msup = seg_act.specific_force(ysup, t)
    first_loss = np.empty(act.size, np.int64)
    if act.size == n:  # write in place
        core("stations", msup.size).govern(msup, msub, ysup, csup, depth[:, i0:i0 + m], regime[:, i0:i0 + m],
                                           _M_TOL, first_loss)
    else:
        blk_y, blk_r = depth[act, i0:i0 + m], regime[act, i0:i0 + m]
        core("stations", msup.size).govern(msup, msub, ysup, csup, blk_y, blk_r, _M_TOL, first_loss)
        depth[act, i0:i0 + m], regime[act, i0:i0 + m] = blk_y, blk_r
    sup_from_control = up.from_control
    for r in (first_loss < m).nonzero()[0]:
        s, i = int(act[r]), int(first_loss[r])
        if i == 0:
            if k == 0 and not sup_from_control[s]:
                continue  # critical entry immediately overtaken: plain subcritical flow
            if k == 0:
                sup_from_control[s] = False
                notes[s].append(note(0.0, "drowned jump"))
                continue
            if k in sub.gate_jet:
                continue  # a submerged gate: noted with the gate below
            if carried[s] and regime[s, i0 - 1] != REGIME_CRITICAL:
                jumps.append((s, st.x[i0], depth[s, i0 - 1], sub.y[s, i0], k, i0 - 1, True))
            # (from critical depth at the junction straight into subcritical flow: an expansion
            # whose energy difference is lost, not a jump)
            continue
        jumps.append((s, np.nan, ysup[r, i - 1], sub.y[s, i0 + i], k, i0 + i - 1, False))
    # refine the jumps inside this segment, all scenarios at once
    if seg.change is not None:
        _place_changing_jumps(jumps, k, act, i0, st.x, ysup, sub.y, msup, msub)
    else:
        if several.any():
            _place_changing_jumps(jumps, k, act, i0, st.x, ysup, sub.y, msup, msub, only=set(act[several].tolist()))
        _refine(jumps, st.marcher, seg, st.x, sub.y, k, notes, st.pressure_runs)
    return first_loss == m, ysup[:, -1]


def _next_head(st: _Setup, k, sub: _SubPass, gov: _Governed, act, gov_sup_end, y_end):
    """The supercritical state at the head of segment k + 1 (NaN: none) and whether it was carried over
    from segment k: the supercritical flow leaving k, critical depth at a choke or brink at the end of k
    or at the head of a steep k + 1, or the jet of a gate at its head."""
    n, segs, drop = st.n, st.segs, st.segments[k + 1].drop
    seg, nseg1 = segs[k].tail, segs[k + 1]  # (the end of segment k)
    nxt = np.full(n, np.nan)
    carried = np.zeros(n, bool)
    if act.size and gov_sup_end.any():
        idx = act[gov_sup_end]
        yt, flag = _transfer(_subset(seg, idx), _subset(nseg1, idx), y_end[gov_sup_end], SUPER, drop)
        nxt[idx] = yt
        carried[idx] = True
    j0 = st.bounds[k + 1][0]
    i_end = st.bounds[k][0] + st.bounds[k][1] - 1
    sub_end = np.isnan(nxt) & (gov.regime[:, i_end] != REGIME_SUPER)
    # critical depth at the end of segment k: a choke (the next section needs more energy)
    # or a brink; the flow leaves it supercritical into segment k + 1
    crit_up = sub_end & sub.c[:, i_end]
    # critical depth at the head of a steep segment k + 1
    crit_dn = sub_end & ~crit_up & sub.c[:, j0] & st.can_sup_start[k + 1]
    if crit_up.any():
        idx = crit_up.nonzero()[0]
        yt, _ = _transfer(_subset(seg, idx), _subset(nseg1, idx), seg.yc[idx], SUPER, drop)
        nxt[idx] = yt
        carried[idx] = yt < nseg1.yc[idx] * (1 - 1e-9)
    nxt = np.where(crit_dn, nseg1.yc, nxt)
    if k + 1 in sub.gate_jet:  # the gate releases its jet whatever arrives from upstream
        return sub.gate_jet[k + 1].copy(), np.zeros(n, bool)
    changed = not seg.same_section(nseg1)
    for s in (crit_up | crit_dn).nonzero()[0]:
        if crit_up[s] and st.segments[k + 1].inflow:
            where = "inflow"  # below the inflow the discharge needs more energy
        elif crit_up[s] and changed:
            where = "larger section"
        else:
            where = "steepening"
        st.notes[s].append(note(float(st.x[j0]), "critical control", where=where, k=k))
    return nxt, carried


def _note_swept_out(st: _Setup, down: _Downstream, act, gov_sup_end):
    """Note the scenarios whose supercritical flow leaves the reach although the downstream control would
    govern subcritical flow: the jump forms below the reach."""
    if down.ctrl is None:
        return
    for r in gov_sup_end.nonzero()[0]:
        s = act[r]
        if down.governs[s]:
            st.notes[s].append(note(float(st.x[-1]), "jump swept out", control=_one(down.ctrl, s)))


def _control_notes(st: _Setup, down: _Downstream, sub: _SubPass, up: _Upstream, gov: _Governed):
    """The notes on the governed profile: inflows, chokes, near-critical stretches, gates, and what the end
    controls did."""
    notes, segs, x, n = st.notes, st.segs, st.x, st.n
    depth, regime, classes = gov.depth, gov.regime, st.classes
    _inflow_notes(notes, st.segments, segs, st.bounds, x, regime)
    _conveyance_ratio_notes(notes, st.segments, segs, st.bounds, x, depth)
    _choke_notes(notes, segs, classes, st.bounds, x, depth, regime)
    _several_critical_notes(notes, segs, st.bounds, x, depth)
    _untraced_notes(notes, segs, st.bounds, x, regime)
    _jump_energy_notes(notes, segs, gov.jumps)
    near_critical_notes(notes, segs, st.bounds, x, depth)
    for k, jet in sub.gate_jet.items():
        i0 = st.bounds[k][0]
        gate = st.control(k, st.segments[k].gate)
        for s in range(n):
            notes[s].append(note(float(x[i0]), "gate", k=k, control=_one(gate, s), submerged=sub.gate_submerged[k][s],
                                 jet=jet[s], depth_up=depth[s, i0 - 1]))
    ctrl, governs_down = down.ctrl, down.governs
    if ctrl is not None:
        for s in range(n):
            if governs_down[s] and regime[s, -1] != REGIME_SUPER:
                notes[s].append(note(float(x[-1]), "downstream control", control=_one(ctrl, s)))
            elif not governs_down[s]:
                below = regime[s, -1] != REGIME_SUPER and down.y_down[s] < segs[-1].yc[s]
                notes[s].append(note(float(x[-1]), "unused control", end="downstream", control=_one(ctrl, s),
                                     critical=float(segs[-1].yc[s]) if below else None))
        _add_details(notes, ctrl, down.end_state, depth[:, -1], float(x[-1]))
    elif st.reach.downstream is None:
        for s in range(n):
            if classes[s, -1] != "steep" and regime[s, -1] != REGIME_SUPER:
                assumed = "normal depth" if classes[s, -1] == "mild" else "critical depth"
                notes[s].append(note(float(x[-1]), "downstream control", assumed=assumed))
    if up.ctrl is not None:
        for s in up.from_control.nonzero()[0]:
            notes[s].append(note(0.0, "upstream control", control=_one(up.ctrl, s)))
        _add_details(notes, up.ctrl, up.state, depth[:, 0], 0.0)
    if ctrl is not None:
        top = segs[-1].section.max_depth
        for s in (governs_down & (down.y_down > top)).nonzero()[0]:
            notes[s].append(note(float(x[-1]), "submerged outlet", head=down.y_down[s] - top))


def _solution(st: _Setup, down: _Downstream, sub: _SubPass, up: _Upstream, gov: _Governed) -> BatchSolution:
    """The solution record, jumps sorted by scenario and x; its notes (the passes', then :func:`_control_notes`,
    then those on jumps on sloping floors) are written when first read."""
    jumps = {}
    # (a "jump" inside a segment whose two depths agree to 1e-9 is the profile passing through critical depth,
    # both sides at it: no jump; in unlike sections at a junction the sequent depths may stand either way)
    gov.jumps[:] = [j for j in gov.jumps if j[6] or not j[3] <= j[2] * (1.0 + 1e-9)]
    if gov.jumps:
        arr = list(zip(*gov.jumps, strict=True))
        types = (int, float, float, float, int, int, bool)
        jumps = {name: np.array(a, t) for name, a, t in zip(BatchSolution._JUMP_ROWS, arr, types, strict=True)}
        order = np.lexsort((jumps["jump_x"], jumps["jump_scenario"]))
        jumps = {name: a[order] for name, a in jumps.items()}

    def notes():
        _control_notes(st, down, sub, up, gov)
        if jumps:
            for s, n in note_sloping_jumps(jumps["jump_scenario"], jumps["jump_x"], jumps["jump_segment"], st.reach):
                st.notes[s].append(n)
        return tuple(map(tuple, st.notes))

    return BatchSolution(x=st.x, segment=st.seg_ix, bed=st.bed, depth=gov.depth, regime=gov.regime, segs=st.segs,
                         slope_class=st.classes, _notes=notes,
                         pressure_runs=tuple(map(tuple, st.pressure_runs)), **jumps)


#: neighbouring sections whose conveyances differ by more than this factor are too far apart for the
#: standard step (Davidian 1984, USGS TWRI 3-A15: ratio within 0.7 to 1.4; from memory; common practice)
CONVEYANCE_RATIO_LIMIT = 1.4


def _conveyance_ratio_notes(notes, segments, segs, bounds, x, depth):
    """Note each changing segment whose two end sections' conveyances, at the water levels found there,
    differ by more than :data:`CONVEYANCE_RATIO_LIMIT`."""
    for k, seg in enumerate(segs):
        if segments[k].section_downstream is None:
            continue
        i0, m = bounds[k]
        with np.errstate(divide="ignore", invalid="ignore"):
            k_up = seg.discharge / np.sqrt(seg.properties(depth[:, i0])[4])
            k_dn = seg.discharge / np.sqrt(seg.tail.properties(depth[:, i0 + m - 1])[4])
            ratio = k_up / k_dn
        far = (ratio > CONVEYANCE_RATIO_LIMIT) | (ratio < 1.0 / CONVEYANCE_RATIO_LIMIT)
        for s in far.nonzero()[0]:
            notes[s].append(note(float(x[i0]), "sections far apart", x_up=float(x[i0]), x_down=float(x[i0 + m - 1]),
                                 ratio=float(max(ratio[s], 1.0 / ratio[s])), limit=CONVEYANCE_RATIO_LIMIT))


def _several_critical_notes(notes, segs, bounds, x, depth):
    """Note each stretch where the water stands between two critical depths of a compound section (where
    specific energy has a local maximum between two minima): there the regime is decided by the compound
    Froude number; each profile keeps to its branch (:func:`_march_with_fallback`, :func:`_keep_to_branch`)
    and the note names the segment's critical depth."""
    kernel = core("arrays", 100)
    buf = np.empty(64)
    for k, seg in enumerate(segs):
        if seg.n_critical is None or not (seg.n_critical > 1).any():
            continue
        i0, m = bounds[k]
        for s in (seg.n_critical > 1).nonzero()[0]:
            ch = Channel(seg.cb.kind, seg.cb.par, seg.cb.law, np.ascontiguousarray(seg.cb.rough[s]))
            count, _ = kernel.all_critical_depths(ch, seg.fl, float(seg.discharge[s]), seg.alpha, buf)
            lo, hi = float(buf[:count].min()), float(buf[:count].max())
            inside = np.flatnonzero((depth[s, i0:i0 + m] > lo) & (depth[s, i0:i0 + m] < hi))
            if inside.size:
                notes[s].append(note(float(x[i0 + inside[0]]), "several critical depths", k=k,
                                     depths=tuple(float(v) for v in buf[:count]),
                                     x_end=float(x[i0 + inside[-1]]), used=float(seg.yc[s])))


def _untraced_notes(notes, segs, bounds, x, regime):
    """Note each stretch of a changing segment held at critical depth (two stations or more): there the
    march found no depth on its branch that balances the energy (a choke between unlike sections, or the
    limit of a branch of a compound section), and the depths are each station's critical depth
    (:func:`_march_changing`), not a traced profile."""
    for k, seg in enumerate(segs):
        if seg.change is None:
            continue
        i0, m = bounds[k]
        crit = regime[:, i0:i0 + m] == REGIME_CRITICAL
        for s in np.flatnonzero((crit[:, :-1] & crit[:, 1:]).any(axis=1)).tolist():
            run = np.flatnonzero(crit[s])
            notes[s].append(note(float(x[i0 + run[0]]), "untraced stretch", k=k, x_end=float(x[i0 + run[-1]])))


def _jump_energy_notes(notes, segs, jumps):
    """Note a jump in a section with several critical depths whose momentum balance gains specific energy
    (with one critical depth a balanced jump always loses energy, and an unbalanced one ends at critical
    depth, the least energy)."""
    for s, xj, y1, y2, k, _, _ in jumps:
        seg = segs[k]
        if math.isnan(xj) or not seg.several_critical()[s]:
            continue
        t = None if seg.change is None else np.repeat(seg.fractions([xj]), 2)  # a changing section: at the jump
        e1, e2 = _subset(seg, np.array([s])).specific_energy(np.array([[y1, y2]]), t)[0]
        if e2 > e1 * (1 + 1e-9):
            notes[s].append(note(float(xj), "jump gains energy", gain=float(e2 - e1)))


def _inflow_notes(notes, segments, segs, bounds, x, regime):
    """One note per scenario at every inflow: the discharges either side and the balance used across it."""
    for k in range(1, len(segments)):
        if not segments[k].inflow:
            continue
        i0 = bounds[k][0]
        for s in range(len(notes)):
            sup = regime[s, i0 - 1] == REGIME_SUPER and regime[s, i0] == REGIME_SUPER
            notes[s].append(note(float(x[i0]), "inflow", k=k, inflow=segments[k].inflow,
                                 q_up=segs[k - 1].tail.discharge[s], q_down=segs[k].discharge[s], supercritical=sup))


def _add_details(notes, ctrl, state, depth, x):
    """Append the per-scenario lines a control adds to its note (:meth:`Control.notes`)."""
    for s, lines in enumerate(ctrl.notes(state, depth)):
        notes[s].extend(note(x, "control detail", text=text) for text in lines)


def _choke_notes(notes, segs, classes, bounds, x, depth, regime):
    """Note each contraction whose critical section holds the subcritical water upstream above normal depth."""
    for k in range(len(segs) - 1):
        if segs[k].same_section(segs[k + 1]):
            continue
        i_end = bounds[k][0] + bounds[k][1] - 1
        j0, m1 = bounds[k + 1]
        yn = segs[k].yn
        raised = (regime[:, i_end] == REGIME_SUB) & np.isfinite(yn) & (depth[:, i_end] > yn * (1 + 1e-3))
        raised &= np.isin(classes[:, k], ("mild", "critical"))
        raised &= (regime[:, j0:j0 + m1] == REGIME_CRITICAL).any(axis=1)
        for s in raised.nonzero()[0]:
            notes[s].append(note(float(x[i_end]), "choke", k=k, depth=depth[s, i_end], yn=yn[s]))


def _jump_into_full(jump, marcher, seg, x, sub_y, runs):
    """Locate a jump whose subcritical side runs full at the station below it.

    Between the stations the supercritical depth is stepped from the station above; on the subcritical
    side the pressure head is linear in x where the conduit runs full (the grade line at the full-flow
    friction slope) and, upstream of where the grade line crosses the crown (an end of a full stretch in
    ``runs``), the free surface stepped upstream from the crown. The jump stands where the two specific
    forces balance (the full side's includes the pressure on the full area, see :mod:`gvflow._core.flow`),
    found by Brent's method on x to 1e-10 of the station spacing.
    """
    from scipy.optimize import brentq

    s, _, y_sup0, _, k, after, junc = jump
    top = seg.section.max_depth
    a, b = float(x[after]), float(x[after + 1])
    h_a, h_b = float(sub_y[s, after]), float(sub_y[s, after + 1])
    if h_a > top:
        t, h_t = a, h_a
    else:
        inside = [e for kk, x_up, x_dn in runs[s] if kk == k for e in (x_up, x_dn) if a <= e <= b]
        t, h_t = (inside[0] if inside else a), top
    one = _subset(seg, np.array([s]))

    def sub_depth(xq):
        if xq >= t:
            return h_b + (h_t - h_b) * (b - xq) / (b - t) if b > t else h_b
        y = marcher.step_to(seg, s, top, t, xq, SUB)
        # (no free surface below the crown there on the subcritical branch: the stations' depths, straight)
        return y if np.isfinite(y) else h_a + (h_b - h_a) * (xq - a) / (b - a)

    def sup_depth(xq):
        y = marcher.step_to(seg, s, float(y_sup0), a, xq, SUPER)
        return y if np.isfinite(y) else float(y_sup0)  # (the supercritical branch ends: its last depth)

    def balance(xq):
        m = one.specific_force(np.array([[sup_depth(xq), sub_depth(xq)]]))[0]
        return m[0] - m[1]

    fa, fb = balance(a), balance(b)
    if not fa > 0.0:
        xj = a
    elif not fb < 0.0:
        xj = b
    else:
        xj = brentq(balance, a, b, xtol=1e-10 * (b - a) + 1e-12, rtol=1e-14, maxiter=200)
    return (s, float(xj), sup_depth(xj), sub_depth(xj), k, after, junc)


def _refine(jumps, marcher, seg, x, sub_y, k, notes, runs=None):
    """Locate, by root finding, every jump of segment k whose x is still unknown (NaN).

    A jump whose two specific forces still differ by more than :data:`JUMP_BALANCE_TOLERANCE` (the
    search closed on a discontinuity of a marched profile, which reaches critical depth there instead
    of balancing the other) gets a note saying so.
    """
    rows = [j for j, jp in enumerate(jumps) if jp[4] == k and math.isnan(jp[1])]
    if rows and seg.section.closed:
        # a jump whose subcritical side runs full is located against the grade line (_jump_into_full)
        top = seg.section.max_depth
        into_full = [j for j in rows if sub_y[jumps[j][0], jumps[j][5] + 1] > top]
        for j in into_full:
            jumps[j] = _jump_into_full(jumps[j], marcher, seg, x, sub_y, runs)
            s, xj, y1, y2 = jumps[j][:4]
            m1, m2 = _subset(seg, np.array([s])).specific_force(np.array([[y1, y2]]))[0]
            off = abs(m1 - m2) / m2
            if off > JUMP_BALANCE_TOLERANCE:  # (the two sides' forces do not cross between the stations)
                notes[s].append(note(xj, "unbalanced jump", off=off))
        rows = [j for j in rows if j not in into_full]
    if not rows:
        return
    s_idx = np.array([jumps[j][0] for j in rows])
    after = np.array([jumps[j][5] for j in rows])
    y_sup0 = np.array([jumps[j][2] for j in rows])
    x_lo, x_hi = x[after], x[after + 1]
    y_sub1 = sub_y[s_idx, after + 1]
    xj, ys, yb = marcher.locate_jumps(_subset(seg, s_idx), y_sup0, x_lo, y_sub1, x_hi)  # one jump a scenario
    bad = ~np.isfinite(xj)
    if bad.any():
        r = int(np.flatnonzero(bad)[0])
        raise ConvergenceError(f"the jump between x = {x_lo[r]:.3f} and {x_hi[r]:.3f} could not be located to "
                               "tolerance; try more steps (n_steps)", iterations=200)
    sub = _subset(seg, s_idx)
    m1, m2 = sub.specific_force(ys), sub.specific_force(yb)
    off = np.abs(m1 - m2) / m2
    for r, j in enumerate(rows):
        s, _, _, _, kk, aft, junc = jumps[j]
        jumps[j] = (s, float(xj[r]), float(ys[r]), float(yb[r]), kk, aft, junc)
        if off[r] > JUMP_BALANCE_TOLERANCE:
            notes[s].append(note(float(xj[r]), "unbalanced jump", off=off[r]))
