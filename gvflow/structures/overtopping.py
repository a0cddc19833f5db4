"""Road overtopping at a culvert, and the culvert performance table.

When the headwater rises above the road, part of the discharge flows over
the road embankment as over a broad-crested weir and the rest through the
barrels; both see the same headwater (HDS-5, ch. 3, "roadway overtopping").

Flow over the road. The road crest is either level (a length and an
elevation) or a profile of offsets and elevations along the road, taken as
straight between the points. Each strip dx of the crest passes
dQ = Cd sqrt(g) (2/3)^1.5 (H - z)^1.5 dx, the broad-crested weir relation of
:func:`gvflow.structures.broad_crested_weir_discharge` (its one home), with H
the headwater level and z the crest level; over a profile the integral of
(H - z)^1.5 is exact for straight pieces, and the relation is applied once
to the whole wetted crest length W with the equivalent head
h_e = (∫(H - z)^1.5 dx / W)^(2/3). The manual's own method, dividing a sag
curve into level pieces each with its own depth, converges to the same
integral. The approach velocity over the road is neglected (the head is the
pool depth above the crest, as in the manual).

Coefficient. The manual writes Q = Cd L HWr^1.5 with Cd = kt Cr; for deep
overtopping (HWr/Lr > 0.15, Lr the road width in the flow direction) its
Figure III-11A shows Cr between about 2.9 and 3.1 ft^0.5/s (US units); 3.0
for a paved road is the usual figure (from memory), 1.66 m^0.5/s in SI. In
the dimensionless coefficient of the weir relation here that is
Cd = 3.0 / (sqrt(32.174) (2/3)^1.5) = 0.972: :data:`ROAD_OVERTOPPING_COEFFICIENT`.
For shallow overtopping (HWr/Lr < 0.15) the manual's Figure III-11B gives a
lower Cr that depends on the head; give ``coefficient`` yourself then.

Submergence. A tailwater above the road crest reduces the flow by the factor
kt of the manual's Figure III-11C, a function of ht/HWr (ht the tailwater
above the crest, HWr the headwater above it), with separate curves for paved
and gravel roads: 1 up to about 0.8 (paved) or 0.75 (gravel), falling to
about 0.5 near 0.98 to 1.0. The figure's axes, the two curves and Cd = kt Cr
were read in the 1985 edition's scanned text; the points of the curves in
:data:`ROAD_SUBMERGENCE_CURVES` are from memory - verify against the chart.
Between the points kt is interpolated linearly; beyond the chart's last point
it falls linearly to 0 at ht/HWr = 1 (an assumption of this library, so the
split stays continuous; a warning says when a result lies there). For a crest
profile the submergence ratio is taken at the crest's low point.

The split. For a total discharge Q whose headwater with all of it in the
barrels rises above the road's low point, the barrel discharge Qb solves
Qb + Q_road(HW(Qb)) = Q, HW(Qb) the culvert headwater
(:func:`gvflow.structures.culvert_headwater`, inlet and outlet control
compared, with the tailwater of the total discharge); the road carries
exactly Q - Qb. Solved by a bracketed iteration to 1e-12 Q.

Outlet depth and velocity (for scour protection below the outlet): under
outlet control, or inlet control with a subcritical barrel, the depth at the
outlet of the barrel profile; when the barrel runs supercritical from its
entrance, its normal depth (critical depth where the barrel is too flat
for one), the manual's practice for inlet control (from memory).

References
----------
Normann, J. M., Houghtalen, R. J. & Johnston, W. J. (1985). *Hydraulic Design
of Highway Culverts*, HDS-5, FHWA-IP-85-15, ch. III, "Roadway overtopping",
Figure III-11 (discharge coefficients and submergence factor), and the
division of a sag vertical curve into segments (Figure III-12). Schall, J. D.
et al. (2012), HDS-5 3rd ed., FHWA-HIF-12-026, keeps the method (from memory).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import replace
from typing import Annotated, Literal

import numpy as np
from pydantic import Field, model_validator

from .. import coefficients
from .._roots import bracketed_root
from .._validate import finite_array, scalar_or_array
from ..errors import GVFlowWarning, InvalidInputError, NoSolutionError
from ..units import UnitsLike, resolve_units
from ._barrel_kernel import barrel_normal_depth
from ._common import FrozenModel
from .weirs import broad_crested_weir_discharge

__all__ = [
    "ROAD_OVERTOPPING_COEFFICIENT",
    "ROAD_SUBMERGENCE_CURVES",
    "RoadCrest",
    "road_submergence_factor",
    "road_overtopping_discharge",
]

_G_US = 32.174
#: Dimensionless broad-crested weir coefficient of a paved road embankment: Cr = 3.0 ft^0.5/s
#: (HDS-5 1985, Figure III-11A, deep overtopping; the value 3.0 from memory) in the form of
#: :func:`~gvflow.structures.broad_crested_weir_discharge`.
ROAD_OVERTOPPING_COEFFICIENT = coefficients.value("road.overtopping_cr") / (math.sqrt(_G_US) * (2.0 / 3.0) ** 1.5)

#: Submergence factor kt against ht/HWr for paved and gravel roads (HDS-5 1985, Figure III-11C;
#: the points are from memory - verify against the chart). The last point is the chart's end.
ROAD_SUBMERGENCE_CURVES: dict[str, tuple[tuple[float, ...], tuple[float, ...]]] = {
    "paved": coefficients.value("road.submergence_paved"),
    "gravel": coefficients.value("road.submergence_gravel"),
}

_Finite = Annotated[float, Field(allow_inf_nan=False)]


def road_submergence_factor(submergence, surface: str = "paved"):
    """Submergence factor kt of flow over a road for ht/HWr (HDS-5 1985, Figure III-11C).

    Linear between the tabulated points of :data:`ROAD_SUBMERGENCE_CURVES`,
    1 at and below ht/HWr = 0 (tailwater at or below the crest), falling
    linearly from the chart's last point to 0 at ht/HWr = 1 (an assumption
    of this library beyond the chart).

    Examples
    --------
    >>> from gvflow.structures import road_submergence_factor
    >>> float(road_submergence_factor(0.5)), round(float(road_submergence_factor(0.9)), 2)
    (1.0, 0.91)
    """
    if surface not in ROAD_SUBMERGENCE_CURVES:
        raise InvalidInputError(f"surface must be one of {', '.join(ROAD_SUBMERGENCE_CURVES)}; got {surface!r}")
    s = finite_array(submergence, "submergence")
    xs, ks = ROAD_SUBMERGENCE_CURVES[surface]
    x = np.array(xs + (1.0,))
    k = np.array(ks + (0.0,))
    return scalar_or_array(np.interp(np.clip(s, 0.0, 1.0), x, k))


class RoadCrest(FrozenModel):
    """The road over a culvert, as a weir for the flow that overtops it.

    Give either ``length`` and ``elevation`` (a level crest) or ``offsets``
    and ``elevations`` (the crest profile along the road, straight between
    points, e.g. a sag curve). Elevations are in the datum of
    ``invert_elevation``, the culvert's inlet invert; with the default 0 they
    are heights above the inlet invert.

    Parameters
    ----------
    length : float, optional
        Length of a level crest along the road [length].
    elevation : float, optional
        Elevation of a level crest [length].
    offsets, elevations : sequence of float, optional
        Crest profile: distances along the road (increasing) and crest
        elevations [length]; water rising above either end of the profile
        is not counted (a warning says so).
    invert_elevation : float
        Elevation of the culvert's inlet invert in the same datum [length].
    coefficient : float, optional
        Dimensionless broad-crested weir coefficient Cd (as in
        :func:`~gvflow.structures.broad_crested_weir_discharge`); default
        :data:`ROAD_OVERTOPPING_COEFFICIENT` (Cr = 3.0 ft^0.5/s, deep
        overtopping of a paved road). For a coefficient Cr of the manual in
        US units use Cr / 3.087, in SI Cr / 1.705.
    surface : "paved" or "gravel"
        Which submergence curve applies.

    Examples
    --------
    >>> from gvflow.structures import RoadCrest
    >>> road = RoadCrest(length=40.0, elevation=2.5)
    >>> round(road.low_point, 3), round(float(road.discharge(2.8)), 4)
    (2.5, 10.8861)
    """

    length: Annotated[float, Field(gt=0, allow_inf_nan=False)] | None = None
    elevation: _Finite | None = None
    offsets: tuple[_Finite, ...] | None = None
    elevations: tuple[_Finite, ...] | None = None
    invert_elevation: _Finite = 0.0
    coefficient: Annotated[float, Field(gt=0, allow_inf_nan=False)] | None = None
    surface: Literal["paved", "gravel"] = "paved"

    @model_validator(mode="after")
    def _check_crest(self):
        level = self.length is not None or self.elevation is not None
        profile = self.offsets is not None or self.elevations is not None
        if level == profile:
            raise InvalidInputError("give the road crest either as length= and elevation= (a level crest) or as "
                                    "offsets= and elevations= (a crest profile), not both or neither")
        if level and (self.length is None or self.elevation is None):
            raise InvalidInputError("a level road crest needs both length= and elevation=")
        if profile:
            if self.offsets is None or self.elevations is None or len(self.offsets) != len(self.elevations):
                raise InvalidInputError("a road crest profile needs offsets= and elevations= of the same length")
            if len(self.offsets) < 2:
                raise InvalidInputError("a road crest profile needs at least two points (offsets and elevations)")
            if np.any(np.diff(self.offsets) <= 0):
                raise InvalidInputError("road crest offsets must increase along the road; sort them")
        if self.low_point <= 0:
            raise InvalidInputError(
                f"the road crest's low point {self.low_point + self.invert_elevation:g} is not above the culvert's "
                f"inlet invert {self.invert_elevation:g}; check the elevations and invert_elevation")
        return self

    @property
    def cd(self) -> float:
        """The weir coefficient used."""
        return ROAD_OVERTOPPING_COEFFICIENT if self.coefficient is None else self.coefficient

    def _profile(self):
        """(offsets, heights above the inlet invert) of the crest."""
        if self.offsets is None:
            return np.array([0.0, self.length]), np.full(2, self.elevation - self.invert_elevation)
        return np.asarray(self.offsets, dtype=float), np.asarray(self.elevations, dtype=float) - self.invert_elevation

    @property
    def low_point(self) -> float:
        """Height of the crest's lowest point above the inlet invert [length]."""
        return float(np.min(self._profile()[1]))

    @property
    def crest_length(self) -> float:
        """Length of the crest along the road [length]."""
        x = self._profile()[0]
        return float(x[-1] - x[0])

    def wetted(self, headwater):
        """Wetted crest length W and ∫(H - z)^1.5 dx for headwaters H above the inlet invert (exact for
        a crest straight between its points)."""
        x, z = self._profile()
        hw = np.asarray(headwater, dtype=float)[..., None]
        w = np.diff(x)
        h1 = hw - z[:-1]
        h2 = hw - z[1:]
        p1, p2 = np.maximum(h1, 0.0), np.maximum(h2, 0.0)
        dh = h2 - h1
        level = np.abs(dh) <= 1e-12 * (np.abs(h1) + np.abs(h2) + 1e-300)
        with np.errstate(divide="ignore", invalid="ignore"):
            frac = np.where(level, (p1 > 0).astype(float), (p2 - p1) / dh)
            integral = np.where(level, p1 ** 1.5, (p2 ** 2.5 - p1 ** 2.5) / (2.5 * dh))
        return np.sum(w * frac, axis=-1), np.sum(w * integral, axis=-1)

    def discharge(self, headwater, downstream_level=None, units: UnitsLike = "SI"):
        """Flow over the road for headwater(s) above the inlet invert: :func:`road_overtopping_discharge`."""
        return road_overtopping_discharge(self, headwater, downstream_level=downstream_level, units=units)

    def describe(self, units) -> str:
        L = units.length
        if self.offsets is None:
            return f"road crest {self.length:g} {L} long at {self.elevation:g} {L}"
        return (f"road crest profile of {len(self.offsets)} points over {self.crest_length:g} {L}, low point "
                f"{self.low_point + self.invert_elevation:g} {L}")


