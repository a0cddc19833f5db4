"""Marcher that integrates the GVF equation with ``scipy.integrate.solve_ivp``.

Away from critical depth it integrates dy/dx = (S0 - Sf)/(1 - alpha Q² T/(g A³))
in x, with dense output to read the depth at the stations. The right-hand
side is singular at critical depth, where the surface turns vertical, so a
terminal event stops the x-integration when the depth comes within a band
(``critical_band`` times critical depth) of it, and the march goes on in the
form x(y), integrating dx/dy, which is finite (zero) at critical depth, up to
critical depth itself or up to the end of the segment, whichever comes first.
That gives where the profile reaches critical depth (stop code 1, like the
standard step). A profile that starts inside the band (at a brink, say)
starts in x(y) form and switches to dy/dx once it has left the band. A depth
reaching the crown of a closed conduit stops the march (code 2).

Scenarios are integrated one after another in Python (each is an
independent scalar initial-value problem); the right-hand side is a compiled
scalar function.

References: Chow 1959, *Open-Channel Hydraulics*, §10-1 (the GVF equation
and its integration); Virtanen et al. 2020, SciPy 1.0, Nature Methods 17
(``solve_ivp``).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import integrate, optimize

from .._engine import core
from .._validate import finite_float, positive_float
from ..errors import ConvergenceError, InvalidInputError
from .base import Marcher, MarchResult, SegmentBatch, register_marcher
from .standard_step import StandardStep

__all__ = ["IVPMarcher", "IVP_METHODS"]

IVP_METHODS = ("RK45", "RK23", "DOP853", "Radau", "BDF", "LSODA")
_EXPLICIT = ("RK45", "RK23", "DOP853")
#: an explicit method gives way to Radau where the distance marched exceeds this many relaxation lengths
STIFF_RELAXATIONS = 300.0
#: right-hand-side evaluations one scenario may spend before the march gives up with ConvergenceError
MAX_EVALUATIONS = 200_000


_NEAR = 1e-7  # relative distance from critical depth below which a critical slope's equation takes its limit


#: relative distance short of a branch's far limit (a maximum of specific energy) at which a march stops
_FAR_MARGIN = 1e-4


class _TooMuchWork(Exception):
    """Raised inside solve_ivp's right-hand side when the evaluation budget is spent (private)."""


class _Problem:
    """One scenario of a segment as right-hand-side callables for solve_ivp."""

    def __init__(self, seg: SegmentBatch, index: int):
        self.core = core("march", 2000 * seg.cost)
        self.args = (self.core.scenario(seg.cb, index), seg.fl, float(seg.discharge[index]), seg.slope, seg.alpha)
        self.yc = float(seg.yc[index])
        # the branch's other limit where the section has several critical depths (NaN: none)
        far = math.nan if seg.far is None else float(seg.far[index])
        self.far = far if 0.0 < far < math.inf else math.nan
        self.yn = float(seg.yn[index])
        self.critical_slope = abs(self.yn - self.yc) <= 1e-9 * self.yc
        self.ymax = float(seg.section.max_depth)
        self.top = self.ymax * (1.0 - 1e-9) if math.isfinite(self.ymax) else math.inf

        self.evaluations = 0

    def _count(self):
        self.evaluations += 1
        if self.evaluations > MAX_EVALUATIONS:
            raise _TooMuchWork

    def _inside(self, y):
        """y kept inside the section: above zero and below a closed conduit's crown, where the top width
        vanishes and the GVF equation degenerates (the march stops there, code 2). On a critical slope
        (normal depth equal to critical depth within round-off) both S0 - Sf and 1 - Fr² vanish at critical
        depth, where their ratio has a finite limit that round-off would turn into noise: within 1e-7 of
        critical depth the equation is taken at 1e-7 from it, on the same side."""
        y = min(max(y, 1e-12 * self.yc), self.top)
        if self.critical_slope and abs(y - self.yc) < _NEAR * self.yc:
            y = self.yc * (1.0 + _NEAR if y >= self.yc else 1.0 - _NEAR)
        return y

    def dydx(self, x, y):
        self._count()
        return np.array([self.core.dydx(*self.args, self._inside(y[0]))])

    def dxdy(self, y, x):
        self._count()
        return np.array([self.core.dxdy(*self.args, self._inside(y))])

    def relaxation(self, y):
        """Relaxation rate toward normal depth at depth y [1/length] (:func:`gvflow._core.march.relaxation_rate`)."""
        ch, fl, q, s0, alpha = self.args
        return self.core.relaxation_rate(ch, fl, q, alpha, self._inside(y))

    def slope_at(self, y):
        return self.core.dydx(*self.args, self._inside(y))


