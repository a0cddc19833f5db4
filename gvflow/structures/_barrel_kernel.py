"""Compiled standard-step march up a culvert barrel (private).

The outlet-control march of :func:`gvflow.structures.culverts.outlet_control_headwater`
runs here under numba, one discharge at a time, so a performance table of a
few hundred discharges (and the repeated barrel solutions of a road-overtopping
split) costs milliseconds. The step is the one documented in
:mod:`gvflow.structures.culverts`: the energy equation between stations with
the average of the end Manning friction slopes, full-barrel area and perimeter
at and above the soffit; each step's depth by Newton iteration from the
previous depth, safeguarded by bisection on the step's bracket (critical
depth to the highest depth the step can reach). Barrel geometry comes from
the profile kernel's
``geom`` (the section shapes' compiled mirror, checked against
:mod:`gvflow.sections` by the test suite).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..friction import KIND_MANNING
from ..profiles._kernel import critical_depth, geom, normal_depth
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
def _solve_step(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, q, rhs, lo, hi, z):
    """Depth z in [lo, hi] with residual(z) = 0 (residual <= 0 at lo, >= 0 at hi): Newton from the previous
    depth, safeguarded by bisection; (root, converged)."""
    z = min(max(z, lo), hi)
    for _ in range(200):
        if z >= d:
            a, p, t, dp = a_full, p_full, 0.0, 0.0
        else:
            zz = min(max(z, 1e-12 * d), d)
            a, p, t, _m, dp = geom(kind, p0, p1, p2, zz)
        conv = kn * a * (a / p) ** (2.0 / 3.0)
        sf = (q / conv) ** 2
        f = z + q * q / (2.0 * g * a * a) - 0.5 * dx * sf - rhs
        if f == 0.0:
            return z, True
        if f > 0.0:
            hi = z
        else:
            lo = z
        # d/dz [z + Q²/2gA² - dx Sf/2], with dSf/dz = -Sf (10/3 T/A - 4/3 P'/P)
        df = 1.0 - q * q * t / (g * a * a * a) + 0.5 * dx * sf * (10.0 / 3.0 * t / a - 4.0 / 3.0 * dp / p)
        zn = z - f / df if df > 0.0 else 0.5 * (lo + hi)
        if not (lo < zn < hi):
            zn = 0.5 * (lo + hi)
        if abs(zn - z) <= 1e-13 * abs(z) or hi - lo <= 1e-15 * abs(hi):
            return zn, True
        z = zn
    return z, False


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
            h, ok = _solve_step(kind, p0, p1, p2, d, a_full, p_full, kn, g, dx, qi, rhs, h_low[i], top, h)
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


@njit(cache=True)
def _normal_depths(kind, p0, p1, p2, law, n, q, s0, k, g, ymax, out):
    for i in range(q.size):
        out[i] = normal_depth(kind, p0, p1, p2, law, n, q[i], s0, k, g, 1e-6, ymax)


def barrel_normal_depth(barrel, q, u):
    """Manning normal depth in a barrel for each discharge per barrel; NaN where none exists below the
    soffit (adverse or flat barrel, or more than the barrel carries partly full). Compiled."""
    kind, p0, p1, p2 = barrel_spec(barrel)
    qa = np.asarray(q, dtype=float)
    flat = np.ascontiguousarray(qa).ravel()
    out = np.empty_like(flat)
    ymax = float(barrel.height) if barrel.shape == "circular" else math.inf
    _normal_depths(int(kind), float(p0), float(p1), float(p2), KIND_MANNING, float(barrel.roughness), flat,
                   float(barrel.slope), float(u.manning_k), float(u.g), ymax, out)
    out[out > barrel.height] = np.nan
    return out.reshape(qa.shape)


@njit(cache=True)
def _areas_perimeters(kind, p0, p1, p2, h, a_out, p_out):
    for i in range(h.size):
        a, p, _t, _m, _dp = geom(kind, p0, p1, p2, h[i])
        a_out[i] = a
        p_out[i] = p


def barrel_partial_geometry(barrel, h):
    """Flow area and wetted perimeter of a partly full barrel at depths h (0 < h <= rise), compiled."""
    kind, p0, p1, p2 = barrel_spec(barrel)
    ha = np.asarray(h, dtype=float)
    flat = np.ascontiguousarray(ha).ravel()
    a = np.empty_like(flat)
    p = np.empty_like(flat)
    _areas_perimeters(int(kind), float(p0), float(p1), float(p2), flat, a, p)
    return a.reshape(ha.shape), p.reshape(ha.shape)