def _road_flow(road, hw, down, u):
    """Road discharge and kt for headwater and downstream level above the inlet invert, vectorised; no checks."""
    width, integral = road.wetted(hw)
    wet = width > 0
    q = np.zeros(np.shape(width))
    kt = np.ones(np.shape(width))
    if np.any(wet):
        h_eq = np.where(wet, integral / np.where(wet, width, 1.0), 1.0) ** (2.0 / 3.0)
        q_free = np.asarray(broad_crested_weir_discharge(h_eq, np.where(wet, width, 1.0), road.low_point,
                                                         discharge_coefficient=road.cd, units=u), dtype=float)
        if down is not None:
            head = np.maximum(hw - road.low_point, 1e-300)
            kt = np.asarray(road_submergence_factor((down - road.low_point) / head, road.surface), dtype=float)
        q = np.where(wet, q_free * kt, 0.0)
    return q, kt


def road_overtopping_discharge(road: RoadCrest, headwater, *, downstream_level=None, units: UnitsLike = "SI"):
    """Discharge over a road crest for a headwater (HDS-5 1985, ch. III, roadway overtopping).

    Q = kt Cd sqrt(g) (2/3)^1.5 ∫(H - z)^1.5 dx over the wetted crest (see the
    module notes), kt the submergence factor of the downstream level.

    Parameters
    ----------
    road : RoadCrest
    headwater : float or ndarray
        Headwater depth above the culvert's inlet invert [length].
    downstream_level : float or ndarray, optional
        Water level below the road, above the inlet invert [length]; None
        or below the crest: free flow.
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Discharge over the road [length³/s]; 0 while the headwater is below the crest.

    Examples
    --------
    >>> from gvflow.structures import RoadCrest, road_overtopping_discharge
    >>> sag = RoadCrest(offsets=[0.0, 50.0, 100.0], elevations=[3.0, 2.5, 3.0])
    >>> round(float(road_overtopping_discharge(sag, 2.8)), 4)
    6.5316
    """
    u = resolve_units(units)
    hw = finite_array(headwater, "headwater")
    down = None if downstream_level is None else finite_array(downstream_level, "downstream_level")
    q, _ = _road_flow(road, hw, down, u)
    return scalar_or_array(q)


