"""Standard-step marcher: fixed distance steps, energy equation solved on the traced branch.

Between stations 1 and 2 a signed distance d = x2 - x1 apart,

    z2 + y2 + alpha V2²/2g + d Sf_avg ± Ce |alpha V2²/2g - alpha V1²/2g| = z1 + y1 + alpha V1²/2g

(Chow 1959, *Open-Channel Hydraulics*, §10-4), solved for y2 by safeguarded
Newton iteration inside the bracket [yc, ∞) on the subcritical branch or
(0, yc] on the supercritical one. On each branch the residual is monotone, so
a root exists exactly when the residual changes sign over the bracket; when
it does not, the profile has reached critical depth inside the step, and the
distance to that point follows from the direct-step relation
dx = (E1 - Ec)/(Sf_avg - S0).

Two refinements keep the march reliable at any station spacing, and report
only the requested stations:

- Where an interval is long against the relaxation length 1/lambda,
  lambda = |dSf/dy|/|1 - Fr²| (the stiffness of the GVF equation near normal
  depth), it is taken in sub-steps of a quarter of that length, so a profile
  approaches normal depth monotonically instead of swinging about it; past
  256 sub-steps an interval is finished with damped (backward-Euler) steps.
- Within 15 % of critical depth, where the depth changes as the square root
  of distance, an interval is integrated in the x(y) form dx/dy =
  (1 - Fr²)/(S0 - Sf), regular there, by Gauss-Legendre quadrature; the error
  from a critical section (a brink, a critical entry) then falls at second
  order with the spacing, like the rest of the march.

Friction-slope averages: ``"conveyance"`` (default; Sf = (2Q/(K1 + K2))²),
``"arithmetic"``, ``"geometric"``, ``"harmonic"``. All are second-order
accurate in the step length on a smooth profile.
"""

from __future__ import annotations

import math

import numpy as np

from .._core.codes import AVERAGES
from .._engine import core
from .._validate import finite_float, positive_float
from ..errors import InvalidInputError
from .base import Marcher, MarchResult, SegmentBatch, register_marcher

__all__ = ["StandardStep"]


_NO_FORCE = np.empty((0, 0))  # march_until without a competing profile


def _per_scenario(value, n: int) -> np.ndarray:
    """``value`` (a scalar or one value per scenario) as a contiguous float array of shape (n,)."""
    arr = np.asarray(value, dtype=float)
    if arr.shape != (n,) or not arr.flags.c_contiguous:
        arr = np.ascontiguousarray(np.broadcast_to(arr, (n,)))
    return arr


