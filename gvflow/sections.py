"""Prismatic cross-section shapes.

Each section is a small immutable (frozen pydantic) object whose methods take
a flow depth ``y`` [length] as a float or a NumPy array and return a result of
the same shape: :meth:`~Section.area`, :meth:`~Section.wetted_perimeter`,
:meth:`~Section.top_width`, :meth:`~Section.hydraulic_radius`,
:meth:`~Section.hydraulic_depth`, :meth:`~Section.centroid_depth` (depth of
the centroid of the flow area below the water surface) and
:meth:`~Section.first_moment` (area times centroid depth, used in the
specific force), with the depth derivatives the solvers need.

Geometry (exact): trapezoid A = (b + z y) y, P = b + 2 y sqrt(1 + z²),
T = b + 2 z y; circle of diameter D with wetted angle
theta = 2 arccos(1 - 2y/D): A = D²(theta - sin theta)/8, P = D theta/2,
T = D sin(theta/2) (Chow, *Open-Channel Hydraulics*, 1959, table 2-1).
"""

from __future__ import annotations

import math
from typing import Annotated, ClassVar, Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, PrivateAttr, ValidationError, field_validator

from ._core.codes import CIRCLE, PARABOLA, SURVEYED, TRAPEZOID, WIDE, pack_surveyed, pass_cost
from ._core.records import Fluid, fluid
from ._engine import core
from ._validate import OwnValidationErrors, invalid_input_from, positive_array, scalar_or_array
from ._warn import warn
from .errors import InvalidInputError
from .friction import Chezy, DarcyWeisbach, Manning, as_roughness, core_channel

__all__ = [
    "Section",
    "Rectangular",
    "Trapezoidal",
    "Triangular",
    "Circular",
    "Parabolic",
    "WideRectangular",
    "Surveyed",
    "AnySection",
]

_Dim = Annotated[float, Field(gt=0, allow_inf_nan=False)]
_Slope = Annotated[float, Field(ge=0, allow_inf_nan=False)]


