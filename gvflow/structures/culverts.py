"""Culverts: headwater under inlet control and outlet control.

A culvert barrel (circular or box, one or several identical barrels) passes
a discharge from a headwater pool to a tailwater. The headwater depth HW,
measured above the inlet invert, is the larger of two estimates:

* **Inlet control** (the inlet's capacity limits the flow): the design
  equations of the US Federal Highway Administration, *Hydraulic Design of
  Highway Culverts*, HDS-5, 3rd ed. (2012), Appendix A. With
  X = Ku Q / (A D^0.5), A the full barrel area and D its rise:

  - unsubmerged, form 1: HW/D = Hc/D + K X^M + Ks S
  - unsubmerged, form 2: HW/D = K X^M
  - submerged: HW/D = c X² + Y + Ks S

  unsubmerged up to X = 3.5, submerged from X = 4.0, linear interpolation of
  HW/D between the two end values in between. Hc is the specific energy at
  critical depth in the barrel, S the barrel slope, Ks = -0.5 (+0.7 for
  mitered inlets). Ku = 1.811 in SI and 1.0 in US units; in general
  Ku = sqrt(32.174 ft/s² / g), which reproduces both.
  Coefficients (form, K, M, c, Y) from the manual's Table A.1 (from memory -
  verify), entrance loss coefficients ke read in the 2001 edition's Table 12:
  :data:`INLET_TYPES`, kept with their sources in :mod:`gvflow.coefficients`.

* **Outlet control** (the barrel and tailwater limit the flow): the energy
  equation from the tailwater through the barrel to the headwater,
  HW = h_in + (1 + ke) V_in²/2g, where h_in is the depth (or pressure head
  when full) at the barrel entrance. The outlet depth follows from the exit
  loss kx (V²/2g - Vd²/2g) (HDS-5 ch. 3): with kx = 1 it equals the
  tailwater, and never falls below the barrel's critical depth. From the
  outlet the barrel is marched upstream by the standard step method with
  Manning friction (average of end friction slopes), full-barrel friction
  where the water reaches the soffit. When the whole barrel runs full this
  is exactly HW = TW + Vd²/2g + kx (V²/2g - Vd²/2g) + L Sf - L S0 + ke V²/2g.
  (The manual's hand method approximates a partly full outlet by
  ho = max(TW, (dc + D)/2) and full-barrel friction; gvflow traces the
  partly full profile instead.) When no subcritical profile fits in the
  barrel (steep barrel, low tailwater) the barrel flows supercritical from
  a critical section at its entrance: the outlet does not control, the
  inlet governs, and the outlet-control figure reported is that of critical
  depth at the inlet, dc + (1 + ke) Vc²/2g, for information only.

The approach velocity in the headwater pool is neglected, as in the manual.
Flow over the road when the headwater rises above it: ``road=`` of
:func:`culvert_headwater` and :mod:`gvflow.structures.overtopping`. Just after the barrel entrance leaves
critical depth as the tailwater rises, the outlet-control headwater dips
slightly before it rises: y + (1 + ke) V²/2g is least where
Fr² = 1/(1 + ke), a little above critical depth.
"""

from __future__ import annotations

import contextvars
import math
from dataclasses import dataclass
from typing import Annotated, Literal

import numpy as np
from pydantic import Field

from .. import coefficients
from .._roots import bracketed_root
from .._validate import broadcast, finite_array, positive_array, scalar_or_array, single_number
from ..coefficients import INLET_TYPES, CulvertInlet
from ..errors import ConvergenceError, InvalidInputError, NoSolutionError
from ..friction import AnyRoughness
from ..sections import AnySection
from ..uniform import normal_depth
from ..units import UnitsLike, resolve_units
from ._barrel_kernel import barrel_critical_depth, barrel_friction_slope, barrel_partial_geometry, run_march
from ._common import FrozenModel
from .overtopping import finish_culvert_result, performance_table, plot_performance

__all__ = [
    "CulvertInlet",
    "INLET_TYPES",
    "CircularBarrel",
    "BoxBarrel",
    "DownstreamChannel",
    "OutletControl",
    "CulvertHeadwater",
    "inlet_control_headwater",
    "outlet_control_headwater",
    "culvert_headwater",
]