# ---------------------------------------------------------------------------
# completing a culvert result: outlet velocity, reasons, road split
# ---------------------------------------------------------------------------

def _outlet_state(barrel, res, q_barrel, u):
    """Outlet depth and velocity of a barrel-only result for the discharge through all barrels."""
    q1 = np.asarray(q_barrel, dtype=float) / barrel.barrels
    flow = np.asarray(res.barrel_flow)
    depth = np.array(np.broadcast_to(np.asarray(res.outlet_depth, dtype=float), q1.shape), dtype=float)
    supercritical = np.broadcast_to(flow == "inlet critical", q1.shape)
    if np.any(supercritical):
        qs = q1[supercritical]
        yn = barrel_normal_depth(barrel, qs, u)
        yc = barrel._critical_depth(qs, u)
        depth[supercritical] = np.where(np.isfinite(yn) & (yn < yc), yn, yc)
    area = barrel._area_perimeter(depth)[0]
    return depth, q1 / area


def _reasons(res, u):
    L = u.length
    hw_in = np.atleast_1d(np.asarray(res.inlet_headwater, dtype=float))
    hw_out = np.atleast_1d(np.asarray(res.outlet_headwater, dtype=float))
    control = np.broadcast_to(np.asarray(res.control), hw_in.shape)
    flow = np.broadcast_to(np.asarray(res.barrel_flow), hw_in.shape)
    out = []
    for c, f, hi, ho in zip(control, flow, hw_in, hw_out, strict=True):
        if c == "outlet":
            out.append(f"outlet control: the barrel ({f}) and tailwater need {ho:.3f} {L} of headwater, more "
                       f"than the inlet's {hi:.3f} {L}")
        elif f == "inlet critical" and ho > hi:
            out.append(f"inlet control: the outlet-control estimate {ho:.3f} {L} is higher than the inlet's "
                       f"{hi:.3f} {L}, but the barrel runs supercritical from critical depth at its entrance, so "
                       "the outlet cannot control")
        elif f == "inlet critical":
            out.append(f"inlet control: the barrel runs supercritical from critical depth at its entrance; the "
                       f"inlet needs {hi:.3f} {L}")
        else:
            out.append(f"inlet control: the inlet needs {hi:.3f} {L} of headwater, more than outlet control's "
                       f"{ho:.3f} {L}")
    return out


