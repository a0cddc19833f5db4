"""Independent checks of computed profiles.

Three ways to get the length of a gradually varied flow profile between two
depths without marching, for users who want to check a run and for the test
suite, which checks the marchers against them:

* :func:`profile_length`: adaptive quadrature (``scipy.integrate.quad``) of
  dx/dy = (1 - alpha Q² T/(g A³)) / (S0 - Sf) for any prismatic section and
  friction law; :func:`depth_at_distance` inverts it.
* :func:`bresse_length`: Bresse's closed form for a very wide rectangular
  channel with Chezy friction (Bresse 1860).
* :func:`direct_integration_length`: Bakhmeteff's direct integration with the
  varied-flow function :func:`varied_flow_function` and the hydraulic
  exponents N and M (:func:`hydraulic_exponents`).

These functions evaluate one scalar integral at a time (``quad`` is scalar), so
they loop in Python over array inputs; they are meant for checks, not for
bulk work.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import integrate, optimize, special

from ._core.codes import pass_cost
from ._core.records import fluid
from ._engine import core
from ._validate import finite_float, positive_array, positive_float, scalar_or_array
from .errors import ConvergenceError, InvalidInputError, NoSolutionError
from .friction import Chezy, DarcyWeisbach, as_roughness, core_channel, section_roughness
from .sections import WideRectangular
from .uniform import critical_depth, normal_depth
from .units import UnitsLike, resolve_units

__all__ = [
    "profile_length",
    "depth_at_distance",
    "bresse_function",
    "bresse_length",
    "varied_flow_function",
    "hydraulic_exponents",
    "direct_integration_length",
]


class _Integrand:
    """dx/dy of one flow as a fast scalar function (the core's :func:`gvflow._core.march.dxdy`, one call
    per depth), plus its reference depths."""

    def __init__(self, section, discharge, slope, roughness, units, alpha):
        self.section = section
        self.u = resolve_units(units)
        self.rough = section_roughness(section, roughness)
        self.q = float(positive_array(discharge, "discharge"))
        self.s0 = finite_float(slope, "slope")
        self.alpha = positive_float(alpha, "alpha")
        self.yc = float(critical_depth(section, self.q, self.u, self.alpha))
        self.yn = math.nan
        if self.s0 > 0:
            try:
                self.yn = float(normal_depth(section, self.q, self.s0, self.rough, self.u))
            except NoSolutionError:
                self.yn = math.nan  # conduit above its uniform-flow capacity: Sf > S0 everywhere
        # On a critical slope (yn = yc to round-off) the zeros of numerator and
        # denominator cancel: dx/dy stays finite and normal depth is no pole.
        self.pole = self.yn if abs(self.yn - self.yc) > 1e-9 * self.yc else math.nan
        self._ch, self._fl = core_channel(section, self.rough), fluid(self.u)
        self._cost = pass_cost(self._ch.kind, self._ch.par)

    def __call__(self, y: float) -> float:
        return core("march", self._cost).dxdy(self._ch, self._fl, self.q, self.s0, self.alpha,
                                              min(y, self.section.max_depth))

    def check_range(self, y1: float, y2: float):
        lo, hi = min(y1, y2), max(y1, y2)
        for ref, name in ((self.yc, "critical"), (self.pole, "normal")):
            if math.isfinite(ref) and lo < ref < hi:
                raise InvalidInputError(
                    f"the depths {y1:g} and {y2:g} lie on both sides of {name} depth {ref:g}: one gradually "
                    "varied profile stays in one zone; split the range at that depth")
        if math.isfinite(self.pole) and (y1 == self.yn or y2 == self.yn):
            raise InvalidInputError(
                f"normal depth {self.yn:g} is approached asymptotically: the length to it is infinite; "
                "give a depth slightly off normal depth")

    def length(self, y1: float, y2: float, rtol: float) -> float:
        """x(y2) - x(y1) by quad; in the variable u = ln|y - yn| when normal depth exists.

        dx/dy has a simple pole at normal depth; (y - yn) dx/dy is smooth, so
        integrating over u keeps ranges that end close to normal depth accurate.
        """
        if y1 == y2:
            return 0.0
        if math.isfinite(self.pole):
            yn, sign = self.yn, (1.0 if y1 > self.yn else -1.0)

            def fun(u):
                w = math.exp(u)
                return self(yn + sign * w) * sign * w

            a, b = math.log(abs(y1 - yn)), math.log(abs(y2 - yn))
        else:
            fun, a, b = self, y1, y2
        val, err, *rest = integrate.quad(fun, a, b, epsabs=0.0, epsrel=rtol, limit=400, full_output=1)
        if len(rest) > 1 and abs(err) > max(100 * rtol * abs(val), 1e-300):
            raise ConvergenceError(
                f"quadrature of the profile length from {y1:g} to {y2:g} did not reach rtol={rtol:g} "
                f"(estimated error {err:.3g}); the range may touch a singular depth", residual=err, last=val)
        return val


def profile_length(section, discharge, slope, roughness, depth_from, depth_to, units: UnitsLike = "SI",
                   alpha: float = 1.0, rtol: float = 1e-11):
    """Length of a gradually varied flow profile between two depths, by adaptive quadrature.

    x(depth_to) - x(depth_from) = ∫ (1 - alpha Q² T/(g A³)) / (S0 - Sf) dy,
    integrated from ``depth_from`` to ``depth_to`` with ``scipy.integrate.quad``.

    Parameters
    ----------
    section : Section
        Cross-section (prismatic).
    discharge : float
        Discharge Q [length³/s].
    slope : float
        Bed slope S0 [-] (any sign).
    roughness : float, Manning, Chezy, DarcyWeisbach or None
        Resistance law; a float is Manning's n. None for a surveyed section,
        which carries its own.
    depth_from, depth_to : float or ndarray
        Depths at the two ends [length], both in the same zone (neither normal
        nor critical depth strictly between them). Critical depth may be an
        end (the integrand is finite there); normal depth may not (the
        length to it is infinite).
    units : "SI", "US" or Units
        Unit system.
    alpha : float
        Energy coefficient [-].
    rtol : float
        Relative tolerance of the quadrature.

    Returns
    -------
    float or ndarray
        Signed distance [length], positive when ``depth_to`` lies downstream
        of ``depth_from``.

    Raises
    ------
    InvalidInputError
        When the two depths lie in different zones or one is normal depth.
    ConvergenceError
        When the quadrature cannot meet ``rtol``.

    Notes
    -----
    Chow 1959, *Open-Channel Hydraulics*, §10-1 (the graphical-integration
    method, here done by adaptive Gauss-Kronrod quadrature).

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> round(gv.profile_length(sec, 5.0, 0.001, 0.015, 2.0, 1.5), 2)  # M1 falls upstream
    -660.91
    """
    f = _Integrand(section, discharge, slope, roughness, units, alpha)
    rtol = positive_float(rtol, "rtol")
    y1 = positive_array(depth_from, "depth_from")
    y2 = positive_array(depth_to, "depth_to")
    y1, y2 = np.broadcast_arrays(y1, y2)
    out = np.empty(y1.shape)
    for i in np.ndindex(y1.shape):
        f.check_range(float(y1[i]), float(y2[i]))
        out[i] = f.length(float(y1[i]), float(y2[i]), rtol)
    return scalar_or_array(out)


def depth_at_distance(section, discharge, slope, roughness, start_depth, distance, units: UnitsLike = "SI",
                      alpha: float = 1.0, rtol: float = 1e-11):
    """Depth of a gradually varied flow profile at a distance from a known depth.

    Inverts :func:`profile_length` by bracketed root finding (Brent's method):
    finds y with x(y) - x(start_depth) = ``distance``. The depth moves away
    from ``start_depth`` in the direction the GVF equation gives, toward the
    next normal or critical depth (or without bound).

    Parameters
    ----------
    section, discharge, slope, roughness, units, alpha, rtol
        As for :func:`profile_length`.
    start_depth : float
        Depth at the known point [length].
    distance : float or ndarray
        Signed distance from the known point [length], positive downstream.

    Returns
    -------
    float or ndarray
        Depth [length].

    Raises
    ------
    NoSolutionError
        When the profile reaches critical depth (or zero depth) before that
        distance.

    Notes
    -----
    Far along a profile that tends to normal depth the answer is taken within
    1e-8 of normal depth (relative), or, where round-off in S0 - Sf stops the
    quadrature before that, the depth it last resolved (within 1e-6).

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> round(gv.depth_at_distance(sec, 5.0, 0.001, 0.015, 2.0, -660.906), 4)
    1.5
    """
    f = _Integrand(section, discharge, slope, roughness, units, alpha)
    rtol = positive_float(rtol, "rtol")
    y0 = float(positive_array(start_depth, "start_depth"))
    dist = np.asarray(distance, dtype=float)
    if not np.all(np.isfinite(dist)):
        raise InvalidInputError(f"distance must be finite; got {distance!r}")
    out = np.empty(dist.shape)
    for i in np.ndindex(dist.shape):
        out[i] = _invert(f, y0, float(dist[i]), rtol)
    return scalar_or_array(out)


#: depth_at_distance closes in on normal depth to within this fraction of it and no further: past that the
#: depth is normal depth for any purpose, and S0 - Sf nears round-off
_NORMAL_CLOSE = 1e-8


def _invert(f: _Integrand, y0: float, d: float, rtol: float) -> float:
    if d == 0.0:
        return y0
    refs = [r for r in (f.yc, f.pole) if math.isfinite(r)]
    probe = f(y0) if y0 not in refs else f(y0 * (1 + 1e-9) if y0 >= f.yc else y0 * (1 - 1e-9))
    if not math.isfinite(probe):
        raise InvalidInputError(f"start_depth {y0:g} is normal depth: the profile is uniform, depth stays {y0:g}")
    up = (d > 0) == (probe > 0)  # depth increases along the requested direction
    above = [r for r in refs if r > y0]
    below = [r for r in refs if r < y0]
    limit = (min(above) if above else math.inf) if up else (max(below) if below else 0.0)
    if limit == f.pole:
        # the length to normal depth is infinite: bracket by closing in on it geometrically
        edge = y0
        for k in range(1, 15):
            last, edge = edge, limit + (y0 - limit) * 10.0 ** (-k)
            final = abs(edge - limit) <= _NORMAL_CLOSE * limit
            if final:
                edge = limit + math.copysign(_NORMAL_CLOSE * limit, y0 - limit)
            try:
                if abs(f.length(y0, edge, rtol)) >= abs(d):
                    break
            except ConvergenceError:
                # close to normal depth S0 - Sf is round-off and the quadrature cannot close in further; the
                # profile is past ``last``, nearer normal depth than it: that is the depth
                if abs(last - limit) <= 1e-6 * limit:
                    return last
                raise
            if final:
                return edge  # past it the profile is normal depth to within _NORMAL_CLOSE
        finite_end = False
    elif math.isinf(limit):
        edge = 2.0 * y0
        while abs(f.length(y0, edge, rtol)) < abs(d):
            edge *= 2.0
            if edge > 1e12 * y0:
                raise NoSolutionError("the profile length does not reach the requested distance")
        finite_end = False
    else:
        edge = limit if limit > 0 else y0 * 1e-9
        finite_end = True
    if f.section.closed and edge > f.section.max_depth:
        edge = f.section.max_depth
        finite_end = True
    full = f.length(y0, edge, rtol)
    if abs(full) < abs(d):
        if finite_end:
            what = "critical depth" if edge == f.yc else ("the crown" if edge == f.section.max_depth
                                                          else "zero depth")
            raise NoSolutionError(f"the profile from depth {y0:g} reaches {what} after {full:.6g}, "
                                  f"before the requested distance {d:.6g}")
        return edge  # within round-off of normal depth
    return optimize.brentq(lambda y: f.length(y0, y, rtol) - d, y0, edge, xtol=1e-15 * y0, rtol=1e-15,
                           maxiter=200)


# --------------------------------------------------------------------------- Bresse

def bresse_function(eta):
    """Bresse's function phi(eta) = ∫ d eta / (1 - eta³) [-].

    phi(eta) = (1/6) ln((eta² + eta + 1)/(eta - 1)²) - (1/sqrt 3) arctan(sqrt 3/(2 eta + 1)).

    Parameters
    ----------
    eta : float or ndarray
        Depth relative to normal depth, y/yn [-], positive and not 1.

    Returns
    -------
    float or ndarray
        phi [-]. Tables differ by an additive constant; only differences matter.

    References
    ----------
    Bresse, J. A. C. (1860). *Cours de mécanique appliquée*, 2e partie:
    Hydraulique. As given in Chow 1959, *Open-Channel Hydraulics*, §10-2, and
    Henderson 1966, *Open Channel Flow*, §4.5.

    Examples
    --------
    >>> from gvflow.verify import bresse_function
    >>> round(bresse_function(2.0), 6)
    0.131788
    """
    e = positive_array(eta, "eta")
    if np.any(e == 1.0):
        raise InvalidInputError("eta = 1 is normal depth, where Bresse's function is infinite")
    phi = (np.log((e * e + e + 1.0) / (e - 1.0) ** 2) / 6.0
           - np.arctan(math.sqrt(3.0) / (2.0 * e + 1.0)) / math.sqrt(3.0))
    return scalar_or_array(phi)


def bresse_length(section, discharge, slope, roughness, depth_from, depth_to, units: UnitsLike = "SI",
                  alpha: float = 1.0):
    """Bresse's closed-form profile length in a very wide rectangular channel with Chezy friction.

    x2 - x1 = (yn/S0) [(eta2 - eta1) - (1 - (yc/yn)³)(phi(eta2) - phi(eta1))],
    eta = y/yn, yn = (q²/(C² S0))^(1/3), yc = (alpha q²/g)^(1/3), q = Q/b.

    Parameters
    ----------
    section : WideRectangular
        The channel (hydraulic radius equal to the depth).
    discharge : float
        Discharge Q [length³/s].
    slope : float
        Bed slope S0 [-], positive.
    roughness : Chezy
        Chezy coefficient C [length^(1/2)/s].
    depth_from, depth_to : float or ndarray
        Depths at the two ends [length], same zone.
    units : "SI", "US" or Units
    alpha : float
        Energy coefficient [-].

    Returns
    -------
    float or ndarray
        Signed distance [length], positive downstream.

    References
    ----------
    Bresse 1860; Chow 1959, *Open-Channel Hydraulics*, §10-2, eq. 10-13;
    Henderson 1966, *Open Channel Flow*, §4.5.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.WideRectangular(width=100.0)
    >>> round(gv.bresse_length(sec, 300.0, 0.0004, gv.Chezy(50.0), 4.0, 3.0), 1)
    -3143.3
    """
    if not isinstance(section, WideRectangular):
        raise InvalidInputError(f"Bresse's solution needs a gv.WideRectangular section; got {section!r}")
    rough = as_roughness(roughness)
    if not isinstance(rough, Chezy):
        raise InvalidInputError(f"Bresse's solution needs Chezy friction (gv.Chezy(C)); got {rough!r}")
    s0 = finite_float(slope, "slope")
    if s0 <= 0:
        raise InvalidInputError(f"Bresse's solution needs a positive bed slope; got slope={slope!r}")
    u = resolve_units(units)
    a_ = positive_float(alpha, "alpha")
    q = float(positive_array(discharge, "discharge")) / section.width
    yn = (q * q / (rough.C ** 2 * s0)) ** (1.0 / 3.0)
    yc = (a_ * q * q / u.g) ** (1.0 / 3.0)
    e1 = positive_array(depth_from, "depth_from") / yn
    e2 = positive_array(depth_to, "depth_to") / yn
    if np.any((e1 - 1.0) * (e2 - 1.0) <= 0):
        raise InvalidInputError("depth_from and depth_to must lie on the same side of normal depth "
                                f"{yn:g} and differ from it")
    c = 1.0 - (yc / yn) ** 3
    x = yn / s0 * ((e2 - e1) - c * (np.asarray(bresse_function(e2)) - np.asarray(bresse_function(e1))))
    return scalar_or_array(np.asarray(x))


# --------------------------------------------------------------------------- direct integration

def _vff_quad(u: float, n: float) -> float:
    """F(u, N) by quadrature, with the log singularity at t = 1 taken out analytically."""
    if u < 1.0:
        # F = ∫0^u [1/(1-t^N) - 1/(N(1-t))] dt - ln(1-u)/N
        def g(t):
            w = 1.0 - t
            if w < 1e-6:  # series of the regular part near t = 1
                return (n - 1.0) / (2.0 * n) + (n * n - 1.0) / (12.0 * n) * w
            return 1.0 / (1.0 - t ** n) - 1.0 / (n * w)
        val, _ = integrate.quad(g, 0.0, u, epsabs=1e-15, epsrel=1e-13, limit=200)
        return val - math.log1p(-u) / n
    # u > 1: t = 1/s turns ∫u^∞ dt/(t^N - 1) into ∫0^(1/u) s^(N-2)/(1 - s^N) ds
    v = 1.0 / u

    def h(s):
        w = 1.0 - s
        if w < 1e-6:  # series of the regular part near s = 1
            return (3.0 - n) / (2.0 * n) + ((n * n - 1.0) / 12.0 - (n - 2.0)) / n * w
        return s ** (n - 2.0) / (1.0 - s ** n) - 1.0 / (n * w)
    val, _ = integrate.quad(h, 0.0, v, epsabs=1e-15, epsrel=1e-13, limit=200)
    return val - math.log1p(-v) / n


def _vff_series(u, n):
    """F(u, N) through the Gauss hypergeometric function (term-by-term integration of the series)."""
    u = np.asarray(u, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        below = u * special.hyp2f1(1.0, 1.0 / n, 1.0 + 1.0 / n, u ** n)
        above = u ** (1.0 - n) / (n - 1.0) * special.hyp2f1(1.0, (n - 1.0) / n, (2.0 * n - 1.0) / n, u ** (-n))
    return np.where(u < 1.0, below, above)


def varied_flow_function(u, exponent, method: str = "quadrature"):
    """Bakhmeteff's varied-flow function F(u, N).

    F(u, N) = ∫0^u dt/(1 - t^N) for u < 1 and ∫u^∞ dt/(t^N - 1) for u > 1.

    Parameters
    ----------
    u : float or ndarray
        Depth relative to normal depth, y/yn [-], positive and not 1.
    exponent : float or ndarray
        Hydraulic exponent N (or J) [-], greater than 1.
    method : {"quadrature", "series"}
        "quadrature" (default): adaptive quadrature with the logarithmic
        singularity at t = 1 subtracted analytically. "series": the closed
        form u·2F1(1, 1/N; 1 + 1/N; u^N) for u < 1 and
        u^(1-N)/(N-1)·2F1(1, (N-1)/N; (2N-1)/N; u^-N) for u > 1 (integrating the
        geometric series term by term), vectorised.

    Returns
    -------
    float or ndarray
        F(u, N) [-].

    References
    ----------
    Bakhmeteff, B. A. (1932). *Hydraulics of Open Channels*. McGraw-Hill.
    Chow 1959, *Open-Channel Hydraulics*, §10-3 and Appendix D (table of F).

    Examples
    --------
    >>> from gvflow.verify import varied_flow_function
    >>> round(varied_flow_function(0.5, 3.0), 4)
    0.5168
    >>> round(varied_flow_function(0.5, 3.0, method="series"), 4)
    0.5168
    """
    uu = positive_array(u, "u")
    nn = positive_array(exponent, "exponent")
    if np.any(nn <= 1.0):
        raise InvalidInputError(f"exponent must exceed 1; got {exponent!r}")
    if np.any(uu == 1.0):
        raise InvalidInputError("u = 1 is normal depth, where the varied-flow function is infinite")
    uu, nn = np.broadcast_arrays(uu, nn)
    if method == "series":
        return scalar_or_array(np.asarray(_vff_series(uu, nn)))
    if method != "quadrature":
        raise InvalidInputError(f"method must be 'quadrature' or 'series'; got {method!r}")
    out = np.empty(uu.shape)
    for i in np.ndindex(uu.shape):
        out[i] = _vff_quad(float(uu[i]), float(nn[i]))
    return scalar_or_array(out)


def hydraulic_exponents(section, depth, roughness=0.013):
    """Hydraulic exponents N and M of a section at a depth.

    N: conveyance K ∝ y^(N/2), so N = 2 y d(ln K)/dy; M: section factor
    Z = A sqrt(A/T) ∝ y^(M/2), so M = (y/A)(3T - (A/T) dT/dy).

    Parameters
    ----------
    section : Section
        Cross-section.
    depth : float or ndarray
        Depth [length].
    roughness : float, Manning, Chezy or DarcyWeisbach
        Only the law matters: Manning gives N = (2y/(3A))(5T - 2R dP/dy);
        Chezy and Darcy-Weisbach (friction factor held constant) give
        N = y (3T/A - (1/P) dP/dy).

    Returns
    -------
    N, M : float or ndarray
        Hydraulic exponents [-].

    References
    ----------
    Chow 1959, *Open-Channel Hydraulics*, §6-3 (N, eq. 6-12) and §4-3 (M,
    eq. 4-5); wide rectangle N = 10/3, M = 3; triangle N = 16/3, M = 5.

    Examples
    --------
    >>> import gvflow as gv
    >>> n, m = gv.hydraulic_exponents(gv.Triangular(side_slope=2.0), 1.0)
    >>> round(n, 10), round(m, 10)
    (5.3333333333, 5.0)
    """
    rough = as_roughness(roughness)
    y = section._depth(depth)
    a, p, t, _, dt, dp = section._geometry(y)
    m = y / a * (3.0 * t - a / t * dt)
    if isinstance(rough, (Chezy, DarcyWeisbach)):
        n = y * (3.0 * t / a - dp / p)
    else:
        n = 2.0 * y / (3.0 * a) * (5.0 * t - 2.0 * a / p * dp)
    return scalar_or_array(np.asarray(n)), scalar_or_array(np.asarray(m))


def direct_integration_length(section, discharge, slope, roughness, depth_from, depth_to,
                              units: UnitsLike = "SI", alpha: float = 1.0, exponents=None,
                              method: str = "quadrature"):
    """Profile length by Bakhmeteff's direct-integration method with the varied-flow function.

    x = (yn/S0) [u - F(u, N) + (yc/yn)^M (J/N) F(v, J)] + const, u = y/yn,
    J = N/(N - M + 1), v = u^(N/J); the length is the difference between the
    two ends.

    Parameters
    ----------
    section, discharge, slope, roughness, units, alpha
        As for :func:`profile_length`; the slope must be positive.
    depth_from, depth_to : float
        Depths at the two ends [length], same side of normal depth.
    exponents : (N, M), optional
        Hydraulic exponents. By default they are computed at the mean of the
        two depths (Chow 1959 takes an average over the range); the method is
        exact where N and M are constant (wide rectangle: 10/3 and 3 with
        Manning, 3 and 3 with Chezy).
    method : {"quadrature", "series"}
        How F is evaluated (see :func:`varied_flow_function`).

    Returns
    -------
    float
        Signed distance [length], positive downstream.

    References
    ----------
    Bakhmeteff 1932; Chow 1959, *Open-Channel Hydraulics*, §10-3, eq. 10-10.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.WideRectangular(width=100.0)
    >>> round(gv.direct_integration_length(sec, 300.0, 0.0004, gv.Chezy(50.0), 4.0, 3.0), 1)
    -3143.3
    """
    s0 = finite_float(slope, "slope")
    if s0 <= 0:
        raise InvalidInputError(
            f"the direct-integration method here needs a positive bed slope; got slope={slope!r}")
    u_ = resolve_units(units)
    y1 = float(positive_array(depth_from, "depth_from"))
    y2 = float(positive_array(depth_to, "depth_to"))
    yn = float(normal_depth(section, discharge, s0, roughness, u_))
    yc = float(critical_depth(section, discharge, u_, alpha))
    if (y1 - yn) * (y2 - yn) <= 0:
        raise InvalidInputError(f"depth_from and depth_to must lie on the same side of normal depth {yn:g}")
    if exponents is None:
        n, m = hydraulic_exponents(section, 0.5 * (y1 + y2), roughness)
    else:
        n, m = (positive_float(v, "exponents") for v in exponents)
    j = n / (n - m + 1.0)

    def x(y):
        uu = y / yn
        v = uu ** (n / j)
        return yn / s0 * (uu - varied_flow_function(uu, n, method)
                          + (yc / yn) ** m * (j / n) * varied_flow_function(v, j, method))

    return float(x(y2) - x(y1))