#: Upper limit of the unsubmerged inlet-control equations and lower limit of the submerged one (HDS-5, App. A).
UNSUBMERGED_LIMIT = coefficients.value("culvert.unsubmerged_limit")
SUBMERGED_LIMIT = coefficients.value("culvert.submerged_limit")
_G_US = coefficients.value("culvert.gravity_us")  # ft/s², the gravity of the manual's US-unit equations
#: Default exit loss coefficient kx of outlet control.
EXIT_LOSS = coefficients.value("culvert.exit_loss")

_Pos = Annotated[float, Field(gt=0, allow_inf_nan=False)]
_Finite = Annotated[float, Field(allow_inf_nan=False)]


class _Barrel(FrozenModel):
    length: _Pos
    slope: _Finite
    roughness: _Pos
    inlet: str
    entrance_loss: Annotated[float, Field(ge=0, allow_inf_nan=False)] | None = None
    barrels: Annotated[int, Field(ge=1)] = 1

    def model_post_init(self, __context) -> None:
        if self.inlet not in INLET_TYPES:
            raise InvalidInputError(
                f"unknown inlet {self.inlet!r}; valid choices are: {', '.join(sorted(INLET_TYPES))}"
            )
        if INLET_TYPES[self.inlet].shape != self.shape:
            valid = sorted(k for k, v in INLET_TYPES.items() if v.shape == self.shape)
            raise InvalidInputError(
                f"inlet {self.inlet!r} has coefficients for a {INLET_TYPES[self.inlet].shape} barrel, not a "
                f"{self.shape} one; valid choices are: {', '.join(valid)}"
            )

    @property
    def inlet_coefficients(self) -> CulvertInlet:
        """The inlet-control coefficients of this barrel's inlet."""
        return INLET_TYPES[self.inlet]

    @property
    def ke(self) -> float:
        """Entrance loss coefficient: the given one, else the inlet type's."""
        return self.inlet_coefficients.entrance_loss if self.entrance_loss is None else self.entrance_loss

    # geometry hooks (depth h as array, h <= height) ------------------------------------------
    @property
    def height(self) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    def _partial(self, h):
        """Flow area and wetted perimeter of the partly full barrel at depths h (the core's geometry)."""
        return barrel_partial_geometry(self, h)

    def _critical_depth(self, q, u):
        """Critical depth per barrel for discharges q, at most the rise (the core's critical depth)."""
        return barrel_critical_depth(self, q, u)

    @property
    def full_area(self) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    @property
    def full_perimeter(self) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    def _area_perimeter(self, h):
        """Flow area and wetted perimeter at depth (or pressure head) h; full values at and above the soffit."""
        d = self.height
        hp = np.clip(h, 1e-12 * d, d)
        a, p = self._partial(hp)
        full = h >= d
        return np.where(full, self.full_area, a), np.where(full, self.full_perimeter, p)


class CircularBarrel(_Barrel):
    """Circular culvert barrel.

    Parameters
    ----------
    diameter : float
        Inside diameter D [length].
    length : float
        Barrel length L [length].
    slope : float
        Barrel slope S [-], positive falling towards the outlet.
    roughness : float
        Manning's n of the barrel.
    inlet : str
        Inlet type, a key of :data:`INLET_TYPES` for circular barrels.
    entrance_loss : float, optional
        Entrance loss coefficient ke; default: the inlet type's.
    barrels : int
        Number of identical barrels sharing the discharge.

    Examples
    --------
    >>> from gvflow.structures import CircularBarrel
    >>> pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    >>> pipe.ke, round(pipe.full_area, 4)
    (0.5, 1.131)
    """

    shape: Literal["circular"] = "circular"
    diameter: _Pos
    inlet: str = "concrete_pipe_square_edge_headwall"

    @property
    def height(self) -> float:
        """Rise of the barrel (its diameter) [length]."""
        return self.diameter

    @property
    def full_area(self) -> float:
        """Full barrel area [length²]."""
        return math.pi * self.diameter ** 2 / 4.0

    @property
    def full_perimeter(self) -> float:
        """Full barrel perimeter [length]."""
        return math.pi * self.diameter



