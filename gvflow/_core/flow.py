"""Specific energy, specific force, critical and normal depth (private, compiled).

Roots return ``(depth, status)``: status :data:`SOLVED`, :data:`NO_ROOT` (none
exists: normal depth on a flat or adverse bed, or a discharge above a closed
conduit's capacity), or :data:`NOT_CONVERGED` (the iteration did not meet its
tolerance); the Python callers turn a status into gvflow's errors, so no
unconverged iterate is ever used as an answer.

Specific energy E = y + alpha Q²/(2 g A²) and specific force
M = beta Q²/(g A) + A ybar (Chow, *Open-Channel Hydraulics*, 1959, ch. 3); critical
flow where dE/dy = 0, that is alpha Q² T = g A³ for a section with constant alpha.

Above the crown of a closed conduit (a surcharged, full conduit) the depth y stands
for the pressure head above the invert, so y is the hydraulic grade line above the
invert: the area is the full area A_f, E = y + alpha Q²/(2 g A_f²), and the
pressure on the full area adds A_f (y - D) to the first moment, so
M = beta Q²/(g A_f) + A_f (y - y_centroid), continuous with the free-surface value
at the crown (the hydrostatic pressure force of the full section under the grade
line, as in the momentum balance of a jump that fills a conduit; Chow 1959, §3-4,
with the pressure term taken at the centroid, from memory).
"""

from __future__ import annotations

import math

import numpy as np

from ._jit import kernel, scalar_kernel
from .codes import DARCY, MANNING, NO_ROOT, NOT_CONVERGED, SOLVED, SUB
from .geometry import SURVEYED, breakpoint_depths, geometry, max_depth, single_zone_depth
from .records import Channel
from .resistance import conveyance, froude_squared, hydraulics, velocity_coefficients

_RTOL = 1e-14


@scalar_kernel
def velocity_head(ch, fl, q, y, alpha):
    """alpha(y) V²/(2g) = alpha(y) Q²/(2 g A²) [length]."""
    if ch.kind == SURVEYED:  # area and alpha from one pass over the zones
        h = hydraulics(ch, fl, 1.0, y, alpha)
        return h[5] * (q / h[0]) * (q / h[0]) / (2.0 * fl.g)
    a, p, t, m, dt, dp = geometry(ch.kind, ch.par, y)
    al, be = velocity_coefficients(ch, fl, y, alpha)
    return al * (q / a) * (q / a) / (2.0 * fl.g)


@scalar_kernel
def specific_energy(ch, fl, q, y, alpha):
    """E = y + alpha(y) Q²/(2 g A²) [length]."""
    return y + velocity_head(ch, fl, q, y, alpha)


@scalar_kernel
def specific_force(ch, fl, q, y, alpha):
    """M = beta(y) Q²/(g A) + A ybar [length³]; above a closed conduit's crown the full area under the
    pressure head y (module notes)."""
    if ch.kind == SURVEYED:  # area, first moment and beta from one pass over the zones (an open section)
        h = hydraulics(ch, fl, 1.0, y, alpha)
        return h[6] * q * q / (fl.g * h[0]) + h[2]
    a, p, t, m, dt, dp = geometry(ch.kind, ch.par, y)
    al, be = velocity_coefficients(ch, fl, y, alpha)
    top = max_depth(ch.kind, ch.par)
    if y > top:
        m += a * (y - top)
    return be * q * q / (fl.g * a) + m


@scalar_kernel
def _subcritical_depth(ch, fl, q, alpha):
    """A depth at which the flow is subcritical (Fr² < 1), doubling from 1 [length]; NaN if none by 2^1000."""
    hi = 1.0
    for _ in range(1000):
        if froude_squared(ch, fl, q, hi, alpha) < 1.0:
            return hi
        hi *= 2.0
    return math.nan