def finish_culvert_result(barrel, res, *, road, tw, vd, exit_loss, steps, units, barrel_headwater):
    """Add barrel and road discharges, outlet depth and velocity and the reasons to a barrel-only result;
    with a road, split the discharges that overtop it (module notes). ``barrel_headwater`` is
    :func:`gvflow.structures.culverts.barrel_headwater` (the culverts module calls this one, so it passes
    its function in rather than being imported back)."""
    u = resolve_units(units)
    q = np.atleast_1d(np.asarray(res.discharge, dtype=float))
    scalar = np.ndim(res.discharge) == 0
    shape = q.shape
    tw = np.broadcast_to(np.asarray(tw, dtype=float), shape)
    vd = np.broadcast_to(np.asarray(vd, dtype=float), shape)
    q_barrel = q.copy()
    q_road = np.zeros(shape)
    kt = np.ones(shape)
    if road is not None:
        down = tw - barrel.length * barrel.slope
        hw0 = np.atleast_1d(np.asarray(res.headwater, dtype=float))
        idx = np.flatnonzero(hw0 > road.low_point)
        if idx.size:
            qb = _split(barrel, road, q[idx], hw0[idx], tw[idx], vd[idx], down[idx], exit_loss, steps, u,
                        barrel_headwater)
            # nudge Qb by at most a rounding so that Qb + (Q - Qb) gives Q back in floating point
            qi = q[idx]
            for cand in (np.nextafter(qb, np.inf), np.nextafter(qb, -np.inf)):
                off = (qb + (qi - qb)) != qi
                fix = off & ((cand + (qi - cand)) == qi)
                qb[fix] = cand[fix]
            sub = barrel_headwater(barrel, qb, tw[idx], vd[idx], res.allowable_headwater, exit_loss, steps, u)
            fields = ("headwater", "inlet_headwater", "outlet_headwater", "control", "outlet_depth", "inlet_depth",
                      "barrel_flow")
            merged = {}
            for name in fields:
                full = np.array(np.atleast_1d(getattr(res, name)), copy=True)
                if full.dtype.kind in "US":
                    full = full.astype(object)
                full[idx] = np.atleast_1d(getattr(sub, name))
                merged[name] = full
            q_barrel[idx] = qb
            q_road[idx] = q[idx] - qb  # continuity, exactly
            _headwater_in_a_jump(road, merged["headwater"], idx, qi - qb, down[idx], u)
            kt[idx] = _road_flow(road, merged["headwater"][idx], down[idx], u)[1]
            if np.any(kt[idx] < 1.0) and np.any(
                    (down[idx] - road.low_point) / (merged["headwater"][idx] - road.low_point)
                    > ROAD_SUBMERGENCE_CURVES[road.surface][0][-1]):
                warnings.warn(f"the tailwater drowns the road beyond the submergence chart (ht/HWr above "
                              f"{ROAD_SUBMERGENCE_CURVES[road.surface][0][-1]:g}); the road discharge there rests on "
                              "a straight-line extension of the chart", GVFlowWarning, stacklevel=3)
            for name in ("control", "barrel_flow"):
                merged[name] = merged[name].astype(str)
            hw = merged["headwater"]
            above = hw > res.allowable_headwater if res.allowable_headwater is not None else np.zeros(shape, bool)
            res = replace(res, **{k: _shaped(v, scalar) for k, v in merged.items()},
                          above_allowable=bool(above[0]) if scalar else above)
    depth, velocity = _outlet_state(barrel, res, q_barrel, u)
    reasons = _reasons(res, u)
    return replace(res, barrel_discharge=_shaped(q_barrel, scalar), road_discharge=_shaped(q_road, scalar),
                   outlet_flow_depth=_shaped(depth, scalar), outlet_velocity=_shaped(velocity, scalar),
                   reason=reasons[0] if scalar else np.array(reasons), road=road,
                   road_submergence=_shaped(kt, scalar))