class BoxBarrel(_Barrel):
    """Rectangular (box) culvert barrel.

    Parameters
    ----------
    span : float
        Inside width B [length].
    rise : float
        Inside height D [length].
    length, slope, roughness, inlet, entrance_loss, barrels
        As for :class:`CircularBarrel`; ``inlet`` a key of :data:`INLET_TYPES` for boxes.

    Examples
    --------
    >>> from gvflow.structures import BoxBarrel
    >>> box = BoxBarrel(span=2.0, rise=1.5, length=25.0, slope=0.005, roughness=0.013)
    >>> box.ke, box.full_area
    (0.4, 3.0)
    """

    shape: Literal["box"] = "box"
    span: _Pos
    rise: _Pos
    inlet: str = "box_wingwalls_30_to_75"

    @property
    def height(self) -> float:
        """Rise of the barrel [length]."""
        return self.rise

    @property
    def full_area(self) -> float:
        """Full barrel area [length²]."""
        return self.span * self.rise

    @property
    def full_perimeter(self) -> float:
        """Full barrel perimeter [length]."""
        return 2.0 * (self.span + self.rise)



AnyBarrel = Annotated[CircularBarrel | BoxBarrel, Field(discriminator="shape")]


class DownstreamChannel(FrozenModel):
    """The channel below a culvert, whose normal depth sets the tailwater.

    Parameters
    ----------
    section : Section
        Channel cross-section.
    slope : float
        Bed slope [-], positive.
    roughness : float or roughness object
        Manning's n (float), gv.Manning, gv.Chezy or gv.DarcyWeisbach.

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import DownstreamChannel
    >>> ch = DownstreamChannel(section=gv.Trapezoidal(bottom_width=2.0, side_slope=2.0), slope=0.002, roughness=0.03)
    >>> round(ch.tailwater(3.0), 4)
    0.8338
    """

    section: AnySection
    slope: _Pos
    roughness: _Pos | AnyRoughness

    def tailwater(self, discharge, units: UnitsLike = "SI"):
        """Tailwater depth: the channel's normal depth for ``discharge`` [length]."""
        return normal_depth(self.section, discharge, self.slope, self.roughness, units)

    def velocity(self, discharge, units: UnitsLike = "SI"):
        """Mean velocity in the channel at normal depth [length/s]."""
        q = positive_array(discharge, "discharge")
        y = np.asarray(self.tailwater(q, units))
        return scalar_or_array(q / np.asarray(self.section.area(y)))


# ---------------------------------------------------------------------------
# inlet control
# ---------------------------------------------------------------------------

def _ku(u) -> float:
    return math.sqrt(_G_US / u.g)


def _inlet_ratio(barrel, q_barrel, u):
    """HW/D under inlet control for the discharge per barrel, vectorised."""
    co = barrel.inlet_coefficients
    d = barrel.height
    area = barrel.full_area
    ku = _ku(u)
    slope_term = co.slope_factor * barrel.slope
    x = ku * q_barrel / (area * math.sqrt(d))

    def unsubmerged(xx):
        if co.form == 1:
            qq = xx * area * math.sqrt(d) / ku
            dc = barrel._critical_depth(qq, u)
            a_c = barrel._area_perimeter(dc)[0]
            hc = dc + qq * qq / (2.0 * u.g * a_c * a_c)
            return hc / d + co.K * xx ** co.M + slope_term
        return co.K * xx ** co.M

    def submerged(xx):
        return co.c * xx * xx + co.Y + slope_term

    lo = UNSUBMERGED_LIMIT
    hi = SUBMERGED_LIMIT
    r_unsub = unsubmerged(np.minimum(x, lo))
    r_sub = submerged(np.maximum(x, hi))
    r_lo = unsubmerged(np.array([lo]))[0]
    r_hi = submerged(np.array([hi]))[0]
    r_mid = r_lo + (x - lo) / (hi - lo) * (r_hi - r_lo)
    ratio = np.where(x <= lo, r_unsub, np.where(x >= hi, r_sub, r_mid))
    check_headwater_ratio(barrel, ratio, q_barrel * barrel.barrels, u, "inlet")
    # Floor at the critical specific energy, in the unsubmerged range: the regression's slope term Ks S
    # dominates at tiny flows and would put the headwater below the inlet invert, but no discharge enters
    # the barrel with less energy above its invert than the minimum specific energy Hc = dc + Vc²/2g of
    # its section (Chow 1959, §3-2, from memory). Where the equation lies below Hc (far below its fitted
    # range) Hc is used; the headwater is then never negative and still rises with the discharge.
    q_un = np.minimum(q_barrel, lo * area * math.sqrt(d) / ku)
    dc = barrel._critical_depth(q_un, u)
    a_c = barrel._area_perimeter(dc)[0]
    hc = dc + q_un * q_un / (2.0 * u.g * a_c * a_c)
    return np.where(x <= lo, np.maximum(ratio, hc / d), ratio)


