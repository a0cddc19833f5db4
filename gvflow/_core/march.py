"""The profile engine's inner loops (private; compiled or interpreted, see :mod:`gvflow._engine`).

The standard-step march over a segment for a batch of scenarios, the near-critical
x(y) legs, the per-segment constants, the station properties and the jump search.
Every physical relation they use comes from the core modules below them
(:mod:`~gvflow._core.geometry`, :mod:`~gvflow._core.resistance`, :mod:`~gvflow._core.flow`):
a section of any kind (a surveyed one included) marches through the same code.

Records: a scenario's channel is a :class:`~gvflow._core.records.Channel`; a segment's
batch of scenarios is a :class:`~gvflow._core.records.ChannelBatch` whose ``rough`` holds
one row of zone roughness per scenario; ``fl`` is the :class:`~gvflow._core.records.Fluid`.
"""

from __future__ import annotations

import math

import numpy as np

from ._jit import kernel, scalar_kernel
from .codes import AVG_END, DARCY, SOLVED, SUB, SUPER  # noqa: F401
from .flow import (
    branch_limits,
    critical_depth_batch,
    critical_depth_single,
    normal_depth_batch,
    proportional,
    slope_class_code,
    specific_energy,
    specific_force,
    velocity_head,
)
from .geometry import SURVEYED, geometry
from .records import Channel
from .resistance import friction_slope, hydraulics, sf_average, slope_of


@kernel
def scenario(cb, s):
    """The :class:`~gvflow._core.records.Channel` of scenario ``s`` of a channel batch."""
    return Channel(cb.kind, cb.par, cb.law, cb.rough[s])


@scalar_kernel
def _residual(ch, fl, q, s0, d, e1, sf1, hv1, y2, alpha, ce, avg):
    """Energy residual r(y2) of a standard step over signed distance d, and dr/dy2."""
    r, dr, hv2, sf2, fr2, dlnk = _residual_state(ch, fl, q, s0, d, e1, sf1, hv1, y2, alpha, ce, avg)
    return r, dr


@scalar_kernel
def _residual_state(ch, fl, q, s0, d, e1, sf1, hv1, y2, alpha, ce, avg):
    """:func:`_residual` and what the pass gave at y2: (r, dr/dy2, velocity head, Sf, Fr², dK/dy / K)."""
    hv2, sf2, fr2, dlnk = _pass(ch, fl, q, alpha, y2)
    sav, dsav = sf_average(avg, sf1, sf2)
    dhv2 = -fr2  # d(alpha V²/2g)/dy = dE/dy - 1 = -Fr², alpha varying or not
    dsf2 = -2.0 * sf2 * dlnk
    he = ce * abs(hv2 - hv1)
    dhe = ce * dhv2 * (1.0 if hv2 >= hv1 else -1.0)
    sgn = 1.0 if d > 0 else -1.0
    r = y2 + hv2 - e1 - s0 * d + d * sav + sgn * he
    dr = 1.0 + dhv2 + d * dsav * dsf2 + sgn * dhe
    return r, dr, hv2, sf2, fr2, dlnk


@scalar_kernel
def _state_after(ch, fl, q, alpha, y, hv, sf, fr2, dlnk, yn):
    """:func:`station_state` at yn from the pass at y a Newton correction before it: first order in yn - y,
    with dhv/dy = -Fr² and dSf/dy = -2 Sf dK/dy / K (module notes of :mod:`~gvflow._core.resistance`). The
    march accepts a correction of at most 1e-3 sqrt(tol) y (:func:`step_from`; 1e-9 y with the default tol
    of 1e-12), so the neglected second-order terms are below 1e-6 tol of each value (1e-17, under
    round-off). The relaxation rate, which only sizes sub-steps, is the one at y. A Darcy-Weisbach
    conveyance's derivative holds the friction factor fixed, so its state is taken afresh."""
    if ch.law == DARCY:
        return station_state(ch, fl, q, alpha, yn)
    dy = yn - y
    hvn = hv - fr2 * dy
    sfn = sf - 2.0 * sf * dlnk * dy
    return yn + hvn, sfn, hvn, _rate(sfn, dlnk, fr2)


@scalar_kernel
def _pass(ch, fl, q, alpha, y):
    """One pass of :func:`~gvflow._core.resistance.hydraulics` at depth y as a step uses it: (velocity head,
    friction slope, Fr², dK/dy / K)."""
    a, t, m, kk, dlnk, al, be, fr2 = hydraulics(ch, fl, q, y, alpha)
    return al * (q / a) * (q / a) / (2.0 * fl.g), slope_of(q, kk), fr2, dlnk


@scalar_kernel
def _rate(sf, dlnk, fr2):
    """The relaxation rate |dSf/dy| / |1 - Fr²| from Sf, dK/dy / K and Fr² (:func:`relaxation_rate`)."""
    return sf * abs(2.0 * dlnk) / max(abs(1.0 - fr2), 1e-3)