@register_marcher
class IVPMarcher(Marcher):
    """Marcher integrating the GVF equation with ``scipy.integrate.solve_ivp``.

    Parameters
    ----------
    ivp_method : str
        Integration method passed to ``solve_ivp``: "RK45", "RK23", "DOP853"
        (default: eighth order, efficient at tight tolerances), "Radau", "BDF"
        or "LSODA". Where the pull toward normal depth is strong against the
        distance marched (thin flow on a long steep segment, or normal depth
        within a few per cent of critical depth) the equation is stiff: an
        explicit method would take steps at its stability limit, so on a march
        longer than :data:`STIFF_RELAXATIONS` relaxation lengths it gives way
        to "Radau" (implicit). A profile that still needs more than
        :data:`MAX_EVALUATIONS` evaluations raises ``ConvergenceError``.
    rtol, atol : float
        Relative and absolute tolerances of ``solve_ivp`` (atol in the length
        unit for the depth; scaled by length/depth for the x(y) form).
    critical_band : float
        Relative distance from critical depth, |y - yc| <= critical_band · yc,
        inside which the march integrates x(y) instead of y(x).
    max_step : float, optional
        Largest step ``solve_ivp`` may take [length]. By default a tenth of
        the distance marched: the dense output that gives the stations is
        less accurate inside very long steps (which the solver takes where
        the profile is nearly uniform).
    """

    name = "ivp"

    def __init__(self, ivp_method: str = "DOP853", rtol: float = 1e-9, atol: float = 1e-12,
                 critical_band: float = 0.05, max_step: float | None = None):
        if ivp_method not in IVP_METHODS:
            raise InvalidInputError(f"ivp_method must be one of {list(IVP_METHODS)}; got {ivp_method!r}")
        self.ivp_method = ivp_method
        self.rtol = positive_float(rtol, "rtol")
        self.atol = positive_float(atol, "atol")
        cb = positive_float(critical_band, "critical_band")
        if cb >= 0.5:
            raise InvalidInputError(f"critical_band must be below 0.5; got {critical_band!r}")
        self.critical_band = cb
        self.max_step = None if max_step is None else positive_float(max_step, "max_step")

    # ------------------------------------------------------------------ one scenario
    def _pieces(self, prob: _Problem, x0: float, x_end: float, y0: float, branch: int):
        """Integrate from (x0, y0) toward x_end. Returns (pieces, code, x_critical, x_reached).

        Each piece is ("yx", xa, xb, sol) with sol(x) -> y, or ("xy", xa, xb, sol, ya, yb) with
        sol(y) -> x; xa and xb are its ends in marching order.
        """
        yc = prob.yc
        band = self.critical_band * yc
        dirn = 1.0 if x_end > x0 else -1.0
        span = abs(x_end - x0)
        pieces = []
        x, y = x0, y0
        in_band = abs(y - yc) <= band
        normal_ahead = False  # normal depth lies between the profile and critical depth
        for _ in range(8):  # at most: in band -> out -> in band -> critical; a few switches
            if x == x_end:
                return pieces, 0, math.nan, x
            if in_band:
                probe = y if y != yc else yc * (1.0 + branch * 1e-9)
                s = prob.slope_at(probe)
                moving_up = (s * dirn) > 0
                toward = moving_up == (branch == -1)
                target = yc if toward else yc + branch * band
                if math.isfinite(prob.ymax):
                    target = min(target, prob.ymax)
                if y == target:
                    return pieces, 1, x, x
                if math.isfinite(prob.yn) and min(y, target) <= prob.yn <= max(y, target):
                    # the profile tends to normal depth inside the band and never reaches
                    # critical depth: x(y) would diverge there, y(x) is regular
                    normal_ahead = True
                    if abs(y - yc) > 1e-9 * yc:
                        in_band = False
                        continue
                    # but dy/dx is infinite at critical depth itself: leave it by x(y) first,
                    # halfway toward normal depth
                    target = 0.5 * (y + prob.yn)

                def hit_end(yy, xx, _e=x_end):
                    return xx[0] - _e
                hit_end.terminal = True
                atol_x = self.atol * max(1.0, span / yc)
                sol = integrate.solve_ivp(prob.dxdy, (y, target), [x], method=self.ivp_method, rtol=self.rtol,
                                          atol=atol_x, dense_output=True, events=[hit_end])
                if sol.status < 0:
                    return pieces, 3, math.nan, x
                if sol.status == 1:  # reached the segment end inside the band
                    ye = float(sol.t_events[0][0])
                    pieces.append(("xy", x, x_end, sol.sol, y, ye))
                    return pieces, 0, math.nan, x_end
                xe = float(sol.y[0, -1])
                pieces.append(("xy", x, xe, sol.sol, y, target))
                x, y = xe, target
                if toward:
                    return pieces, 1, xe, xe
                if target == prob.ymax:
                    return pieces, 2, math.nan, xe
                in_band = False
                continue
            events = []
            edge = yc + branch * band
            if normal_ahead:
                edge = yc  # never met: the profile tends to normal depth first

            def enter_band(xx, yy, _edge=edge):
                return yy[0] - _edge
            enter_band.terminal = True
            enter_band.direction = -branch  # only when moving toward critical depth
            events.append(enter_band)
            if math.isfinite(prob.ymax):
                def full(xx, yy, _top=prob.ymax):
                    return yy[0] - _top
                full.terminal = True
                full.direction = 1.0
                events.append(full)
            if prob.far == prob.far:
                # the maximum of specific energy that bounds the branch: the profile ends there, a hair
                # short of it, as at critical depth (dy/dx is infinite at it)
                def leave(xx, yy, _far=prob.far * (1.0 - branch * _FAR_MARGIN)):
                    return yy[0] - _far
                leave.terminal = True
                leave.direction = float(branch)
                events.append(leave)
            sol = integrate.solve_ivp(prob.dydx, (x, x_end), [y], method=self._method_for(prob, y, abs(x_end - x)),
                                      rtol=self.rtol, atol=self.atol, dense_output=True, events=events,
                                      max_step=self.max_step or span / 10.0)
            if sol.status < 0:
                return pieces, 3, math.nan, x
            xe = float(sol.t[-1])
            pieces.append(("yx", x, xe, sol.sol))
            if sol.status == 0:
                return pieces, 0, math.nan, x_end
            if len(sol.t_events[0]):
                x, y = xe, edge
                in_band = True
                continue
            if prob.far == prob.far and len(sol.t_events[-1]):
                return pieces, 1, xe, xe
            return pieces, 2, math.nan, xe
        return pieces, 3, math.nan, x  # pragma: no cover - more switches than a monotone profile allows

    def _method_for(self, prob: _Problem, y: float, distance: float) -> str:
        """The chosen method, or Radau where it is explicit and the march is stiff: longer than
        :data:`STIFF_RELAXATIONS` relaxation lengths at its start or at normal depth (an explicit method
        would take steps at its stability limit, about one relaxation length, all the way)."""
        if self.ivp_method not in _EXPLICIT:
            return self.ivp_method
        rate = prob.relaxation(y)
        if math.isfinite(prob.yn) and prob.yn > 0:
            rate = max(rate, prob.relaxation(prob.yn))
        return "Radau" if rate * distance > STIFF_RELAXATIONS else self.ivp_method

    @staticmethod
    def _evaluate(pieces, xs, dirn):
        """Depth at stations xs (marching order) from the pieces; NaN beyond the last one."""
        out = np.full(xs.shape, np.nan)
        for pc in pieces:
            xa, xb = pc[1], pc[2]
            lo, hi = min(xa, xb), max(xa, xb)
            sel = (xs >= lo) & (xs <= hi) & np.isnan(out)
            if not np.any(sel):
                continue
            if pc[0] == "yx":
                out[sel] = pc[3](xs[sel])[0]
            else:
                sol, ya, yb = pc[3], pc[4], pc[5]
                for i in np.flatnonzero(sel):
                    xi = xs[i]
                    fa, fb = sol(ya)[0] - xi, sol(yb)[0] - xi
                    if fa == 0:
                        out[i] = ya
                    elif fb == 0 or fa * fb > 0:
                        out[i] = yb if abs(fb) <= abs(fa) else ya
                    else:
                        out[i] = optimize.brentq(lambda yy, _s=sol, _x=xi: _s(yy)[0] - _x, ya, yb,
                                                 xtol=1e-14 * abs(yb), rtol=1e-15)
        return out

    # ------------------------------------------------------------------ contract
    def march(self, seg, x, y0, branch):
        x = np.asarray(x, dtype=float)
        n, m = seg.n, x.shape[0]
        y0 = np.broadcast_to(np.asarray(y0, dtype=float), (n,))
        out_y = np.full((n, m), np.nan)
        out_n = np.empty(n, dtype=np.int64)
        out_xc = np.full(n, np.nan)
        out_code = np.zeros(n, dtype=np.int64)
        dirn = 1.0 if m > 1 and x[-1] > x[0] else -1.0
        for s in range(n):
            prob = _Problem(seg, s)
            out_y[s, 0] = y0[s]
            if m == 1:
                out_n[s] = 1
                continue
            try:
                pieces, code, xc, reached = self._pieces(prob, float(x[0]), float(x[-1]), float(y0[s]),
                                                         int(branch))
            except _TooMuchWork:
                raise ConvergenceError(
                    f"the ivp marcher spent {MAX_EVALUATIONS} evaluations of the GVF equation on one profile "
                    f"between x = {x[0]:.2f} and {x[-1]:.2f} without finishing it (discharge "
                    f"{seg.discharge[s]:g}); loosen rtol/atol, try ivp_method='Radau' or 'LSODA', or use "
                    "method='standard_step'", iterations=MAX_EVALUATIONS) from None
            ys = self._evaluate(pieces, x[1:], dirn)
            # stations past where the march stopped are not solved
            if code != 0:
                beyond = (x[1:] - reached) * dirn > 0
                ys[beyond] = np.nan
            valid = np.isfinite(ys)
            nv = 1 + (int(np.argmin(valid)) if not np.all(valid) else m - 1)
            out_y[s, 1:nv] = ys[:nv - 1]
            out_n[s] = nv
            out_code[s] = code
            out_xc[s] = xc
        return MarchResult(out_y, out_n, out_xc, out_code)

    #: the march through a changing section stops where Fr² comes within this of 1 (the critical depth
    #: there is filled in by the solver)
    CHANGING_CRITICAL_MARGIN = 0.02

    def march_changing(self, seg, x, y0, branch, force=None, rtol=0.0):
        """Integrate the gradually varied flow equation of a section that changes along the segment
        (:func:`gvflow._core.changing.slope_at`: the dA/dx term and the transition losses) with
        ``solve_ivp`` in the y(x) form, stopping (code 1) where the flow comes within
        :data:`CHANGING_CRITICAL_MARGIN` of critical (Fr² = 1). ``force`` is not used: the whole
        segment is marched, which is always correct (:meth:`Marcher.march_until`)."""
        x = np.asarray(x, dtype=float)
        n, m = seg.n, x.shape[0]
        c = seg.change
        kern = core("changing", 2000 * seg.cost)
        dtdx = 1.0 / c.length
        y0 = np.broadcast_to(np.asarray(y0, dtype=float), (n,))
        out_y = np.full((n, m), np.nan)
        out_n = np.full(n, m, dtype=np.int64)
        out_xc = np.full(n, np.nan)
        out_code = np.zeros(n, dtype=np.int64)
        margin = self.CHANGING_CRITICAL_MARGIN
        for s in range(n):
            out_y[s, 0] = y0[s]
            if m == 1:
                continue
            args = (seg.cb, c.along, seg.fl, s, float(seg.discharge[s]), seg.slope, seg.alpha,
                    c.contraction, c.expansion)

            def at(xx, yy, _args=args):
                t = min(max((xx - c.x0) * dtdx, 0.0), 1.0)
                return kern.slope_at(*_args, t, dtdx, max(float(yy[0]), 1e-12))

            def rhs(xx, yy, _at=at):
                return [_at(xx, yy)[0]]

            def critical(xx, yy, _at=at):
                return branch * (1.0 - _at(xx, yy)[1]) - margin
            critical.terminal = True
            j0, y_start = 0, float(y0[s])
            if critical(x[0], [y_start]) <= 0.0:
                # starting at (or within the margin of) critical depth, where dy/dx is infinite: the first
                # interval by the standard step between the two sections, whose energy equation is regular there
                first = StandardStep().march_changing(seg.take(np.array([s])), x[:2], np.array([y_start]),
                                                             branch)
                if first.code[0] != 0 or m == 2:
                    out_y[s, 1] = first.depth[0, 1]
                    out_n[s], out_code[s], out_xc[s] = first.n_valid[0], first.code[0], first.x_critical[0]
                    continue
                j0, y_start = 1, float(first.depth[0, 1])
                out_y[s, 1] = y_start
            span = abs(x[-1] - x[j0])
            sol = integrate.solve_ivp(rhs, (x[j0], x[-1]), [y_start], method=self.ivp_method, rtol=self.rtol,
                                      atol=self.atol, dense_output=True, events=[critical],
                                      max_step=self.max_step or span / 10.0)
            if sol.status < 0:
                out_n[s], out_code[s] = j0 + 1, 3
                continue
            reached = float(sol.t[-1])
            dirn = 1.0 if x[-1] > x[0] else -1.0
            inside = (x[j0 + 1:] - reached) * dirn <= 0
            if inside.any():  # (an event at the start leaves no interpolant)
                out_y[s, j0 + 1:][inside] = sol.sol(x[j0 + 1:][inside])[0]
            if sol.status == 1:
                out_code[s] = 1
                out_xc[s] = reached
                out_n[s] = j0 + 1 + int(np.count_nonzero(inside))
        return MarchResult(out_y, out_n, out_xc, out_code)

    def step_to(self, seg, index, y1, x1, x2, branch):
        x1 = finite_float(x1, "x1")
        x2 = finite_float(x2, "x2")
        if x1 == x2:
            return float(y1)
        r = self.march(seg.take(np.array([index])), np.array([x1, x2]), np.array([float(y1)]), branch)
        return float(r.depth[0, 1]) if r.n_valid[0] == 2 else math.nan
