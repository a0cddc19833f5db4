"""The contract every profile marcher follows.

A marcher traces one branch of the gradually varied flow equation (the
subcritical branch upstream from a downstream control, or the supercritical
branch downstream from an upstream control) along one prismatic segment,
for a batch of scenarios at once. The base class keeps the books; a
subclass implements :meth:`Marcher.march` (fixed stations) and
:meth:`Marcher.step_to` (one partial step, used to refine jump locations);
it may also override :meth:`Marcher.march_until` to stop a supercritical
profile where the solver's competing subcritical profile overtakes it.
Subclasses register under a name in :data:`MARCHERS`, which is what
``method="standard_step"`` and ``method="ivp"`` look up; a user may also pass
a subclass itself.
"""

from __future__ import annotations

import functools
import inspect
from dataclasses import dataclass, field, replace

import numpy as np

from .._core.codes import NOT_CONVERGED, SUB, SUPER, SURVEYED, pass_cost
from .._core.records import Along, ChannelBatch, Fluid, channel_batch, fluid
from .._engine import core
from .._roots import bracketed_root
from .._validate import positive_array
from ..errors import ConvergenceError, InvalidInputError, NoSolutionError
from ..friction import section_roughness
from ..uniform import CRITICAL_SLOPE_TOLERANCE
from ..units import Units, resolve_units

__all__ = ["SegmentBatch", "MarchResult", "Marcher", "MARCHERS", "register_marcher", "get_marcher",
           "SUB", "SUPER"]


#: stop codes of a march, per scenario
STOP_CODES = {0: "segment end", 1: "critical depth", 2: "conduit full", 3: "no convergence",
              4: "overtaken by the competing profile"}


@dataclass(frozen=True, eq=False)
class Change:
    """How a segment changes along it (see :mod:`gvflow._core.changing`).

    ``along`` the :class:`~gvflow._core.records.Along` record of its downstream end (parameters in the
    layout of the upstream end's, zone roughness per scenario, the discharge added by lateral inflow),
    ``contraction`` and ``expansion`` the transition loss coefficients, ``x0`` and ``length`` where the
    segment starts along the reach and how long it is, ``tail`` the downstream end as a prismatic
    :class:`SegmentBatch` (with the discharge there).
    """

    along: Along
    contraction: float
    expansion: float
    x0: float
    length: float
    tail: SegmentBatch

    def take(self, idx) -> Change:
        a = self.along
        return Change(Along(a.par, np.ascontiguousarray(a.rough[idx]), a.added), self.contraction, self.expansion,
                      self.x0, self.length, self.tail.take(idx))


