"""Loops of the core's scalar relations over flat arrays, for the public array functions (private).

Each takes inputs already broadcast to one flat shape and fills ``out`` (and
``status`` for roots, see :mod:`gvflow._core.flow`).
"""

from __future__ import annotations

import math

from ._jit import kernel
from .flow import (
    critical_depth,
    critical_depths,
    normal_depth,
    peak_conveyance,
    slope_class_code,
    specific_energy,
    specific_force,
)
from .geometry import SURVEYED, geometry, zone_count, zone_geometry
from .march import gvf_terms
from .resistance import (
    _zone_k,
    colebrook,
    conveyance,
    friction_slope,
    froude_squared,
    sf_average,
    velocity_coefficients,
)


@kernel
def geometry_many(kind, par, y, out):
    """``out[:, j]`` = (A, P, T, M, dT/dy, dP/dy) at depth ``y[j]``."""
    for j in range(y.size):
        a, p, t, m, dt, dp = geometry(kind, par, y[j])
        out[0, j] = a
        out[1, j] = p
        out[2, j] = t
        out[3, j] = m
        out[4, j] = dt
        out[5, j] = dp


@kernel
def conveyance_many(ch, fl, q, y, out):
    for j in range(y.size):
        out[j] = conveyance(ch, fl, q[j], y[j])


@kernel
def normal_depth_many(ch, fl, q, s0, out, status):
    for j in range(q.size):
        out[j], status[j] = normal_depth(ch, fl, q[j], s0[j])


@kernel
def critical_depth_many(ch, fl, q, alpha, out, status, count):
    """The critical depth of least specific energy for each discharge; ``count`` says how many there are."""
    for j in range(q.size):
        out[j], status[j], count[j] = critical_depth(ch, fl, q[j], alpha)


@kernel
def all_critical_depths(ch, fl, q, alpha, out):
    """Every critical depth of one discharge into ``out``; returns (count, status)."""
    return critical_depths(ch, fl, q, alpha, out)


@kernel
def slope_class_many(slope, yn, yc, tol, out):
    """:func:`gvflow._core.flow.slope_class_code` of each element."""
    for j in range(slope.size):
        out[j] = slope_class_code(slope[j], yn[j], yc[j], tol)


@kernel
def gvf_terms_many(ch, fl, q, s0, alpha, y, num, den):
    """:func:`gvflow._core.march.gvf_terms` (S0 - Sf and 1 - Fr²) of each element."""
    for j in range(q.size):
        num[j], den[j] = gvf_terms(ch, fl, q[j], s0[j], alpha, y[j])


@kernel
def energy_friction_many(ch, fl, q, y, alpha, energy, sf):
    """Specific energy and friction slope at each depth y[j] for one discharge q."""
    for j in range(y.size):
        energy[j] = specific_energy(ch, fl, q, y[j], alpha)
        sf[j] = friction_slope(ch, fl, q, y[j])


@kernel
def sf_average_many(avg, s1, s2, out):
    """The mean friction slope (:func:`gvflow._core.resistance.sf_average`, code ``avg``) of each pair."""
    for j in range(s1.size):
        out[j] = sf_average(avg, s1[j], s2[j])[0]


@kernel
def froude_many(ch, fl, q, y, alpha, out):
    for j in range(q.size):
        out[j] = math.sqrt(froude_squared(ch, fl, q[j], y[j], alpha))


@kernel
def energy_many(ch, fl, q, y, alpha, out):
    for j in range(q.size):
        out[j] = specific_energy(ch, fl, q[j], y[j], alpha)


@kernel
def force_many(ch, fl, q, y, alpha, out):
    for j in range(q.size):
        out[j] = specific_force(ch, fl, q[j], y[j], alpha)


@kernel
def colebrook_many(re, eps, out):
    for j in range(re.size):
        out[j] = colebrook(re[j], eps[j])


@kernel
def peak_conveyance_many(ch, fl, q, depth, out):
    for j in range(q.size):
        depth[j], out[j] = peak_conveyance(ch, fl, q[j])


@kernel
def coefficients_many(ch, fl, y, out):
    """``out[:, j]`` = (alpha, beta) of the section's own zones at depth ``y[j]``."""
    for j in range(y.size):
        out[0, j], out[1, j] = velocity_coefficients(ch, fl, y[j], 1.0)


@kernel
def zone_table(ch, fl, q, y, out):
    """``out[i]`` = (A_i, P_i, T_i, K_i, Q_i, V_i) of zone i at depth y for discharge q (Q_i = Q K_i/K)."""
    kk = conveyance(ch, fl, q, y)
    for i in range(zone_count(ch.kind, ch.par)):
        a, p, t, m, dt, dp = zone_geometry(ch.kind, ch.par, y, i)
        ki = _zone_k(ch.law, ch.rough[i], fl.k, a, p) if ch.kind == SURVEYED else kk
        out[i, 0] = a
        out[i, 1] = p
        out[i, 2] = t
        out[i, 3] = ki
        out[i, 4] = q * ki / kk
        out[i, 5] = q * ki / kk / a if a > 0.0 else 0.0