def _headwater_in_a_jump(road, hw, idx, q_road, down, u):
    """Where the split closed on a jump of the barrel's rating, set the headwater (``hw[idx]``, in place) to
    the one that passes ``q_road`` over the road, with a warning.

    The barrel's governing headwater jumps up with its discharge where the barrel turns from steep to mild:
    below, the inlet governs (the outlet-control figure, critical depth at the entrance, is for information);
    above, outlet control, which may stand higher than the inlet's figure. A total discharge whose split
    falls in that jump sends the barrel the discharge at the jump, with its headwater anywhere within the
    jump, and the rest over the road: the headwater is the road's for that rest."""
    q_at = _road_flow(road, hw[idx], down, u)[0]
    off = np.flatnonzero(np.abs(q_at - q_road) > 1e-9 * np.maximum(q_road, 1e-12) + 1e-12)
    if not off.size:
        return
    for r in off.tolist():
        target = float(q_road[r])
        lo, hi = road.low_point, float(hw[idx[r]])
        while _road_flow(road, np.array([hi]), down[r:r + 1], u)[0][0] < target:
            hi = road.low_point + 2.0 * (hi - road.low_point)
        hw[idx[r]] = bracketed_root(lambda h, _r=r, _t=target: _road_flow(road, h, down[_r:_r + 1], u)[0] - _t,
                                    np.array([lo]), np.array([hi]), rtol=1e-14, what="headwater over the road")[0]
    warnings.warn(f"the barrels' rating jumps where they turn from steep to mild (the inlet governs below, outlet "
                  f"control above, higher): at {off.size} discharge(s) the split falls in that jump, so the barrels "
                  "carry the discharge at the jump and the headwater is the one that passes the rest over the road",
                  GVFlowWarning, stacklevel=4)


