"""Best hydraulic sections: the least wetted perimeter that carries a discharge.

For a discharge, bed slope and roughness, :func:`best_hydraulic_section`
finds the rectangle, trapezoid or triangle whose wetted perimeter in uniform
flow is smallest (the least lining and, for a given area, the greatest
conveyance). The optimum is found numerically: the shape parameters (bottom
width, side slope) are varied, the normal depth of each candidate is solved
with :func:`gvflow.normal_depth`, and the wetted perimeter is minimised with
scipy's bounded Brent method (one parameter) or bounded Nelder-Mead (two).
No closed form is built in, so the classical results (Chow 1959,
*Open-Channel Hydraulics*, table 7-1) are a genuine check of the search:

* rectangle: depth is half the width (y = b/2), R = y/2;
* trapezoid: half a regular hexagon, side slope 1/sqrt(3) (60° banks),
  b = 2y/sqrt(3), R = y/2; with a prescribed side slope z,
  b = 2y (sqrt(1 + z²) - z), still R = y/2;
* triangle: 90° vertex (z = 1), R = y/(2 sqrt 2).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize, minimize_scalar

from ._validate import finite_float, positive_float
from .errors import ConvergenceError, InvalidInputError
from .friction import as_roughness
from .sections import Rectangular, Section, Trapezoidal, Triangular
from .uniform import normal_depth
from .units import UnitsLike, resolve_units

__all__ = ["BestSection", "best_hydraulic_section", "BEST_SECTION_SHAPES"]

# Search range of the logarithm of a width or side slope, relative to the
# natural length scale (Q²/g)^(1/5) for widths. Wide enough to hold the
# optimum of any realistic channel; an optimum on the edge is reported.
_LOG_RANGE = 12.0
_SLOPE_MAX = 20.0


@dataclass(frozen=True)
class BestSection:
    """A least-perimeter section carrying a discharge in uniform flow.

    Attributes
    ----------
    section : Section
        The designed cross-section (Rectangular, Trapezoidal or Triangular).
    depth : float
        Normal depth [length].
    area : float
        Flow area [length²].
    wetted_perimeter : float
        Wetted perimeter [length], the quantity minimised.
    top_width : float
        Water-surface width [length].
    hydraulic_radius : float
        Area over wetted perimeter [length].
    velocity : float
        Mean velocity Q/A [length/s].
    discharge : float
        Design discharge [length³/s].
    slope : float
        Bed slope [-].
    """

    section: Section
    depth: float
    area: float
    wetted_perimeter: float
    top_width: float
    hydraulic_radius: float
    velocity: float
    discharge: float
    slope: float

    def __repr__(self) -> str:
        return (f"BestSection(section={self.section!r}, depth={self.depth:.6g}, area={self.area:.6g}, "
                f"wetted_perimeter={self.wetted_perimeter:.6g}, velocity={self.velocity:.6g})")


def _perimeter(section, q, s, rough, units) -> float:
    y = normal_depth(section, q, s, rough, units)
    return float(section.wetted_perimeter(y))


def _brent(objective, lo, hi, what) -> float:
    res = minimize_scalar(objective, bounds=(lo, hi), method="bounded",
                          options={"xatol": 1e-11, "maxiter": 500})
    if not res.success:
        raise ConvergenceError(f"best {what}: the search did not converge ({res.message})",
                               iterations=int(res.nfev), residual=float(res.fun), last=float(res.x))
    x = float(res.x)
    if min(x - lo, hi - x) < 1e-6 * (hi - lo):
        raise ConvergenceError(f"best {what}: the optimum lies on the edge of the search range; "
                               "check the magnitude of the discharge, slope and roughness",
                               iterations=int(res.nfev), residual=float(res.fun), last=x)
    return x


def _best_rectangle(q, s, rough, units, side_slope, scale):
    if side_slope is not None:
        raise InvalidInputError("a rectangle has vertical walls: leave side_slope=None "
                                "(or ask for shape='trapezoidal' with a side slope)")

    def objective(x):
        return _perimeter(Rectangular(width=scale * math.exp(x)), q, s, rough, units) / scale

    x = _brent(objective, -_LOG_RANGE, _LOG_RANGE, "rectangle")
    return Rectangular(width=scale * math.exp(x))


def _best_trapezoid(q, s, rough, units, side_slope, scale):
    if side_slope is not None:
        z = side_slope

        def objective(x):
            return _perimeter(Trapezoidal(bottom_width=scale * math.exp(x), side_slope=z),
                              q, s, rough, units) / scale

        x = _brent(objective, -_LOG_RANGE, _LOG_RANGE, f"trapezoid with side slope {z:g}")
        return Trapezoidal(bottom_width=scale * math.exp(x), side_slope=z)

    def objective2(v):
        x, z = v
        return _perimeter(Trapezoidal(bottom_width=scale * math.exp(x), side_slope=z),
                          q, s, rough, units) / scale

    res = minimize(objective2, x0=np.array([0.0, 1.0]), method="Nelder-Mead",
                   bounds=[(-_LOG_RANGE, _LOG_RANGE), (0.0, _SLOPE_MAX)],
                   options={"xatol": 1e-9, "fatol": 1e-12, "maxiter": 4000,
                            "initial_simplex": np.array([[0.0, 1.0], [0.5, 1.0], [0.0, 0.5]])})
    if not res.success:
        raise ConvergenceError(f"best trapezoid: the search did not converge ({res.message})",
                               iterations=int(res.nfev), residual=float(res.fun), last=float(res.x[1]))
    x, z = (float(v) for v in res.x)
    if z >= _SLOPE_MAX * (1 - 1e-6) or abs(x) >= _LOG_RANGE * (1 - 1e-6):
        raise ConvergenceError("best trapezoid: the optimum lies on the edge of the search range",
                               iterations=int(res.nfev), residual=float(res.fun), last=z)
    return Trapezoidal(bottom_width=scale * math.exp(x), side_slope=max(z, 0.0))


def _best_triangle(q, s, rough, units, side_slope, scale):
    if side_slope is not None:
        return Triangular(side_slope=side_slope)

    def objective(x):
        return _perimeter(Triangular(side_slope=math.exp(x)), q, s, rough, units) / scale

    x = _brent(objective, -8.0, 8.0, "triangle")
    return Triangular(side_slope=math.exp(x))


#: The shapes :func:`best_hydraulic_section` can design, by ``shape=`` name.
BEST_SECTION_SHAPES: dict[str, Callable] = {
    "rectangular": _best_rectangle,
    "trapezoidal": _best_trapezoid,
    "triangular": _best_triangle,
}


def best_hydraulic_section(shape: str, discharge, slope, roughness, units: UnitsLike = "SI",
                           side_slope=None) -> BestSection:
    """The least-wetted-perimeter section of a shape that carries ``discharge`` in uniform flow.

    Parameters
    ----------
    shape : {"rectangular", "trapezoidal", "triangular"}
        Family of sections to search.
    discharge : float
        Design discharge Q [length³/s].
    slope : float
        Bed slope S0 [-], positive.
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance; a float is Manning's n.
    units : "SI", "US" or Units
        Unit system.
    side_slope : float, optional
        Prescribed bank slope z (horizontal per 1 vertical) [-]. For a
        trapezoid the bottom width is then the only free parameter (banks are
        often fixed by the soil); for a triangle it fixes the section and
        only the depth is solved. ``None`` (default) optimises it as well.
        Not allowed for a rectangle.

    Returns
    -------
    BestSection
        Frozen result: the section, normal depth, area, wetted perimeter,
        top width, hydraulic radius and mean velocity.

    Raises
    ------
    InvalidInputError
        For an unknown shape, a non-positive or non-finite discharge or
        slope, a bad roughness or side slope.
    ConvergenceError
        When the search does not settle inside its range.

    Notes
    -----
    The search is numerical (see the module notes); it reproduces the
    classical best hydraulic sections of Chow (1959, table 7-1) for any
    resistance law whose conveyance grows with area and hydraulic radius. It
    designs one section per call (scalar inputs).

    References
    ----------
    Chow, V. T. (1959). *Open-Channel Hydraulics*. McGraw-Hill, ch. 7 (best hydraulic
    sections; table 7-1, numbering from memory).

    Examples
    --------
    >>> import gvflow as gv
    >>> best = gv.best_hydraulic_section("rectangular", 10.0, 0.001, 0.015)
    >>> round(best.section.width / best.depth, 6)
    2.0
    >>> half_hexagon = gv.best_hydraulic_section("trapezoidal", 10.0, 0.001, 0.015)
    >>> round(half_hexagon.section.side_slope, 5)  # 1/sqrt(3)
    0.57735
    """
    try:
        designer = BEST_SECTION_SHAPES[shape]
    except (KeyError, TypeError):
        choices = ", ".join(repr(k) for k in BEST_SECTION_SHAPES)
        raise InvalidInputError(f"shape {shape!r} is unknown; valid choices are {choices}") from None
    q = positive_float(discharge, "discharge")
    s = positive_float(slope, "slope")
    rough = as_roughness(roughness)
    u = resolve_units(units)
    z = None
    if side_slope is not None:
        z = finite_float(side_slope, "side_slope")
        if z < 0 or (z == 0 and shape == "triangular"):
            raise InvalidInputError(f"side_slope must be positive (horizontal per 1 vertical); got {side_slope!r}")
    scale = (q * q / u.g) ** 0.2
    section = designer(q, s, rough, u, z, scale)
    y = float(normal_depth(section, q, s, rough, u))
    props = section.properties(y)
    area = float(props["area"])
    return BestSection(section=section, depth=y, area=area,
                       wetted_perimeter=float(props["wetted_perimeter"]), top_width=float(props["top_width"]),
                       hydraulic_radius=float(props["hydraulic_radius"]), velocity=q / area,
                       discharge=q, slope=s)
