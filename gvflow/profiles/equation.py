"""The gradually varied flow equation for a prismatic channel.

With x measured downstream along the bed,

    dy/dx = (S0 - Sf) / (1 - alpha Q² T / (g A³))

(Chow 1959, *Open-Channel Hydraulics*, eq. 9-13; Henderson 1966, *Open
Channel Flow*, eq. 4-5). The denominator is 1 - alpha Fr² with the Froude
number based on the hydraulic depth A/T; the numerator vanishes at normal
depth and the denominator at critical depth. Its reciprocal dx/dy is finite
at critical depth, which is why integrations near critical depth are done in
x(y) form, and why the distance between two depths is the integral of dx/dy.
"""

from __future__ import annotations

import numpy as np

from .._core.codes import pass_cost
from .._core.records import fluid
from .._engine import core
from .._validate import broadcast, finite_array, positive_array, positive_float, scalar_or_array
from ..friction import core_channel, section_roughness
from ..units import UnitsLike, resolve_units

__all__ = ["gvf_slope", "gvf_inverse_slope", "gvf_terms"]


def gvf_terms(section, discharge, slope, roughness, depth, units: UnitsLike = "SI", alpha: float = 1.0):
    """Numerator S0 - Sf and denominator 1 - alpha Q² T/(g A³) of the GVF equation.

    Parameters
    ----------
    section : Section
        Cross-section.
    discharge : float or ndarray
        Discharge Q [length³/s].
    slope : float or ndarray
        Bed slope S0 [-], positive falling downstream (zero or negative allowed).
    roughness : float, Manning, Chezy, DarcyWeisbach or None
        Resistance law; a float is Manning's n. None for a surveyed section,
        which carries its own.
    depth : float or ndarray
        Flow depth y [length].
    units : "SI", "US" or Units
        Unit system (g and the Manning factor).
    alpha : float
        Energy (Coriolis) coefficient [-].

    Returns
    -------
    numerator, denominator : float or ndarray
        S0 - Sf [-] and 1 - alpha Fr² [-], broadcast over the inputs (a
        compound section's alpha varies with depth: the denominator is then
        1 - Fr² of its compound Froude number, 1 - dE/dy).

    Notes
    -----
    Chow 1959, *Open-Channel Hydraulics*, §9-1, eq. 9-13.

    Examples
    --------
    >>> import gvflow as gv
    >>> num, den = gv.gvf_terms(gv.Rectangular(width=3.0), 5.0, 0.001, 0.015, 1.5)
    >>> round(num, 6), round(den, 4)
    (0.000592, 0.9161)
    """
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    a_ = positive_float(alpha, "alpha")
    q = positive_array(discharge, "discharge")
    s0 = finite_array(slope, "slope")
    y = section._depth(depth)
    q, s0, y = broadcast(discharge=q, slope=s0, depth=y)
    flat = [np.ascontiguousarray(v, dtype=float).ravel() for v in (q, s0, y)]
    num, den = np.empty(flat[0].size), np.empty(flat[0].size)
    ch = core_channel(section, rough)
    core("arrays", num.size * pass_cost(ch.kind, ch.par)).gvf_terms_many(ch, fluid(u), *flat[:2], a_, flat[2], num,
                                                                          den)
    return scalar_or_array(num.reshape(y.shape)), scalar_or_array(den.reshape(y.shape))


def _ratio(top, bottom):
    """top/bottom with a signed infinity where bottom is 0 (NaN only for 0/0)."""
    top, bottom = np.broadcast_arrays(np.asarray(top, dtype=float), np.asarray(bottom, dtype=float))
    zero = bottom == 0
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(zero, np.where(top == 0, np.nan, np.copysign(np.inf, top)), top / np.where(zero, 1.0, bottom))
    return scalar_or_array(out)


def gvf_slope(section, discharge, slope, roughness, depth, units: UnitsLike = "SI", alpha: float = 1.0):
    """Rate of change of depth along the channel, dy/dx [-], x measured downstream.

    dy/dx = (S0 - Sf) / (1 - alpha Q² T / (g A³)).

    Parameters
    ----------
    section : Section
        Cross-section.
    discharge : float or ndarray
        Discharge Q [length³/s].
    slope : float or ndarray
        Bed slope S0 [-], positive falling downstream.
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance law; a float is Manning's n.
    depth : float or ndarray
        Flow depth y [length].
    units : "SI", "US" or Units
        Unit system.
    alpha : float
        Energy (Coriolis) coefficient [-], default 1.

    Returns
    -------
    float or ndarray
        dy/dx [-]. Zero at normal depth; ±inf at critical depth (the surface
        turns vertical there); NaN only at critical depth on a critical slope
        (0/0, where the limit depends on how the point is approached).

    Notes
    -----
    Chow 1959, *Open-Channel Hydraulics*, eq. 9-13. Positive for M1, M3, S1,
    S3, C1, C3, H3, A3 and negative for M2, S2, H2, A2 (Chow 1959, §9-2).

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> round(gv.gvf_slope(sec, 5.0, 0.001, 0.015, 1.5), 7)  # M1: depth rises downstream
    0.0006466
    >>> bool(gv.gvf_slope(sec, 5.0, 0.001, 0.015, 0.9) < 0)  # M2: falls downstream
    True
    """
    num, den = gvf_terms(section, discharge, slope, roughness, depth, units, alpha)
    return _ratio(num, den)


def gvf_inverse_slope(section, discharge, slope, roughness, depth, units: UnitsLike = "SI",
                      alpha: float = 1.0):
    """Distance per unit change of depth, dx/dy [-]: the reciprocal of :func:`gvf_slope`.

    dx/dy = (1 - alpha Q² T / (g A³)) / (S0 - Sf), finite at critical depth
    (where it is zero) and infinite at normal depth. Integrating it over a
    depth range inside one zone gives the length of the profile between the
    two depths (Chow 1959, *Open-Channel Hydraulics*, §10-1).

    Parameters
    ----------
    section, discharge, slope, roughness, depth, units, alpha
        As for :func:`gvf_slope`.

    Returns
    -------
    float or ndarray
        dx/dy [-]; ±inf at normal depth, NaN only for 0/0 at critical depth on a
        critical slope.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> yc = gv.critical_depth(sec, 5.0)
    >>> abs(gv.gvf_inverse_slope(sec, 5.0, 0.001, 0.015, yc)) < 1e-9
    True
    """
    num, den = gvf_terms(section, discharge, slope, roughness, depth, units, alpha)
    return _ratio(den, num)