#: Largest headwater accepted, in barrel rises above the inlet invert. The inlet-control equations are
#: fitted to headwaters of a few rises (HDS-5, Appendix A); a hundred rises means a barrel far too small
#: for its discharge (or a discharge in the wrong unit), for circular and box barrels alike.
MAX_HEADWATER_RISES = 100.0


_REFUSE_FAR_TOO_SMALL = contextvars.ContextVar("refuse_far_too_small", default=True)


def check_headwater_ratio(barrel, ratio, q_total, u, control: str) -> None:
    """Raise NoSolutionError where the headwater exceeds :data:`MAX_HEADWATER_RISES` barrel rises."""
    if not _REFUSE_FAR_TOO_SMALL.get():
        return
    ratio = np.asarray(ratio, dtype=float)
    bad = ~(ratio <= MAX_HEADWATER_RISES)
    if np.any(bad):
        q_bad = np.broadcast_to(np.asarray(q_total, dtype=float), ratio.shape)[bad]
        r_bad = ratio[bad]
        raise NoSolutionError(
            f"discharge {float(q_bad.flat[0]):.4g} {u.discharge} is far too large for this culvert: under "
            f"{control} control the headwater would be {float(r_bad.flat[0]):.4g} times the barrel's rise "
            f"{barrel.height:g} {u.length} (at most {MAX_HEADWATER_RISES:g} accepted); use a larger barrel or "
            "more barrels, or check the discharge and its unit")


