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
from dataclasses import dataclass, field

import numpy as np

from ._core.codes import REGIME_CRITICAL, REGIME_SUB, REGIME_SUPER, SUB, SUPER  # noqa: F401
from ._engine import core
from ._near_critical import near_critical_notes
from ._plausible import check_reach, check_segments, note_sloping_jumps
from ._validate import positive_array
from .controls import EndState
from .errors import ControlError, ConvergenceError, InvalidInputError, NoSolutionError
from .profiles.base import SegmentBatch
from .profiles.base import depth_with_energy as _depth_with_energy
from .profiles.base import depth_with_force as _depth_with_force
from .profiles.base import subset as _subset
from .profiles.classify import SLOPE_CLASSES
from .structures.gates import gate_pool_depth
from .uniform import CRITICAL_SLOPE_TOLERANCE

_M_TOL = 1e-12  # relative tolerance when comparing specific forces
#: a jump inside a segment whose specific forces differ by more than this (relative) is noted as unbalanced
JUMP_BALANCE_TOLERANCE = 1e-6


@dataclass(eq=False)
class BatchSolution:
    """Governing solution of n scenarios on shared base stations."""

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
    notes: list = field(default_factory=list)  # per scenario: list of (x, kind, text)
    # per scenario: list of (segment, x_up, x_down) where the subcritical pass found the conduit full
    # (pressure flow), before the supercritical profile governs any of it
    pressure_runs: list = field(default_factory=list)

    _PER_SCENARIO = ("depth", "regime", "slope_class")
    _JUMPS = ("jump_x", "jump_y1", "jump_y2", "jump_segment", "jump_after", "jump_at_junction")

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
                  notes=[note for p in parts for note in p.notes],
                  pressure_runs=[run for p in parts for run in p.pressure_runs],
                  jump_scenario=np.concatenate([p.jump_scenario + o for p, o in zip(parts, offsets, strict=True)]),
                  **{f: np.concatenate([getattr(p, f) for p in parts], axis=0) for f in cls._PER_SCENARIO},
                  **{f: np.concatenate([getattr(p, f) for p in parts]) for f in cls._JUMPS})
        return out


def station_layout(reach, n_steps: int, max_step: float | None):
    """Base stations: every segment gets its own stations, junctions appear twice.

    Returns (x, segment index of each station, bed elevation, [(first index, count)] per segment).
    """
    lengths = [s.length for s in reach.segments]
    steps = [n_steps if max_step is None else max(n_steps, int(np.ceil(length / max_step))) for length in lengths]
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


def _check_inside(seg, y, ctrl, end):
    top = seg.section.max_depth
    if np.any(y > top):
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
    same_q = np.array_equal(seg_from.discharge, seg_to.discharge)
    if gain == 0.0 and same_q and seg_from.same_section(seg_to):
        return y.copy(), np.zeros(y.shape, bool)
    if branch == SUPER and not same_q and gain == 0.0:
        return _depth_with_force(seg_to, seg_from.specific_force(y))
    e = seg_from.specific_energy(y) + gain
    if branch == SUB and seg_to.section.closed:
        return _pressure_head_with_energy(seg_to, e)
    return _depth_with_energy(seg_to, e, branch)