@register_marcher
class StandardStep(Marcher):
    """Standard-step marcher.

    Parameters
    ----------
    friction_average : {"conveyance", "arithmetic", "geometric", "harmonic"}
        How the friction slope is averaged over a step.
    eddy_loss : float
        Eddy (transition) loss coefficient Ce [-] applied to the change in
        velocity head over a step; 0 by default (prismatic segments).
    tol : float
        Relative tolerance on the depth solved at each station.
    """

    name = "standard_step"

    def __init__(self, friction_average: str = "conveyance", eddy_loss: float = 0.0, tol: float = 1e-12):
        if friction_average not in AVERAGES:
            raise InvalidInputError(
                f"friction_average must be one of {sorted(AVERAGES)}; got {friction_average!r}")
        self.friction_average = friction_average
        self.eddy_loss = positive_float(eddy_loss, "eddy_loss", allow_zero=True)
        self.tol = positive_float(tol, "tol")

    def _work(self, seg: SegmentBatch, stations: int) -> int:
        return 20 * seg.n * stations * seg.cost

    def march(self, seg, x, y0, branch):
        return self._march(seg, x, y0, branch, _NO_FORCE, 0.0)

    def march_until(self, seg, x, y0, branch, force, rtol):
        return self._march(seg, x, y0, branch, force, rtol)

    def _march(self, seg, x, y0, branch, force, rtol):
        x = np.ascontiguousarray(x, dtype=float)
        n, m = seg.n, x.shape[0]
        y0 = _per_scenario(y0, n)
        force = np.ascontiguousarray(force, dtype=float)
        if force.size and force.shape != (n, m):
            raise InvalidInputError(f"force must have shape {(n, m)} (scenarios, stations); got {force.shape}")
        out_y = np.empty((n, m))
        out_n = np.empty(n, dtype=np.int64)
        out_xc = np.empty(n)
        out_code = np.empty(n, dtype=np.int64)
        core("march", self._work(seg, m)).march(
            seg.cb, seg.fl, seg.discharge, seg.slope, x, y0, seg.yc, int(branch), seg.alpha, self.eddy_loss,
            AVERAGES[self.friction_average], seg.section.max_depth, self.tol, force, float(rtol),
            out_y, out_n, out_xc, out_code)
        return MarchResult(out_y, out_n, out_xc, out_code)

    def march_changing(self, seg, x, y0, branch, force=None, rtol=0.0):
        """The standard step between unlike sections (:mod:`gvflow._core.changing`), station to station: an
        interval without a root on the branch is taken again in 4, 16 and 64 sub-steps (no relaxation
        sub-steps or x(y) legs near critical depth, which assume one section)."""
        x = np.ascontiguousarray(x, dtype=float)
        n, m = seg.n, x.shape[0]
        c = seg.change
        force = np.zeros((0, 0)) if force is None else np.ascontiguousarray(force, dtype=float)
        out_y, out_n = np.empty((n, m)), np.empty(n, np.int64)
        out_xc, out_code = np.empty(n), np.empty(n, np.int64)
        yc0 = seg.start_critical_depth(x[0], y0, branch)
        core("changing", 40 * n * m * seg.cost).march(seg.cb, c.along, seg.fl, seg.discharge, seg.slope, x,
                                           seg.fractions(x), _per_scenario(y0, n), yc0, int(branch), seg.alpha,
                                           c.contraction, c.expansion, AVERAGES[self.friction_average], self.tol,
                                           force, float(rtol), out_y, out_n, out_xc, out_code)
        return MarchResult(out_y, out_n, out_xc, out_code)

    def step_to(self, seg, index, y1, x1, x2, branch):
        d = finite_float(x2, "x2") - finite_float(x1, "x1")
        if d == 0.0:
            return float(y1)
        M = core("march", 20 * seg.cost)
        y, code = M.step(M.scenario(seg.cb, int(index)), seg.fl, float(seg.discharge[index]), seg.slope, float(y1),
                         d, float(seg.yc[index]), int(branch), seg.alpha, self.eddy_loss,
                         AVERAGES[self.friction_average], seg.section.max_depth, self.tol, float(y1))
        return float(y) if code == 0 else math.nan

    def step_many(self, seg, index, y1, x1, x2, branch):
        index, y1, x1, x2 = (np.ascontiguousarray(a) for a in np.broadcast_arrays(
            np.asarray(index), np.asarray(y1, float), np.asarray(x1, float), np.asarray(x2, float)))
        shape = index.shape
        idx = np.ascontiguousarray(index.ravel(), dtype=np.int64)
        out = core("march", 20 * idx.size * seg.cost).step_many(
            seg.cb, seg.fl, idx, np.ascontiguousarray(seg.discharge[idx]), seg.slope, y1.ravel(), x1.ravel(),
            x2.ravel(), np.ascontiguousarray(seg.yc[idx]), int(branch), seg.alpha, self.eddy_loss,
            AVERAGES[self.friction_average], seg.section.max_depth, self.tol)
        return out.reshape(shape)

    def locate_jumps(self, seg, y_sup, x_lo, y_sub, x_hi):
        n = seg.n
        out_x, out_y1, out_y2 = np.empty(n), np.empty(n), np.empty(n)
        args = [_per_scenario(v, n) for v in (y_sup, x_lo, y_sub, x_hi)]
        core("march", 2000 * n * seg.cost).locate_jumps(
            seg.cb, seg.fl, seg.discharge, seg.slope, args[0], args[1], args[2], args[3], seg.yc, seg.alpha,
            self.eddy_loss, AVERAGES[self.friction_average], seg.section.max_depth, self.tol, out_x, out_y1, out_y2)
        return out_x, out_y1, out_y2