@dataclass(frozen=True, eq=False)
class SegmentBatch:
    """One segment and a batch of n scenarios, as plain floats, arrays and core records.

    Built once per solve so that marching loops never touch pydantic models.

    Attributes
    ----------
    section : Section
        Cross-section.
    slope : float
        Bed slope S0 [-].
    law : int
        Friction law code (0 Manning, 1 Chezy, 2 Darcy-Weisbach).
    coef : ndarray, shape (n,) or (n, zones)
        Roughness coefficient per scenario (n, C or ks); a surveyed section has one per zone.
    discharge : ndarray, shape (n,)
        Discharge per scenario [length³/s].
    units : Units
    alpha : float
        Energy coefficient [-].
    yc, yn : ndarray, shape (n,)
        Critical and normal depth per scenario [length]; yn is NaN where no
        uniform flow exists (horizontal or adverse bed, surcharged conduit).
    """

    section: object
    slope: float
    law: int
    coef: np.ndarray
    discharge: np.ndarray
    units: Units
    alpha: float
    yc: np.ndarray
    yn: np.ndarray
    cb: ChannelBatch = field(repr=False)
    fl: Fluid = field(repr=False)
    unconverged: np.ndarray | None = field(default=None, repr=False)
    change: Change | None = field(default=None, repr=False)
    n_critical: np.ndarray | None = field(default=None, repr=False)  # critical depths of each scenario's section
    # the far limit of the branch a march keeps to (a maximum of specific energy, see branch_limits), where
    # the solver sets one for a section with several critical depths; None: the branch is bounded by yc only
    far: np.ndarray | None = field(default=None, repr=False)

    @classmethod
    def build(cls, section, slope, roughness, discharge, units="SI", alpha: float = 1.0, coef=None):
        """Build a batch; ``coef`` (array) overrides the roughness coefficient per scenario."""
        q = np.atleast_1d(positive_array(discharge, "discharge")).astype(float).ravel()
        if coef is not None:
            coef = np.broadcast_to(positive_array(coef, "roughness"), q.shape).astype(float)
        return cls._checked(section, slope, roughness, q, resolve_units(units), alpha, coef)[0]

    @classmethod
    def _checked(cls, section, slope, roughness, q, u, alpha, coef, critical_tolerance=CRITICAL_SLOPE_TOLERANCE,
                 strict=True, params=None, memo=None):
        """:meth:`build` from checked inputs: ``q`` a 1-D float array it may keep, ``u`` a Units, ``coef`` None
        or a float array with one row per scenario it may keep; ``params`` replaces the section's core
        parameters (the same section in another layout, :func:`gvflow.sections.matched_parameters`); ``memo`` (a
        dict) keeps the critical depths of a section, roughness and discharges met before in one solve. Returns
        (batch, friction slope at critical depth, slope class code: an index into SLOPE_CLASSES, critical within
        ``critical_tolerance``) per scenario."""
        rough = section_roughness(section, roughness)
        if rough is None:
            law, values = section.core_roughness()
        else:
            law, values = rough.kernel_spec()
        if coef is None:
            values = np.asarray(values, dtype=float)
            c = np.empty(q.shape + values.shape)
            c[...] = values
        else:
            c = coef
        kind, par = section.core_params() if params is None else params
        cb = channel_batch(kind, par, law, c)
        fl = fluid(u)
        yc, yn, sf_c = np.empty((3,) + q.shape)  # (rows of one block each: one allocation, not seven)
        code, status, status_n, count = np.empty((4,) + q.shape, np.int64)
        # (the section's own parameters and its roughness to 13 decimals: one section met at the end of one
        # changing segment and the head of the next, whose roughness rows may differ by round-off; all of its
        # constants where the bed slope is the same too, to 13 significant digits: the slopes of two segments
        # laid at one slope may differ by round-off, their elevations' differences divided by their lengths)
        key = None if memo is None else (section.core_params()[1].tobytes(), law, np.round(c, 13).tobytes(),
                                         q.tobytes(), float(alpha))
        whole = None if key is None else key + (f"{float(slope):.13g}", float(critical_tolerance))
        known = key is not None and key in memo
        if whole is not None and whole in memo:
            for out, kept in zip((yc, yn, sf_c, code, status, status_n, count), memo[whole], strict=True):
                out[:] = kept
        else:
            if known:
                yc[:], status[:], count[:] = memo[key]
            core("march", 100 * q.size * pass_cost(cb.kind, cb.par)).segment_constants(
                cb, fl, q, float(slope), float(alpha), float(critical_tolerance), yc, yn, sf_c, code, status,
                status_n, count, known)
            if key is not None:
                memo[key] = (yc.copy(), status.copy(), count.copy())
                memo[whole] = tuple(a.copy() for a in (yc, yn, sf_c, code, status, status_n, count))
        failed_c = status == NOT_CONVERGED
        failed = failed_c | (status_n == NOT_CONVERGED)
        yc[failed_c] = np.nan
        batch = cls(section, float(slope), int(law), c, q, u, float(alpha), yc, yn, cb, fl, failed,
                    n_critical=count)
        if strict:
            batch.require_converged()
        return batch, sf_c, code

    @classmethod
    def _changing(cls, segment, q, u, alpha, coef, critical_tolerance, x0: float, length: float, strict=True,
                  memo=None):
        """A batch for a segment whose section changes from ``segment.section`` (its head) to
        ``segment.section_downstream`` (its downstream end, :attr:`tail`); returns what :meth:`_checked`
        returns, the friction slope at critical depth and the slope class taken at the downstream end."""
        from ..sections import matched_parameters

        down = segment.section if segment.section_downstream is None else segment.section_downstream
        kind, par_up, par_dn = matched_parameters(segment.section, down)
        added = float(segment.lateral_inflow * length)
        head = cls._checked(segment.section, segment.slope, segment.roughness, q, u, alpha, coef, critical_tolerance,
                            strict, params=(kind, par_up), memo=memo)[0]
        coef_dn = coef
        if coef is not None and segment.roughness is None:
            # roughness given per scenario (a sweep): it is the head's; the downstream end keeps its own zones'
            # ratios to the head's (a scale factor scales both ends alike)
            ratio = np.asarray(down.core_roughness()[1], float) / np.asarray(segment.section.core_roughness()[1], float)
            coef_dn = coef * ratio
        tail, sf_c, code = cls._checked(down, segment.slope, segment.roughness, q + added, u, alpha,
                                        coef_dn, critical_tolerance, strict, params=(kind, par_dn), memo=memo)
        if head.cb.rough.shape != tail.cb.rough.shape or head.law != tail.law:
            raise InvalidInputError("section_downstream: both ends of a changing segment need the same resistance "
                                    "law and the same number of zones")
        change = Change(Along(tail.cb.par, tail.cb.rough, added), float(segment.contraction),
                        float(segment.expansion), float(x0), float(length), tail)
        unconverged = None if head.unconverged is None else head.unconverged | tail.unconverged
        return replace(head, change=change, unconverged=unconverged), sf_c, code

    def require_converged(self) -> None:
        """Raise ConvergenceError where a scenario's critical or normal depth did not converge (a solver that
        explains extreme input first builds with ``strict=False`` and calls this after)."""
        if self.unconverged is not None and self.unconverged.any():
            i = int(np.flatnonzero(self.unconverged)[0])
            raise ConvergenceError(f"critical or normal depth did not converge for discharge {self.discharge[i]:g} "
                                   f"in {self.section!r}; check that the discharge and the section are in the same "
                                   "units and of plausible size", iterations=200)

    def same_section(self, other: SegmentBatch) -> bool:
        """Whether ``other`` has the same cross-section: kind and parameters, or the same section in another
        parameter layout (the end of one changing segment and the head of the next); roughness aside, except
        that a surveyed section's zone roughness, which sets its alpha, must match too (to round-off)."""
        if self.cb.kind != other.cb.kind:
            return False
        # (one section matched to two different neighbours is packed in two layouts, of one size or two; its
        # own packing is one, and leaves the roughness out)
        same = self.section is other.section or np.array_equal(self.cb.par, other.cb.par) or \
            np.array_equal(self.section.core_params()[1], other.section.core_params()[1])
        if same and self.cb.kind == SURVEYED:  # (a sweep's factor reaches the two ends by two roundings)
            a, b = self.cb.rough, other.cb.rough
            return a.shape == b.shape and bool((np.abs(a - b) <= 1e-14 * np.abs(b)).all())
        return same

    @property
    def n(self) -> int:
        """Number of scenarios."""
        return self.discharge.shape[0]

    @property
    def cost(self) -> float:
        """Cost of one pass of the section's hydraulics, the unit of a core call's declared work
        (:func:`~gvflow._core.codes.pass_cost`; both ends of a changing segment share one layout)."""
        return pass_cost(self.cb.kind, self.cb.par)

    def take(self, idx) -> SegmentBatch:
        """The sub-batch of scenarios ``idx`` (an index array or slice)."""
        cb = self.cb
        return SegmentBatch(self.section, self.slope, self.law, self.coef[idx], self.discharge[idx],
                            self.units, self.alpha, self.yc[idx], self.yn[idx],
                            ChannelBatch(cb.kind, cb.par, cb.law, np.ascontiguousarray(cb.rough[idx])), self.fl,
                            None if self.unconverged is None else self.unconverged[idx],
                            None if self.change is None else self.change.take(idx),
                            None if self.n_critical is None else self.n_critical[idx],
                            None if self.far is None else self.far[idx])

    def several_critical(self) -> np.ndarray:
        """Scenarios whose section has several critical depths at their discharge (a compound section); for a
        section changing along the segment, at either end."""
        out = np.zeros(self.n, bool) if self.n_critical is None else self.n_critical > 1
        return out if self.change is None else out | self.change.tail.several_critical()

    def branch_limits(self, y, branch) -> tuple[np.ndarray, np.ndarray]:
        """(near, far) per scenario: the critical depth and the other limit of the ``branch`` (SUB or SUPER)
        that depth ``y`` (n,) stands on, or stands next to (:func:`gvflow._core.flow.branch_limits`). A
        scenario with one critical depth gives (yc, infinity) for SUB and (yc, 0) for SUPER."""
        near = self.yc.astype(float)
        far = np.full(self.n, np.inf if branch == SUB else 0.0)
        rows = np.flatnonzero(self.several_critical())
        if rows.size:
            nr, fr = np.empty(rows.size), np.empty(rows.size)
            y = np.broadcast_to(np.asarray(y, dtype=float), (self.n,))
            core("march", 200 * rows.size * self.cost).branch_limits_batch(
                self.cb, self.fl, np.ascontiguousarray(self.discharge), self.alpha,
                np.ascontiguousarray(y[rows]), branch, rows.astype(np.int64), nr, fr)
            near[rows], far[rows] = nr, fr
        return near, far

    def subcritical_at(self, y) -> np.ndarray:
        """Whether depth ``y`` (n,) is subcritical or critical: at or above critical depth, or for a section
        with several critical depths, where the compound Froude number is at most 1 (on a subcritical
        branch)."""
        y = np.asarray(y, dtype=float)
        out = y >= self.yc * (1 - 1e-12)
        several = self.several_critical()
        if several.any():
            rows = np.flatnonzero(several)
            near, far = self.branch_limits(y, SUB)
            yr = np.broadcast_to(y, (self.n,))[rows]
            out[rows] = (yr >= near[rows] * (1 - 1e-12)) & (yr <= far[rows])
        return out

    # -- a section that changes along the segment (``change``): values at fractions t of its length ----------
    @property
    def tail(self) -> SegmentBatch:
        """The segment's downstream end as a prismatic batch (the segment itself when its section does not
        change); the batch itself stands for its upstream end."""
        return self if self.change is None else self.change.tail

    def fractions(self, x) -> np.ndarray:
        """Fraction of a changing segment's length at the distances ``x`` along the reach (0 at its head)."""
        c = self.change
        return np.ascontiguousarray(np.clip((np.asarray(x, dtype=float) - c.x0) / c.length, 0.0, 1.0))

    def discharge_at(self, t) -> np.ndarray:
        """Discharge of each scenario at fractions ``t`` (m,) of the segment: shape (n, m) (lateral inflow adds
        along a changing segment)."""
        t = np.asarray(t, dtype=float)
        added = 0.0 if self.change is None else self.change.along.added
        return self.discharge[:, None] + added * t[None, :]

    def end_critical_depth(self, x) -> np.ndarray:
        """Critical depth of each scenario at distance ``x`` along the reach where it is one of the segment's
        ends (known from the segment's constants), else NaN."""
        t = float(self.fractions([x])[0]) if self.change is not None else 0.0
        if t == 0.0:
            return np.ascontiguousarray(self.yc, dtype=float)
        if t == 1.0:
            return np.ascontiguousarray(self.change.tail.yc, dtype=float)
        return np.full(self.n, np.nan)

    def start_critical_depth(self, x, y0, branch) -> np.ndarray:
        """:meth:`end_critical_depth` for a march that starts at depth ``y0`` on ``branch`` at that end: where
        the end section has several critical depths, the critical depth of the branch ``y0`` stands on
        (:meth:`branch_limits`), which the march between unlike sections then carries along."""
        yc = self.end_critical_depth(x)
        t = float(self.fractions([x])[0]) if self.change is not None else 0.0
        end = self.tail if t == 1.0 else replace(self, change=None) if t == 0.0 else None
        if end is None or not end.several_critical().any():
            return yc
        near, _ = end.branch_limits(np.broadcast_to(np.asarray(y0, dtype=float), (self.n,)), branch)
        return np.ascontiguousarray(np.where(end.several_critical(), near, yc))

    def critical_depths_along(self, t, hint) -> np.ndarray:
        """Critical depth of each scenario at fractions ``t`` (m,) of a changing segment, shape (n, m), each
        the one nearest its neighbour's from ``hint`` (n,) at t[0] on: one branch's where a compound section
        has several (:func:`gvflow._core.changing.critical_along`)."""
        t = np.ascontiguousarray(t, dtype=float)
        out = np.empty((self.n, t.size))
        core("changing", 100 * out.size * self.cost).critical_along(
            self.cb, self.change.along, self.fl, self.discharge, t, self.alpha,
            np.ascontiguousarray(hint, dtype=float), out)
        return out

    def critical_depths_at(self, t) -> np.ndarray:
        """Critical depth of each scenario at fractions ``t`` (m,) of a changing segment: shape (n, m)."""
        t = np.ascontiguousarray(t, dtype=float)
        if self.change is None:
            return np.repeat(self.yc[:, None], t.size, axis=1)
        out = np.empty((self.n, t.size))
        c = self.change
        core("changing", 100 * out.size * self.cost).critical_depths_at(
            self.cb, c.along, self.fl, self.discharge, t, self.alpha, out)
        return out

    def _at(self, depth, t, energy):
        c = self.change
        y2 = np.ascontiguousarray(np.asarray(depth, dtype=float).reshape(self.n, -1))
        out = np.empty(y2.shape)
        core("changing", y2.size * self.cost).force_or_energy_at(self.cb, c.along, self.fl, self.discharge, y2,
                                                     np.ascontiguousarray(t, dtype=float), self.alpha, energy, out)
        return out

    def properties(self, depth, t=None):
        """(A, P, T, A*ybar, Sf) of each scenario at ``depth`` (shape (n,) or (n, m)), NaN-safe; for a changing
        segment ``t`` (m,) gives the fraction of its length at each column (default: its upstream end)."""
        d = np.asarray(depth, dtype=float)
        if self.change is not None and t is not None:
            c = self.change
            rows = np.ascontiguousarray(d.reshape(self.n, -1))
            m = rows.shape[1]
            out = np.empty((5, rows.size))
            core("changing", rows.size * self.cost).properties_at(
                self.cb, c.along, self.fl, np.repeat(np.arange(self.n), m), np.repeat(self.discharge, m),
                rows.ravel(), np.tile(np.ascontiguousarray(t, dtype=float), self.n), out)
            return out.reshape((5,) + d.shape)
        shape = d.shape if d.ndim else (self.n,)
        rows = np.ascontiguousarray((d if d.ndim else np.full(shape, float(d))).reshape(self.n, -1))
        m = rows.shape[1]
        q = np.repeat(self.discharge, m) if m > 1 else self.discharge
        which = np.repeat(np.arange(self.n), m)
        out = np.empty((5, rows.size))
        core("march", rows.size * self.cost).properties(self.cb, self.fl, which, q, rows.ravel(), out)
        return out.reshape((5,) + shape)

    def _force_or_energy(self, depth, energy: bool):
        d = np.asarray(depth, dtype=float)
        y2 = d.reshape(self.n, -1) if d.ndim else np.full((self.n, 1), float(d))
        out = np.empty(y2.shape)
        core("march", y2.size * self.cost).force_or_energy(self.cb, self.fl, self.discharge, np.ascontiguousarray(y2),
                                               self.alpha, energy, out)
        return out.reshape(d.shape) if d.ndim else out[:, 0]

    def specific_force(self, depth, t=None):
        """Specific force M = Q²/(gA) + A ybar [length³] of each scenario at ``depth`` ((n,) or (n, m)); ``t``
        as in :meth:`properties`."""
        if self.change is not None and t is not None:
            return self._at(depth, t, False).reshape(np.shape(depth))
        return self._force_or_energy(depth, False)

    def specific_energy(self, depth, t=None):
        """Specific energy E = y + alpha Q²/(2 g A²) [length] of each scenario at ``depth`` ((n,) or (n, m));
        ``t`` as in :meth:`properties`."""
        if self.change is not None and t is not None:
            return self._at(depth, t, True).reshape(np.shape(depth))
        return self._force_or_energy(depth, True)

    def friction_slope(self, depth):
        """Friction slope Sf [-] of each scenario at ``depth``."""
        return self.properties(depth)[4]