def _shaped(v, scalar):
    """A float or str for a single discharge given as a scalar, else the array."""
    v = np.asarray(v)
    if not scalar:
        return v
    item = np.ravel(v)[0]
    return str(item) if v.dtype.kind in "USO" else float(item)


#: fractions of its own discharge at which a scenario's all-barrel rating is sampled for the first guess
_GUESS_FRACTIONS = np.array([0.25, 0.5, 0.75])


def _first_guess(road, q, down, hw_all, rating, u):
    """Barrel discharge where Qb + Q_road(HW(Qb)) = Q on each scenario's own all-barrel rating, sampled at
    0, Q/4, Q/2, 3Q/4 and Q (``hw_all``) with its own tailwater and interpolated linearly, and the slope of
    that residual there. Each scenario's guess uses its own inputs only, so a scenario gives the same split
    alone as in any array."""
    gq = np.concatenate([np.zeros((q.size, 1)), q[:, None] * _GUESS_FRACTIONS, q[:, None]], axis=1)
    gh = np.concatenate([np.zeros((q.size, 1)), rating(gq[:, 1:-1]), hw_all[:, None]], axis=1)
    g = gq + _road_flow(road, gh, down[:, None], u)[0] - q[:, None]
    j = np.maximum(np.argmax(g >= 0, axis=1), 1)
    rows = np.arange(q.size)
    g0, g1 = g[rows, j - 1], g[rows, j]
    q0, q1 = gq[rows, j - 1], gq[rows, j]
    slope = (g1 - g0) / (q1 - q0)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.where(g1 > g0, q0 - g0 / slope, q1)
    return x, np.maximum(np.where(np.isfinite(slope), slope, 1.0), 1.0)