@scalar_kernel
def station_state(ch, fl, q, alpha, y):
    """What a standard step needs of its start at depth y, and the relaxation rate there, from one pass of
    :func:`~gvflow._core.resistance.hydraulics`: (specific energy, friction slope, velocity head, rate).
    The march computes it once at each depth it reaches: the rate decides the next interval's sub-steps
    and the rest starts the next step (see :func:`relaxation_rate`, :func:`step_from`)."""
    hv, sf, fr2, dlnk = _pass(ch, fl, q, alpha, y)
    return y + hv, sf, hv, _rate(sf, dlnk, fr2)


@scalar_kernel
def step(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, avg, ymax, tol, guess):
    """Depth after a standard step of signed length d on ``branch``.

    ``guess`` seeds the iteration (e.g. extrapolated from the previous step).
    Returns (depth, code): code 0 solved; 1 the branch has no root (the
    profile reaches critical depth within the step); 2 the depth would exceed
    the crown of a closed conduit; 3 no convergence.
    """
    e1, sf1, hv1, rate1 = station_state(ch, fl, q, alpha, y1)
    r = step_from(ch, fl, q, s0, y1, e1, sf1, hv1, d, yc, branch, alpha, ce, avg, ymax, tol, guess)
    return r[0], r[1]


@scalar_kernel
def step_from(ch, fl, q, s0, y1, e1, sf1, hv1, d, yc, branch, alpha, ce, avg, ymax, tol, guess):
    """:func:`step` from depth y1 whose specific energy e1, friction slope sf1 and velocity head hv1 are
    known (:func:`station_state`): (depth, code, and where code is 0 the :func:`station_state` of the depth,
    made from the last pass of the iteration by :func:`_state_after`, else NaN)."""
    # Fast path: Newton from the guess, accepted only if every iterate stays on
    # the branch (the residual is monotone there, so the root is the branch's).
    y = guess
    if (branch == 1 and yc < y < ymax) or (branch == -1 and 0.0 < y < yc):
        for _ in range(8):
            r, dr, hv, sf, fr2, dlnk = _residual_state(ch, fl, q, s0, d, e1, sf1, hv1, y, alpha, ce, avg)
            if dr == 0.0 or (dr > 0.0) != (branch == 1):
                break
            yn = y - r / dr
            if branch == 1:
                if not (yc < yn < ymax):
                    break
            elif not (0.0 < yn < yc):
                break
            dy = abs(yn - y)
            # Newton converges quadratically here: after a correction below 1e-3 sqrt(tol) y the next
            # one would be of order (dy / y)^2 y <= 1e-6 tol y, so yn already meets the tolerance
            if dy <= tol * y or dy <= 1e-3 * math.sqrt(tol) * y:
                e, sf, hv, rate = _state_after(ch, fl, q, alpha, y, hv, sf, fr2, dlnk, yn)
                return yn, 0, e, sf, hv, rate
            y = yn
    # Safe path: bracket on the branch, then safeguarded Newton.
    rc, drc = _residual(ch, fl, q, s0, d, e1, sf1, hv1, yc, alpha, ce, avg)
    if branch == 1:
        if rc > 0.0:
            return yc, 1, math.nan, math.nan, math.nan, math.nan
        lo, hi = yc, max(y1, yc) * 1.25
        for _ in range(200):
            if hi >= ymax:
                hi = ymax
                rh, dh = _residual(ch, fl, q, s0, d, e1, sf1, hv1, hi, alpha, ce, avg)
                if rh < 0.0:
                    return ymax, 2, math.nan, math.nan, math.nan, math.nan
                break
            rh, dh = _residual(ch, fl, q, s0, d, e1, sf1, hv1, hi, alpha, ce, avg)
            if rh > 0.0:
                break
            lo = hi
            hi *= 2.0
    else:
        if rc > 0.0:
            return yc, 1, math.nan, math.nan, math.nan, math.nan
        hi, lo = yc, min(y1, yc) * 0.8
        for _ in range(200):
            rl, dl = _residual(ch, fl, q, s0, d, e1, sf1, hv1, lo, alpha, ce, avg)
            if rl > 0.0:
                break
            hi = lo
            lo *= 0.5
    y = y1 if lo < y1 < hi else 0.5 * (lo + hi)
    y_prev = r_prev = math.nan
    for _ in range(100):
        r, dr, hv, sf, fr2, dlnk = _residual_state(ch, fl, q, s0, d, e1, sf1, hv1, y, alpha, ce, avg)
        if (r > 0.0) == (branch == 1):
            hi = y
        else:
            lo = y
        if ch.law == DARCY and y_prev == y_prev and y != y_prev:
            # Darcy: the analytic slope holds the friction factor fixed; the secant keeps Newton superlinear
            sec = (r - r_prev) / (y - y_prev)
            if (sec > 0.0) == (dr > 0.0):
                dr = sec
        y_prev, r_prev = y, r
        yn = y - r / dr if dr != 0.0 else 0.5 * (lo + hi)
        if not (lo < yn < hi):
            yn = 0.5 * (lo + hi)
        if abs(yn - y) <= tol * y or hi - lo <= 1e-15 * hi:
            e, sf, hv, rate = _state_after(ch, fl, q, alpha, y, hv, sf, fr2, dlnk, yn)
            return yn, 0, e, sf, hv, rate
        y = yn
    return y, 3, math.nan, math.nan, math.nan, math.nan