@scalar_kernel
def critical_depth_single(ch, fl, q, alpha):
    """Critical depth of a section whose specific energy has one minimum: alpha Q² T = g A³.

    Safeguarded Newton on ln(A³/T) - ln(alpha Q²/g), increasing in depth, on a
    bracket from 0 to the crown (closed conduit) or a doubled upper bound.
    """
    target = math.log(alpha / fl.g) + 2.0 * math.log(q)  # log form: no overflow or underflow of Q²
    ymax = max_depth(ch.kind, ch.par)
    lo = 0.0
    if ymax < math.inf:
        hi = ymax * (1.0 - 1e-13)
        a, p, t, m, dt, dp = geometry(ch.kind, ch.par, hi)
        if 3.0 * ln(a) - ln(t) < target:
            return hi, NO_ROOT  # the conduit would flow full before the flow became critical
    else:
        hi = _subcritical_depth(ch, fl, q, alpha)
        if not hi < math.inf:
            return math.nan, NO_ROOT
    y = 0.5 * hi
    for _ in range(200):
        a, p, t, m, dt, dp = geometry(ch.kind, ch.par, y)
        f = 3.0 * ln(a) - ln(t) - target
        if math.isnan(f):
            return y, NOT_CONVERGED
        if f > 0.0:
            hi = y
        else:
            lo = y
        # Newton in ln y: d/d(ln y) [3 ln A - ln T] = y (3T/A - T'/T), nearly constant where A and T follow
        # powers of y, so tiny and huge depths converge as fast as ordinary ones
        df = y * (3.0 * t / a - dt / t) if a > 0.0 and t > 0.0 else 0.0
        yn = y * math.exp(-f / df) if 0.0 < df < math.inf and math.isfinite(f) else _split(lo, hi)
        if not (lo < yn < hi):
            yn = _split(lo, hi)
        if abs(yn - y) <= _RTOL * y or hi - lo <= 1e-15 * hi:
            # converged on the depth; the residual (a relative error in alpha Q² T/(g A³)) must be small too
            a, p, t, m, dt, dp = geometry(ch.kind, ch.par, yn)
            if abs(3.0 * ln(a) - ln(t) - target) <= 1e-8:
                return yn, SOLVED
            if yn > (1.0 - 1e-6) * ymax:
                return yn, NO_ROOT  # at the crown within round-off: the conduit flows full first
            return yn, NOT_CONVERGED
        y = yn
    return y, NOT_CONVERGED


@scalar_kernel
def _split(lo, hi):
    """A point inside the bracket (lo, hi): the middle, or a thousandth of hi while lo is 0 (geometric
    descent toward tiny roots), or the geometric mean of a bracket spanning decades."""
    if lo <= 0.0:
        return 1e-3 * hi
    if hi > 4.0 * lo:
        return math.sqrt(lo * hi)
    return 0.5 * (lo + hi)


@scalar_kernel
def _dedy(ch, fl, q, y, alpha):
    return 1.0 - froude_squared(ch, fl, q, y, alpha)


@scalar_kernel
def _polish(ch, fl, q, alpha, lo, hi):
    """Root of dE/dy (negative at lo, positive at hi) by the Illinois method; (depth, status)."""
    return _polish_signed(ch, fl, q, alpha, lo, hi, 1.0)


@scalar_kernel
def _polish_signed(ch, fl, q, alpha, lo, hi, sign):
    """Root of sign dE/dy (negative at lo, positive at hi): sign 1 a minimum of specific energy, -1 a
    maximum (:func:`_polish`)."""
    flo = sign * _dedy(ch, fl, q, lo, alpha)
    fhi = sign * _dedy(ch, fl, q, hi, alpha)
    side = 0
    y = hi
    for _ in range(200):
        y = (lo * fhi - hi * flo) / (fhi - flo)
        if not (lo < y < hi):
            y = 0.5 * (lo + hi)
        fy = sign * _dedy(ch, fl, q, y, alpha)
        if fy == 0.0 or hi - lo <= 4e-16 * hi:
            return y, SOLVED
        if fy < 0.0:
            lo, flo = y, fy
            if side == -1:
                fhi *= 0.5
            side = -1
        else:
            hi, fhi = y, fy
            if side == 1:
                flo *= 0.5
            side = 1
    if hi - lo <= 1e-12 * hi:
        return 0.5 * (lo + hi), SOLVED
    return y, NOT_CONVERGED