def _split(barrel, road, q, hw_all, tw, vd, down, exit_loss, steps, u, barrel_headwater):
    """Barrel discharge Qb with Qb + Q_road(HW(Qb)) = Q for each overtopping case.

    A first guess from the all-barrel rating, one Newton-like step with that
    rating's slope, then Illinois iteration on the bracket found. While the
    barrel headwater rises with its discharge the residual rises at least as
    fast as Qb, so the root lies within |residual| of any point: that bounds
    the bracket search.
    """
    def resid(qb, sel):
        hw = np.asarray(barrel_headwater(barrel, qb, tw[sel], vd[sel], None, exit_loss, steps, u).headwater,
                        dtype=float).reshape(qb.shape)
        return qb + _road_flow(road, hw, down[sel], u)[0] - q[sel]

    def rating(qb):  # all-barrel headwater of each row's own tailwater at the discharges qb, (rows, k)
        k = qb.shape[1]
        hw = barrel_headwater(barrel, qb.ravel(), np.repeat(tw, k), np.repeat(vd, k), None, exit_loss, steps, u)
        return np.asarray(hw.headwater, dtype=float).reshape(qb.shape)

    everything = np.arange(q.size)
    qmin = 1e-9 * q
    x1, slope = _first_guess(road, q, down, hw_all, rating, u)
    x1 = np.clip(x1, qmin, q)
    f1 = resid(x1, everything)
    x2 = np.clip(x1 - f1 / slope, qmin, q)
    f2 = np.where(x2 == x1, f1, 0.0)
    moved = np.flatnonzero(x2 != x1)
    if moved.size:
        f2[moved] = resid(x2[moved], moved)
    lo, flo, hi, fhi = x1.copy(), f1.copy(), x2.copy(), f2.copy()
    same = (np.signbit(f1) == np.signbit(f2)) & (f1 != 0) & (f2 != 0)
    if np.any(same):
        k = np.flatnonzero(same)
        x3 = np.clip(x2[k] - f2[k], qmin[k], q[k])
        f3 = resid(x3, k)
        lo[k], flo[k], hi[k], fhi[k] = x2[k], f2[k], x3, f3
        stuck = k[np.signbit(f3) == np.signbit(f2[k])]
        if stuck.size:  # the barrel headwater does not rise with its discharge here: widest bracket
            lo[stuck], hi[stuck] = qmin[stuck], q[stuck]
            flo[stuck] = resid(lo[stuck], stuck)
            fhi[stuck] = resid(hi[stuck], stuck)
            if np.any(np.signbit(flo[stuck]) == np.signbit(fhi[stuck])):
                i = int(stuck[np.signbit(flo[stuck]) == np.signbit(fhi[stuck])][0])
                raise NoSolutionError(f"discharge {q[i]:g}: no split between the barrels and the road balances; "
                                      "check the road crest elevation against the inlet invert")
    x = np.where(flo == 0, lo, hi)
    done = (flo == 0) | (fhi == 0)
    side = np.zeros(q.shape, dtype=int)
    tol = 1e-12 * q
    for _ in range(100):
        done |= np.abs(hi - lo) <= tol
        act = np.flatnonzero(~done)
        if act.size == 0:
            return x
        l, h, fl, fh = lo[act], hi[act], flo[act], fhi[act]
        xs = h - fh * (h - l) / (fh - fl)
        badx = ~np.isfinite(xs) | (xs <= np.minimum(l, h)) | (xs >= np.maximum(l, h))
        xs = np.where(badx, 0.5 * (l + h), xs)
        fx = resid(xs, act)
        x[act] = xs
        # Illinois: the newest point always goes to hi; when lo is kept twice in a row its residual is halved
        same = np.signbit(fx) == np.signbit(fh)
        s = side[act]
        fl = np.where(same & (s == -1), 0.5 * fl, fl)
        lo[act] = np.where(same, l, h)
        flo[act] = np.where(same, fl, fh)
        hi[act], fhi[act] = xs, fx
        side[act] = np.where(same, -1, 1)
        done[act] |= (fx == 0) | (np.abs(fx) <= 1e-13 * q[act])
    raise NoSolutionError("the split of the discharge between the barrels and the road did not converge in 100 "
                          "iterations")