@scalar_kernel
def substeps(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, avg, ymax, tol):
    """A step of length d taken as 4, then 16, then 64 equal sub-steps; (depth, code) as :func:`step`."""
    code = 1
    y = y1
    for nsub in (4, 16, 64):
        y = y1
        h = d / nsub
        code = 0
        for _ in range(nsub):
            y, code = step(ch, fl, q, s0, y, h, yc, branch, alpha, ce, avg, ymax,
                           tol, y)
            if code != 0:
                break
        if code == 0:
            return y, 0
    return y, code


@scalar_kernel
def critical_distance(ch, fl, q, s0, y1, yc, alpha, avg):
    """Signed distance from a station at depth y1 to where the profile reaches yc (direct step)."""
    e1 = y1 + velocity_head(ch, fl, q, y1, alpha)
    ec = yc + velocity_head(ch, fl, q, yc, alpha)
    sav, _ = sf_average(avg, friction_slope(ch, fl, q, y1), friction_slope(ch, fl, q, yc))
    den = sav - s0
    if den == 0.0:
        return math.inf
    return (e1 - ec) / den


#: relative band about critical depth inside which a march interval is integrated in the x(y) form
CRITICAL_BAND = 0.15
#: most sub-steps one station interval may be split into where the profile is stiff
MAX_SUBSTEPS = 256

# Gauss-Legendre nodes and weights on [-1, 1], 6 points (Abramowitz & Stegun 1964, table 25.4)
_GL_X = np.array([-0.9324695142031521, -0.6612093864662645, -0.2386191860831969,
                  0.2386191860831969, 0.6612093864662645, 0.9324695142031521])
_GL_W = np.array([0.1713244923791704, 0.3607615730481386, 0.4679139345726910,
                  0.4679139345726910, 0.3607615730481386, 0.1713244923791704])


@scalar_kernel
def gvf_terms(ch, fl, q, s0, alpha, y):
    """Numerator and denominator of the GVF equation dy/dx = (S0 - Sf)/(1 - alpha Q² T/(g A³)) at depth y
    (Chow 1959, *Open-Channel Hydraulics*, eq. 9-13, x downstream), with the compound Froude number where
    alpha varies with depth; the marchers' and :func:`gvflow.profiles.equation.gvf_terms`'s one home."""
    a, t, m, kk, dlnk, al, be, fr2 = hydraulics(ch, fl, q, y, alpha)
    return s0 - slope_of(q, kk), 1.0 - fr2


@scalar_kernel
def _ratio(a, b):
    """a/b, infinite (with a's sign times b's) where b is zero, NaN for 0/0 (as IEEE division)."""
    if b != 0.0:
        return a / b
    if a == 0.0:
        return math.nan
    return math.inf if (a > 0.0) == (math.copysign(1.0, b) > 0.0) else -math.inf


@scalar_kernel
def dydx(ch, fl, q, s0, alpha, y):
    """Slope of the water-surface profile dy/dx = (S0 - Sf)/(1 - Fr²) at depth y (x downstream)."""
    num, den = gvf_terms(ch, fl, q, s0, alpha, y)
    return _ratio(num, den)


@scalar_kernel
def dxdy(ch, fl, q, s0, alpha, y):
    """dx/dy = (1 - Fr²)/(S0 - Sf) at depth y, regular at critical depth."""
    num, den = gvf_terms(ch, fl, q, s0, alpha, y)
    return _ratio(den, num)


@scalar_kernel
def relaxation_rate(ch, fl, q, alpha, y):
    """Rate [1/length] at which a profile near depth y relaxes toward normal depth: |dSf/dy| / |1 - Fr²|,
    the stiffness of the GVF equation (its Jacobian where S0 = Sf). A trapezoidal energy step longer than
    2/rate overshoots normal depth; the march keeps its sub-steps within 1/(4 rate)."""
    return station_state(ch, fl, q, alpha, y)[3]


@scalar_kernel
def _dxdy(ch, fl, q, s0, alpha, ce, sxy, y):
    """dx/dy of the energy equation with eddy loss: ((1 - Fr²) + sxy Ce Fr²)/(S0 - Sf), sxy = sign(dx dy)."""
    num, den = gvf_terms(ch, fl, q, s0, alpha, y)
    return (den + sxy * ce * (1.0 - den)) / num


@scalar_kernel
def x_of_y(ch, fl, q, s0, alpha, ce, sxy, ya, yb, panels):
    """Distance the profile takes to go from depth ya to yb, the integral of dx/dy by Gauss-Legendre
    quadrature (6 points) on ``panels`` equal panels (the x(y) form is regular at critical depth, where dy/dx
    is infinite)."""
    w = (yb - ya) / panels
    tot = 0.0
    for j in range(panels):
        h = 0.5 * w
        c = ya + (j + 0.5) * w
        for i in range(6):
            tot += _GL_W[i] * _dxdy(ch, fl, q, s0, alpha, ce, sxy, c + h * _GL_X[i]) * h
    return tot