@kernel
def _scan_top(ch, fl, q, alpha):
    """Upper end of the scan of :func:`critical_depths`: a subcritical depth, at least twice the highest
    breakpoint (infinite where the flow is nowhere subcritical)."""
    top = _subcritical_depth(ch, fl, q, alpha)
    if not top < math.inf:
        return math.inf
    bps = breakpoint_depths(ch.kind, ch.par)
    return max(top, 2.0 * bps[-1]) if bps.size > 0 else top


@kernel
def _scan_grid(ch, top):
    """The depths at which :func:`critical_depths` evaluates dE/dy: geometric below the first breakpoint, then
    every breakpoint with a hair either side, 8 points closing in on it geometrically from above (from 1/64
    to 1/8192 of the way to the next: a floodplain just flooded can turn the flow supercritical over a
    sliver of depth) and 16 points between neighbours, up to ``top``."""
    bps = breakpoint_depths(ch.kind, ch.par)
    grid = np.empty(64 + 27 * (bps.size + 1))
    k = 0
    first = bps[0] if bps.size > 0 else top
    for i in range(48):
        grid[k] = first * 2.0 ** (-(47 - i) * 0.5)
        k += 1
    prev = first
    for j in range(bps.size + 1):
        nxt = bps[j] if j < bps.size else top
        for i in range(13, 5, -1):
            grid[k] = prev + (nxt - prev) * 2.0 ** (-i)
            k += 1
        for i in range(1, 17):
            grid[k] = prev + (nxt - prev) * i / 17.0
            k += 1
        if j < bps.size:
            grid[k] = nxt * (1.0 - 1e-12)
            grid[k + 1] = nxt
            k += 2
        prev = nxt
    grid[k] = top
    return grid[:k + 1]


@kernel
def _scan_froude(ch, fl, q, alpha, grid):
    """The squared Froude number (1 - dE/dy) at every depth of the scan grid."""
    fr2 = np.empty(grid.size)
    for i in range(grid.size):
        fr2[i] = froude_squared(ch, fl, q, grid[i], alpha)
    return fr2


@scalar_kernel
def _scan_minima(ch, fl, q, alpha, grid, fr2, scale, out):
    """Polish every change of sign of dE/dy = 1 - scale fr2 from negative to positive on the grid; (count,
    status) as :func:`critical_depths`. ``scale`` carries a scan made at another discharge (module notes of
    :func:`critical_depth_batch`); 1 for the scan at q itself."""
    count = 0
    status = SOLVED
    f_prev = 1.0 - fr2[0] * scale
    for i in range(1, grid.size):
        f_i = 1.0 - fr2[i] * scale
        if f_prev < 0.0 and f_i >= 0.0:
            y, st = _polish(ch, fl, q, alpha, grid[i - 1], grid[i])
            if st != SOLVED:
                status = st
            if count < out.size:
                out[count] = y
                count += 1
        f_prev = f_i
    if count == 0:
        return 0, NOT_CONVERGED
    return count, status


@kernel
def critical_depths(ch, fl, q, alpha, out):
    """Every depth where the specific energy has a local minimum, ascending; returns (count, status).

    Scans dE/dy on a grid that contains every breakpoint elevation and a hair on
    either side of it (dE/dy jumps where the top width jumps), brackets each change
    of sign from negative to positive and polishes it; a minimum at a kink (a
    breakpoint where dE/dy jumps from negative to positive) is returned at the
    breakpoint. ``out`` receives the depths. A section with one minimum gives one.
    """
    if ch.kind != SURVEYED:
        y, status = critical_depth_single(ch, fl, q, alpha)
        out[0] = y
        return 1, status
    top = _scan_top(ch, fl, q, alpha)
    if not top < math.inf:
        return 0, NO_ROOT
    grid = _scan_grid(ch, top)
    return _scan_minima(ch, fl, q, alpha, grid, _scan_froude(ch, fl, q, alpha, grid), 1.0, out)