# ---------------------------------------------------------------------------
# performance table and plot
# ---------------------------------------------------------------------------

_TABLE_COLUMNS = ("discharge", "headwater", "control", "barrel_discharge", "road_discharge", "tailwater",
                  "outlet_flow_depth", "outlet_velocity", "above_allowable")


def performance_table(res):
    """The culvert performance table as a pandas DataFrame, one row per discharge."""
    import pandas as pd

    n = np.size(res.headwater)
    data = {c: np.broadcast_to(np.asarray(getattr(res, c)), (n,)) for c in _TABLE_COLUMNS}
    data["reason"] = np.broadcast_to(np.asarray(res.reason, dtype=object), (n,))
    return pd.DataFrame(data)


def plot_performance(res, ax=None, units: UnitsLike = "SI"):
    """Performance curve: headwater against total, barrel and road discharge, with the road crest and
    the allowable headwater; returns the matplotlib Axes."""
    import matplotlib.pyplot as plt

    from .._labels import _label, place_labels

    u = resolve_units(units)
    L = u.length
    if ax is None:
        _, ax = plt.subplots(figsize=(8, 5))
    q = np.atleast_1d(np.asarray(res.discharge, dtype=float))
    order = np.argsort(q)
    q = q[order]
    hw = np.atleast_1d(np.asarray(res.headwater, dtype=float))[order]
    qb = np.atleast_1d(np.asarray(res.barrel_discharge, dtype=float))[order]
    qr = np.atleast_1d(np.asarray(res.road_discharge, dtype=float))[order]
    control = np.broadcast_to(np.asarray(res.control), np.shape(order))[order]
    ax.plot(q, hw, color="C0", lw=2.0, label="total discharge")
    if np.any(qr > 0):
        ax.plot(qb, hw, color="C0", lw=1.2, ls="--", label="through the barrels")
        wet = qr > 0
        ax.plot(qr[wet], hw[wet], color="C2", lw=1.2, ls=":", label="over the road")
    for name, marker, colour in (("inlet", "o", "C1"), ("outlet", "s", "C3")):
        sel = control == name
        if np.any(sel):
            step = max(1, int(np.count_nonzero(sel) // 25))
            ax.plot(q[sel][::step], hw[sel][::step], ls="none", marker=marker, ms=4, mfc="none", color=colour,
                    label=f"{name} control governs in the barrel")
    xmax = float(q.max()) * 1.02
    road = res.road
    labels = []
    if res.allowable_headwater is not None:
        ax.axhline(res.allowable_headwater, color="C3", lw=1.0, ls="--")
        labels.append(_label(ax, f"allowable headwater {res.allowable_headwater:.2f} {L}",
                             (0.99, res.allowable_headwater), xycoords=("axes fraction", "data"), offset=(0.0, 1.0),
                             arrow_colour=None, ha="right", color="C3"))
    if road is not None:
        ax.axhline(road.low_point, color="0.3", lw=1.0, ls="-.")
        labels.append(_label(ax, f"road crest (low point) {road.low_point:.2f} {L}", (0.99, road.low_point),
                             xycoords=("axes fraction", "data"), offset=(0.0, 1.0), arrow_colour=None, ha="right",
                             color="0.3"))
    ax.set_xlim(0.0, xmax)
    ax.set_ylim(bottom=0.0)
    ax.set_xlabel(f"discharge [{L}³/s]")
    ax.set_ylabel(f"headwater above the inlet invert [{L}]")
    ax.set_title("culvert performance")
    ax.grid(True, alpha=0.3)
    ax.legend(loc="lower right", fontsize=8)
    place_labels(ax, labels)
    return ax