@scalar_kernel
def crown_distance(ch, fl, q, s0, y1, ymax, alpha, ce, panels):
    """Distance upstream from a station at depth y1 to where a subcritical profile rising upstream reaches
    the crown ymax of a closed conduit: minus the integral of dx/dy = (1 - Fr²)/(S0 - Sf) from y1 to ymax
    (the x(y) form of the GVF equation, Chow 1959, eq. 9-13, regular at the crown where the top width
    vanishes). The top width falls as sqrt(ymax - y) there, so the integral is taken in s = sqrt(ymax - y)
    (dy = -2 s ds), where the integrand is smooth: 6-point Gauss-Legendre on ``panels`` equal panels.
    NaN where the profile does not rise to the crown (S0 - Sf changes sign on the way, or y1 >= ymax)."""
    if not y1 < ymax:
        return math.nan
    s_hi = math.sqrt(ymax - y1)
    w = s_hi / panels
    tot = 0.0
    for j in range(panels):
        c = (j + 0.5) * w
        for i in range(6):
            s = c + 0.5 * w * _GL_X[i]
            # dx/dy with the eddy loss, depth rising as x falls (sxy = -1)
            f = _dxdy(ch, fl, q, s0, alpha, ce, -1.0, ymax - s * s)
            if not f < 0.0:
                return math.nan  # not rising upstream here (Sf <= S0): the profile cannot reach the crown
            tot += _GL_W[i] * 0.5 * w * f * (-2.0 * s)  # dy/ds = -2 s
    # tot is the integral of dx/dy dy from ymax down to y1 taken as ds from 0 to s_hi: x(y1) - x(ymax)
    return tot


@kernel
def crown_distances(cb, fl, rows, q, s0, y1, ymax, alpha, ce, panels, out):
    """:func:`crown_distance` for each element i (scenario rows[i], discharge q[i], depth y1[i])."""
    for i in range(y1.shape[0]):
        out[i] = crown_distance(scenario(cb, rows[i]), fl, q[i], s0, y1[i], ymax, alpha, ce, panels)


@scalar_kernel
def critical_leg(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, ymax):
    """March near critical depth in the x(y) form, where the depth changes as the square root of distance.

    From depth y1 (within :data:`CRITICAL_BAND` of yc) over signed distance d. Returns (y, dist, code):
    code 0, the depth y after the full distance; code 1, the profile reaches critical depth after ``dist``;
    code 5, the leg ended after ``dist`` < |d| at depth y, where the x(y) form stops being the better one
    (the standard step takes over); code 6, the x(y) form does not apply (normal depth too close).
    """
    sgn_d = 1.0 if d > 0 else -1.0
    # which way the depth moves: dy/dx at y1, nudged onto the branch if y1 is critical depth itself
    probe = y1
    if abs(y1 - yc) <= 1e-9 * yc:
        probe = yc * (1.0 + branch * 1e-6)
    num0, den0 = gvf_terms(ch, fl, q, s0, alpha, probe)
    if num0 == 0.0 or den0 * branch < 0.0:
        return y1, 0.0, 6
    sdy = sgn_d * (1.0 if num0 / den0 > 0 else -1.0)  # sign of the depth change
    toward = (sdy > 0) == (branch == -1)
    yb = yc if toward else yc * (1.0 + branch * 2.0 * CRITICAL_BAND)
    if branch == 1 and yb >= ymax:
        yb = y1 + 0.5 * (ymax - y1)
    # keep the leg clear of normal depth, where dx/dy has a pole (a profile tending to normal depth
    # between here and critical depth never reaches critical depth): S0 - Sf at least a quarter of its
    # size at the start all along the leg
    for _ in range(60):
        ychk = yb if yb != yc else yc * (1.0 + branch * 1e-6)
        nb, db = gvf_terms(ch, fl, q, s0, alpha, ychk)
        if nb * num0 > 0.0 and db * branch > 0.0 and abs(nb) >= 0.25 * abs(num0):
            break
        yb = y1 + 0.5 * (yb - y1)
    else:
        return y1, 0.0, 6
    if abs(yb - y1) <= 1e-12 * yc:
        return y1, 0.0, 6
    toward = toward and yb == yc
    sxy = sgn_d * sdy
    # Gauss panels no longer than half the distance from the leg's far end to the pole of dx/dy at normal
    # depth (estimated by the chord of S0 - Sf over the leg): 6-point Gauss-Legendre is then good to ~1e-12
    nb, db = gvf_terms(ch, fl, q, s0, alpha, yb)
    room = max(abs(yb - y1) * abs(nb) / max(abs(num0 - nb), 1e-300), 1e-300)
    panels = max(1, int(min(32.0, math.ceil(2.0 * abs(yb - y1) / room))))
    xb = x_of_y(ch, fl, q, s0, alpha, ce, sxy, y1, yb, panels)
    if not (xb * sgn_d >= 0.0) or not math.isfinite(xb):
        return y1, 0.0, 6
    if abs(xb) <= abs(d):
        return yb, abs(xb), (1 if toward else 5)
    # solve x_of_y(y1, y) = d for y between y1 and yb: safeguarded Newton (x(y) is monotone there)
    lo, hi = y1, yb  # x(lo) - d has the sign opposite to x(hi) - d
    flo = -d
    # first guess from x(y) ~ s1 u + c u² (u = y - y1): the slope s1 = dx/dy at y1 and the leg's end; exact
    # for the square-root shape at critical depth (s1 = 0)
    ub = yb - y1
    s1 = _dxdy(ch, fl, q, s0, alpha, ce, sxy, probe)
    c = (xb - s1 * ub) / (ub * ub)
    disc = s1 * s1 + 4.0 * c * d
    u = 2.0 * d / (s1 + math.copysign(math.sqrt(disc), s1 if s1 != 0.0 else ub * c)) if disc >= 0.0 else 0.0
    y = y1 + u if 0.0 < u / ub < 1.0 else y1 + ub * (d / xb)
    for _ in range(100):
        npan = max(1, int(min(32.0, math.ceil(2.0 * abs(y - y1) / room))))
        f = x_of_y(ch, fl, q, s0, alpha, ce, sxy, y1, y, npan) - d
        if abs(f) <= 1e-13 * abs(d):
            return y, abs(d), 0
        if (f > 0.0) == (flo > 0.0):
            lo, flo = y, f
        else:
            hi = y
        df = _dxdy(ch, fl, q, s0, alpha, ce, sxy, y)
        yn = y - f / df if df != 0.0 and math.isfinite(df) else 0.5 * (lo + hi)
        if not (min(lo, hi) < yn < max(lo, hi)):
            yn = 0.5 * (lo + hi)
        # Newton converges quadratically here: after a correction below 1e-9 yc the next would be ~1e-18 yc
        if abs(yn - y) <= 1e-9 * yc:
            return yn, abs(d), 0
        y = yn
    return y, abs(d), 0