@kernel
def branch_limits(ch, fl, q, alpha, y, branch):
    """The depths that bound the branch of depth y: (near, far, status).

    Specific energy of a compound section can have several minima m1 < m2 < ... with a maximum
    M1 < M2 < ... between each two (Blalock and Sturm, "Minimum specific energy in compound open
    channel", J. Hydraulics Division ASCE 107(6), 1981, from memory): depths in (m_i, M_i) are
    subcritical (dE/dy > 0, compound Froude number below 1), depths in (M_i-1, m_i) supercritical, with
    M_0 = 0 and the last M infinite. A profile stays on one such branch; it cannot pass a maximum any
    more than a minimum. ``branch`` :data:`SUB` gives the subcritical interval holding y (the one just
    above, where y is supercritical): near = its m_i, far = its M_i; :data:`SUPER` the supercritical
    interval holding y (the one just below, where y is subcritical): near = its m_i, far = M_i-1. A
    section with one minimum gives (critical depth, infinite or 0). A maximum at a breakpoint (where
    dE/dy jumps from positive to negative) is returned at the breakpoint.
    """
    far_none = math.inf if branch == SUB else 0.0
    if ch.kind != SURVEYED:
        yc, status = critical_depth_single(ch, fl, q, alpha)
        return yc, far_none, status
    top = _scan_top(ch, fl, q, alpha)
    if not top < math.inf:
        return math.nan, far_none, NO_ROOT
    grid = _scan_grid(ch, top)
    fr2 = _scan_froude(ch, fl, q, alpha, grid)
    status = SOLVED
    # walk the grid upward: the last turn at or below y and the first above it
    below, below_min = 0.0, False
    f_prev = 1.0 - fr2[0]
    for i in range(1, grid.size):
        f_i = 1.0 - fr2[i]
        turn = (f_prev < 0.0) != (f_i < 0.0)
        f_prev = f_i
        if not turn:
            continue
        is_min = f_i >= 0.0
        t, st = _polish_signed(ch, fl, q, alpha, grid[i - 1], grid[i], 1.0 if is_min else -1.0)
        if st != SOLVED:
            status = st
        if t <= y:
            below, below_min = t, is_min
            continue
        # t is the first turn above y: y lies between ``below`` and t
        if branch == SUB:
            if below_min:
                return below, t, status  # y subcritical, in (m_i, M_i)
            # y supercritical (or below every minimum): the subcritical interval above begins at t
            return _next_turn(ch, fl, q, alpha, grid, fr2, i, t, status)
        if is_min:
            return t, below, status  # y supercritical, in (M_i-1, m_i)
        return below, _previous_max(ch, fl, q, alpha, grid, fr2, i, below), status
    # no turn above y: y stands on the last, subcritical interval (m_k, infinity)
    if branch == SUB:
        return below, math.inf, status
    return below, _previous_max(ch, fl, q, alpha, grid, fr2, grid.size, below), status


@kernel
def _next_turn(ch, fl, q, alpha, grid, fr2, i, m, status):
    """(m, the maximum above m or infinity, status): the subcritical interval starting at the minimum m
    found between grid[i - 1] and grid[i] (:func:`branch_limits`)."""
    f_prev = 1.0 - fr2[i]
    for j in range(i + 1, grid.size):
        f_j = 1.0 - fr2[j]
        if f_prev >= 0.0 and f_j < 0.0:
            t, st = _polish_signed(ch, fl, q, alpha, grid[j - 1], grid[j], -1.0)
            return m, t, st if st != SOLVED else status
        f_prev = f_j
    return m, math.inf, status


@kernel
def _previous_max(ch, fl, q, alpha, grid, fr2, i, m):
    """The maximum below the minimum m, searched on the grid below index i (0 where there is none)."""
    f_next = 1.0 - fr2[i - 1]
    for j in range(i - 1, 0, -1):
        f_j = 1.0 - fr2[j - 1]
        if f_j >= 0.0 and f_next < 0.0 and grid[j] <= m:
            t, st = _polish_signed(ch, fl, q, alpha, grid[j - 1], grid[j], -1.0)
            return t
        f_next = f_j
    return 0.0


@scalar_kernel
def slope_class_code(slope, yn, yc, tol):
    """Slope class code, an index into :data:`gvflow._core.codes.SLOPE_CLASS_NAMES`: horizontal (3) at
    slope 0, adverse (4) below; on a positive slope mild (0) where yn - yc > tol yc or there is no normal
    depth (yn NaN: a closed conduit that cannot carry the discharge in uniform flow), steep (1) where
    yc - yn > tol yc, else critical (2) (Chow 1959, §9-2, with the critical band of relative width tol)."""
    if slope == 0.0:
        return 3
    if slope < 0.0:
        return 4
    if not math.isfinite(yn) or yn - yc > tol * yc:
        return 0
    if yc - yn > tol * yc:
        return 1
    return 2