class Section(OwnValidationErrors, BaseModel):
    """Base class of prismatic cross-sections. Subclasses supply ``_geometry``."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    #: True for a closed conduit (depth limited to its height).
    closed: ClassVar[bool] = False

    def __init__(self, /, **data):
        try:
            super().__init__(**data)
        except ValidationError as exc:
            raise invalid_input_from(exc, type(self).__name__) from None

    def warn_above_ends(self, depth, what: str) -> None:
        """Warn where ``depth`` stands above what the section describes (a surveyed section's lower end
        point, :meth:`Surveyed.warn_above_ends`); a geometric shape describes every depth."""

    # -- subclass hook --------------------------------------------------
    def core_params(self) -> tuple[int, np.ndarray]:  # pragma: no cover - abstract
        """(kind code, parameter array) describing this shape to the physics core (:mod:`gvflow._core.geometry`)."""
        raise NotImplementedError

    def kernel_spec(self) -> tuple[int, float, float, float]:
        """(kind code, p0, p1, p2) of the shape for the marching kernels (the parameters padded to three)."""
        kind, par = self.core_params()
        p = [float(v) for v in par[:3]] + [0.0] * (3 - min(par.size, 3))
        return (kind, p[0], p[1], p[2])

    def _geometry(self, y):
        """(A, P, T, A*ybar, dT/dy, dP/dy) at valid depths ``y`` (arrays of y's shape), from the core."""
        y = np.asarray(y, dtype=float)
        kind, par = self.core_params()
        flat = np.ascontiguousarray(y.reshape(-1))
        out = np.empty((6, flat.size))
        core("arrays", flat.size * pass_cost(kind, par)).geometry_many(kind, par, flat, out)
        return tuple(row.reshape(y.shape) for row in out)

    @property
    def max_depth(self) -> float:
        """Largest depth the section can hold [length] (``inf`` for open channels)."""
        return math.inf

    # -- public API -----------------------------------------------------
    def _depth(self, y) -> np.ndarray:
        arr = positive_array(y, "depth")
        if self.closed and np.any(arr > self.max_depth * (1 + 1e-12)):
            raise InvalidInputError(
                f"depth must not exceed the conduit height {self.max_depth:g}; got "
                f"{float(np.max(arr)):g} (the conduit would flow full: a pressure-flow case)"
            )
        return np.minimum(arr, self.max_depth) if self.closed else arr

    def area(self, y):
        """Flow area A [length²] at depth ``y`` [length]."""
        return scalar_or_array(self._geometry(self._depth(y))[0])

    def wetted_perimeter(self, y):
        """Wetted perimeter P [length] at depth ``y`` [length]."""
        return scalar_or_array(self._geometry(self._depth(y))[1])

    def top_width(self, y):
        """Water-surface width T [length] at depth ``y`` [length]."""
        return scalar_or_array(self._geometry(self._depth(y))[2])

    def hydraulic_radius(self, y):
        """Hydraulic radius R = A/P [length] at depth ``y`` [length]."""
        a, p = self._geometry(self._depth(y))[:2]
        return scalar_or_array(a / p)

    def hydraulic_depth(self, y):
        """Hydraulic depth D = A/T [length] (infinite at the crown of a closed conduit)."""
        a, _, t = self._geometry(self._depth(y))[:3]
        with np.errstate(divide="ignore"):
            return scalar_or_array(np.where(t > 0, a / np.where(t > 0, t, 1.0), np.inf))

    def first_moment(self, y):
        """First moment of the flow area about the water surface, A·ȳ [length³]."""
        return scalar_or_array(self._geometry(self._depth(y))[3])

    def centroid_depth(self, y):
        """Depth ȳ of the centroid of the flow area below the water surface [length]."""
        g = self._geometry(self._depth(y))
        return scalar_or_array(g[3] / g[0])

    def d_area(self, y):
        """dA/dy [length], equal to the top width."""
        return self.top_width(y)

    def d_top_width(self, y):
        """dT/dy [-] (infinite at the crown and invert of a circle)."""
        return scalar_or_array(self._geometry(self._depth(y))[4])

    def d_wetted_perimeter(self, y):
        """dP/dy [-]."""
        return scalar_or_array(self._geometry(self._depth(y))[5])

    def properties(self, y) -> dict:
        """All geometric properties at depth ``y`` in one call (dict of arrays or floats)."""
        a, p, t, m, dt, dp = self._geometry(self._depth(y))
        out = dict(area=a, wetted_perimeter=p, top_width=t, hydraulic_radius=a / p,
                   first_moment=m, centroid_depth=m / a, d_top_width=dt, d_wetted_perimeter=dp)
        return {k: scalar_or_array(np.asarray(v)) for k, v in out.items()}

    def __repr__(self) -> str:
        fields = ", ".join(f"{k}={v:g}" if isinstance(v, float) else f"{k}={v!r}"
                           for k, v in self.__dict__.items() if k != "shape" and v is not None)
        return f"{type(self).__name__}({fields})"

    __str__ = __repr__


class _TrapezoidLike(Section):
    """Shared formulas of sections with straight sides (possibly unequal slopes)."""

    def _bz(self) -> tuple[float, float, float]:
        raise NotImplementedError  # pragma: no cover

    def core_params(self):
        b, zl, zr = self._bz()
        return TRAPEZOID, np.array([b, zl, zr])


class Rectangular(_TrapezoidLike):
    """Rectangular channel with vertical walls.

    Parameters
    ----------
    width : float
        Bottom width b [length].

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Rectangular(width=3.0).area(1.5)
    4.5
    """

    shape: Literal["rectangular"] = "rectangular"
    width: _Dim

    def _bz(self):
        return self.width, 0.0, 0.0


class Trapezoidal(_TrapezoidLike):
    """Trapezoidal channel.

    Parameters
    ----------
    bottom_width : float
        Bottom width b [length].
    side_slope : float
        Bank slope z, horizontal per 1 vertical [-] (left bank, and both banks
        unless ``side_slope_right`` is given).
    side_slope_right : float, optional
        Right-bank slope when the banks differ [-].

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Trapezoidal(bottom_width=6.0, side_slope=2.0).area(2.0)
    20.0
    """

    shape: Literal["trapezoidal"] = "trapezoidal"
    bottom_width: Annotated[float, Field(ge=0, allow_inf_nan=False)]
    side_slope: _Slope
    side_slope_right: _Slope | None = None

    def model_post_init(self, __context) -> None:
        zr = self.side_slope if self.side_slope_right is None else self.side_slope_right
        if self.bottom_width == 0 and self.side_slope + zr == 0:
            raise InvalidInputError("a trapezoid needs a positive bottom_width or side_slope")

    def _bz(self):
        zr = self.side_slope if self.side_slope_right is None else self.side_slope_right
        return self.bottom_width, self.side_slope, zr


class Triangular(_TrapezoidLike):
    """Symmetric (or, with ``side_slope_right``, unsymmetric) V-shaped channel.

    Parameters
    ----------
    side_slope : float
        Side slope z, horizontal per 1 vertical [-].
    side_slope_right : float, optional
        Right-side slope when the sides differ [-].

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Triangular(side_slope=2.0).top_width(1.0)
    4.0
    """

    shape: Literal["triangular"] = "triangular"
    side_slope: Annotated[float, Field(gt=0, allow_inf_nan=False)]
    side_slope_right: Annotated[float, Field(gt=0, allow_inf_nan=False)] | None = None

    def _bz(self):
        zr = self.side_slope if self.side_slope_right is None else self.side_slope_right
        return 0.0, self.side_slope, zr


class WideRectangular(_TrapezoidLike):
    """Very wide rectangular channel: the wetted perimeter is the bed width alone.

    The hydraulic radius equals the depth (R = y). This is the idealisation
    behind the closed-form profile solutions of Bresse and Bakhmeteff
    (Chow 1959, ch. 10).

    Parameters
    ----------
    width : float
        Bed width b [length]; results per unit width follow from q = Q/b.
    """

    shape: Literal["wide"] = "wide"
    width: _Dim

    def core_params(self):
        return WIDE, np.array([self.width])


class Circular(Section):
    """Circular conduit flowing partly full (depth at most the diameter).

    Parameters
    ----------
    diameter : float
        Inside diameter D [length].

    Notes
    -----
    With the wetted angle theta = 2 arccos(1 - 2y/D): A = D²(theta - sin theta)/8,
    P = D theta/2, T = D sin(theta/2); the first moment of area about the water
    surface is A (y - D/2) + D³ sin³(theta/2)/12 (centroid of a circular
    segment). The top width vanishes at the crown, where the Froude number
    loses its meaning; solvers treat a full conduit as a limit, not a state.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.Circular(diameter=1.0).area(0.5), 6)  # half full: pi/8
    0.392699
    """

    shape: Literal["circular"] = "circular"
    diameter: _Dim
    closed: ClassVar[bool] = True

    @property
    def max_depth(self) -> float:
        return self.diameter

    def core_params(self):
        return CIRCLE, np.array([self.diameter])


class Parabolic(Section):
    """Parabolic channel, defined by its top width at a reference depth.

    Parameters
    ----------
    top_width : float
        Top width T_ref [length] at ``reference_depth``.
    reference_depth : float
        Depth at which the top width is ``top_width`` [length].

    Notes
    -----
    T = c sqrt(y) with c = T_ref / sqrt(y_ref); A = (2/3) T y; centroid depth
    0.4 y; P = (T/2) [sqrt(1 + u²) + asinh(u)/u] with u = 4y/T (arc length of
    the parabola; Chow 1959, table 2-1).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Parabolic(top_width=4.0, reference_depth=1.0).area(1.0)
    2.6666666666666665
    """

    shape: Literal["parabolic"] = "parabolic"
    top_width_at_reference: _Dim = Field(alias="top_width")
    reference_depth: _Dim

    model_config = ConfigDict(frozen=True, extra="forbid", populate_by_name=True)

    def _c(self) -> float:
        return self.top_width_at_reference / math.sqrt(self.reference_depth)

    def core_params(self):
        return PARABOLA, np.array([self._c()])


class _Packed:
    """A parameter array held by a model: compared by value, so models compare by their fields."""

    __slots__ = ("array",)

    def __init__(self, array: np.ndarray):
        self.array = array

    def __eq__(self, other):
        return isinstance(other, _Packed) and np.array_equal(self.array, other.array)

    __hash__ = None


class StillWater(OwnValidationErrors, BaseModel):
    """Part of a surveyed section that holds water but conveys none until the water rises above a level.

    Water standing beside a culvert or bridge opening, or behind a levee until it is
    overtopped. Convention: while the water surface is below ``elevation`` the ground
    between ``left`` and ``right`` is left out of the flow area, top width, wetted
    perimeter and conveyance (its water is still, so it carries no discharge and no
    velocity head); from ``elevation`` up it counts in full, as part of its roughness zone.

    Parameters
    ----------
    left, right : float
        Offsets bounding the area [length], left < right.
    elevation : float
        Water-surface elevation from which the area conveys [length].
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    left: Annotated[float, Field(allow_inf_nan=False)]
    right: Annotated[float, Field(allow_inf_nan=False)]
    elevation: Annotated[float, Field(allow_inf_nan=False)]


class Surveyed(Section):
    """Cross-section given by surveyed ground points, with zones of different roughness.

    Parameters
    ----------
    offset : sequence of float
        Horizontal distance of each ground point across the channel [length], left to right
        looking downstream; non-decreasing (a repeated offset is a vertical wall). At least 3.
    elevation : sequence of float
        Ground elevation of each point [length].
    roughness : float, Manning, Chezy or a sequence of them
        One value per zone (a float is Manning's n); every zone uses the same law.
    zone_edges : sequence of float, optional
        Offsets of the vertical lines dividing the zones, increasing and strictly inside the
        section; ``len(roughness) == len(zone_edges) + 1``. Omit for one zone.
    still_water : sequence of StillWater, optional
        Areas that hold water but convey none until the water rises above their elevation
        (see :class:`StillWater`). Their bounds divide the zones further, like zone edges.

    Notes
    -----
    Depth is measured above the lowest ground point, whose elevation is :attr:`invert`.
    The geometry is exact at any depth (top width linear and area quadratic between
    breakpoint elevations); conveyance is summed over the zones, whose division lines are
    not wetted perimeter, and the energy and momentum coefficients follow from the zone
    conveyances (Chow, *Open-Channel Hydraulics*, 1959, §2-7 and §6-7; conventions in
    :mod:`gvflow._core.geometry`). The water surface is level across the section, so a low
    area cut off by higher ground holds water as soon as the level reaches it. Above an end
    point the section is closed by a vertical wall, with a :class:`GVFlowWarning` from the
    functions that meet such a depth. Vertical division lines overestimate the discharge
    where floodplain and main channel interact strongly (Knight & Demetriou 1983, from
    memory): place zone edges deliberately.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Surveyed(offset=[0, 2, 5, 7], elevation=[101.5, 100.0, 100.0, 101.5], roughness=0.03)
    >>> sec.invert, round(sec.area(1.0), 6)
    (100.0, 4.333333)
    """

    shape: Literal["surveyed"] = "surveyed"
    offset: list[Annotated[float, Field(allow_inf_nan=False)]]
    elevation: list[Annotated[float, Field(allow_inf_nan=False)]]
    roughness: list[Manning | Chezy]
    zone_edges: list[Annotated[float, Field(allow_inf_nan=False)]] = Field(default_factory=list)
    still_water: list[StillWater] = Field(default_factory=list)

    _packed: _Packed = PrivateAttr()
    _zone_roughness: tuple = PrivateAttr()
    _zone_of: tuple = PrivateAttr()

    @field_validator("roughness", mode="before")
    @classmethod
    def _one_or_many(cls, v):
        items = v if isinstance(v, (list, tuple, np.ndarray)) else [v]
        out = []
        for item in items:
            if isinstance(item, DarcyWeisbach):
                raise ValueError("a surveyed section takes Manning's n or Chezy's C per zone, not Darcy-Weisbach")
            out.append(as_roughness(item) if not isinstance(item, dict) else item)
        return out

    def model_post_init(self, __context) -> None:
        x, z = self.offset, self.elevation
        if len(x) < 3:
            raise InvalidInputError(f"Surveyed: offset needs at least 3 ground points; got {len(x)}")
        if len(z) != len(x):
            raise InvalidInputError(f"Surveyed: elevation needs one value per offset ({len(x)}); got {len(z)}")
        for i in range(1, len(x)):
            if x[i] < x[i - 1]:
                raise InvalidInputError(
                    f"Surveyed: offset[{i}] = {x[i]:g} is less than offset[{i - 1}] = {x[i - 1]:g}; offsets must "
                    "not decrease from left to right looking downstream (points out of order, or an overhang, "
                    "which a section cannot have)")
        if x[-1] == x[0]:
            raise InvalidInputError("Surveyed: offset must span a width; all points share one offset")
        if max(z) == min(z):
            raise InvalidInputError("Surveyed: elevation must vary; a flat line holds no water")
        edges = self.zone_edges
        for i, e in enumerate(edges):
            if not x[0] < e < x[-1]:
                raise InvalidInputError(f"Surveyed: zone_edges[{i}] = {e:g} must lie strictly inside the section, "
                                        f"between offsets {x[0]:g} and {x[-1]:g}")
            if i and e <= edges[i - 1]:
                raise InvalidInputError(f"Surveyed: zone_edges must increase; zone_edges[{i}] = {e:g} follows "
                                        f"{edges[i - 1]:g}")
        if len(self.roughness) != len(edges) + 1:
            raise InvalidInputError(
                f"Surveyed: roughness needs one value per zone, len(zone_edges) + 1 = {len(edges) + 1}; got "
                f"{len(self.roughness)}")
        if len({type(r) for r in self.roughness}) > 1:
            raise InvalidInputError("Surveyed: every zone's roughness must use the same law (all Manning's n or "
                                    "all Chezy's C)")
        for i, area in enumerate(self.still_water):
            if not (x[0] <= area.left < area.right <= x[-1]):
                raise InvalidInputError(f"Surveyed: still_water[{i}] must have offsets with left < right inside the "
                                        f"section ({x[0]:g} to {x[-1]:g}); got {area.left:g} to {area.right:g}")
        # core zones: the roughness zones, divided further at the bounds of still-water areas
        cuts = sorted({*edges, *(v for a in self.still_water for v in (a.left, a.right) if x[0] < v < x[-1])})
        bounds = [x[0], *cuts, x[-1]]
        rough, active, zone_of = [], [], []
        for lo, hi in zip(bounds[:-1], bounds[1:], strict=True):
            mid = 0.5 * (lo + hi)
            zone_of.append(int(np.searchsorted(edges, mid)))
            rough.append(self.roughness[zone_of[-1]])
            levels = [a.elevation - min(z) for a in self.still_water if a.left <= mid <= a.right]
            active.append(max([0.0, *levels]))
        self._zone_roughness = tuple(rough)
        self._zone_of = tuple(zone_of)
        self._packed = _Packed(pack_surveyed(x, z, cuts, active))

    @property
    def invert(self) -> float:
        """Elevation of the lowest ground point, from which depth is measured [length]."""
        return float(min(self.elevation))

    @property
    def bank_depth(self) -> float:
        """Depth at which the water reaches the lower of the two end points [length]."""
        return float(min(self.elevation[0], self.elevation[-1]) - self.invert)

    def warn_above_ends(self, depth, what: str) -> None:
        """A :class:`GVFlowWarning` where ``depth`` (any shape; NaN ignored) stands above the lower end
        point: the survey stops there and the section is taken as closed by a vertical wall, which the
        ground beyond may not be. ``what`` names the depth in the message."""
        y = np.asarray(depth, dtype=float)
        top = self.bank_depth
        if y.size and np.nanmax(y, initial=-np.inf) > top * (1.0 + 1e-9):
            warn(f"section: {what} {np.nanmax(y):.4g} stands above the lower end point of {self!r} "
                 f"({top:.4g} above its invert), where the survey stops and the section is taken as closed by a "
                 "vertical wall; extend the survey over the ground the water reaches")

    @property
    def zone_count(self) -> int:
        """Number of zones the section is divided into: the roughness zones, divided further at the bounds of
        still-water areas."""
        return len(self._zone_roughness)

    def core_roughness(self) -> tuple[int, list[float]]:
        """(law code, roughness value of each zone) for the physics core."""
        return self._zone_roughness[0].kernel_spec()[0], [r.kernel_spec()[1] for r in self._zone_roughness]

    def core_zone_rows(self, rows) -> np.ndarray:
        """Roughness rows per roughness zone, shape (n, len(roughness)), as rows per core zone (n, zone_count).

        The core divides the roughness zones further at the bounds of still-water areas; each of those
        zones takes the coefficient of the roughness zone it lies in.
        """
        return np.ascontiguousarray(np.asarray(rows, dtype=float)[:, list(self._zone_of)])

    def with_roughness(self, values) -> Surveyed:
        """The same section with zone roughness ``values`` (one coefficient per roughness zone, in the
        section's law: Manning's n or Chezy's C)."""
        law = type(self.roughness[0])
        data = {name: getattr(self, name) for name in type(self).model_fields}
        data["roughness"] = [law(float(v)) for v in values]
        return type(self)(**data)

    def core_params(self):
        return SURVEYED, self._packed.array

    def _coefficients(self, y):
        y = self._depth(y)
        flat = np.ascontiguousarray(y.reshape(-1), dtype=float)
        out = np.empty((2, flat.size))
        core("arrays", flat.size * self.zone_count).coefficients_many(
            core_channel(self, None), Fluid(1.0, 1.0, 1e-6), flat, out)
        return out[0].reshape(y.shape), out[1].reshape(y.shape)

    def zone_flow(self, depth: float, discharge: float, units="SI") -> dict:
        """How the discharge divides among the zones at one depth (vertical division lines).

        Each zone carries Q_i = Q K_i/K, in proportion to its conveyance (Chow 1959, §6-7).

        Returns
        -------
        dict of ndarray
            One value per zone, left to right: ``area``, ``wetted_perimeter``, ``top_width``,
            ``conveyance``, ``discharge`` and ``velocity``.
        """
        from .units import resolve_units

        y = float(self._depth(depth))
        q = float(positive_array(discharge, "discharge"))
        out = np.empty((self.zone_count, 6))
        core("arrays", self.zone_count).zone_table(core_channel(self, None), fluid(resolve_units(units)), q, y, out)
        names = ("area", "wetted_perimeter", "top_width", "conveyance", "discharge", "velocity")
        return {name: out[:, i].copy() for i, name in enumerate(names)}

    def energy_coefficient(self, y):
        """Energy (Coriolis) coefficient alpha at depth ``y`` from the zone conveyances [-].

        alpha = (sum K_i³/A_i²)/(K³/A²) (Chow 1959, §2-7); 1 for one zone.
        """
        return scalar_or_array(self._coefficients(y)[0])

    def momentum_coefficient(self, y):
        """Momentum (Boussinesq) coefficient beta at depth ``y`` from the zone conveyances [-].

        beta = (sum K_i²/A_i)/(K²/A) (Chow 1959, §2-7); 1 for one zone.
        """
        return scalar_or_array(self._coefficients(y)[1])

    def __repr__(self) -> str:
        return (f"Surveyed({len(self.offset)} points, invert {self.invert:g}, {self.zone_count} "
                f"zone{'s' if self.zone_count > 1 else ''})")

    __str__ = __repr__


AnySection = Annotated[
    Rectangular | Trapezoidal | Triangular | Circular | Parabolic | WideRectangular | Surveyed,
    Field(discriminator="shape"),
]


def _sides(par: np.ndarray):
    """A packed surveyed section split at its lowest point: (x, z, bounds, active, thalweg index)."""
    n, nz = int(par[0]), int(par[1])
    x, z = par[2:2 + n], par[2 + n:2 + 2 * n]
    bounds, active = par[2 + 2 * n:3 + 2 * n + nz], par[3 + 2 * n + nz:3 + 2 * n + 2 * nz]
    return x, z, bounds, active, int(np.argmin(z))


def _side_parameter(x, z, i0, step):
    """Ground length from the lowest point outwards (step -1: to the left end, +1: to the right), as a
    fraction of the side's length, at each point of that side; (indices, fractions)."""
    idx = np.arange(i0, -1 if step < 0 else x.size, step)
    run = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(x[idx]), np.diff(z[idx])))])
    return idx, (run / run[-1] if run[-1] > 0 else run)