def subset(seg: SegmentBatch, idx: np.ndarray) -> SegmentBatch:
    """``seg.take(idx)`` for sorted distinct scenario indices ``idx``; ``seg`` itself when they are all of them."""
    return seg if idx.size == seg.n else seg.take(idx)


def depth_with_force(seg: SegmentBatch, force):
    """Supercritical depth whose specific force in ``seg`` is ``force``; critical depth (flagged) where the
    force is below the section's least specific force (at critical depth)."""
    return _depth_matching(seg, force, False, SUPER, "supercritical depth below an inflow")


def depth_with_energy(seg: SegmentBatch, e, branch):
    """Depth on ``branch`` whose specific energy in ``seg`` is ``e``; critical depth (flagged) where none is."""
    return _depth_matching(seg, e, True, branch, "depth across a junction")


def pressure_head_with_energy(seg: SegmentBatch, e):
    """Subcritical depth in a closed ``seg`` with specific energy ``e``, or its pressure head where ``e``
    exceeds the energy of the conduit just full (surcharged: head = D + e - E(D)); (depth, critical flag)."""
    top = seg.section.max_depth
    e_full = seg.specific_energy(np.full(seg.n, top))
    over = e > e_full
    out, flag = np.empty(e.shape), np.zeros(e.shape, bool)
    out[over] = top + (e - e_full)[over]
    if not over.all():
        idx = np.flatnonzero(~over)
        out[idx], flag[idx] = depth_with_energy(subset(seg, idx), e[idx], SUB)
    return out, flag