def _pressure_head_with_energy(seg: SegmentBatch, e):
    """Subcritical depth in a closed ``seg`` with specific energy ``e``, or its pressure head where ``e``
    exceeds the energy of the conduit just full (surcharged: head = D + e - E(D)); (depth, critical flag)."""
    top = seg.section.max_depth
    e_full = seg.specific_energy(np.full(seg.n, top))
    over = e > e_full
    out, flag = np.empty(e.shape), np.zeros(e.shape, bool)
    out[over] = top + (e - e_full)[over]
    if not np.all(over):
        idx = np.flatnonzero(~over)
        out[idx], flag[idx] = _depth_with_energy(_subset(seg, idx), e[idx], SUB)
    return out, flag


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
    if np.any(full) and not full_ok:
        r = int(np.flatnonzero(full)[0])
        raise NoSolutionError(
            f"the water surface reaches the crown of {seg.section!r} near x = "
            f"{x_order[min(stop[r], m - 1)]:.2f} (discharge {seg.discharge[grp[r]]:g}): the conduit flows "
            "full there; pressure flow is outside gvflow's free-surface model. Use a larger conduit or "
            "a lower downstream level")
    if np.any(code == 3):
        r = int(np.flatnonzero(code == 3)[0])
        raise ConvergenceError(
            f"the {getattr(marcher, 'name', 'profile')} marcher could not meet its tolerance near x = "
            f"{x_order[min(stop[r], m - 1)]:.2f}; try more steps (n_steps), a looser tolerance or the other "
            "method")