@scalar_kernel
def peak_conveyance(ch, fl, q):
    """(depth, conveyance) of a closed conduit's largest conveyance, by golden-section search.

    Between half full and the crown the conveyance of a circle has one maximum
    (about 0.938 D with constant Manning n; Chow 1959 ch. 6); the search narrows the
    bracket 80 times by the golden ratio, far below the depth's round-off.
    """
    ymax = max_depth(ch.kind, ch.par)
    lo = 0.5 * ymax
    hi = ymax
    r = (math.sqrt(5.0) - 1.0) / 2.0
    for _ in range(80):
        c = hi - r * (hi - lo)
        e = lo + r * (hi - lo)
        if conveyance(ch, fl, q, c) > conveyance(ch, fl, q, e):
            hi = e
        else:
            lo = c
    y = 0.5 * (lo + hi)
    return y, conveyance(ch, fl, q, y)


@scalar_kernel
def ln(x):
    """Natural logarithm, -inf at zero (as IEEE arithmetic gives it; Python's math.log would raise)."""
    return math.log(x) if x > 0.0 else -math.inf


@scalar_kernel
def _log_sf(ch, fl, q, y):
    """ln Sf = 2 (ln Q - ln K), free of the overflow and underflow of (Q/K)² at extreme discharges."""
    return 2.0 * (math.log(q) - ln(conveyance(ch, fl, q, y)))


@scalar_kernel
def _log_sf_slope(ch, fl, q, y):
    """(ln Sf, d ln Sf/dy) at depth y from one pass of :func:`~gvflow._core.resistance.hydraulics`: the same
    values as :func:`_log_sf` and :func:`~gvflow._core.resistance.dlnsf_dy`."""
    h = hydraulics(ch, fl, q, y, 1.0)
    return 2.0 * (math.log(q) - ln(h[3])), -2.0 * h[4]


@scalar_kernel
def normal_depth(ch, fl, q, s0):
    """Depth of uniform flow, Sf(y) = S0; (depth, status).

    No root on a flat or adverse bed. In a closed conduit the conveyance peaks
    below the crown (about 0.94 D for a circle, Chow 1959 ch. 6): the root is
    sought on the lower branch, below the peak found by golden-section search,
    and a discharge above the peak's has no root. Otherwise safeguarded Newton
    on ln Sf(y) - ln S0, decreasing in depth.
    """
    y, status, slope = _normal_depth_slope(ch, fl, q, s0)
    return y, status


@scalar_kernel
def _normal_depth_slope(ch, fl, q, s0):
    """:func:`normal_depth` and d ln Sf/d ln y at the last depth its iteration evaluated (NaN if none)."""
    if not s0 > 0.0:
        return math.nan, NO_ROOT, math.nan
    lns0 = math.log(s0)
    if max_depth(ch.kind, ch.par) < math.inf:
        hi, k_peak = peak_conveyance(ch, fl, q)
        if _log_sf(ch, fl, q, hi) > lns0 + math.log1p(1e-12):
            return math.nan, NO_ROOT, math.nan
    else:
        hi = 1.0
        f_hi = _log_sf(ch, fl, q, hi)
        for _ in range(1000):
            if f_hi < lns0:
                break
            hi *= 2.0
            f_hi = _log_sf(ch, fl, q, hi)
        if not f_hi < lns0:
            return math.nan, NO_ROOT, math.nan
    return _normal_newton(ch, fl, q, lns0, 0.0, hi, 0.5 * hi)