#: a depth's :func:`station_state` not yet known (a rate that is not positive means unknown)
UNKNOWN_STATE = (0.0, 0.0, 0.0, -1.0)


@scalar_kernel
def advance(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, avg, ymax, tol, guess, state1):
    """Depth one station interval (signed length d) from depth y1 on ``branch``: (depth, code, dist, rate).

    Near critical depth (within :data:`CRITICAL_BAND`) the interval is integrated in the x(y) form
    (:func:`critical_leg`), so the square-root behaviour there costs no accuracy; elsewhere it is one
    standard step (:func:`step`), cut into sub-steps of a quarter of the relaxation length
    1/:func:`relaxation_rate` where the interval is longer than that length, so the depth approaches
    normal depth monotonically at any station spacing; past :data:`MAX_SUBSTEPS` sub-steps they are
    damped end-slope (backward Euler) steps, monotone at any length. Codes as :func:`step`; with code 1,
    ``dist`` is the distance from y1 at which the profile reaches critical depth. ``state1`` is the
    :func:`station_state` of y1 when the caller knows it (the previous interval's ``state``), else
    :data:`UNKNOWN_STATE`; ``state`` is the state of the returned depth where known, else UNKNOWN_STATE.
    """
    y = y1
    done = 0.0
    total = abs(d)
    sgn = 1.0 if d > 0 else -1.0
    first = True
    legs = 0
    hint = 0.0  # relaxation rate met at the far end of a rejected step
    e_y, sf_y, hv_y, rate_y = state1  # station_state of y, once known (rate_y > 0)
    for _ in range(4 * MAX_SUBSTEPS):
        rest = total - done
        if rest <= 1e-12 * total:
            return y, 0, done, (e_y, sf_y, hv_y, rate_y)
        if legs < 60 and abs(y - yc) <= CRITICAL_BAND * yc:
            legs += 1
            yl, dist, code = critical_leg(ch, fl, q, s0, y, sgn * rest, yc, branch, alpha, ce, ymax)
            if code == 0:
                return yl, 0, total, UNKNOWN_STATE
            if code == 1:
                return yc, 1, done + dist, UNKNOWN_STATE
            if code == 5:
                y = yl
                rate_y = -1.0
                done += dist
                first = False
                continue
        if not rate_y > 0.0:
            e_y, sf_y, hv_y, rate_y = station_state(ch, fl, q, alpha, y)
        rate = max(rate_y, hint)
        h = rest
        how = avg
        if rate * rest > 0.5:
            # stiff: sub-steps of a quarter relaxation length (the trapezoidal step then decays a departure
            # from normal depth within 0.1 % of exp(-x rate)); past MAX_SUBSTEPS of them, damped
            # (end-slope) steps
            h = min(max(0.25 / rate, total / MAX_SUBSTEPS), rest)
            if rate * h > 1.5:
                how = AVG_END
        y2, code, e2, sf2, hv2, rate2 = step_from(ch, fl, q, s0, y, e_y, sf_y, hv_y, sgn * h, yc, branch, alpha,
                                                  ce, how, ymax, tol, guess if first and h >= rest else y)
        if code == 1 and how != AVG_END:
            # a trapezoidal step long against the relaxation length near normal depth can overshoot
            # past critical depth: the damped step, monotone, tells whether the profile stiffens there
            y_be, code_be, e_be, sf_be, hv_be, rate_be = step_from(ch, fl, q, s0, y, e_y, sf_y, hv_y, sgn * h, yc,
                                                                   branch, alpha, ce, AVG_END, ymax, tol, y)
            if code_be == 0:
                rate2 = rate_be
                if rate2 * h > 0.5 and rate2 > rate and h > total / MAX_SUBSTEPS:
                    hint = rate2
                    continue
        if code == 1:
            # near critical depth a long step can miss a root the profile really has (the discrete
            # energy equation loses it before the profile does): retry with sub-steps first
            y2, code = substeps(ch, fl, q, s0, y, sgn * h, yc, branch, alpha, ce, how, ymax, tol)
            if code == 0:
                e2, sf2, hv2, rate2 = station_state(ch, fl, q, alpha, y2)
        if code != 0:
            if code == 1:
                dc = critical_distance(ch, fl, q, s0, y, yc, alpha, avg)
                return yc, 1, done + min(max(dc * sgn, 0.0), h), UNKNOWN_STATE
            return y2, code, done, UNKNOWN_STATE
        if how != AVG_END:
            # the profile may stiffen along the step (deep flow relaxing fast near normal depth): a step
            # long against the relaxation length at its far end is taken again, shorter
            if rate2 * h > 0.5 and rate2 > rate and h > total / MAX_SUBSTEPS:
                hint = rate2
                continue
        e_y, sf_y, hv_y, rate_y = e2, sf2, hv2, rate2  # the next sub-step starts at y2
        hint = 0.0
        y = y2
        done += h
        first = False
    return y, 3, done, UNKNOWN_STATE