def _march_with_fallback(marcher, seg, x_order, y0, crit0, branch, can_restart, rival=None, full_at=None):
    """March a branch; where it fails fill critical depth, restarting where the slope allows.

    ``rival`` (n, m): specific force of the competing profile at each station; a
    scenario whose branch falls below it there may stop (depths NaN beyond).
    ``full_at`` (n,) int, optional: where given, a scenario whose water reaches a
    conduit's crown stops there (depths NaN beyond) and ``full_at`` receives the
    first station it could not reach (-1 for the others); without it, that raises.
    """
    n, m = seg.n, x_order.shape[0]
    crit = np.zeros((n, m), bool)
    crit[:, 0] = crit0

    def march(sub, start, y_start, rows):
        if rival is None:
            return marcher.march(sub, x_order[start:], y_start, branch)
        return marcher.march_until(sub, x_order[start:], y_start, branch, rival[rows, start:], _M_TOL)

    res = march(seg, 0, np.asarray(y0, dtype=float), slice(None))
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
    idx, j0 = np.flatnonzero(again), stop[again]
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
    core("march", 50 * rows.size).crown_distances(
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

    free = np.flatnonzero(~(y0 > top))
    if free.size:
        free_run(free, xs[0], 0, y0[free], np.asarray(c0)[free])
    pressure += [(int(r), xs[0], 0, float(y0[r])) for r in np.flatnonzero(y0 > top)]
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
    pick = getattr(ctrl, "for_scenario", None)
    return ctrl if pick is None else pick(s)


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
    controls = {} if controls is None else controls
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
    if np.any(q_seg <= 0):
        s, k = (int(v[0]) for v in np.nonzero(q_seg <= 0))
        raise InvalidInputError(f"segments[{k}].inflow: at discharge {q[s]:g} the withdrawals leave no discharge in "
                                f"segment {k}; the discharge must stay positive along the reach")
    built = [SegmentBatch._checked(s.section, s.slope, s.roughness, q_seg[:, k].copy(), units, reach.alpha,
                                   cols[k], critical_tolerance, strict=False)
             for k, s in enumerate(segments)]
    segs = [b[0] for b in built]
    sf_c = [b[1] for b in built]  # friction slope at critical depth
    check_segments(reach, segs, sf_c, coef)  # depths and critical slopes no channel holds; warnings
    for seg in segs:
        seg.require_converged()
    classes = _SLOPE_CLASS_NAMES[np.stack([b[2] for b in built], axis=1)]
    can_sub_restart = [sf_c[k] > segs[k].slope for k in range(nseg)]
    can_sup_start = [sf_c[k] < segs[k].slope for k in range(nseg)]

    x, seg_ix, bed, bounds = station_layout(reach, n_steps, max_step)
    M = x.size
    notes = [[] for _ in range(n)]

    # ---------------- subcritical pass -------------------------------------------------
    sub_y = np.full((n, M), np.nan)
    sub_c = np.zeros((n, M), bool)
    last = segs[-1]
    end_state = EndState("downstream", last, float(bed[-1]), classes[:, -1])
    ctrl = controls.get("downstream", reach.downstream)
    if ctrl is None:
        y_down = np.where(classes[:, -1] == "mild", last.yn, last.yc)
        governs_down = classes[:, -1] != "steep"
    else:
        ctrl.check_end("downstream")
        y_down = np.asarray(ctrl.depth_at(end_state), dtype=float)
        # (a control above a conduit's crown submerges its outlet: the conduit starts full, see _sub_segment)
        governs_down = y_down >= last.yc * (1 - 1e-12)
        must_be_sub = (classes[:, -1] != "steep") & (classes[:, -1] != "critical") & ~governs_down
        if np.any(must_be_sub):
            i = int(np.flatnonzero(must_be_sub)[0])
            raise ControlError(
                f"downstream control {_one(ctrl, i)!r} gives depth {y_down[i]:.4g}, below critical depth "
                f"{last.yc[i]:.4g} (discharge {q[i]:g}); the flow leaving a {classes[i, -1]} segment is "
                "subcritical, so its downstream control must be at or above critical depth. For a free "
                "overfall or a drop use gv.CriticalFlow()")
    if np.any(~np.isfinite(y_down)):
        i = int(np.flatnonzero(~np.isfinite(y_down))[0])
        raise NoSolutionError(
            f"no downstream depth for discharge {q[i]:g}: {last.section!r} cannot carry it in uniform flow at slope "
            f"{last.slope:g} (see gv.conduit_capacity); give the reach a downstream control or a larger section")
    gate_jet, gate_submerged = {}, {}  # per segment with a gate at its head
    y_start = np.where(governs_down, y_down, last.yc)
    # a control at critical depth (a brink) makes the end station critical
    c_start = ~governs_down | (np.abs(y_down - last.yc) <= 1e-12 * last.yc)
    drops = [s.drop for s in segments]
    pressure_runs = [[] for _ in range(n)]
    for k in range(nseg - 1, -1, -1):
        i0, m = bounds[k]
        xs = x[i0:i0 + m][::-1]
        y, c = _sub_segment(marcher, segs[k], xs, y_start, c_start, can_sub_restart[k], k, pressure_runs)
        sub_y[:, i0:i0 + m] = y[:, ::-1]
        sub_c[:, i0:i0 + m] = c[:, ::-1]
        if k > 0 and segments[k].gate is not None:
            gate = controls.get(k, segments[k].gate)
            jet = np.asarray(gate.depth_at(EndState("upstream", segs[k], float(bed[i0]), classes[:, k])), float)
            gate_jet[k] = jet
            tail = np.where(sub_c[:, i0], np.nan, sub_y[:, i0])  # no subcritical water below: free flow
            y_start, gate_submerged[k] = _through_gate(gate, segs[k - 1], segs[k], jet, tail)
            c_start = np.zeros(n, bool)
        elif k > 0:
            y_start, flag = _transfer(segs[k], segs[k - 1], sub_y[:, i0], SUB, -drops[k])
            # critical on the upstream side too where the section and bed are the same, or where it has no
            # subcritical root
            c_start = flag | (sub_c[:, i0] & segs[k].same_section(segs[k - 1]) & (drops[k] == 0)
                                 & (segments[k].inflow == 0))

    # ---------------- supercritical pass and governance ------------------------------------
    depth = sub_y.copy()
    regime = np.where(sub_c, REGIME_CRITICAL, REGIME_SUB)
    jumps = []  # (scenario, x, y1, y2, segment, after_index, at_junction)
    first = segs[0]
    sup_state = np.full(n, np.nan)
    sup_from_control = np.zeros(n, bool)
    up = controls.get("upstream", reach.upstream)
    if up is not None:
        up.check_end("upstream")
        up_state = EndState("upstream", first, float(bed[0]), classes[:, 0])
        y_up = np.asarray(up.depth_at(up_state), dtype=float)
        _check_inside(first, y_up, up, "upstream")
        ok = (y_up < first.yc * (1 - 1e-9)) | (np.isclose(y_up, first.yc, rtol=1e-9) & can_sup_start[0])
        sup_state = np.where(ok, y_up, np.nan)
        sup_from_control = ok.copy()
        for s in np.flatnonzero(~ok):
            notes[s].append((0.0, "unused control",
                             f"upstream control {_one(up, s).describe(units)} does not govern: the flow entering the "
                             "reach is subcritical and is governed from downstream"))
    entry = np.isnan(sup_state) & sub_c[:, 0] & can_sup_start[0]
    sup_state = np.where(entry, first.yc, sup_state)
    for s in np.flatnonzero(entry):
        notes[s].append((0.0, "critical control", "critical depth at the head of a steep segment"))
    carried = np.zeros(n, bool)  # supercritical flow carried over from the previous segment
    for k in range(nseg):
        i0, m = bounds[k]
        seg = segs[k]
        act = np.flatnonzero(np.isfinite(sup_state))
        if act.size:
            xs = x[i0:i0 + m]
            from_critical = np.abs(sup_state[act] - seg.yc[act]) <= 1e-12 * seg.yc[act]
            seg_act = _subset(seg, act)
            msub = seg_act.specific_force(sub_y[act, i0:i0 + m])
            # (the supercritical march may stop where the subcritical profile overtakes it: NaN beyond)
            ysup, csup = _march_with_fallback(marcher, seg_act, xs, sup_state[act], from_critical, SUPER,
                                              can_sup_start[k][act], rival=msub)
            msup = seg_act.specific_force(ysup)
            first_loss = np.empty(act.size, np.int64)
            if act.size == n:  # write in place
                core("stations", msup.size).govern(msup, msub, ysup, csup, depth[:, i0:i0 + m],
                                                   regime[:, i0:i0 + m], _M_TOL, first_loss)
            else:
                blk_y, blk_r = depth[act, i0:i0 + m], regime[act, i0:i0 + m]
                core("stations", msup.size).govern(msup, msub, ysup, csup, blk_y, blk_r, _M_TOL, first_loss)
                depth[act, i0:i0 + m], regime[act, i0:i0 + m] = blk_y, blk_r
            for r in np.flatnonzero(first_loss < m):
                s, i = int(act[r]), int(first_loss[r])
                if i == 0:
                    if k == 0 and not sup_from_control[s]:
                        continue  # critical entry immediately overtaken: plain subcritical flow
                    if k == 0:
                        sup_from_control[s] = False
                        notes[s].append((0.0, "drowned jump",
                                         "the tailwater drowns the jump against the upstream control: "
                                         "submerged outflow at x = 0"))
                        continue
                    if k in gate_jet:
                        continue  # a submerged gate: noted with the gate below
                    if carried[s] and regime[s, i0 - 1] != REGIME_CRITICAL:
                        jumps.append((s, x[i0], depth[s, i0 - 1], sub_y[s, i0], k, i0 - 1, True))
                    # (from critical depth at the junction straight into subcritical flow: an expansion
                    # whose energy difference is lost, not a jump)
                    continue
                jumps.append((s, np.nan, ysup[r, i - 1], sub_y[s, i0 + i], k, i0 + i - 1, False))
            # refine the jumps inside this segment, all scenarios at once
            _refine(jumps, marcher, seg, x, sub_y, k, notes, pressure_runs)
            gov_sup_end = first_loss == m
            y_end = ysup[:, -1]
        else:
            gov_sup_end = np.zeros(0, bool)
            y_end = np.zeros(0)
        # state at the head of the next segment
        nxt = np.full(n, np.nan)
        carried = np.zeros(n, bool)
        if k + 1 < nseg:
            if act.size and np.any(gov_sup_end):
                idx = act[gov_sup_end]
                yt, flag = _transfer(_subset(seg, idx), _subset(segs[k + 1], idx), y_end[gov_sup_end], SUPER,
                                     drops[k + 1])
                nxt[idx] = yt
                carried[idx] = True
            j0 = bounds[k + 1][0]
            i_end = i0 + m - 1
            nseg1 = segs[k + 1]
            sub_end = np.isnan(nxt) & (regime[:, i_end] != REGIME_SUPER)
            # critical depth at the end of segment k: a choke (the next section needs more energy)
            # or a brink; the flow leaves it supercritical into segment k + 1
            crit_up = sub_end & sub_c[:, i_end]
            # critical depth at the head of a steep segment k + 1
            crit_dn = sub_end & ~crit_up & sub_c[:, j0] & can_sup_start[k + 1]
            if np.any(crit_up):
                idx = np.flatnonzero(crit_up)
                yt, _ = _transfer(_subset(seg, idx), _subset(nseg1, idx), seg.yc[idx], SUPER, drops[k + 1])
                nxt[idx] = yt
                carried[idx] = yt < nseg1.yc[idx] * (1 - 1e-9)
            nxt = np.where(crit_dn, nseg1.yc, nxt)
            if k + 1 in gate_jet:  # the gate releases its jet whatever arrives from upstream
                nxt = gate_jet[k + 1].copy()
                carried = np.zeros(n, bool)
                crit_up[:] = crit_dn[:] = False
            changed = not seg.same_section(nseg1)
            for s in np.flatnonzero(crit_up | crit_dn):
                if crit_up[s] and segments[k + 1].inflow:
                    text = (f"critical depth at the end of segment {k}: below the inflow at the head of segment "
                            f"{k + 1} the discharge needs more energy than subcritical flow above it carries")
                elif crit_up[s] and changed:
                    text = (f"critical depth at the end of segment {k}, where the flow passes into the larger "
                            f"section of segment {k + 1}")
                else:
                    text = "critical depth where the bed steepens (the flow passes from subcritical to supercritical)"
                notes[s].append((float(x[j0]), "critical control", text))
        elif act.size:
            for r in np.flatnonzero(gov_sup_end):
                s = act[r]
                if ctrl is not None and governs_down[s]:
                    notes[s].append((float(x[-1]), "jump swept out",
                                     f"the downstream control ({_one(ctrl, s).describe(units)}) is too low to hold a "
                                     "jump: the supercritical flow leaves the reach and the jump forms downstream of "
                                     "it"))
        sup_state = nxt

    _inflow_notes(notes, segments, segs, bounds, x, regime, units)
    _choke_notes(notes, segs, classes, bounds, x, depth, regime, units)
    near_critical_notes(notes, segs, bounds, x, depth, units)
    for k, jet in gate_jet.items():
        i0 = bounds[k][0]
        gate = controls.get(k, segments[k].gate)
        for s in range(n):
            how = ("submerged by the water below it" if gate_submerged[k][s]
                   else f"free flow, jet {jet[s]:.3f} {units.length} deep")
            notes[s].append((float(x[i0]), "gate", f"{_one(gate, s).describe(units)} at the head of segment {k}: "
                             f"{how}; the water upstream stands {depth[s, i0 - 1]:.3f} {units.length} deep"))
    if ctrl is not None:
        for s in range(n):
            if governs_down[s] and regime[s, -1] != REGIME_SUPER:
                notes[s].append((float(x[-1]), "downstream control", f"{_one(ctrl, s).describe(units)} governs"))
            elif not governs_down[s]:
                notes[s].append((float(x[-1]), "unused control",
                                 f"downstream control {_one(ctrl, s).describe(units)} does not govern: the flow "
                                 "leaving the reach is supercritical"))
        _add_details(notes, ctrl, end_state, depth[:, -1], float(x[-1]))
    elif reach.downstream is None:
        for s in range(n):
            if classes[s, -1] != "steep" and regime[s, -1] != REGIME_SUPER:
                kind = "normal depth" if classes[s, -1] == "mild" else "critical depth"
                notes[s].append((float(x[-1]), "downstream control",
                                 f"no downstream control given: {kind} assumed at the downstream end"))
    if up is not None:
        for s in np.flatnonzero(sup_from_control):
            notes[s].append((0.0, "upstream control", f"{_one(up, s).describe(units)} governs"))
        _add_details(notes, up, up_state, depth[:, 0], 0.0)

    if ctrl is not None:
        top = last.section.max_depth
        for s in np.flatnonzero(governs_down & (y_down > top)):
            notes[s].append((float(x[-1]), "submerged outlet",
                             f"the downstream water level stands {y_down[s] - top:.3f} {units.length} above the crown "
                             "of the outlet: the grade line in the conduit at its outlet is the tailwater level "
                             "(the velocity head is lost at the exit)"))
    sol = BatchSolution(x=x, segment=seg_ix, bed=bed, depth=depth, regime=regime, segs=segs,
                        slope_class=classes, notes=notes, pressure_runs=pressure_runs)
    if jumps:
        arr = list(zip(*jumps, strict=True))
        sol.jump_scenario = np.array(arr[0], int)
        sol.jump_x = np.array(arr[1], float)
        sol.jump_y1 = np.array(arr[2], float)
        sol.jump_y2 = np.array(arr[3], float)
        sol.jump_segment = np.array(arr[4], int)
        sol.jump_after = np.array(arr[5], int)
        sol.jump_at_junction = np.array(arr[6], bool)
        order = np.lexsort((sol.jump_x, sol.jump_scenario))
        for name in ("jump_scenario", "jump_x", "jump_y1", "jump_y2", "jump_segment", "jump_after",
                     "jump_at_junction"):
            setattr(sol, name, getattr(sol, name)[order])
        note_sloping_jumps(sol, reach)
    return sol


def _inflow_notes(notes, segments, segs, bounds, x, regime, units):
    """One note per scenario at every inflow: the discharges either side and the balance used across it."""
    for k in range(1, len(segments)):
        if not segments[k].inflow:
            continue
        i0 = bounds[k][0]
        for s in range(len(notes)):
            sup = regime[s, i0 - 1] == REGIME_SUPER and regime[s, i0] == REGIME_SUPER
            how = ("supercritical flow: specific force (momentum) conserved across the junction" if sup else
                   "specific energy conserved across the junction (no loss)")
            notes[s].append((float(x[i0]), "inflow",
                             f"{segments[k].inflow:g} {units.discharge} enters at the head of segment {k}: the "
                             f"discharge goes from {segs[k - 1].discharge[s]:g} to {segs[k].discharge[s]:g} "
                             f"{units.discharge}; {how}"))


def _add_details(notes, ctrl, state, depth, x):
    """Append the per-scenario lines a control adds to its note (:meth:`Control.notes`)."""
    for s, lines in enumerate(ctrl.notes(state, depth)):
        notes[s].extend((x, "control detail", text) for text in lines)


def _choke_notes(notes, segs, classes, bounds, x, depth, regime, units):
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
        for s in np.flatnonzero(raised):
            notes[s].append((float(x[i_end]), "choke",
                             f"the section of segment {k + 1} passes the flow only through critical depth, which "
                             f"holds the water upstream at {depth[s, i_end]:.3f} {units.length}, above segment {k}'s "
                             f"normal depth {yn[s]:.3f} {units.length}"))


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
        return marcher.step_to(seg, s, top, t, xq, SUB)

    def sup_depth(xq):
        return marcher.step_to(seg, s, float(y_sup0), a, xq, SUPER)

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
    if np.any(bad):
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
            notes[s].append((float(xj[r]), "unbalanced jump",
                             f"the specific forces on the two sides of the jump at x = {xj[r]:.2f} differ by "
                             f"{off[r]:.2%}: a profile reaches critical depth next to it, so its position is "
                             "uncertain to about a station spacing; check it with more steps (n_steps)"))