def matched_parameters(upstream: Section, downstream: Section):
    """The core parameters of two sections brought to one layout, so that a section between them is
    ``(1 - t) * upstream + t * downstream`` parameter by parameter: (kind, par_up, par_dn).

    Geometric sections must be of one kind (a rectangle, a trapezoid and a triangle are one kind: bed
    width and two bank slopes); their parameters are interpolated as they are (bed width, bank slopes,
    diameter). Two surveyed sections must have the same number of zones (after the cuts at still-water
    areas). Each is split at its lowest point and both sides are described by the ground length from
    that point outwards, as a fraction of the side's length; both sections are resampled at the union
    of their points' fractions (points added on straight ground change nothing), with offsets taken
    from the lowest point. So the lowest points, the ends and the zones of the two sections correspond,
    and every section between has its lowest point at depth 0. Zone edges (as offsets from the lowest
    point) and the depths below which zones convey nothing are interpolated the same way.
    """
    kind, par_up = upstream.core_params()
    kind_dn, par_dn = downstream.core_params()
    if kind != kind_dn or (kind != SURVEYED and par_up.size != par_dn.size):
        raise InvalidInputError(
            f"section_downstream: a section can change only into one of its kind (the trapezoid family "
            f"(rectangle, trapezoid, triangle), circle, parabola, wide channel or surveyed); got "
            f"{type(upstream).__name__} changing into {type(downstream).__name__}")
    if kind != SURVEYED:
        return kind, np.asarray(par_up, float), np.asarray(par_dn, float)
    if upstream.zone_count != downstream.zone_count:
        raise InvalidInputError(
            f"section_downstream: both surveyed sections need the same number of zones to be interpolated; "
            f"the upstream one has {upstream.zone_count} and the downstream one {downstream.zone_count} "
            "(give them matching zone_edges, e.g. left overbank, main channel, right overbank)")
    out = []
    sides = [_sides(par_up), _sides(par_dn)]
    fractions = []
    for step in (-1, 1):
        f = np.unique(np.concatenate([_side_parameter(x, z, i0, step)[1] for x, z, _, _, i0 in sides]))
        fractions.append(f)
    for x, z, bounds, active, i0 in sides:
        xs, zs = [], []
        for step, f in zip((-1, 1), fractions, strict=True):
            idx, frac = _side_parameter(x, z, i0, step)
            if frac[-1] == 0.0:  # no ground on this side of the lowest point: it is the end point
                xi, zi = np.full(f.size, x[i0]), np.full(f.size, z[i0])
            else:
                xi, zi = np.interp(f, frac, x[idx]), np.interp(f, frac, z[idx])
            xs.append(xi[::-1] if step < 0 else xi[1:])
            zs.append(zi[::-1] if step < 0 else zi[1:])
        xr = np.concatenate(xs) - x[i0]
        bounds_r = bounds - x[i0]
        bounds_r[0], bounds_r[-1] = xr[0], xr[-1]
        out.append(pack_surveyed(xr, np.concatenate(zs), bounds_r[1:-1], active))
    return kind, out[0], out[1]
