"""Structures as boundary controls of a reach.

Each class here is a :class:`gvflow.controls.Control`: given the discharge of
every scenario it returns the depth it holds at its end of the reach, it
describes itself for reports, adds its own lines to the result's control
notes (:meth:`~gvflow.controls.Control.notes`) and is saved in reach files
under its ``kind``. The hydraulics are the functions of the sibling modules
(:mod:`~gvflow.structures.weirs`, :mod:`~gvflow.structures.culverts`,
:mod:`~gvflow.structures.overfall`, :mod:`~gvflow.structures.rating`,
:mod:`~gvflow.structures.pool`); these classes only tie them to the reach.

Downstream end: :class:`Weir`, :class:`Culvert`, :class:`FreeOverfall`,
:class:`StageDischargeTable`. Upstream end: :class:`Pool` (the sluice gate is
:class:`gvflow.SluiceGate`). :func:`solve_discharge_from_pool` finds the
discharge a channel draws from a pool at a given level.

>>> import gvflow as gv
>>> reach = gv.Reach(segments=[gv.Segment(length=2000.0, slope=0.001, section=gv.Rectangular(width=3.0),
...                                       roughness=0.015)], discharge=5.0, downstream=gv.Weir(crest_height=1.5))
>>> profile = reach.solve()
>>> profile.profile_types, round(float(profile.depth[-1]), 4)
(['M1'], 2.4019)
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Annotated, ClassVar, Literal

import numpy as np
from pydantic import Field, ValidationError, model_validator

from .. import coefficients
from .._validate import invalid_input_from
from ..errors import ControlError, GVFlowError, InvalidInputError
from ..structures.culverts import EXIT_LOSS, AnyBarrel, DownstreamChannel, culvert_headwater
from ..structures.overfall import BRINK_DEPTH_RATIO, CRITICAL_SECTION_DISTANCE_RANGE, CRITICAL_SECTION_FACTOR
from ..structures.overtopping import RoadCrest
from ..structures.rating import RatingTable
from ..structures.weirs import (
    BROAD_CRESTED_COEFFICIENT,
    BROAD_CRESTED_MODULAR_LIMIT,
    DEFAULT_MAX_SUBMERGENCE,
    broad_crested_weir_head,
    kindsvater_carter_head,
    rectangular_weir_head,
    v_notch_head,
    villemonte_factor,
)
from ..uniform import CRITICAL_SLOPE_TOLERANCE
from .base import Control, EndState, rectangular_width

__all__ = [
    "Weir",
    "WeirFormula",
    "WEIR_FORMULAS",
    "Culvert",
    "FreeOverfall",
    "StageDischargeTable",
    "Pool",
    "STRUCTURE_CONTROLS",
    "PoolDischarge",
    "solve_discharge_from_pool",
]

_Finite = Annotated[float, Field(allow_inf_nan=False)]
#: Notch angles [degrees] of the Kindsvater-Shen table, the range a V-notch weir accepts.
_NOTCH_ANGLES = coefficients.table("weir.kindsvater_shen").column("notch angle")


class _StructureControl(Control):
    """A control built from structure relations; construction errors are InvalidInputError."""

    def __init__(self, value=None, /, **data):
        try:
            super().__init__(value, **data)
        except ValidationError as exc:
            raise invalid_input_from(exc, type(self).__name__) from None

    def _fail(self, exc: GVFlowError, state: EndState):
        """Re-raise an error of a structure relation with the control and the discharges named."""
        q = state.seg.discharge
        span = f"{q[0]:g}" if q.size == 1 else f"{float(q.min()):g} to {float(q.max()):g}"
        return type(exc)(f"{self!r} at the {state.end} end (discharge {span}): {exc}")


# ---------------------------------------------------------------------------
# weir
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class WeirFormula:
    """One discharge relation a :class:`Weir` may use.

    Attributes
    ----------
    name : str
        Key in :data:`WEIR_FORMULAS` (the ``formula`` field of a weir).
    description : str
        Plain description for reports.
    source : str
        Where the relation comes from.
    exponent : float
        Head exponent of the free-flow relation (Q ~ h^exponent).
    needs_length : bool
        Whether the relation takes a crest length (all but the V-notch).
    head : callable
        ``head(weir, discharge, crest_length, section, tailwater_head, units)``:
        the upstream head above the crest for each discharge [length].
    """

    name: str
    description: str
    source: str
    exponent: float
    needs_length: bool
    head: Callable


def _rehbock(weir, q, b, section, tw, units):
    return rectangular_weir_head(q, b, weir.crest_height, end_contractions=weir.end_contractions,
                                 tailwater_head=tw, max_submergence=weir.submergence_limit_value, units=units)


def _kindsvater_carter(weir, q, b, section, tw, units):
    return kindsvater_carter_head(q, b, weir.crest_height, channel_width=rectangular_width(section),
                                  tailwater_head=tw, max_submergence=weir.submergence_limit_value, units=units)


def _v_notch(weir, q, b, section, tw, units):
    angle = 90.0 if weir.notch_angle is None else weir.notch_angle
    return v_notch_head(q, notch_angle=angle, tailwater_head=tw, max_submergence=weir.submergence_limit_value,
                        units=units)


def _broad_crested(weir, q, b, section, tw, units):
    cd = BROAD_CRESTED_COEFFICIENT if weir.discharge_coefficient is None else weir.discharge_coefficient
    return broad_crested_weir_head(q, b, weir.crest_height, discharge_coefficient=cd, approach_section=section,
                                   tailwater_head=tw, modular_limit=weir.submergence_limit_value, units=units)


#: The discharge relations a :class:`Weir` can use, by the name given in its ``formula`` field.
WEIR_FORMULAS: dict[str, WeirFormula] = {
    f.name: f for f in (
        WeirFormula("rehbock", "sharp-crested rectangular weir (Rehbock)",
                    "Rehbock's coefficient (Henderson 1966, ch. 6); Francis's end contractions", 1.5, True,
                    _rehbock),
        WeirFormula("kindsvater_carter", "sharp-crested rectangular weir (Kindsvater-Carter)",
                    "Kindsvater & Carter (1957); USBR Water Measurement Manual (2001), ch. 7", 1.5, True,
                    _kindsvater_carter),
        WeirFormula("v_notch", "V-notch weir (Kindsvater-Shen)",
                    "Shen (1981), USGS; USBR Water Measurement Manual (2001), ch. 7", 2.5, False, _v_notch),
        WeirFormula("broad_crested", "broad-crested weir",
                    "critical flow on the crest (Henderson 1966, ch. 6); Cd and modular limit from Bos (1989)",
                    1.5, True, _broad_crested),
    )
}


class Weir(_StructureControl):
    """A weir at the downstream end of the reach.

    Given the discharge, the weir's relation gives the head h of the water
    upstream above its crest; the reach ends at depth P + h, P the crest
    height above the channel bed there. The M1 (or other) profile upstream
    starts from that depth.

    Parameters
    ----------
    crest_height : float
        Height P of the crest (of the notch vertex, for a V-notch) above the
        channel bed at the reach end [length], positive.
    formula : str
        The discharge relation, a key of :data:`WEIR_FORMULAS`:
        ``"rehbock"`` (default; sharp-crested rectangular, with or without end
        contractions), ``"kindsvater_carter"`` (sharp-crested rectangular;
        end contractions from crest length over channel width),
        ``"v_notch"`` (Kindsvater-Shen) or ``"broad_crested"``.
    crest_length : float, optional
        Length of the crest across the flow [length]. Default: the channel
        width for a rectangular section; other sections need it given. Not
        used by the V-notch.
    end_contractions : int
        0, 1 or 2 end contractions (``"rehbock"`` only; Francis's correction).
    notch_angle : float, optional
        Included angle of a V-notch [degrees], 20 to 100; default 90.
    discharge_coefficient : float, optional
        Cd of a broad-crested weir; default 0.848 (Bos 1989, rectangular
        profile).
    tailwater_level : float, optional
        Water-surface elevation below the weir [length], in the reach's
        datum. Above the crest it reduces the discharge of a thin-plate weir
        (Villemonte's factor); a broad-crested weir flows free up to its
        modular limit.
    submergence_limit : float, optional
        Largest tailwater/upstream head ratio accepted: default 0.9 for the
        thin-plate relations (Villemonte, common practice) and the modular
        limit 0.66 for the broad-crested weir; beyond it the weir no longer
        controls and :class:`~gvflow.errors.NoSolutionError` is raised.

    Notes
    -----
    Approach velocity: the thin-plate relations (Rehbock, Kindsvater-Carter,
    Kindsvater-Shen) are calibrated on the measured head, with the approach
    velocity inside the coefficient (through h/P); the depth they give is
    P + h directly. The broad-crested relation is written on the energy head;
    its approach velocity is that of the reach's own end section at depth
    P + h, so the energy at the reach end and over the crest agree.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Weir(crest_height=1.2, formula="v_notch", notch_angle=60.0)
    Weir(formula='v_notch', crest_height=1.2, notch_angle=60)
    """

    ends: ClassVar[tuple[str, ...]] = ("downstream",)
    kind: Literal["weir"] = "weir"
    crest_height: float = Field(gt=0, allow_inf_nan=False)
    formula: str = "rehbock"
    crest_length: float | None = Field(default=None, gt=0, allow_inf_nan=False)
    end_contractions: int = Field(default=0, ge=0, le=2)
    notch_angle: float | None = Field(default=None, ge=_NOTCH_ANGLES[0], le=_NOTCH_ANGLES[-1], allow_inf_nan=False)
    discharge_coefficient: float | None = Field(default=None, gt=0, le=1.5, allow_inf_nan=False)
    tailwater_level: float | None = Field(default=None, allow_inf_nan=False)
    submergence_limit: float | None = Field(default=None, gt=0, lt=1, allow_inf_nan=False)

    @model_validator(mode="after")
    def _check_options(self):
        if self.formula not in WEIR_FORMULAS:
            raise InvalidInputError(f"unknown weir formula {self.formula!r}; valid choices are: "
                                    f"{', '.join(WEIR_FORMULAS)}")
        if self.end_contractions and self.formula != "rehbock":
            raise InvalidInputError(
                "end_contractions applies to the 'rehbock' formula only (Kindsvater-Carter takes its contractions "
                "from crest_length over the channel width); remove it or use formula='rehbock'")
        if self.notch_angle is not None and self.formula != "v_notch":
            raise InvalidInputError("notch_angle applies to formula='v_notch' only")
        if self.crest_length is not None and self.formula == "v_notch":
            raise InvalidInputError("a V-notch has no crest length (its width follows from notch_angle); remove "
                                    "crest_length")
        if self.discharge_coefficient is not None and self.formula != "broad_crested":
            raise InvalidInputError("discharge_coefficient applies to formula='broad_crested' only (the thin-plate "
                                    "formulas carry their own coefficients)")
        return self

    @property
    def relation(self) -> WeirFormula:
        """The :class:`WeirFormula` of this weir."""
        return WEIR_FORMULAS[self.formula]

    @property
    def submergence_limit_value(self) -> float:
        """The submergence limit in use: the given one or the formula's default [-]."""
        if self.submergence_limit is not None:
            return self.submergence_limit
        return BROAD_CRESTED_MODULAR_LIMIT if self.formula == "broad_crested" else DEFAULT_MAX_SUBMERGENCE

    def crest_elevation(self, bed_elevation: float) -> float:
        """Elevation of the crest for a bed at ``bed_elevation`` [length]."""
        return bed_elevation + self.crest_height

    def _length(self, section) -> float | None:
        if not self.relation.needs_length:
            return None
        width = rectangular_width(section)
        if self.crest_length is None:
            if width is None:
                raise ControlError(
                    f"{self!r}: give crest_length; the default (the channel width) needs a rectangular section at "
                    f"the reach end, not {section!r}")
            return width
        if width is not None and self.crest_length > width * (1 + 1e-12):
            raise ControlError(f"{self!r}: crest_length {self.crest_length:g} exceeds the channel width {width:g}; "
                               "the crest cannot be wider than the channel")
        return self.crest_length

    def _tailwater_head(self, state: EndState):
        if self.tailwater_level is None:
            return None
        return self.tailwater_level - self.crest_elevation(state.bed_elevation)

    def head(self, state: EndState) -> np.ndarray:
        """Head above the crest for each scenario's discharge [length]."""
        section = state.seg.section
        b = self._length(section)
        try:
            h = self.relation.head(self, state.seg.discharge, b, section, self._tailwater_head(state), state.units)
        except GVFlowError as exc:
            raise self._fail(exc, state) from None
        return np.broadcast_to(np.asarray(h, dtype=float), state.seg.discharge.shape).copy()

    def depth_at(self, state):
        return self.crest_height + self.head(state)

    def notes(self, state, depth):
        L = state.units.length
        h = self.head(state)
        zc = self.crest_elevation(state.bed_elevation)
        tw = self._tailwater_head(state)
        out = []
        for s in range(state.seg.n):
            line = (f"{self.relation.description}: crest at elevation {zc:.3f} {L} ({self.crest_height:.3f} {L} "
                    f"above the bed), head {h[s]:.3f} {L}")
            if tw is None or tw <= 0:
                line += ", free flow"
            else:
                ratio = tw / h[s]
                if self.formula == "broad_crested":
                    line += (f"; tailwater {tw:.3f} {L} above the crest, h2/h1 = {ratio:.3f}, within the modular "
                             f"limit {self.submergence_limit_value:g}: free flow")
                else:
                    factor = villemonte_factor(ratio, self.relation.exponent,
                                               max_submergence=self.submergence_limit_value)
                    line += (f"; submerged: tailwater {tw:.3f} {L} above the crest, h2/h1 = {ratio:.3f}, "
                             f"Villemonte factor {factor:.3f}")
            out.append([line])
        return out

    def coefficients(self):
        C = coefficients
        f = self.formula
        if f == "rehbock":
            out = [C.used("weir.rehbock")]
            if self.end_contractions:
                out.append(C.used("weir.francis_contraction"))
        elif f == "kindsvater_carter":
            out = [C.used("weir.kindsvater_carter_ce"), C.used("weir.kindsvater_carter_kb"),
                   C.used("weir.kindsvater_carter_kh")]
        elif f == "v_notch":
            out = [C.used("weir.kindsvater_shen")]
        else:
            cd = self.discharge_coefficient
            out = [C.used("weir.broad_crested_cd") if cd is None or cd == BROAD_CRESTED_COEFFICIENT
                   else C.given("weir.broad_crested_cd", C.get("weir.broad_crested_cd").name, cd)]
        if self.tailwater_level is not None:
            if f != "broad_crested":
                out.append(C.used("weir.villemonte_exponent"))
            key = "weir.broad_crested_modular_limit" if f == "broad_crested" else "weir.max_submergence"
            limit = self.submergence_limit
            out.append(C.used(key) if limit is None or limit == C.value(key)
                       else C.given(key, C.get(key).name, limit))
        return tuple(replace(r, used_by="weir") for r in out)

    def plot_mark(self, bed_elevation):
        return "weir", self.crest_elevation(bed_elevation)

    def describe(self, units):
        L = units.length
        text = f"{self.relation.description}, crest {self.crest_height:.3f} {L} above the bed"
        if self.crest_length is not None:
            text += f", {self.crest_length:.3f} {L} long"
        if self.end_contractions:
            text += f", {self.end_contractions} end contraction(s)"
        if self.notch_angle is not None:
            text += f", notch angle {self.notch_angle:g} degrees"
        if self.tailwater_level is not None:
            text += f", tailwater level {self.tailwater_level:.3f} {L}"
        return text

    def __repr__(self):
        parts = [f"formula={self.formula!r}", f"crest_height={self.crest_height:g}"]
        for name in ("crest_length", "end_contractions", "notch_angle", "discharge_coefficient", "tailwater_level",
                     "submergence_limit"):
            value = getattr(self, name)
            if value is not None and not (name == "end_contractions" and value == 0):
                parts.append(f"{name}={value:g}")
        return f"Weir({', '.join(parts)})"


# ---------------------------------------------------------------------------
# culvert
# ---------------------------------------------------------------------------

def _culvert_extra_notes(r, s, n, L):
    """Why the control governs, the road's share and the outlet velocity of scenario s."""
    def pick(v):
        return np.broadcast_to(np.asarray(v), (n,))[s]

    lines = [str(pick(r.reason))]
    q_road = float(pick(r.road_discharge))
    if q_road > 0:
        lines.append(f"the road overtops: {q_road:.3f} {L}³/s over the road, {float(pick(r.barrel_discharge)):.3f} "
                     f"{L}³/s through the barrels")
    lines.append(f"outlet depth {float(pick(r.outlet_flow_depth)):.3f} {L}, outlet velocity "
                 f"{float(pick(r.outlet_velocity)):.2f} {L}/s")
    return lines


class Culvert(_StructureControl):
    """A culvert at the downstream end of the reach (the reach ends at its inlet).

    The headwater HW above the inlet invert is the larger of inlet control
    and outlet control (:func:`gvflow.structures.culvert_headwater`, HDS-5
    methods); the reach ends at depth ``invert_offset + HW``.

    Parameters
    ----------
    barrel : CircularBarrel or BoxBarrel
        The barrel: size, length, slope, Manning's n, inlet type, entrance
        loss, number of barrels.
    tailwater : float, optional
        Tailwater depth above the outlet invert [length]. Give this or
        ``downstream_channel``.
    downstream_channel : DownstreamChannel, optional
        The channel below the outlet; the tailwater is its normal depth for
        each discharge, and the exit loss uses its velocity.
    tailwater_velocity : float
        Channel velocity below the outlet when ``tailwater`` is given
        [length/s]; 0 neglects it.
    invert_offset : float
        Height of the inlet invert above the channel bed at the reach end
        [length]; negative when the inlet is set below the bed.
    allowable_headwater : float, optional
        Allowable headwater depth above the inlet invert [length]; a
        headwater above it is flagged in the result's notes.
    exit_loss : float
        Exit loss coefficient, 0 to 1 (default 1).
    steps : int
        Standard-step intervals along the barrel (outlet control).
    road : RoadCrest, optional
        The road over the culvert: once the headwater rises above its crest
        the discharge is split between the barrels and the road at one
        headwater (:mod:`gvflow.structures.overtopping`).

    Notes
    -----
    The headwater pool's approach velocity is neglected, as in the culvert
    manual: the depth at the reach end is the headwater itself.

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import BoxBarrel
    >>> box = BoxBarrel(span=2.0, rise=1.5, length=25.0, slope=0.005, roughness=0.013)
    >>> gv.Culvert(barrel=box, tailwater=0.8).describe(gv.SI)
    'culvert, box 2.000 x 1.500 m, 25.0 m long, tailwater 0.800 m'
    """

    ends: ClassVar[tuple[str, ...]] = ("downstream",)
    kind: Literal["culvert"] = "culvert"
    barrel: AnyBarrel
    tailwater: float | None = Field(default=None, ge=0, allow_inf_nan=False)
    downstream_channel: DownstreamChannel | None = None
    tailwater_velocity: float = Field(default=0.0, ge=0, allow_inf_nan=False)
    invert_offset: float = Field(default=0.0, allow_inf_nan=False)
    allowable_headwater: float | None = Field(default=None, gt=0, allow_inf_nan=False)
    exit_loss: float = Field(default=EXIT_LOSS, ge=0, le=1, allow_inf_nan=False)
    steps: int = Field(default=100, ge=1)
    road: RoadCrest | None = None

    @model_validator(mode="after")
    def _check_tailwater(self):
        if (self.tailwater is None) == (self.downstream_channel is None):
            raise InvalidInputError("give the culvert's tailwater either as tailwater= (a depth above the outlet "
                                    "invert) or as downstream_channel= (its normal depth), not both or neither")
        if self.downstream_channel is not None and self.tailwater_velocity:
            raise InvalidInputError("tailwater_velocity goes with tailwater=; with downstream_channel= the velocity "
                                    "is the channel's own")
        return self

    def headwater(self, state: EndState):
        """Inlet and outlet control compared for each scenario (:class:`~gvflow.structures.CulvertHeadwater`)."""
        q = state.seg.discharge
        try:
            return culvert_headwater(self.barrel, q, tailwater=self.tailwater,
                                     downstream_channel=self.downstream_channel,
                                     tailwater_velocity=self.tailwater_velocity if self.tailwater is not None else 0.0,
                                     allowable_headwater=self.allowable_headwater, exit_loss=self.exit_loss,
                                     steps=self.steps, road=self.road, units=state.units)
        except GVFlowError as exc:
            raise self._fail(exc, state) from None

    def depth_at(self, state):
        r = self.headwater(state)
        y = self.invert_offset + np.broadcast_to(np.asarray(r.headwater, dtype=float), state.seg.discharge.shape)
        if np.any(y <= 0):
            i = int(np.flatnonzero(y <= 0)[0])
            raise ControlError(
                f"{self!r}: the headwater {np.atleast_1d(r.headwater)[i]:.4g} above an inlet invert "
                f"{-self.invert_offset:g} below the bed leaves no water over the channel bed (discharge "
                f"{state.seg.discharge[i]:g}); check invert_offset")
        return y.copy()

    def notes(self, state, depth):
        L = state.units.length
        r = self.headwater(state)
        n = state.seg.n
        hw, hin, hout, tw = (np.broadcast_to(np.asarray(v, dtype=float), (n,))
                             for v in (r.headwater, r.inlet_headwater, r.outlet_headwater, r.tailwater))
        control = np.broadcast_to(np.asarray(r.control), (n,))
        flow = np.broadcast_to(np.asarray(r.barrel_flow), (n,))
        above = np.broadcast_to(np.asarray(r.above_allowable), (n,))
        out = []
        for s in range(n):
            lines = [f"{control[s]} control governs; headwater {hw[s]:.3f} {L} above the inlet invert (inlet control "
                     f"{hin[s]:.3f} {L}, outlet control {hout[s]:.3f} {L}; barrel {flow[s]}, tailwater {tw[s]:.3f} "
                     f"{L})"]
            if above[s]:
                lines.append(f"headwater {hw[s]:.2f} {L} above the allowable {self.allowable_headwater:g} {L}")
            lines.extend(_culvert_extra_notes(r, s, n, L))
            out.append(lines)
        return out

    def coefficients(self):
        C = coefficients
        b = self.barrel
        ke_default = C.table("culvert.entrance_loss").row(b.inlet).value[0]
        out = [C.used("culvert.inlet_control", row=b.inlet),
               C.used("culvert.unsubmerged_limit"), C.used("culvert.submerged_limit"),
               C.used("culvert.entrance_loss", row=b.inlet) if b.entrance_loss is None or b.entrance_loss == ke_default
               else C.given("culvert.entrance_loss", f"entrance loss ke ({b.inlet_coefficients.description})",
                            b.entrance_loss),
               C.used("culvert.exit_loss") if self.exit_loss == EXIT_LOSS
               else C.given("culvert.exit_loss", C.get("culvert.exit_loss").name, self.exit_loss)]
        road = self.road
        if road is not None:
            out.append(C.used("road.overtopping_cr") if road.coefficient is None
                       else C.given("road.overtopping_cr", "road weir coefficient (dimensionless form)",
                                    road.coefficient))
            out.append(C.used(f"road.submergence_{road.surface}"))
        return tuple(replace(r, used_by="culvert") for r in out)

    def plot_mark(self, bed_elevation):
        return "culvert", bed_elevation + self.invert_offset + self.barrel.height


    def describe(self, units):
        L = units.length
        b = self.barrel
        size = (f"circular {b.diameter:.3f} {L}" if b.shape == "circular" else f"box {b.span:.3f} x {b.rise:.3f} {L}")
        count = f"{b.barrels} x " if b.barrels > 1 else ""
        tail = (f"tailwater {self.tailwater:.3f} {L}" if self.tailwater is not None
                else "tailwater at normal depth downstream")
        road = f", {self.road.describe(units)}" if self.road is not None else ""
        return f"culvert, {count}{size}, {b.length:.1f} {L} long, {tail}{road}"

    def __repr__(self):
        tail = (f"tailwater={self.tailwater:g}" if self.tailwater is not None
                else f"downstream_channel={self.downstream_channel!r}")
        return f"Culvert(barrel={self.barrel!r}, {tail})"


# ---------------------------------------------------------------------------
# free overfall
# ---------------------------------------------------------------------------

class FreeOverfall(_StructureControl):
    """A free overfall (brink) at the downstream end of the reach.

    The reach ends at the critical section, which stands a short distance
    (``distance_factor`` critical depths, 3 to 4 after Rouse 1936) upstream
    of the brink itself; the depth there is the critical depth. For a
    rectangular channel with subcritical approach the brink depth
    0.715 yc (Rouse 1936) is reported in the notes.

    Parameters
    ----------
    distance_factor : float
        Distance from the critical section to the brink in critical depths,
        3 to 4 (default 3.5, the middle of Rouse's range; common practice).

    Examples
    --------
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.0005, section=gv.Rectangular(width=2.0),
    ...                                       roughness=0.014)], discharge=3.0, downstream=gv.FreeOverfall())
    >>> [c.text for c in reach.solve().controls if c.kind == "control detail"][0][:40]
    'critical depth 0.612 m at the end of the'
    """

    ends: ClassVar[tuple[str, ...]] = ("downstream",)
    kind: Literal["free_overfall"] = "free_overfall"
    distance_factor: float = Field(default=CRITICAL_SECTION_FACTOR, ge=CRITICAL_SECTION_DISTANCE_RANGE[0],
                                   le=CRITICAL_SECTION_DISTANCE_RANGE[1], allow_inf_nan=False)

    def depth_at(self, state):
        return state.seg.yc.copy()

    def brink_depth(self, state: EndState) -> np.ndarray | None:
        """Brink depth 0.715 yc per scenario [length]; None for a non-rectangular section."""
        if rectangular_width(state.seg.section) is None:
            return None
        return BRINK_DEPTH_RATIO * state.seg.yc

    def notes(self, state, depth):
        L = state.units.length
        yc = state.seg.yc
        yb = self.brink_depth(state)
        depth = np.asarray(depth, dtype=float)
        out = []
        for s in range(state.seg.n):
            if depth[s] < yc[s] * (1 - 1e-9):
                out.append([f"the flow reaches the brink supercritical, {depth[s]:.3f} {L} deep; the brink depth "
                            f"ratio {BRINK_DEPTH_RATIO} holds for a subcritical approach only"])
                continue
            line = (f"critical depth {yc[s]:.3f} {L} at the end of the reach, about "
                    f"{self.distance_factor * yc[s]:.2f} {L} upstream of the brink")
            if yb is None:
                line += f"; brink depth not given: the ratio {BRINK_DEPTH_RATIO} is published for rectangular channels"
            else:
                line += f"; brink depth {yb[s]:.3f} {L} ({BRINK_DEPTH_RATIO} yc, Rouse 1936)"
            out.append([line])
        return out

    def coefficients(self):
        C = coefficients
        key = "overfall.critical_section_factor"
        out = [C.used("overfall.brink_ratio"),
               C.used(key) if self.distance_factor == CRITICAL_SECTION_FACTOR
               else C.given(key, C.get(key).name, self.distance_factor)]
        return tuple(replace(r, used_by="free overfall") for r in out)

    def plot_mark(self, bed_elevation):
        return "free overfall", bed_elevation

    def describe(self, units):
        return "free overfall (critical depth upstream of the brink)"

    def __repr__(self):
        return f"FreeOverfall(distance_factor={self.distance_factor:g})"


# ---------------------------------------------------------------------------
# stage-discharge table
# ---------------------------------------------------------------------------

_Column = Annotated[tuple[_Finite, ...], Field(min_length=2)]


class StageDischargeTable(_StructureControl):
    """A tabulated stage-discharge relation (rating) at the downstream end.

    For each discharge the stage (water-surface elevation, in the reach's
    datum) is interpolated linearly in the table; the depth at the reach end
    is the stage less the bed elevation there. The table is not
    extrapolated.

    Parameters
    ----------
    stage : sequence of float
        Water-surface elevations, strictly increasing [length].
    discharge : sequence of float
        Discharges at those stages, non-negative and strictly increasing
        [length³/s].

    Raises
    ------
    InvalidInputError
        When the table is not monotone, the columns differ in length or hold
        fewer than two rows.
    ControlError
        At solve time, for a discharge outside the table (the message names
        the discharge and the table's range) or a stage at or below the bed.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.StageDischargeTable(stage=[10.0, 10.8, 11.5], discharge=[0.0, 4.0, 12.0]).table.stage_at(8.0)
    11.15
    """

    ends: ClassVar[tuple[str, ...]] = ("downstream",)
    kind: Literal["stage_discharge"] = "stage_discharge"
    stage: _Column
    discharge: _Column

    @model_validator(mode="after")
    def _check_table(self):
        RatingTable(stage=self.stage, discharge=self.discharge)  # monotone, same length, non-negative
        return self

    @property
    def table(self) -> RatingTable:
        """The table as a :class:`~gvflow.structures.RatingTable`."""
        return RatingTable(stage=self.stage, discharge=self.discharge)

    def depth_at(self, state):
        q = state.seg.discharge
        lo, hi = self.discharge[0], self.discharge[-1]
        out = (q < lo) | (q > hi)
        if np.any(out):
            i = int(np.flatnonzero(out)[0])
            raise ControlError(
                f"discharge {q[i]:g} lies outside the stage-discharge table at the {state.end} end, which covers "
                f"{lo:g} to {hi:g}; the table is not extrapolated: extend it to cover this discharge")
        stage = np.interp(q, np.asarray(self.discharge), np.asarray(self.stage))
        depth = stage - state.bed_elevation
        if np.any(depth <= 0):
            i = int(np.flatnonzero(depth <= 0)[0])
            raise ControlError(
                f"the stage-discharge table gives stage {stage[i]:g} for discharge {q[i]:g}, at or below the bed "
                f"(elevation {state.bed_elevation:g}) at the {state.end} end; check the table against the reach's "
                "datum")
        return depth

    def notes(self, state, depth):
        L = state.units.length
        stage = state.bed_elevation + self.depth_at(state)
        return [[f"stage {stage[s]:.3f} {L} from the stage-discharge table"] for s in range(state.seg.n)]

    def plot_mark(self, bed_elevation):
        return "rating", bed_elevation

    def describe(self, units):
        return (f"stage-discharge table, {len(self.stage)} rows, {self.discharge[0]:g} to {self.discharge[-1]:g} "
                f"{units.discharge}")

    def __repr__(self):
        return f"StageDischargeTable({len(self.stage)} rows, discharge {self.discharge[0]:g}-{self.discharge[-1]:g})"


# ---------------------------------------------------------------------------
# pool at the upstream end
# ---------------------------------------------------------------------------

def _entrance_energy(state: EndState, depth, entrance_loss):
    """Pool head above the bed needed for depth ``depth`` at the entrance: y + (alpha + ke) V²/2g [length]."""
    seg = state.seg
    a = seg.properties(np.asarray(depth, dtype=float))[0]
    q = seg.discharge
    return depth + (seg.alpha + entrance_loss) * q * q / (2.0 * seg.units.g * a * a)


class Pool(_StructureControl):
    """A reservoir or pool at the upstream end, standing at a given level.

    The energy equation from the still pool to the first section of the
    channel, with an entrance loss, is H = y + (alpha + ke) V²/2g, H the
    pool level above the bed at the entrance.

    * Steep first segment: the flow enters at critical depth, which governs
      the supercritical profile downstream.
    * Otherwise the entrance depth is subcritical and set by the profile
      from downstream; the pool cannot govern it and the solver reports it
      unused.

    Either way the notes compare the pool level with the level the reach's
    discharge needs at the entrance. When the channel itself sets the
    discharge, :func:`solve_discharge_from_pool` finds it.

    Parameters
    ----------
    level : float
        Water-surface elevation of the pool [length], in the reach's datum.
    entrance_loss : float
        Entrance loss coefficient ke [-] on the channel velocity head.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Pool(level=104.2, entrance_loss=0.2)
    Pool(level=104.2, entrance_loss=0.2)
    """

    _value_field: ClassVar[str] = "level"
    ends: ClassVar[tuple[str, ...]] = ("upstream",)
    kind: Literal["pool"] = "pool"
    level: float = Field(allow_inf_nan=False)
    entrance_loss: float = Field(default=coefficients.value("pool.entrance_loss"), ge=0, allow_inf_nan=False)

    def head(self, bed_elevation: float) -> float:
        """Pool level above a bed at ``bed_elevation`` [length]."""
        return self.level - bed_elevation

    def depth_at(self, state):
        h = self.head(state.bed_elevation)
        if h <= 0:
            raise ControlError(f"{self!r}: the pool level is at or below the bed at the upstream end (elevation "
                               f"{state.bed_elevation:g}); raise the level or check the datum")
        seg = state.seg
        steep = np.asarray(state.slope_class == "steep")
        y = seg.yc.copy()
        mild = np.flatnonzero(~steep)
        if mild.size:
            y[mild] = self._subcritical_entrance(state, mild, h)
        return y

    def _subcritical_entrance(self, state, idx, h):
        """Subcritical root of H = y + (alpha + ke) Q²/(2 g A²); where the pool is too low, the depth of least
        required head (the note says the pool cannot deliver the discharge)."""
        from .._roots import bracketed_root
        from ..uniform import critical_depth

        seg = state.seg.take(idx)
        coef = seg.alpha + self.entrance_loss
        y_min = np.asarray(critical_depth(seg.section, seg.discharge, seg.units, alpha=coef), dtype=float)
        y_min = np.atleast_1d(y_min)
        if seg.section.closed:
            top = seg.section.max_depth
            y_min = np.minimum(y_min, top)
        need = _entrance_energy(EndState(state.end, seg, state.bed_elevation, state.slope_class[idx]), y_min,
                                self.entrance_loss)
        ok = need <= h
        out = np.maximum(y_min, seg.yc)
        if np.any(ok):
            sub = seg.take(np.flatnonzero(ok))

            def fun(z):
                a = sub.properties(z)[0]
                return z + coef * sub.discharge ** 2 / (2.0 * sub.units.g * a * a) - h

            hi = np.full(sub.n, h)
            if seg.section.closed:
                hi = np.minimum(hi, seg.section.max_depth)
            lo = y_min[ok]
            out[ok] = bracketed_root(fun, lo, np.maximum(hi, lo), rtol=1e-14, what="pool entrance depth")
        return out

    def notes(self, state, depth):
        L = state.units.length
        h = self.head(state.bed_elevation)
        need = _entrance_energy(state, depth, self.entrance_loss)
        depth = np.asarray(depth, dtype=float)
        yc = state.seg.yc
        out = []
        for s in range(state.seg.n):
            where = "critical depth" if abs(depth[s] - yc[s]) <= 1e-9 * yc[s] else "subcritical depth"
            line = (f"pool at level {self.level:.3f} {L}: the entrance at {where} {depth[s]:.3f} {L} needs pool "
                    f"level {state.bed_elevation + need[s]:.3f} {L} for this discharge")
            if abs(need[s] - h) > 1e-6 * h:
                verb = "lower" if need[s] > h else "higher"
                line += (f"; the pool stands {verb}, so pool level and discharge do not match: "
                         "gvflow.solve_discharge_from_pool(reach) finds the discharge the channel draws")
            out.append([line])
        return out

    def coefficients(self):
        key = "pool.entrance_loss"
        if self.entrance_loss == coefficients.value(key):
            return (coefficients.used(key, used_by="pool"),)
        return (coefficients.given(key, coefficients.get(key).name, self.entrance_loss, used_by="pool"),)

    def plot_mark(self, bed_elevation):
        return "pool", self.level

    def describe(self, units):
        text = f"pool at level {self.level:.3f} {units.length}"
        if self.entrance_loss:
            text += f", entrance loss {self.entrance_loss:g}"
        return text

    def __repr__(self):
        return f"Pool(level={self.level:g}, entrance_loss={self.entrance_loss:g})"


@dataclass(frozen=True)
class PoolDischarge:
    """The discharge a channel draws from a pool, with the solved reach.

    Attributes
    ----------
    discharge : float
        Discharge Q [length³/s].
    reach : Reach
        The reach with that discharge.
    profile : Profile
        Its solved profile.
    entrance_depth : float
        Depth at x = 0 [length].
    entrance : str
        ``"critical"`` when the flow enters through critical depth (the pool
        governs: a steep first segment), ``"subcritical"`` when the profile
        from downstream sets the entrance depth.
    pool_head : float
        Pool level above the bed at the entrance H [length].
    residual : float
        Pool head the solution needs less the pool head, y + (alpha + ke) V²/2g - H [length].
    evaluations : int
        Reach solves used.
    """

    discharge: float
    reach: object
    profile: object
    entrance_depth: float
    entrance: str
    pool_head: float
    residual: float
    evaluations: int

    def __repr__(self):
        return (f"PoolDischarge(discharge={self.discharge:.6g}, entrance={self.entrance!r}, "
                f"entrance_depth={self.entrance_depth:.6g}, pool_head={self.pool_head:.6g})")


def _largest_entrance_discharge(section, head, coef, g):
    """Largest Q = A sqrt(2 g (H - y) / coef) over entrance depths y (where 2 T (H - y) = A)."""
    from .._roots import bracketed_root

    def fun(y):
        a, _, t = section._geometry(y)[:3]
        return 2.0 * t * (head - y) - a

    y = float(bracketed_root(fun, np.array([1e-12 * head]), np.array([head]), rtol=1e-14,
                             what="largest pool outflow depth")[0])
    a = float(section._geometry(np.array([y]))[0][0])
    return a * np.sqrt(2.0 * g * (head - y) / coef)


def solve_discharge_from_pool(reach, *, method="standard_step", n_steps: int = 100, max_step: float | None = None,
                              critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, rtol: float = 1e-10,
                              **options) -> PoolDischarge:
    """Discharge a reach draws from the pool at its upstream end.

    The reach's upstream control must be a :class:`Pool`; its ``discharge``
    is ignored. The discharge Q is the root of

        y0(Q) + (alpha + ke) Q² / (2 g A(y0)²) = H,

    where y0(Q) is the depth at x = 0 of the reach solved with discharge Q
    and H the pool level above the bed there. On a steep first segment the
    pool governs, y0 is the critical depth and this is the critical-flow
    energy balance at the entrance; on a mild one y0 comes from the
    subcritical profile traced up from the downstream control (for a long
    mild channel it tends to the normal depth, the balance of
    :func:`gvflow.structures.pool_discharge`). The root is bracketed between
    a small discharge and the largest one the entrance can pass at this pool
    level, then found by Brent's method, one reach solve per evaluation.

    Parameters
    ----------
    reach : Reach
        The reach, with ``upstream=gv.Pool(level=...)``.
    method, n_steps, max_step, critical_tolerance, **options
        As in :meth:`gvflow.Reach.solve`.
    rtol : float
        Relative tolerance on the discharge.

    Returns
    -------
    PoolDischarge

    Raises
    ------
    InvalidInputError
        When the upstream control is not a pool, or the pool is at or below
        the bed (or above the crown of a closed first section).
    NoSolutionError
        When no discharge meets the balance (the downstream control holds
        the water above the pool level, or the reach cannot be solved near
        the discharge the pool would deliver).
    ConvergenceError
        When the root finder does not meet ``rtol``.

    References
    ----------
    Chow, V. T. (1959). *Open-Channel Hydraulics*, ch. 10-11 (flow from a
    reservoir into a mild or steep channel; from memory - verify).

    Examples
    --------
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=100.0, slope=0.02, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.013)], discharge=1.0, upstream=gv.Pool(level=3.5))
    >>> out = gv.solve_discharge_from_pool(reach)
    >>> out.entrance, round(out.discharge, 4)  # b sqrt(g) (2H/3)^1.5 with H = 1.5
    ('critical', 9.3947)
    """
    from scipy.optimize import brentq

    from ..errors import ConvergenceError, NoSolutionError

    pool = reach.upstream
    if not isinstance(pool, Pool):
        raise InvalidInputError("solve_discharge_from_pool needs a reach whose upstream control is "
                                f"gv.Pool(level=...); got upstream={pool!r}")
    if not (isinstance(rtol, float) and 4 * np.finfo(float).eps <= rtol < 1):
        raise InvalidInputError(f"rtol must be a float between 1e-15 and 1; got {rtol!r}")
    units = reach.resolved_units
    g = units.g
    section = reach.segments[0].section
    z0 = float(reach.bed_elevation(0.0))
    head = pool.head(z0)
    if head <= 0:
        raise InvalidInputError(f"{pool!r} is at or below the bed at the upstream end (elevation {z0:g}); raise the "
                                "level or check the datum")
    if section.closed and head >= section.max_depth:
        raise InvalidInputError(f"{pool!r} stands {head:g} above the bed, at or above the crown of {section!r}: the "
                                "entrance flows as an orifice or a culvert, not an open channel")
    coef = reach.alpha + pool.entrance_loss
    q_max = _largest_entrance_discharge(section, head, coef, g)
    count = [0]

    def solve(q):
        count[0] += 1
        return reach.model_copy(update={"discharge": float(q)}).solve(
            method, n_steps=n_steps, max_step=max_step, critical_tolerance=critical_tolerance, **options)

    def residual(profile):
        v0 = float(profile.velocity[0])
        return float(profile.specific_energy[0]) + pool.entrance_loss * v0 * v0 / (2.0 * g) - head

    # upper end: the largest discharge the entrance passes; step down where the reach cannot be solved
    hi, last = q_max, None
    for _ in range(40):
        try:
            f_hi = residual(solve(hi))
            break
        except GVFlowError as exc:
            last, hi = exc, 0.8 * hi
    else:
        raise NoSolutionError(f"the reach cannot be solved for any discharge up to {q_max:.6g}: {last}")
    if f_hi < 0 and last is not None:
        # the root may lie between the largest discharge solved and the one that failed: bisect that gap until
        # the residual turns or the gap closes (the reach stops being solvable at a discharge in it: for a
        # conduit, the largest it carries in uniform flow)
        bad = hi / 0.8
        for _ in range(50):
            if bad - hi <= 1e-12 * bad:
                break
            mid = 0.5 * (hi + bad)
            try:
                f_mid = residual(solve(mid))
            except GVFlowError as exc:
                last, bad = exc, mid
                continue
            hi, f_hi = mid, f_mid
            if f_hi >= 0:
                break
    if f_hi < 0:
        if last is not None:
            raise NoSolutionError(
                f"the pool would deliver more than {hi:.6g}, the largest discharge the reach can be solved for "
                f"(above it: {last})")
        if f_hi < -1e-9 * head:
            raise ConvergenceError(
                f"the entrance energy at the largest discharge the pool can pass ({hi:.6g}) falls {-f_hi:.3g} short "
                "of the pool head; the reach solve is not accurate enough there: use more steps (n_steps)",
                residual=f_hi, last=hi)
        f_hi = 0.0  # round-off at the largest entrance discharge, which is then the root
    lo = 0.5 * hi
    for _ in range(15):
        try:
            f_lo = residual(solve(lo))
        except GVFlowError as exc:
            raise NoSolutionError(f"while bracketing the pool discharge, the reach failed at discharge {lo:.6g}: "
                                  f"{exc}") from exc
        if f_lo < 0:
            break
        lo *= 0.1
    else:
        raise NoSolutionError(
            f"the water at the entrance stands at or above the pool level ({pool.level:g}) even for discharge "
            f"{lo:.3g}: the downstream control holds the channel above the pool, so no flow leaves it")
    if f_hi == 0.0:
        q = hi
    else:
        try:
            q, info = brentq(lambda qq: residual(solve(qq)), lo, hi, xtol=1e-14 * hi, rtol=rtol, maxiter=200,
                             full_output=True, disp=False)
        except GVFlowError as exc:
            raise NoSolutionError(f"while finding the pool discharge between {lo:.6g} and {hi:.6g}: {exc}") from exc
        if not info.converged:
            raise ConvergenceError(f"the pool discharge did not converge to rtol={rtol:g} in {info.iterations} "
                                   f"iterations (last {q:.10g})", iterations=info.iterations)
    profile = solve(q)
    entrance = "subcritical" if profile.regime[0] == "subcritical" else "critical"
    return PoolDischarge(discharge=float(q), reach=profile.reach, profile=profile,
                         entrance_depth=float(profile.depth[0]), entrance=entrance, pool_head=head,
                         residual=residual(profile), evaluations=count[0])


#: The structure controls, in the order they join the reach's control union.
STRUCTURE_CONTROLS = (Weir, Culvert, FreeOverfall, StageDischargeTable, Pool)