def _depth_matching(seg: SegmentBatch, value, energy: bool, branch, what):
    """Depth on ``branch`` where the specific energy (``energy``) or force, least at critical depth, equals
    ``value``; critical depth, flagged, where ``value`` is at or below that least value (the subcritical
    branch is asked of the energy only)."""
    yc = seg.yc
    ok = value > (seg.specific_energy(yc) if energy else seg.specific_force(yc))
    out = yc.copy()
    if np.any(ok):
        idx = np.flatnonzero(ok)
        sub = subset(seg, idx)
        target = value[idx]
        at = sub.specific_energy if energy else sub.specific_force

        def fun(z):
            return at(z) - target

        if branch == SUB:
            lo = sub.yc
            hi = np.maximum(target, sub.yc * 1.001)
            if seg.section.closed:
                top = seg.section.max_depth
                hi = np.minimum(hi, top)
                if np.any(fun(hi) < 0):
                    raise NoSolutionError(
                        f"the water entering {seg.section!r} from the segment below would stand above its crown: "
                        "the conduit flows full there; pressure flow is outside gvflow's free-surface model")
            out[idx] = bracketed_root(fun, lo, hi, rtol=1e-13, what=what)
        else:
            # supercritical: fun is positive in shallow water and negative at critical depth
            lo = sub.yc * 1e-3
            for _ in range(60):
                need = fun(lo) < 0
                if not np.any(need):
                    break
                lo = np.where(need, lo * 0.5, lo)
            out[idx] = bracketed_root(fun, lo, sub.yc, rtol=1e-13, what=what)
    return out, ~ok