@scalar_kernel
def _normal_newton(ch, fl, q, lns0, lo, hi, y):
    """Safeguarded Newton in ln y on ln Sf(y) - ln S0 from depth y inside the bracket (lo, hi) of the root
    (hi may be infinite: the bracket then grows by doubling); (depth, status as :func:`normal_depth`,
    d ln Sf/d ln y at the last depth evaluated)."""
    y_prev = f_prev = math.nan
    df = math.nan
    for _ in range(200):
        f, df = _log_sf_slope(ch, fl, q, y)
        f -= lns0  # decreasing in y
        if f > 0.0:
            lo = y
        else:
            hi = y
        # Newton in ln y (see critical_depth_single): d ln Sf / d ln y = y dlnsf_dy
        df *= y
        if ch.law == DARCY and y_prev == y_prev and y != y_prev:
            # Darcy: dlnsf_dy holds the friction factor fixed, which is far off where ks/4R is large;
            # the secant slope keeps the iteration superlinear
            sec = (f - f_prev) / (math.log(y) - math.log(y_prev))
            if sec < 0.0:
                df = sec
        y_prev, f_prev = y, f
        newton = -math.inf < df < 0.0 and math.isfinite(f)
        yn = y * math.exp(-f / df) if newton else math.nan
        if newton and abs(yn - y) <= _RTOL * y:
            pass  # a Newton step within round-off of y, which may sit on the bracket's end: converged
        elif not (lo < yn < hi):
            yn = _split(lo, hi) if hi < math.inf else 2.0 * lo
        if abs(yn - y) <= _RTOL * y or (hi < math.inf and hi - lo <= 1e-15 * hi):
            # converged on the depth; the friction slope there must match the bed slope too (it need not
            # where the resistance law is not monotone in depth, e.g. a roughness height near 2R)
            if abs(_log_sf(ch, fl, q, yn) - lns0) <= 1e-8:
                return yn, SOLVED, df
            return yn, NOT_CONVERGED, df
        y = yn
    return y, NOT_CONVERGED, df


@kernel
def normal_depth_batch(cb, fl, q, s0, yn, status):
    """:func:`normal_depth` of every scenario s of a channel batch (discharge q[s], roughness row s) into
    yn[s] and status[s].

    Where a scenario's zone roughness row is the previous one's times one factor f (a roughness or discharge
    sweep) in an open section under Manning's or Chezy's law, every zone conveyance is the previous one's
    times 1/f (Manning) or f (Chezy): the new normal depth has the conveyance K(yn) = rho K_prev(yn_prev),
    rho the ratio of the two Q/(f or 1/f). Newton then starts from yn_prev rho^(1/m), m = d ln K/d ln y at
    yn_prev (off the new root by about the square of the step between the two), and polishes on the
    scenario's own conveyance to the tolerance :func:`normal_depth` meets: the depth found alone, to
    round-off. A start that fails falls back to :func:`normal_depth`.
    """
    prev = -1
    slope_prev = math.nan
    for s in range(q.shape[0]):
        ch = Channel(cb.kind, cb.par, cb.law, cb.rough[s])
        if s0 > 0.0 and prev >= 0 and cb.law != DARCY and max_depth(ch.kind, ch.par) == math.inf \
                and proportional(cb.rough[s], cb.rough[prev]):
            f = cb.rough[s][0] / cb.rough[prev][0]
            rho = (q[s] / q[prev]) * (f if cb.law == MANNING else 1.0 / f)
            m = -0.5 * slope_prev  # d ln K/d ln y = -(d ln Sf/d ln y)/2
            guess = yn[prev] * math.exp(math.log(rho) / m) if 0.0 < m < math.inf else yn[prev]
            if guess > 0.0 and math.isfinite(guess):
                y, st, slope = _normal_newton(ch, fl, q[s], math.log(s0), 0.0, math.inf, guess)
                if st == SOLVED:
                    yn[s], status[s] = y, st
                    prev, slope_prev = s, slope
                    continue
        yn[s], status[s], slope_prev = _normal_depth_slope(ch, fl, q[s], s0)
        prev = s if status[s] == SOLVED else -1


@scalar_kernel
def _least_energy(ch, fl, q, alpha, buf, n, status):
    """(depth, status, count) of the critical depth of least specific energy among buf[:n]."""
    if n == 0:
        return math.nan, status, 0
    best = 0
    e_best = specific_energy(ch, fl, q, buf[0], alpha)
    for i in range(1, n):
        e = specific_energy(ch, fl, q, buf[i], alpha)
        if e < e_best:
            best = i
            e_best = e
    return buf[best], status, n