@kernel
def march(cb, fl, q, s0, x, y0, yc, branch, alpha, ce, avg, ymax, tol,
          until_force, force_tol, out_y, out_n, out_xc, out_code):
    """Standard-step march of every scenario over the stations ``x`` (in marching order).

    ``cb`` is the segment's :class:`~gvflow._core.records.ChannelBatch` (one roughness row per
    scenario); ``q``, ``y0`` and ``yc`` hold one value per scenario. Writes the
    depths into ``out_y[s, :]``; ``out_n[s]`` is the number of stations solved
    on the branch; where a scenario stopped early, ``out_xc[s]`` is where it
    reached critical depth and ``out_code[s]`` the step code that stopped it.
    With a non-empty ``until_force`` (shape (n, m)) a scenario also stops, code
    4, at the first station where its specific force falls below
    ``until_force[s, j] * (1 - force_tol)``: that station is the last solved.
    """
    ns = q.shape[0]
    m = x.shape[0]
    watch = until_force.shape[0] > 0
    even = evenly_spaced(x)
    for s in range(ns):
        ch = scenario(cb, s)
        ys = out_y[s]  # (one view of the scenario's row, not one per station)
        y = y0[s]
        state = UNKNOWN_STATE  # station_state of y, carried from one interval to the next
        out_y[s, 0] = y
        out_n[s] = m
        out_xc[s] = math.nan
        out_code[s] = 0
        if watch and specific_force(ch, fl, q[s], y, alpha) < until_force[s, 0] * (1.0 - force_tol):
            stop_march(out_y, out_n, out_code, s, 1, 4)
            continue
        for j in range(1, m):
            d = x[j] - x[j - 1]
            y2, code, dist, state = advance(ch, fl, q[s], s0, y, d, yc[s], branch, alpha, ce, avg, ymax, tol,
                                            extrapolate(x, ys, j, even), state)
            if code != 0:
                stop_march(out_y, out_n, out_code, s, j, code)
                if code == 1:
                    frac = min(max(dist / abs(d), 0.0), 1.0) if d != 0.0 else 0.0
                    out_xc[s] = x[j - 1] + frac * d
                break
            out_y[s, j] = y2
            y = y2
            if watch and specific_force(ch, fl, q[s], y, alpha) < until_force[s, j] * (1.0 - force_tol):
                stop_march(out_y, out_n, out_code, s, j + 1, 4)
                break


@scalar_kernel
def stop_march(out_y, out_n, out_code, s, n_valid, code):
    """Scenario s of a march stops after ``n_valid`` stations, for the reason ``code``: the rest are NaN."""
    out_n[s] = n_valid
    out_code[s] = code
    for jj in range(n_valid, out_y.shape[1]):
        out_y[s, jj] = math.nan


@scalar_kernel
def evenly_spaced(x):
    """True when the stations ``x`` are equally spaced (to 1e-9 of the spacing)."""
    d = x[1] - x[0] if x.shape[0] > 1 else 0.0
    for j in range(2, x.shape[0]):
        if abs(x[j] - x[j - 1] - d) > 1e-9 * abs(d):
            return False
    return True


@scalar_kernel
def extrapolate(x, y, j, even):
    """First guess of y[j] from the depths before it: cubic through the last four on evenly spaced stations
    (the march's usual layout), linear otherwise."""
    if even and j >= 4:
        return 4.0 * y[j - 1] - 6.0 * y[j - 2] + 4.0 * y[j - 3] - y[j - 4]
    if j >= 2:
        return y[j - 1] + (y[j - 1] - y[j - 2]) * (x[j] - x[j - 1]) / (x[j - 1] - x[j - 2])
    return y[j - 1]


@kernel
def properties(cb, fl, rows, q, y, out):
    """Fill out[:, i] with (A, P, T, A*ybar, Sf) at y[i] for the scenario rows[i] and discharge q[i] (NaN-safe)."""
    for i in range(y.shape[0]):
        yi = y[i]
        if not (yi > 0.0):
            for j in range(5):
                out[j, i] = math.nan
            continue
        a, p, t, m, dt, dp = geometry(cb.kind, cb.par, yi)
        out[0, i] = a
        out[1, i] = p
        out[2, i] = t
        out[3, i] = m
        out[4, i] = friction_slope(scenario(cb, rows[i]), fl, q[i], yi)