@dataclass(frozen=True, eq=False)
class MarchResult:
    """Depths of a batch march over fixed stations.

    Attributes
    ----------
    depth : ndarray, shape (n, m)
        Depth at each station in marching order; NaN after a scenario stopped.
    n_valid : ndarray of int, shape (n,)
        Stations solved on the branch (m when the march reached the segment end).
    x_critical : ndarray, shape (n,)
        Where a scenario reached critical depth (NaN if it did not).
    code : ndarray of int, shape (n,)
        Why it stopped: see :data:`STOP_CODES`.
    """

    depth: np.ndarray
    n_valid: np.ndarray
    x_critical: np.ndarray
    code: np.ndarray


class Marcher:
    """Base class of profile marchers: subclasses implement ``march`` and ``step_to``.

    Parameters
    ----------
    **options
        Method options, validated by the subclass.
    """

    name = "base"

    def march(self, seg: SegmentBatch, x: np.ndarray, y0: np.ndarray, branch: int) -> MarchResult:
        """Trace every scenario of ``seg`` from depth ``y0`` over stations ``x`` (marching order)."""
        raise NotImplementedError  # pragma: no cover

    def march_until(self, seg: SegmentBatch, x: np.ndarray, y0: np.ndarray, branch: int, force: np.ndarray,
                    rtol: float) -> MarchResult:
        """:meth:`march`, allowed to stop a scenario (code 4) at the first station j where its specific force
        falls below ``force[s, j] * (1 - rtol)``: there the profile is overtaken by a competing one (a jump
        stands before it) and the stations beyond do not matter. That station is the last solved.

        The base implementation marches the whole segment, which is always correct; compiled marchers stop.
        """
        return self.march(seg, x, y0, branch)

    def march_changing(self, seg: SegmentBatch, x: np.ndarray, y0: np.ndarray, branch: int, force=None,
                       rtol: float = 0.0) -> MarchResult:
        """:meth:`march_until` (or :meth:`march` without ``force``) through a segment whose section changes
        along it (``seg.change``; the stations ``x`` are distances along the reach). A marcher that cannot
        says so with an InvalidInputError."""
        raise InvalidInputError(f"method {getattr(self, 'name', type(self).__name__)!r} cannot march a segment whose "
                                "section changes along it (section_downstream, contraction or expansion); use "
                                "method='standard_step' or 'ivp'")

    def step_to(self, seg: SegmentBatch, index: int, y1: float, x1: float, x2: float, branch: int) -> float:
        """Depth at x2 of the profile through (x1, y1) for scenario ``index`` (NaN if none)."""
        raise NotImplementedError  # pragma: no cover

    def step_many(self, seg: SegmentBatch, index, y1, x1, x2, branch: int) -> np.ndarray:
        """:meth:`step_to` for arrays of scenario indices and start/end points (NaN where none).

        The base implementation loops over :meth:`step_to`; compiled marchers override it.
        """
        index, y1, x1, x2 = np.broadcast_arrays(np.asarray(index), np.asarray(y1, float),
                                                np.asarray(x1, float), np.asarray(x2, float))
        return np.array([self.step_to(seg, int(i), a, b, c, branch)
                         for i, a, b, c in zip(index.ravel(), y1.ravel(), x1.ravel(), x2.ravel(), strict=True)]
                        ).reshape(index.shape)

    def locate_jumps(self, seg: SegmentBatch, y_sup, x_lo, y_sub, x_hi):
        """Where the specific forces of the two branches balance between two stations, per scenario.

        Scenario s of ``seg`` has supercritical depth ``y_sup[s]`` at ``x_lo[s]``
        and subcritical depth ``y_sub[s]`` at ``x_hi[s]``, with the
        supercritical flow carrying the larger specific force at ``x_lo`` and
        the smaller at ``x_hi``. Returns (x, upstream depth, downstream depth).
        The base implementation finds the root with vectorised regula falsi
        over :meth:`step_many`; compiled marchers override it.
        """
        local = np.arange(seg.n)

        def depths(xq):
            ys = self.step_many(seg, local, y_sup, x_lo, xq, -1)
            yb = self.step_many(seg, local, y_sub, x_hi, xq, 1)
            return np.where(np.isfinite(ys), ys, seg.yc), np.where(np.isfinite(yb), yb, seg.yc)

        def fun(xq):
            ys, yb = depths(xq)
            return seg.specific_force(ys) - seg.specific_force(yb)

        xj = bracketed_root(fun, x_lo, x_hi, rtol=0.0, atol=1e-10 * (x_hi - x_lo) + 1e-12, what="jump location")
        ys, yb = depths(xj)
        return xj, ys, yb

    def __repr__(self):
        opts = ", ".join(f"{k}={v!r}" for k, v in vars(self).items())
        return f"{type(self).__name__}({opts})"


