"""Compiled standard-step march up a culvert barrel (private).

The outlet-control march of :func:`gvflow.structures.culverts.outlet_control_headwater`
runs here under numba, one discharge at a time, so a performance table of a
few hundred discharges (and the repeated barrel solutions of a road-overtopping
split) costs milliseconds. The step is the one documented in
:mod:`gvflow.structures.culverts`: the energy equation between stations with
the average of the end Manning friction slopes, full-barrel area and perimeter
at and above the soffit. Barrel geometry comes from the profile kernel's
``geom`` (the section shapes' compiled mirror, checked against
:mod:`gvflow.sections` by the test suite).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..profiles._kernel import critical_depth, geom
from ..sections import Circular, Rectangular


def barrel_spec(barrel) -> tuple[int, float, float, float]:
    """(kind code, p0, p1, p2) of a barrel's partly full section for the compiled geometry."""
    if barrel.shape == "circular":
        return Circular(diameter=barrel.diameter).kernel_spec()
    return Rectangular(width=barrel.span).kernel_spec()


@njit(cache=True)
def _area_sf(kind, p0, p1, p2, d, a_full, p_full, kn, q, h):
    if h >= d:
        a = a_full
        p = p_full
    else:
        hp = min(max(h, 1e-12 * d), d)
        a, p, _t, _m, _dp = geom(kind, p0, p1, p2, hp)
    conv = kn * a * (a / p) ** (2.0 / 3.0)
    return a, (q / conv) ** 2


@njit(cache=True)
def _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, z):
    a, sf = _area_sf(kind, p0, p1, p2, d, a_full, p_full, kn, q, z)
    return z + q * q / (2.0 * g * a * a) - 0.5 * dx * sf - rhs


@njit(cache=True)
def _illinois(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, lo, hi, rtol, max_iter):
    """Scalar Illinois iteration on a bracket (residual <= 0 at lo, >= 0 at hi); (root, converged)."""
    flo = _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, lo)
    fhi = _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, hi)
    if flo == 0.0:
        return lo, True
    if fhi == 0.0:
        return hi, True
    x = 0.5 * (lo + hi)
    side = 0
    for _ in range(max_iter):
        if abs(hi - lo) <= rtol * abs(x):
            return x, True
        denom = fhi - flo
        xs = hi - fhi * (hi - lo) / denom if denom != 0.0 else math.nan
        if not math.isfinite(xs) or xs <= min(lo, hi) or xs >= max(lo, hi):
            xs = 0.5 * (lo + hi)
        fx = _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, xs)
        x = xs
        if fx == 0.0:
            return x, True
        if (fx < 0.0) == (fhi < 0.0):
            # the new point replaces hi; lo survives
            if side == -1:
                flo *= 0.5
            side = -1
        else:
            if side == 1:
                fhi *= 0.5
            side = 1
            lo, flo = hi, fhi
        hi, fhi = xs, fx
    return x, False


@njit(cache=True)
def march_barrel(kind, p0, p1, p2, d, a_full, p_full, kn, s0, g, dx, steps, q, h_start, h_low, sf_max,
                 h_end, failed, full_all):
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
            a2, sf2 = _area_sf(kind, p0, p1, p2, d, a_full, p_full, kn, qi, h)
            rhs = h + qi * qi / (2.0 * g * a2 * a2) + dx * (0.5 * sf2 - s0)
            if _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, h_low[i]) > 0.0:
                fail = True
                break
            top = max(rhs + dx * sf_max[i], h_low[i]) + 1e-9 * d
            # tight bracket around the previous depth first (the residual rises at a rate near 1)
            fp = _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, h)
            w = 4.0 * abs(fp) + 1e-12 * d
            lo = max(h - w, h_low[i])
            hi = min(h + w, top)
            if not (_residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, lo) <= 0.0
                    and _residual(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, hi) >= 0.0):
                lo = h_low[i]
                hi = top
            h, ok = _illinois(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, lo, hi, 1e-15, 200)
            if not ok:
                bad += 1
            full = full and h >= d
        h_end[i] = h
        failed[i] = fail
        full_all[i] = full
    return bad


def run_march(barrel, q, h_start, h_low, sf_max, dx, steps, u):
    """Python entry: arrays in, (h_end, failed, full_all, non-converged steps) out."""
    kind, p0, p1, p2 = barrel_spec(barrel)
    q = np.ascontiguousarray(q, dtype=float).ravel()
    h_end = np.empty_like(q)
    failed = np.zeros(q.shape, dtype=np.bool_)
    full_all = np.zeros(q.shape, dtype=np.bool_)
    bad = march_barrel(int(kind), float(p0), float(p1), float(p2), float(barrel.height), float(barrel.full_area),
                       float(barrel.full_perimeter), float(u.manning_k / barrel.roughness), float(barrel.slope),
                       float(u.g), float(dx), int(steps), q,
                       np.ascontiguousarray(h_start, dtype=float).ravel(),
                       np.ascontiguousarray(h_low, dtype=float).ravel(),
                       np.ascontiguousarray(sf_max, dtype=float).ravel(), h_end, failed, full_all)
    return h_end, failed, full_all, bad


@njit(cache=True)
def _critical_depths(kind, p0, p1, p2, q, g, ymax, out):
    for i in range(q.size):
        out[i] = critical_depth(kind, p0, p1, p2, q[i], g, 1.0, ymax)


def barrel_critical_depth(barrel, q, u):
    """Critical depth in a partly full barrel for each discharge per barrel (compiled; array in, array out)."""
    kind, p0, p1, p2 = barrel_spec(barrel)
    qa = np.asarray(q, dtype=float)
    flat = np.ascontiguousarray(qa).ravel()
    out = np.empty_like(flat)
    _critical_depths(int(kind), float(p0), float(p1), float(p2), flat, float(u.g), float(barrel.height), out)
    return out.reshape(qa.shape)
