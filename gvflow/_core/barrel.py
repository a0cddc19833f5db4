"""Standard-step march up a culvert barrel (private; compiled or interpreted, see :mod:`gvflow._engine`).

The outlet-control march of :func:`gvflow.structures.culverts.outlet_control_headwater`,
one discharge at a time, so a performance table of a few hundred discharges (and the
repeated barrel solutions of a road-overtopping split) costs milliseconds. The step is
the one documented in :mod:`gvflow.structures.culverts`: the energy equation between
stations with the average of the end Manning friction slopes, full-barrel area and
perimeter at and above the soffit; each step's depth by Newton iteration from the
previous depth, safeguarded by bisection on the step's bracket (critical depth to the
highest depth the step can reach). The barrel's partly full section is a core channel
``ch`` (a circle or a rectangle) and every relation comes from the core.
"""

from __future__ import annotations

from ._jit import kernel
from .codes import MANNING
from .resistance import _zone_k, hydraulics, slope_of


@kernel
def _state(ch, fl, d, a_full, p_full, q, h):
    """(A, Sf, T, dln K/dy) at depth h: the partly full section below the soffit, the full barrel at and above."""
    if h >= d:
        kk = _zone_k(MANNING, ch.rough[0], fl.k, a_full, p_full)
        return a_full, slope_of(q, kk), 0.0, 0.0
    a, t, m, kk, dlnk, al, be, fr2 = hydraulics(ch, fl, q, min(max(h, 1e-12 * d), d), 1.0)
    return a, slope_of(q, kk), t, dlnk


@kernel
def _residual(ch, fl, d, a_full, p_full, dx, q, rhs, z):
    a, sf, t, dlnk = _state(ch, fl, d, a_full, p_full, q, z)
    return z + (q / a) * (q / a) / (2.0 * fl.g) - 0.5 * dx * sf - rhs


@kernel
def _solve_step(ch, fl, d, a_full, p_full, dx, q, rhs, lo, hi, z):
    """Depth z in [lo, hi] with residual(z) = 0 (residual <= 0 at lo, >= 0 at hi): Newton from the previous
    depth, safeguarded by bisection; (root, converged)."""
    z = min(max(z, lo), hi)
    for _ in range(200):
        a, sf, t, dlnk = _state(ch, fl, d, a_full, p_full, q, z)
        f = z + (q / a) * (q / a) / (2.0 * fl.g) - 0.5 * dx * sf - rhs
        if f == 0.0:
            return z, True
        if f > 0.0:
            hi = z
        else:
            lo = z
        # d/dz [z + Q²/2gA² - dx Sf/2], with dSf/dz = -2 Sf dln K/dz
        df = 1.0 - (q / a) * (q / a) * t / (fl.g * a) + dx * sf * dlnk
        zn = z - f / df if df > 0.0 else 0.5 * (lo + hi)
        if not (lo < zn < hi):
            zn = 0.5 * (lo + hi)
        if abs(zn - z) <= 1e-13 * abs(z) or hi - lo <= 1e-15 * abs(hi):
            return zn, True
        z = zn
    return z, False


@kernel
def march_barrel(ch, fl, d, a_full, p_full, s0, dx, steps, q, h_start, h_low, sf_max, h_end, failed, full_all):
    """March every discharge ``steps`` intervals upstream from ``h_start``.

    Fills ``h_end`` (depth at the entrance), ``failed`` (no subcritical step
    fits: the barrel runs supercritical) and ``full_all`` (full at every
    station); returns the number of steps that did not converge.
    """
    bad = 0
    for i in range(q.size):
        qi = q[i]
        h = h_start[i]
        full = h >= d
        fail = False
        for _ in range(steps):
            a2, sf2, t2, dl2 = _state(ch, fl, d, a_full, p_full, qi, h)
            rhs = h + (qi / a2) * (qi / a2) / (2.0 * fl.g) + dx * (0.5 * sf2 - s0)
            if _residual(ch, fl, d, a_full, p_full, dx, qi, rhs, h_low[i]) > 0.0:
                fail = True
                break
            top = max(rhs + dx * sf_max[i], h_low[i]) + 1e-9 * d
            h, ok = _solve_step(ch, fl, d, a_full, p_full, dx, qi, rhs, h_low[i], top, h)
            if not ok:
                bad += 1
            full = full and h >= d
        h_end[i] = h
        failed[i] = fail
        full_all[i] = full
    return bad