@kernel
def segment_constants(cb, fl, q, slope, alpha, tol, yc, yn, sf_c, code, status, status_n, count, known_yc):
    """Per scenario (roughness row i, discharge q[i]): critical depth, normal depth (NaN where none), the
    friction slope at critical depth, and the slope class code (:func:`gvflow._core.flow.slope_class_code`
    with band ``tol``). ``status[i]`` and ``status_n[i]`` are the status of
    the critical and the normal depth (:mod:`gvflow._core.codes`): a critical depth without a root (a conduit
    flowing full first) stands at the crown, a normal depth without one is NaN, and the caller raises where
    one did not converge. With ``known_yc`` the critical depths and their status come in ``yc`` and ``status``
    (the same section and discharges met before, e.g. at the junction of two changing segments), and
    ``count`` the number of critical depths each has. ``count[i]`` receives how many critical depths
    scenario i's section has (more than one: a compound section near bankfull)."""
    if not known_yc:
        critical_depth_batch(cb, fl, q, alpha, yc, status, count)
    normal_depth_batch(cb, fl, q, slope, yn, status_n)
    for i in range(q.shape[0]):
        ch = scenario(cb, i)
        if status_n[i] != SOLVED:
            yn[i] = math.nan
        sf_c[i] = friction_slope(ch, fl, q[i], yc[i])
        code[i] = slope_class_code(slope, yn[i], yc[i], tol)


@kernel
def step_many(cb, fl, rows, q, s0, y1, x1, x2, yc, branch, alpha, ce, avg, ymax, tol):
    """One standard step per element (arrays of equal length, scenario rows[i]); NaN where the branch has no
    root."""
    n = y1.shape[0]
    out = np.empty(n)
    for i in range(n):
        d = x2[i] - x1[i]
        if d == 0.0:
            out[i] = y1[i]
            continue
        y, code = step(scenario(cb, rows[i]), fl, q[i], s0, y1[i], d, yc[i], branch, alpha, ce, avg, ymax, tol,
                       y1[i])
        out[i] = y if code == 0 else math.nan
    return out


@kernel
def force_or_energy(cb, fl, q, y, alpha, energy, out):
    """Specific force (energy=False) or specific energy (energy=True) for y[s, j] at discharge q[s] (scenario s's
    roughness: a surveyed section's alpha and beta depend on its zone roughness)."""
    for s in range(y.shape[0]):
        ch = scenario(cb, s)
        qs = q[s]
        for j in range(y.shape[1]):
            yj = y[s, j]
            if not (yj > 0.0):
                out[s, j] = math.nan
            elif energy:
                out[s, j] = specific_energy(ch, fl, qs, yj, alpha)
            else:
                out[s, j] = specific_force(ch, fl, qs, yj, alpha)


@scalar_kernel
def _branch_depth(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, avg, ymax, tol):
    """Depth a signed distance d from (y1) along ``branch``; critical depth where the branch ends."""
    if d == 0.0:
        return y1
    y, code, dist, state = advance(ch, fl, q, s0, y1, d, yc, branch, alpha, ce, avg, ymax, tol, y1, UNKNOWN_STATE)
    return y if code == 0 else yc


@kernel
def locate_jumps(cb, fl, q, s0, y_sup, x_lo, y_sub, x_hi, yc, alpha, ce, avg,
                 ymax, tol, out_x, out_y1, out_y2):
    """Jump location between two stations, where M(supercritical) = M(subcritical), for each element.

    The supercritical profile is stepped downstream from (x_lo, y_sup), the
    subcritical one upstream from (x_hi, y_sub); the Illinois variant of
    regula falsi finds where their specific forces balance, to 1e-13 of the
    force or 1e-10 of the station spacing. An element that does not converge
    gets x = NaN.
    """
    for i in range(q.shape[0]):
        ch = scenario(cb, i)
        a, b = x_lo[i], x_hi[i]
        xtol = 1e-10 * (b - a) + 1e-12
        ys = y_sup[i]
        yb = _branch_depth(ch, fl, q[i], s0, y_sub[i], a - b, yc[i], 1, alpha, ce, avg, ymax, tol)
        fa = specific_force(ch, fl, q[i], ys, alpha) - specific_force(ch, fl, q[i], yb, alpha)
        ys = _branch_depth(ch, fl, q[i], s0, y_sup[i], b - a, yc[i], -1, alpha, ce, avg, ymax, tol)
        yb = y_sub[i]
        fb = specific_force(ch, fl, q[i], ys, alpha) - specific_force(ch, fl, q[i], yb, alpha)
        if fa <= 0.0 or fb >= 0.0:
            # the forces already balance at an end (within round-off of the governance test)
            out_x[i] = a if fa <= 0.0 else b
            out_y1[i] = _branch_depth(ch, fl, q[i], s0, y_sup[i], out_x[i] - x_lo[i], yc[i],
                                      -1, alpha, ce, avg, ymax, tol)
            out_y2[i] = _branch_depth(ch, fl, q[i], s0, y_sub[i], out_x[i] - x_hi[i], yc[i],
                                      1, alpha, ce, avg, ymax, tol)
            continue
        converged = False
        mscale = specific_force(ch, fl, q[i], y_sub[i], alpha)
        for _ in range(200):
            # converged on the force residual, or on the bracket (where the residual may stay large only at a
            # discontinuity of the marched depths: the caller checks the balance of what it gets)
            if abs(fb) <= 1e-13 * mscale or abs(b - a) <= xtol:
                converged = True
                break
            x = b - fb * (b - a) / (fb - fa)
            if not (min(a, b) < x < max(a, b)):
                x = 0.5 * (a + b)
            ys = _branch_depth(ch, fl, q[i], s0, y_sup[i], x - x_lo[i], yc[i], -1, alpha,
                               ce, avg, ymax, tol)
            yb = _branch_depth(ch, fl, q[i], s0, y_sub[i], x - x_hi[i], yc[i], 1, alpha,
                               ce, avg, ymax, tol)
            fx = specific_force(ch, fl, q[i], ys, alpha) - specific_force(ch, fl, q[i], yb, alpha)
            if (fx > 0.0) != (fb > 0.0):
                a, fa = b, fb  # the root lies between b and x
            else:
                fa *= 0.5  # Illinois: the retained end's residual is halved
            b, fb = x, fx
        if not converged:
            out_x[i] = out_y1[i] = out_y2[i] = math.nan
            continue
        xj = b
        out_x[i] = xj
        out_y1[i] = _branch_depth(ch, fl, q[i], s0, y_sup[i], xj - x_lo[i], yc[i], -1,
                                  alpha, ce, avg, ymax, tol)
        out_y2[i] = _branch_depth(ch, fl, q[i], s0, y_sub[i], xj - x_hi[i], yc[i], 1,
                                  alpha, ce, avg, ymax, tol)


