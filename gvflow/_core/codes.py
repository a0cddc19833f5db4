"""Codes and parameter layouts shared by the core and its callers (private, plain Python).

Importing this module compiles nothing, so the public classes can name kinds,
laws and statuses without loading numba.
"""

from __future__ import annotations

import numpy as np

# section kinds (parameter layouts in gvflow._core.geometry)
TRAPEZOID = 0
WIDE = 1
CIRCLE = 2
PARABOLA = 3
SURVEYED = 4

# resistance laws
MANNING = 0
CHEZY = 1
DARCY = 2

# friction-slope averages between two stations
AVG_ARITHMETIC = 0
AVG_GEOMETRIC = 1
AVG_HARMONIC = 2
AVG_CONVEYANCE = 3
#: the friction slope at the step's far end only (a backward-Euler step): first order, but it damps any
#: stiffness, so the march uses it for sub-steps far longer than the relaxation length (never a user option)
AVG_END = 4
#: Public names of the friction-slope averages; "conveyance" is the default everywhere.
AVERAGES = {"arithmetic": AVG_ARITHMETIC, "geometric": AVG_GEOMETRIC, "harmonic": AVG_HARMONIC,
            "conveyance": AVG_CONVEYANCE}

# branches of a profile
SUB = 1  # subcritical branch, traced upstream
SUPER = -1  # supercritical branch, traced downstream

# regime of a station (the sign of the branch that holds it; 0 at critical depth)
REGIME_SUB, REGIME_CRITICAL, REGIME_SUPER = 1, 0, -1
#: The name of each regime code, the one table of them.
REGIME_NAMES = {REGIME_SUB: "subcritical", REGIME_CRITICAL: "critical", REGIME_SUPER: "supercritical"}

#: Slope classes by code (Chow 1959, §9-2), the one table of their names: see
#: :func:`gvflow._core.flow.slope_class_code`
SLOPE_CLASS_NAMES = ("mild", "steep", "critical", "horizontal", "adverse")

# status of a root
SOLVED = 0
NO_ROOT = 1
NOT_CONVERGED = 2


def pass_cost(kind: int, par) -> float:
    """Cost of one pass of a section's hydraulics in the interpreted core, in passes of a trapezoid's: the unit
    of the work a call declares to :func:`gvflow._engine.core`, which decides when compiling pays.

    A geometric shape costs 1; a surveyed section reads its ground once per pass and sums its zones, about
    2 per zone and a half per ground point (measured: 8 points in 3 zones about 10, 100 points about 50).
    """
    if kind != SURVEYED:
        return 1.0
    return 2.0 * float(par[1]) + 0.5 * float(par[0])


def pack_surveyed(offset, elevation, zone_edges=(), active_from=None) -> np.ndarray:
    """Parameter array of a surveyed section (layout in :mod:`gvflow._core.geometry`); inputs already validated.

    ``elevation`` is absolute; the packed ground is measured above its lowest point.
    ``active_from`` gives, per zone, the depth below which the zone conveys nothing
    and is left out of the flow area (0, the default, for a zone always active).
    """
    x = np.asarray(offset, dtype=float)
    z = np.asarray(elevation, dtype=float)
    z = z - z.min()
    edges = np.asarray(zone_edges, dtype=float).reshape(-1)
    bounds = np.concatenate(([x[0]], edges, [x[-1]]))
    nz = bounds.size - 1
    act = np.zeros(nz) if active_from is None else np.asarray(active_from, dtype=float).reshape(nz)
    return np.concatenate(([x.size, nz], x, z, bounds, act)).astype(float)
