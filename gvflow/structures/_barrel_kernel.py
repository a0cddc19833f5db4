"""Entry points of the culvert barrel's compiled relations (private): arrays in, arrays out.

The march itself is :mod:`gvflow._core.barrel`; geometry and the critical and normal
depths of the partly full barrel are the core's, through the barrel's section
(:class:`~gvflow.sections.Circular` or :class:`~gvflow.sections.Rectangular`).
"""

from __future__ import annotations

import math

import numpy as np

from .._core.codes import MANNING, NOT_CONVERGED, SOLVED
from .._core.records import channel, fluid
from .._engine import core
from ..errors import ConvergenceError
from ..sections import Circular, Rectangular


def barrel_channel(barrel):
    """The core channel of a barrel's partly full section, with its Manning's n."""
    section = Circular(diameter=barrel.diameter) if barrel.shape == "circular" else Rectangular(width=barrel.span)
    kind, par = section.core_params()
    return channel(kind, par, MANNING, barrel.roughness)


def _flat(values):
    a = np.asarray(values, dtype=float)
    return a.shape, np.ascontiguousarray(a).ravel()


def run_march(barrel, q, h_start, h_low, sf_max, dx, steps, u):
    """(h_end, failed, full_all, non-converged steps) of the upstream march for every discharge per barrel."""
    q = np.ascontiguousarray(q, dtype=float).ravel()
    h_end = np.empty_like(q)
    failed = np.zeros(q.shape, dtype=np.bool_)
    full_all = np.zeros(q.shape, dtype=np.bool_)
    bad = core("barrel", 20 * q.size * int(steps)).march_barrel(
        barrel_channel(barrel), fluid(u), float(barrel.height), float(barrel.full_area), float(barrel.full_perimeter),
        float(barrel.slope), float(dx), int(steps), q, np.ascontiguousarray(h_start, dtype=float).ravel(),
        np.ascontiguousarray(h_low, dtype=float).ravel(), np.ascontiguousarray(sf_max, dtype=float).ravel(),
        h_end, failed, full_all)
    return h_end, failed, full_all, bad


def barrel_critical_depth(barrel, q, u):
    """Critical depth in a partly full barrel for each discharge per barrel; the rise where the barrel would
    flow full before the flow became critical."""
    shape, flat = _flat(q)
    out, status = np.empty_like(flat), np.zeros(flat.shape, np.int64)
    core("arrays", 100 * flat.size).critical_depth_many(barrel_channel(barrel), fluid(u), flat, 1.0, out, status,
                                                         np.zeros(flat.shape, np.int64))
    if np.any(status == NOT_CONVERGED):
        raise ConvergenceError("critical depth in the barrel did not converge", iterations=200)
    out = np.where(status == SOLVED, np.minimum(out, float(barrel.height)), float(barrel.height))
    return out.reshape(shape)


def barrel_normal_depth(barrel, q, u):
    """Manning normal depth in a barrel for each discharge per barrel; NaN where none exists below the
    soffit (adverse or flat barrel, or more than the barrel carries partly full)."""
    shape, flat = _flat(q)
    out, status = np.empty_like(flat), np.zeros(flat.shape, np.int64)
    s0 = np.full(flat.shape, float(barrel.slope))
    core("arrays", 100 * flat.size).normal_depth_many(barrel_channel(barrel), fluid(u), flat, s0, out, status)
    if np.any(status == NOT_CONVERGED):
        raise ConvergenceError("normal depth in the barrel did not converge", iterations=200)
    out = np.where(status == SOLVED, out, math.nan)
    out[out > barrel.height] = math.nan
    return out.reshape(shape)


def barrel_partial_geometry(barrel, h):
    """Flow area and wetted perimeter of a partly full barrel at depths h (0 < h <= rise)."""
    shape, flat = _flat(h)
    out = np.empty((6, flat.size))
    ch = barrel_channel(barrel)
    core("arrays", flat.size).geometry_many(ch.kind, ch.par, flat, out)
    return out[0].reshape(shape), out[1].reshape(shape)


def barrel_friction_slope(barrel, q, h, u):
    """Manning friction slope (Q/K)² in a barrel at depths h (0 < h <= rise) for discharges q per barrel, K
    the core's conveyance of the partly full section."""
    q, h = np.broadcast_arrays(np.asarray(q, dtype=float), np.asarray(h, dtype=float))
    shape, qf = _flat(q)
    hf = np.ascontiguousarray(h, dtype=float).ravel()
    k = np.empty_like(qf)
    core("arrays", qf.size).conveyance_many(barrel_channel(barrel), fluid(u), qf, hf, k)
    return ((qf / k) ** 2).reshape(shape)