def inlet_control_headwater(barrel, discharge, units: UnitsLike = "SI"):
    """Headwater depth above the inlet invert under inlet control [length].

    HDS-5 (FHWA 2012, Appendix A) equations, see the module notes; the
    discharge is shared equally by ``barrel.barrels`` barrels.

    At flows far below the equations' fitted range the slope term Ks S
    dominates and would put the headwater below the inlet invert; there the
    headwater is taken as the barrel's critical specific energy
    Hc = dc + Vc²/2g, the least energy with which the flow can enter it
    (Chow 1959, §3-2). So the headwater is never negative and rises with the
    discharge. A headwater above :data:`MAX_HEADWATER_RISES` barrel rises
    (a barrel far too small, circular or box alike) raises NoSolutionError.

    Parameters
    ----------
    barrel : CircularBarrel or BoxBarrel
        The culvert barrel and its inlet type.
    discharge : float or ndarray
        Total discharge Q [length³/s].
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Headwater depth HW [length].

    References
    ----------
    Schall, J. D., Thompson, P. L., Zerges, S. M., Kilgore, R. T. & Morris,
    J. L. (2012). *Hydraulic Design of Highway Culverts*, 3rd ed., HDS-5,
    FHWA-HIF-12-026, Appendix A (from memory - verify).

    Examples
    --------
    >>> from gvflow.structures import CircularBarrel, inlet_control_headwater
    >>> pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    >>> round(inlet_control_headwater(pipe, 1.5), 4)
    0.9927
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge") / barrel.barrels
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):  # out of range: refused by the check
        ratio = _inlet_ratio(barrel, q, u)
    return scalar_or_array(ratio * barrel.height)


# ---------------------------------------------------------------------------
# outlet control
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class OutletControl:
    """Headwater under outlet control and the barrel's state.

    Attributes
    ----------
    headwater : float or ndarray
        Headwater depth above the inlet invert [length].
    outlet_depth : float or ndarray
        Depth (pressure head when full) in the barrel at the outlet [length].
    inlet_depth : float or ndarray
        Depth (pressure head when full) in the barrel at the entrance [length].
    barrel_flow : str or ndarray of str
        ``"full"`` (full over its whole length), ``"partly full"``, or
        ``"inlet critical"`` (no subcritical profile fits: the barrel runs
        supercritical from critical depth at its entrance, so the inlet, not
        the outlet, controls; ``headwater`` is then the critical-entry value
        dc + (1 + ke) Vc²/2g, given for information only).
    """

    headwater: object
    outlet_depth: object
    inlet_depth: object
    barrel_flow: object


def _loss_coefficient(value, name) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInputError(f"{name} must be a number; got {value!r}") from None
    if not (0.0 <= v <= 1.0) or not math.isfinite(v):
        raise InvalidInputError(f"{name} must lie between 0 and 1; got {value!r}")
    return v


def _check_steps(steps) -> int:
    if isinstance(steps, bool) or not isinstance(steps, (int, np.integer)) or steps < 1:
        raise InvalidInputError(f"steps must be a positive integer; got {steps!r}")
    return int(steps)


def _strings(arr):
    return str(arr) if np.ndim(arr) == 0 else arr


def _outlet_control(barrel, q, tw, vd, kx, steps, u):
    """Vectorised outlet-control march. q per barrel; tw, vd broadcast to q's shape."""
    g = u.g
    d = barrel.height
    ke = barrel.ke
    q, tw, vd = (np.atleast_1d(np.array(v, dtype=float)) for v in np.broadcast_arrays(q, tw, vd))

    dc = barrel._critical_depth(q, u)
    h_low = np.minimum(dc, d)

    # outlet: h + (1 - kx) V(h)²/2g = TW + (1 - kx) Vd²/2g, not below critical depth
    target = tw + (1.0 - kx) * vd * vd / (2.0 * g)

    def exit_residual(h):
        a = barrel._area_perimeter(h)[0]
        return h + (1.0 - kx) * q * q / (2.0 * g * a * a) - target

    r_low = exit_residual(h_low)
    if np.all(r_low >= 0):
        h = h_low.copy()
    else:
        hi = np.maximum(target, h_low) * (1.0 + 1e-12) + 1e-300
        h = np.where(r_low >= 0, h_low, bracketed_root(exit_residual, h_low, hi, rtol=1e-15, what="outlet depth"))
    h_out = h.copy()

    dx = barrel.length / steps
    sf_low = barrel_friction_slope(barrel, q, h_low, u)
    sf_full = barrel_friction_slope(barrel, q, np.full(q.shape, d), u)
    sf_max = np.maximum(sf_low, sf_full)
    # march upstream by the standard step method (compiled: gvflow.structures._barrel_kernel)
    h, failed, full_all, bad = run_march(barrel, q, h, h_low, sf_max, dx, steps, u)
    if bad:
        raise ConvergenceError(f"barrel profile: {bad} standard steps did not converge", iterations=200)
    a_in = barrel._area_perimeter(h)[0]
    hw = h + (1.0 + ke) * q * q / (2.0 * g * a_in * a_in)
    # supercritical barrel: critical depth at the entrance
    a_c = barrel._area_perimeter(h_low)[0]
    hw_crit = h_low + (1.0 + ke) * q * q / (2.0 * g * a_c * a_c)
    hw = np.where(failed, hw_crit, hw)
    h_in = np.where(failed, h_low, h)
    flow = np.where(failed, "inlet critical", np.where(full_all, "full", "partly full"))
    return hw, h_out, h_in, flow