@kernel
def froude_band_depths(cb, fl, q, lo_fr, hi_fr, y_lo, y_hi):
    """Depths at which each scenario's Froude number (alpha 1) equals ``hi_fr`` (y_lo) and ``lo_fr`` (y_hi):
    the critical depths of the discharges q/hi_fr and q/lo_fr, since Fr² = Q² T/(g A³) scales with Q². They
    do not depend on the roughness (a surveyed section's bracket does, through its Froude number, only on
    the ratios of its zone roughness): a scenario with the previous one's discharge takes its depths."""
    for i in range(q.size):
        if i > 0 and q[i] == q[i - 1] and (cb.kind != SURVEYED or (
                cb.law != DARCY and proportional(cb.rough[i], cb.rough[i - 1]))):
            y_lo[i] = y_lo[i - 1]
            y_hi[i] = y_hi[i - 1]
            continue
        ch = scenario(cb, i)
        y_lo[i] = critical_depth_single(ch, fl, q[i] / hi_fr, 1.0)[0]
        y_hi[i] = critical_depth_single(ch, fl, q[i] / lo_fr, 1.0)[0]


@scalar_kernel
def station_values(ch, fl, q, y, alpha, out, i):
    """Fill out[:, i] with (A, T, Sf, V, Fr, alpha V²/2g, alpha) at depth y in channel ``ch`` for discharge q
    (NaN where y is not positive). Fr is V/sqrt(gA/T) for a geometric section, the compound Froude number
    for a surveyed one."""
    if not (y > 0.0):
        for j in range(7):
            out[j, i] = math.nan
        return
    a, t, m, kk, dlnk, al, be, fr2 = hydraulics(ch, fl, q, y, alpha)
    v = q / a
    out[0, i] = a
    out[1, i] = t
    out[2, i] = slope_of(q, kk)
    out[3, i] = v
    out[4, i] = math.sqrt(fr2) if ch.kind == SURVEYED else math.sqrt(fr2 / al)
    out[5, i] = al * v * v / (2.0 * fl.g)
    out[6, i] = al


@kernel
def station_quantities(kinds, pars, offsets, laws, roughs, seg, fl, qs, y, alpha, out):
    """:func:`station_values` at depth y[i] in segment seg[i], whose discharge is qs[seg[i]], into out[:, i].
    Segment s has kind ``kinds[s]``, parameters ``pars[offsets[s]:offsets[s + 1]]``, law ``laws[s]`` and
    zone roughness ``roughs[s]`` (padded rows)."""
    s = seg[0] if y.shape[0] > 0 else 0
    ch = Channel(kinds[s], pars[offsets[s]:offsets[s + 1]], laws[s], roughs[s])
    for i in range(y.shape[0]):
        if seg[i] != s:  # the stations run segment by segment: a new channel record only where it changes
            s = seg[i]
            ch = Channel(kinds[s], pars[offsets[s]:offsets[s + 1]], laws[s], roughs[s])
        station_values(ch, fl, qs[s], y[i], alpha, out, i)


@kernel
def branch_limits_batch(cb, fl, q, alpha, y, branch, rows, near, far):
    """:func:`~gvflow._core.flow.branch_limits` of depth y[i] for scenario rows[i] of a channel batch; the
    status is not returned: the limits are minima and maxima already found once by the same scan."""
    for i in range(rows.size):
        near[i], far[i], _ = branch_limits(scenario(cb, rows[i]), fl, q[rows[i]], alpha, y[i], branch)