@kernel
def critical_depth(ch, fl, q, alpha):
    """The critical depth of least specific energy: (depth, status, how many critical depths there are).

    A geometric section has one (:func:`critical_depth_single`); a surveyed one is scanned for every
    minimum of specific energy (:func:`critical_depths`) and the lowest-energy one is returned.
    """
    if ch.kind != SURVEYED:
        y, status = critical_depth_single(ch, fl, q, alpha)
        return y, status, 1
    buf = np.empty(64)
    n, status = critical_depths(ch, fl, q, alpha, buf)
    return _least_energy(ch, fl, q, alpha, buf, n, status)


@kernel
def proportional(r, ref):
    """Whether roughness row ``r`` is ``ref`` times one factor, to 2e-15 relative in every zone."""
    f = r[0] / ref[0]
    for z in range(1, r.shape[0]):
        if abs(r[z] - f * ref[z]) > 2e-15 * r[z]:
            return False
    return True


@kernel
def critical_depth_batch(cb, fl, q, alpha, yc, status, count):
    """:func:`critical_depth` of every scenario s of a channel batch (discharge q[s], roughness row s).

    The squared Froude number of a section of several zones, 1 - dE/dy, is Q² times a function of depth
    and of the ratios of the zone conveyances (module notes of :mod:`gvflow._core.resistance`), and each
    zone's conveyance is proportional to 1/n (Manning) or C (Chezy): scenarios whose zone roughness rows
    are proportional (a discharge sweep, a roughness factor) share the scan of :func:`critical_depths`,
    taken once at a reference discharge q0 and scaled by (q/q0)², whenever their scan spans the same
    depths. The brackets found are then polished with each scenario's own discharge and roughness, so
    each depth is the one found alone, but for a grid point where dE/dy is zero to round-off. A scenario
    whose discharge is the previous one's and whose zone roughness row is proportional to it (a roughness
    factor) has the same Froude number at every depth, so the same critical depths: it takes the previous
    scenario's (the depth found alone to round-off; a polish of its own would only move it by that). A
    scenario whose zone roughness is not proportional to the scan's (zones drawn independently) keeps the
    scan's values below :func:`~gvflow._core.geometry.single_zone_depth`, where one zone holds all the
    water and the Froude number does not depend on the roughness, and scans the depths above again.
    """
    buf = np.empty(64)
    grid = np.empty(0)
    fr2 = np.empty(0)
    ref = -1
    top_ref = math.nan
    one_zone = single_zone_depth(cb.kind, cb.par) if cb.law != DARCY else 0.0
    for s in range(q.shape[0]):
        ch = Channel(cb.kind, cb.par, cb.law, cb.rough[s])
        if ch.kind != SURVEYED:
            yc[s], status[s], count[s] = critical_depth(ch, fl, q[s], alpha)
            continue
        if s > 0 and q[s] == q[s - 1] and cb.law != DARCY and proportional(cb.rough[s], cb.rough[s - 1]):
            yc[s], status[s], count[s] = yc[s - 1], status[s - 1], count[s - 1]
            continue
        top = _scan_top(ch, fl, q[s], alpha)
        if not top < math.inf:
            yc[s], status[s], count[s] = math.nan, NO_ROOT, 0
            continue
        if ref >= 0 and top == top_ref and not proportional(cb.rough[s], cb.rough[ref]):
            # the same grid: where at most one zone holds water the Froude number does not depend on the
            # roughness at all (Q² T/(g A³) of that zone), so only the depths above are scanned again
            rescale = (q[s] / q[ref]) * (q[s] / q[ref])
            for i in range(grid.size):
                if grid[i] < one_zone:
                    fr2[i] *= rescale
                else:
                    fr2[i] = froude_squared(ch, fl, q[s], grid[i], alpha)
            ref = s
        elif ref < 0 or top != top_ref or not proportional(cb.rough[s], cb.rough[ref]):
            ref = s
            top_ref = top
            grid = _scan_grid(ch, top)
            fr2 = _scan_froude(ch, fl, q[s], alpha, grid)
        scale = 1.0 if s == ref else (q[s] / q[ref]) * (q[s] / q[ref])
        n, st = _scan_minima(ch, fl, q[s], alpha, grid, fr2, scale, buf)
        yc[s], status[s], count[s] = _least_energy(ch, fl, q[s], alpha, buf, n, st)