def outlet_control_headwater(barrel, discharge, tailwater, *, tailwater_velocity=0.0, exit_loss: float = EXIT_LOSS,
                             steps: int = 100, units: UnitsLike = "SI") -> OutletControl:
    """Headwater depth above the inlet invert under outlet control.

    Energy equation from the tailwater through the barrel (module notes):
    exit loss kx (V²/2g - Vd²/2g), Manning friction over the barrel length
    (full, or partly full along the standard-step profile), entrance loss
    ke V²/2g.

    Parameters
    ----------
    barrel : CircularBarrel or BoxBarrel
    discharge : float or ndarray
        Total discharge Q [length³/s].
    tailwater : float or ndarray
        Tailwater depth above the outlet invert TW [length] (0 for a free outlet).
    tailwater_velocity : float or ndarray
        Mean velocity in the channel below the outlet Vd [length/s]; 0 neglects it.
    exit_loss : float
        Exit loss coefficient kx, 0 to 1 (default 1.0).
    steps : int
        Standard-step intervals along the barrel.
    units : "SI", "US" or Units

    Returns
    -------
    OutletControl

    Examples
    --------
    >>> from gvflow.structures import CircularBarrel, outlet_control_headwater
    >>> pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    >>> out = outlet_control_headwater(pipe, 1.5, tailwater=1.6)
    >>> out.barrel_flow, round(out.headwater, 4)
    ('full', 1.4724)
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge") / barrel.barrels
    tw = finite_array(tailwater, "tailwater")
    if np.any(tw < 0):
        raise InvalidInputError(f"tailwater depth must be non-negative; got {float(np.min(tw)):g}")
    vd = finite_array(tailwater_velocity, "tailwater_velocity")
    if np.any(vd < 0):
        raise InvalidInputError(f"tailwater_velocity must be non-negative; got {float(np.min(vd)):g}")
    kx = _loss_coefficient(exit_loss, "exit_loss")
    n = _check_steps(steps)
    shape = broadcast(discharge=q, tailwater=tw, tailwater_velocity=vd)[0].shape
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):  # out of range: refused by the check
        hw, h_out, h_in, flow = _outlet_control(barrel, q, tw, vd, kx, n, u)
    check_headwater_ratio(barrel, hw / barrel.height, q * barrel.barrels, u, "outlet")
    return OutletControl(
        headwater=scalar_or_array(hw.reshape(shape)),
        outlet_depth=scalar_or_array(h_out.reshape(shape)),
        inlet_depth=scalar_or_array(h_in.reshape(shape)),
        barrel_flow=_strings(flow.reshape(shape)),
    )


# ---------------------------------------------------------------------------
# governing headwater
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class CulvertHeadwater:
    """Headwater of a culvert: inlet and outlet control compared.

    Attributes
    ----------
    discharge : float or ndarray
        Total discharge [length³/s].
    headwater : float or ndarray
        Governing headwater depth above the inlet invert, the larger of the two [length].
    inlet_headwater, outlet_headwater : float or ndarray
        Headwater under inlet control and under outlet control [length].
    control : str or ndarray of str
        ``"inlet"`` or ``"outlet"``: which governs. Outlet control governs when
        its headwater is the larger and the barrel carries a subcritical
        profile; when ``barrel_flow`` is ``"inlet critical"`` the inlet governs.
    tailwater : float or ndarray
        Tailwater depth used [length].
    outlet_depth, inlet_depth : float or ndarray
        Barrel depths at the outlet and at the entrance under outlet control
        [length].
    barrel_flow : str or ndarray of str
        Barrel state under outlet control (see :class:`OutletControl`).
    above_allowable : bool or ndarray of bool
        Whether the headwater exceeds ``allowable_headwater`` (always False
        when none was given).
    allowable_headwater : float or None
        The allowable headwater depth above the inlet invert [length].
    barrel_discharge, road_discharge : float or ndarray
        Discharge through all barrels and over the road [length³/s]; they
        add up to ``discharge`` exactly (road 0 without a road crest or
        below it).
    outlet_flow_depth, outlet_velocity : float or ndarray
        Depth and mean velocity of the flow leaving the barrel [length,
        length/s], what the scour protection below needs: the barrel
        profile's outlet depth, or the barrel's normal depth when it runs
        supercritical from its entrance (:mod:`gvflow.structures.overtopping`).
    reason : str or ndarray of str
        Which control governs in the barrel and why, in words.
    road : RoadCrest or None
        The road crest given.
    road_submergence : float or ndarray
        Submergence factor kt applied to the flow over the road (1: free).
    units : Units
        The unit system of the figures.
    """

    discharge: object
    headwater: object
    inlet_headwater: object
    outlet_headwater: object
    control: object
    tailwater: object
    outlet_depth: object
    inlet_depth: object
    barrel_flow: object
    above_allowable: object
    allowable_headwater: float | None
    barrel_discharge: object = None
    road_discharge: object = None
    outlet_flow_depth: object = None
    outlet_velocity: object = None
    reason: object = None
    road: object = None
    road_submergence: object = None
    units: object = None

    def table(self):
        """Performance table, one row per discharge (pandas DataFrame): discharge, headwater, control,
        barrel and road discharge, tailwater, outlet depth and velocity, whether above the allowable
        headwater, and why the control governs."""
        return performance_table(self)

    def plot(self, ax=None):
        """Performance curve (headwater against discharge) marking the road crest and the allowable
        headwater; returns the matplotlib Axes (draws on ``ax`` when given)."""
        return plot_performance(self, ax=ax, units=self.units if self.units is not None else "SI")

    def __repr__(self) -> str:
        if np.ndim(self.headwater) == 0:
            flag = "  ABOVE ALLOWABLE" if self.above_allowable else ""
            return (f"CulvertHeadwater(discharge={self.discharge:.6g}, headwater={self.headwater:.6g}, "
                    f"control={self.control!r}, inlet={self.inlet_headwater:.6g}, "
                    f"outlet={self.outlet_headwater:.6g}, tailwater={self.tailwater:.6g}){flag}")
        return f"CulvertHeadwater({np.size(self.headwater)} cases)"


def culvert_headwater(barrel, discharge, *, tailwater=None, downstream_channel: DownstreamChannel | None = None,
                      tailwater_velocity=0.0, allowable_headwater=None, exit_loss: float = EXIT_LOSS, steps: int = 100,
                      road=None, units: UnitsLike = "SI") -> CulvertHeadwater:
    """Governing headwater of a culvert: the larger of inlet and outlet control.

    Over an array of discharges this is the culvert's performance table
    (:meth:`CulvertHeadwater.table`, :meth:`CulvertHeadwater.plot`). With a
    ``road`` the discharge that would raise the headwater above the road
    crest is split between the barrels and the road at one headwater
    (:mod:`gvflow.structures.overtopping`).

    Parameters
    ----------
    barrel : CircularBarrel or BoxBarrel
    discharge : float or ndarray
        Total discharge Q [length³/s].
    tailwater : float or ndarray, optional
        Tailwater depth above the outlet invert [length]. Give this or
        ``downstream_channel``.
    downstream_channel : DownstreamChannel, optional
        Channel below the outlet; the tailwater is its normal depth and the
        exit loss uses its velocity.
    tailwater_velocity : float or ndarray
        Channel velocity below the outlet when ``tailwater`` is given [length/s].
    allowable_headwater : float, optional
        Allowable headwater depth above the inlet invert [length] (for a
        level, subtract the inlet invert elevation); results above it are
        flagged in ``above_allowable``.
    exit_loss : float
        Exit loss coefficient, 0 to 1.
    steps : int
        Standard-step intervals along the barrel.
    road : RoadCrest, optional
        The road over the culvert; flow over it once the headwater rises above its crest.
    units : "SI", "US" or Units

    Returns
    -------
    CulvertHeadwater

    Raises
    ------
    InvalidInputError
        When neither or both of ``tailwater`` and ``downstream_channel`` are given.

    Examples
    --------
    >>> from gvflow.structures import CircularBarrel, culvert_headwater
    >>> pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    >>> low = culvert_headwater(pipe, 1.5, tailwater=0.5)
    >>> high = culvert_headwater(pipe, 1.5, tailwater=1.6, allowable_headwater=1.4)
    >>> low.control, high.control, high.above_allowable
    ('inlet', 'outlet', True)
    """
    u = resolve_units(units)
    q_total = positive_array(discharge, "discharge")
    if (tailwater is None) == (downstream_channel is None):
        raise InvalidInputError(
            "give the tailwater either as tailwater= (a depth above the outlet invert) or as "
            "downstream_channel= (its normal depth), not both or neither"
        )
    if downstream_channel is not None:
        tw = np.asarray(downstream_channel.tailwater(q_total, u), dtype=float)
        vd = np.asarray(downstream_channel.velocity(q_total, u), dtype=float)
    else:
        tw = finite_array(tailwater, "tailwater")
        vd = finite_array(tailwater_velocity, "tailwater_velocity")
        broadcast(discharge=q_total, tailwater=tw, tailwater_velocity=vd)  # (names them where they do not fit)
    allowable = None
    if allowable_headwater is not None:
        allowable = single_number(positive_array(allowable_headwater, "allowable_headwater"), "allowable_headwater")
    if road is not None and not hasattr(road, "low_point"):
        raise InvalidInputError(f"road must be a RoadCrest; got {road!r}")
    # with a road the barrels carry only part of the discharge: a headwater of many rises for the whole of it
    # is a trial on the way to the split, not a culvert far too small (checked on the barrels' share below)
    token = _REFUSE_FAR_TOO_SMALL.set(road is None)
    try:
        res = barrel_headwater(barrel, q_total, tw, vd, allowable, exit_loss, steps, u)
        out = finish_culvert_result(barrel, res, road=road, tw=tw, vd=vd, exit_loss=exit_loss, steps=steps, units=u,
                                    barrel_headwater=barrel_headwater)
    finally:
        _REFUSE_FAR_TOO_SMALL.reset(token)
    if road is not None:
        check_headwater_ratio(barrel, np.asarray(out.headwater, dtype=float) / barrel.height,
                              np.asarray(out.barrel_discharge, dtype=float), u, str(np.ravel(out.control)[0]))
    return out


def barrel_headwater(barrel, q_total, tw, vd, allowable, exit_loss, steps, u) -> CulvertHeadwater:
    """Governing headwater with all of ``q_total`` through the barrels (inputs already checked)."""
    hw_in = np.asarray(inlet_control_headwater(barrel, q_total, u), dtype=float)
    out = outlet_control_headwater(barrel, q_total, tw, tailwater_velocity=vd, exit_loss=exit_loss, steps=steps,
                                   units=u)
    hw_out = np.asarray(out.headwater, dtype=float)
    shape = np.broadcast(hw_in, hw_out).shape
    hw_in, hw_out = np.broadcast_to(hw_in, shape), np.broadcast_to(hw_out, shape)
    # A barrel that runs supercritical from a critical section at its entrance is under inlet
    # control whatever the outlet-control estimate says.
    flow = np.broadcast_to(np.asarray(out.barrel_flow), shape)
    outlet_governs = (hw_out > hw_in) & (flow != "inlet critical")
    hw = np.where(outlet_governs, hw_out, hw_in)
    control = np.where(outlet_governs, "outlet", "inlet")
    above = hw > allowable if allowable is not None else np.zeros(shape, dtype=bool)
    return CulvertHeadwater(
        discharge=scalar_or_array(np.broadcast_to(q_total, shape).astype(float)),
        headwater=scalar_or_array(hw),
        inlet_headwater=scalar_or_array(np.array(hw_in)),
        outlet_headwater=scalar_or_array(np.array(hw_out)),
        control=_strings(control),
        tailwater=scalar_or_array(np.broadcast_to(tw, shape).astype(float)),
        outlet_depth=out.outlet_depth,
        inlet_depth=out.inlet_depth,
        barrel_flow=out.barrel_flow,
        above_allowable=bool(above) if above.ndim == 0 else above,
        allowable_headwater=allowable,
        units=u,
    )