MARCHERS: dict[str, type[Marcher]] = {}


def register_marcher(cls: type[Marcher]) -> type[Marcher]:
    """Class decorator: make a marcher available as ``method=cls.name``."""
    MARCHERS[cls.name] = cls
    return cls


@functools.lru_cache(maxsize=64)
def _options_of(cls: type[Marcher]) -> tuple[str, ...]:
    """The keyword options a marcher class's constructor takes (read once per class)."""
    return tuple(name for name, p in inspect.signature(cls.__init__).parameters.items()
                 if name != "self" and p.kind in (p.POSITIONAL_OR_KEYWORD, p.KEYWORD_ONLY))


def get_marcher(method, **options) -> Marcher:
    """Instantiate the marcher registered as ``method`` (or the ``Marcher`` subclass given)."""
    if isinstance(method, Marcher):
        if options:
            raise InvalidInputError("pass options to the marcher's constructor, not with an instance")
        return method
    if isinstance(method, type) and issubclass(method, Marcher):
        cls = method
    else:
        try:
            cls = MARCHERS[method]
        except (KeyError, TypeError):
            raise InvalidInputError(
                f"method must be one of {sorted(MARCHERS)} or a Marcher subclass; got {method!r}") from None
    accepted = _options_of(cls)
    unknown = sorted(set(options) - set(accepted))
    if unknown:
        raise InvalidInputError(
            f"unknown keyword {', '.join(map(repr, unknown))}: the solve keywords are n_steps, max_step and "
            f"critical_tolerance, and method {getattr(cls, 'name', cls.__name__)!r} takes "
            f"{', '.join(accepted) if accepted else 'no options'}")
    return cls(**options)
