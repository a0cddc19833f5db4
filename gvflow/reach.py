"""The reach model: chained segments (prismatic, or changing along their length) between two boundary controls.

>>> import gvflow as gv
>>> reach = gv.Reach(
...     segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0), roughness=0.015)],
...     discharge=5.0, downstream=gv.FixedDepth(2.0))
>>> profile = reach.solve()
>>> profile.profile_types
['M1']
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Annotated, Any, Literal

import numpy as np
from pydantic import Field, field_validator, model_validator

from ._models import FrozenModel
from ._plausible import arithmetic_guard
from ._solver import solve_batch
from ._validate import positive_float
from .controls import (
    CriticalFlow,
    Culvert,
    FixedDepth,
    FixedStage,
    FreeOverfall,
    Pool,
    SluiceGate,
    StageDischargeTable,
    UniformFlow,
    Weir,
)
from .errors import ControlError, InvalidInputError
from .friction import AnyRoughness, as_roughness
from .profiles import get_marcher
from .sections import AnySection, Surveyed
from .uniform import CRITICAL_SLOPE_TOLERANCE
from .units import Units, resolve_units

__all__ = ["Segment", "Reach", "AnyControl", "provide"]

#: Functions of the layers above that Reach's methods hand their work to: "profile" builds a Profile
#: from a solved batch (registered by gvflow.result), "sweep" solves many scenarios (gvflow.batch).
#: They register on import (gvflow/__init__ imports both), so this module imports nothing above its layer.
_ABOVE: dict[str, Callable] = {}


def provide(role: str, function: Callable) -> None:
    """Register the function behind a Reach method: ``"profile"`` (``function(reach, solution, index,
    method=...)`` returning a Profile) or ``"sweep"`` (:func:`gvflow.batch.sweep`)."""
    if role not in ("profile", "sweep"):
        raise ValueError(f"unknown role {role!r}")
    _ABOVE[role] = function


def _above(role: str) -> Callable:
    try:
        return _ABOVE[role]
    except KeyError:
        raise RuntimeError(f"gvflow.reach: no {role!r} function registered; import gvflow, whose __init__ loads "
                           "gvflow.result and gvflow.batch") from None

AnyControl = Annotated[
    FixedDepth | FixedStage | UniformFlow | CriticalFlow | SluiceGate | Weir | Culvert | FreeOverfall
    | StageDischargeTable | Pool,
    Field(discriminator="kind"),
]


class Segment(FrozenModel):
    """One piece of a reach: a length, a slope and a section (prismatic unless ``section_downstream`` is given).

    Parameters
    ----------
    length : float
        Length along the channel [length].
    slope : float
        Bed slope S0 [-]: positive falling downstream, 0 horizontal, negative adverse.
    section : Section
        Cross-section (at the segment's head when ``section_downstream`` is
        given; else the same all along the segment).
    roughness : float, Manning, Chezy or DarcyWeisbach
        Boundary resistance; a float is Manning's n. Leave it out for a
        :class:`~gvflow.Surveyed` section, which carries its own roughness per zone.
    name : str, optional
        A label for reports.
    gate : SluiceGate, optional
        A sluice gate at the head of this segment, between it and the segment
        above (not on the first segment: use ``Reach(upstream=...)`` there).
        It holds the water upstream at the depth its discharge needs and
        releases a jet below it; the water below may drown it (submerged
        flow), which the result reports.
    inflow : float
        Discharge added at the head of this segment [length³/s], e.g. a
        tributary (negative: a withdrawal); not on the first segment, whose
        discharge is the reach's. Across the junction the solver keeps
        continuity, then conserves specific energy (no loss) where the flow
        is subcritical and specific force (momentum) where it is
        supercritical; the result says which. The profile has two stations
        at the junction's x: the discharge above it, then below it.
    lateral_inflow : float
        Discharge added uniformly along the segment [length³/s per length]
        (spatially varied flow: side weirs, gutters, a side-channel
        spillway), bringing no momentum along the channel; solved in the
        momentum form (in a horizontal frictionless channel the specific
        force stays constant). Not on a segment whose section changes.
    section_downstream : Section, optional
        The section at the segment's downstream end when it changes along the
        segment: stations inside use sections interpolated between the two
        ends (exact at both; :func:`gvflow.sections.matched_parameters` says
        how two surveyed sections are matched). Both must be of one kind; a
        closed conduit cannot change along a segment.
    contraction, expansion : float
        Transition loss coefficients on the change of velocity head between
        consecutive stations: C |Δ(alpha V²/2g)| with the contraction
        coefficient where the velocity head grows downstream and the
        expansion coefficient where it falls (common practice for gradual
        transitions 0.1 and 0.3, abrupt ones 0.6 and 0.8; US Army Corps of
        Engineers EM 1110-2-1416, 1993, from memory). Default 0. A segment
        that changes its section or has either coefficient is marched from
        station to station by the standard step between unlike sections.
    bank_height : float, optional
        Height of the bank or lining top above the bed [length]: the
        profile's station table reports the freeboard to it, and a warning
        says where the water surface rises above it.
    drop : float
        Invert drop at the head of this segment [length]: its bed starts
        ``drop`` below the downstream end of the segment above (a drop at a
        manhole or junction between pipes); 0 (default) continues the bed.
        Not on the first segment. The solver carries the energy across the
        drop without loss (subcritical flow: E_above = E_below - drop, falling
        to critical depth at the end of the segment above where that leaves
        it too little energy; supercritical flow: E_below = E_above + drop).
    """

    length: float = Field(gt=0, allow_inf_nan=False)
    slope: float = Field(allow_inf_nan=False, gt=-1, lt=1)
    section: AnySection
    roughness: AnyRoughness | None = None
    name: str | None = None
    gate: SluiceGate | None = None
    bank_height: float | None = Field(default=None, gt=0, allow_inf_nan=False)
    drop: float = Field(default=0.0, ge=0, allow_inf_nan=False)
    inflow: float = Field(default=0.0, allow_inf_nan=False)
    lateral_inflow: float = Field(default=0.0, allow_inf_nan=False)
    section_downstream: AnySection | None = None
    contraction: float = Field(default=0.0, ge=0, le=1, allow_inf_nan=False)
    expansion: float = Field(default=0.0, ge=0, le=1, allow_inf_nan=False)

    @model_validator(mode="after")
    def _changing_section(self):
        if self.lateral_inflow and (self.section_downstream is not None or self.contraction or self.expansion):
            raise InvalidInputError("lateral_inflow: a segment with lateral inflow keeps one section and has no "
                                    "transition losses; give the changing section a segment of its own")
        if self.lateral_inflow and self.section.closed:
            raise InvalidInputError("lateral_inflow: lateral inflow into a closed conduit is not modelled; use an "
                                    "open section")
        if self.section_downstream is None:
            return self
        from .sections import matched_parameters

        if self.section.closed or self.section_downstream.closed:
            raise InvalidInputError("section_downstream: a closed conduit cannot change its section along a "
                                    "segment; give each size a segment of its own")
        if isinstance(self.section_downstream, Surveyed) != isinstance(self.section, Surveyed):
            raise InvalidInputError("section_downstream: a surveyed section can change only into another surveyed "
                                    "section")
        matched_parameters(self.section, self.section_downstream)  # one kind and layout, or a clear error
        return self

    @property
    def changes(self) -> bool:
        """Whether the segment is marched as one whose section changes (a downstream section or a
        transition loss coefficient)."""
        return (self.section_downstream is not None or self.contraction > 0 or self.expansion > 0
                or self.lateral_inflow != 0)

    @model_validator(mode="after")
    def _drop_without_gate(self):
        if self.drop > 0 and self.gate is not None:
            raise InvalidInputError("drop: a segment with a gate at its head cannot also have an invert drop there; "
                                    "put the drop on a short segment of its own")
        return self

    @model_validator(mode="after")
    def _roughness_once(self):
        if isinstance(self.section, Surveyed):
            if self.roughness is not None:
                raise InvalidInputError("roughness: a Surveyed section carries its own roughness per zone; leave the "
                                        "segment's roughness out")
        elif self.roughness is None:
            raise InvalidInputError("roughness is required for a geometric section: give Manning's n (a float), "
                                    "gv.Manning(n), gv.Chezy(C) or gv.DarcyWeisbach(ks)")
        return self

    @field_validator("roughness", mode="before")
    @classmethod
    def _number_is_manning(cls, v: Any):
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            return as_roughness(v)
        return v

    def __repr__(self):
        label = f"{self.name!r}, " if self.name else ""
        gate = f", gate={self.gate!r}" if self.gate is not None else ""
        gate += f", inflow={self.inflow:g}" if self.inflow else ""
        rough = f", roughness={self.roughness!r}" if self.roughness is not None else ""
        drop = f", drop={self.drop:g}" if self.drop else ""
        return (f"Segment({label}length={self.length:g}, slope={self.slope:g}, section={self.section!r}"
                f"{rough}{gate}{drop})")


class Reach(FrozenModel):
    """A reach: segments listed upstream to downstream, a discharge and the end controls.

    Parameters
    ----------
    segments : list of Segment
        From upstream to downstream. Distance x runs from the upstream end.
    discharge : float
        Discharge Q [length³/s].
    upstream, downstream : control, optional
        Boundary controls (:class:`FixedDepth`, :class:`FixedStage`,
        :class:`UniformFlow`, :class:`CriticalFlow`, :class:`SluiceGate`,
        or a structure: :class:`Weir`, :class:`Culvert`, :class:`FreeOverfall`,
        :class:`StageDischargeTable` downstream, :class:`Pool` upstream).
        Either may be omitted: downstream, normal depth is assumed below a
        mild segment and critical depth below a horizontal or adverse one;
        upstream, flow enters a steep segment at critical depth.
    units : "SI", "US" or Units
    datum : float
        Bed elevation at the downstream end [length].
    alpha : float
        Energy (Coriolis) coefficient [-].
    name : str, optional
    """

    segments: list[Segment] = Field(min_length=1)
    discharge: float = Field(gt=0, allow_inf_nan=False)
    upstream: AnyControl | None = None
    downstream: AnyControl | None = None
    units: Literal["SI", "US"] | Units = "SI"
    datum: float = Field(default=0.0, allow_inf_nan=False)
    alpha: float = Field(default=1.0, ge=1.0, le=2.0, allow_inf_nan=False)
    name: str | None = None

    @model_validator(mode="after")
    def _check_controls(self):
        if self.segments[0].gate is not None:
            raise ControlError("a gate at the head of the first segment is the reach's upstream control: "
                               "give it as Reach(upstream=gv.SluiceGate(...))")
        if self.segments[0].drop:
            raise InvalidInputError("segments[0].drop: a drop stands at the junction with the segment above, and "
                                    "the first segment has none; leave its drop at 0")
        if self.segments[0].inflow:
            raise InvalidInputError("segments[0].inflow: the first segment's discharge is the reach's; add the "
                                    "inflow to Reach.discharge, or give it to a later segment")
        q = self.segment_discharges(self.discharge)
        q_end = q + np.array([s.lateral_inflow * s.length for s in self.segments])
        if np.any(np.minimum(q, q_end) <= 0):
            k = int(np.flatnonzero(np.minimum(q, q_end) <= 0)[0])
            what = "inflow" if q[k] <= 0 else "lateral_inflow"
            raise InvalidInputError(f"segments[{k}].{what}: the withdrawals leave no discharge in segment {k} "
                                    f"({min(q[k], q_end[k]):g}); the discharge must stay positive along the reach")
        for end in ("upstream", "downstream"):
            ctrl = getattr(self, end)
            if ctrl is not None:
                ctrl.check_end(end)
        return self

    @classmethod
    def from_sections(cls, *, stations, sections, discharge, inverts=None, roughness=None, contraction: float = 0.1,
                      expansion: float = 0.3, upstream=None, downstream=None, units="SI", name=None,
                      alpha: float = 1.0) -> Reach:
        """A reach through cross-sections at the distances ``stations`` (increasing downstream).

        Segment i runs from section i to section i + 1 (``section_downstream``), its section
        interpolated between them, with the slope from the two beds and the transition loss
        coefficients ``contraction`` and ``expansion`` (defaults 0.1 and 0.3, gradual transitions;
        common practice). The bed at each station stands at a surveyed section's ``invert`` (its entry
        in ``inverts`` None) or at ``inverts[i]`` (required for a geometric section). ``roughness``
        gives the roughness of geometric sections: one value, or one per station (None where the
        section is surveyed); a segment between two geometric sections uses the roughness of its
        upstream one. The reach's ``datum`` is the last bed.

        Examples
        --------
        >>> import gvflow as gv
        >>> secs = [gv.Surveyed(offset=[0, 5, 9, 14], elevation=[z + 2, z, z, z + 2], roughness=0.03)
        ...         for z in (10.4, 10.2, 10.0)]
        >>> reach = gv.Reach.from_sections(stations=[0, 150, 300], sections=secs, discharge=8.0,
        ...                                downstream=gv.FixedDepth(1.4))
        >>> [round(s.slope, 6) for s in reach.segments], reach.datum
        ([0.001333, 0.001333], 10.0)
        """
        x = np.asarray(stations, dtype=float)
        secs = list(sections)
        if x.ndim != 1 or x.size < 2 or x.size != len(secs):
            raise InvalidInputError(f"stations and sections need one entry each, at least two; got {x.size} stations "
                                    f"and {len(secs)} sections")
        if not np.all(np.isfinite(x)) or np.any(np.diff(x) <= 0):
            raise InvalidInputError("stations must be finite and increase downstream (distance from the upstream "
                                    "end)")
        inv = [None] * x.size if inverts is None else list(inverts)
        rough = roughness if isinstance(roughness, (list, tuple, np.ndarray)) else [roughness] * x.size
        if len(inv) != x.size or len(rough) != x.size:
            raise InvalidInputError(f"inverts and roughness need one entry per station ({x.size}) when given as "
                                    "lists")
        beds = []
        for i, (sec, z) in enumerate(zip(secs, inv, strict=True)):
            if isinstance(sec, Surveyed) and rough[i] is not None:
                where = f"roughness[{i}]" if rough is roughness else "roughness"
                raise InvalidInputError(f"{where}: section {i} is surveyed and carries its own roughness; give None "
                                        "for it (a list with None at the surveyed stations), or leave roughness out")
            if z is None:
                if not isinstance(sec, Surveyed):
                    raise InvalidInputError(f"inverts[{i}]: section {i} is geometric and has no elevation of its "
                                            "own; give its bed elevation in inverts")
                z = sec.invert
            beds.append(float(z))
        segments = []
        for i in range(x.size - 1):
            length = float(x[i + 1] - x[i])
            slope = (beds[i] - beds[i + 1]) / length
            if not abs(slope) < 1.0:
                raise InvalidInputError(
                    f"stations {x[i]:g} and {x[i + 1]:g}: their beds ({beds[i]:g} and {beds[i + 1]:g}) differ by "
                    f"more than the distance between them (a slope of {slope:g}); check the stations and the "
                    "inverts (an abrupt drop is a Segment's drop, in a Reach built from segments)")
            segments.append(Segment(length=length, slope=slope, section=secs[i],
                                    section_downstream=secs[i + 1], contraction=contraction, expansion=expansion,
                                    roughness=None if isinstance(secs[i], Surveyed) else rough[i],
                                    name=f"{x[i]:g}-{x[i + 1]:g}"))
        return cls(segments=segments, discharge=discharge, upstream=upstream, downstream=downstream, units=units,
                   datum=beds[-1], name=name, alpha=alpha)

    def segment_discharges(self, discharge) -> np.ndarray:
        """Discharge at the head of each segment for the reach discharge(s) ``discharge``: shape (..., K)
        [length³/s].

        The discharge entering the reach plus every inflow down to and including the segment's own, and the
        lateral inflow of every segment above it.
        """
        added, inflows, lateral = [], 0.0, 0.0  # running sums, in the order of the segments
        for s in self.segments:
            inflows += s.inflow
            added.append(inflows + lateral)
            lateral += s.lateral_inflow * s.length
        return np.asarray(discharge, dtype=float)[..., None] + np.array(added)

    # -- geometry --------------------------------------------------------------------
    @property
    def resolved_units(self) -> Units:
        """The :class:`Units` object of this reach."""
        return resolve_units(self.units)

    @property
    def length(self) -> float:
        """Total length [length]."""
        return float(sum(s.length for s in self.segments))

    @property
    def boundaries(self) -> np.ndarray:
        """x of the segment ends, from 0 to the reach length (K + 1 values) [length]."""
        out, x = [0.0], 0.0
        for s in self.segments:
            x += s.length
            out.append(x)
        return np.array(out)

    def segment_at(self, x) -> np.ndarray:
        """Index of the segment holding each x (a junction belongs to the downstream segment)."""
        xb = self.boundaries
        return np.clip(np.searchsorted(xb, np.asarray(x, float), side="right") - 1, 0, len(self.segments) - 1)

    def bed_elevation(self, x, segment=None) -> np.ndarray:
        """Bed elevation at x [length], from the datum at the downstream end and the slopes."""
        x = np.asarray(x, dtype=float)
        k = self.segment_at(x) if segment is None else np.asarray(segment)
        x_end, z_end = self._segment_ends()
        return np.array(z_end)[k] + np.array([s.slope for s in self.segments])[k] * (np.array(x_end)[k] - x)

    def _segment_ends(self) -> tuple[list[float], list[float]]:
        """x and bed elevation of each segment's downstream end; the bed at x in segment k is
        z_end[k] + S0_k (x_end[k] - x). A segment's ``drop`` lowers its bed below the end of the one above."""
        x_end, z_end = [], []
        xb, drop = 0.0, 0.0
        for s in self.segments:
            xb += s.length
            x_end.append(xb)
        for s in reversed(self.segments):
            z_end.append(self.datum + drop)
            drop += s.slope * s.length + s.drop
        z_end.reverse()
        return x_end, z_end

    # -- solving ------------------------------------------------------------------------
    def solve(self, method="standard_step", *, n_steps: int = 100, max_step: float | None = None,
              critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, **options):
        """Solve the mixed-regime water-surface profile.

        Parameters
        ----------
        method : str or Marcher subclass
            ``"standard_step"`` (default) or ``"ivp"`` (scipy's solve_ivp).
        n_steps : int
            Steps per segment (at least); stations are evenly spaced.
        max_step : float, optional
            Largest station spacing [length]; adds steps to long segments.
        critical_tolerance : float
            Relative |yn - yc|/yc under which a slope is classed critical.
        **options
            Options of the marcher (e.g. ``friction_average``, ``rtol``).

        Returns
        -------
        Profile
        """
        marcher = get_marcher(method, **options)
        n_steps, max_step = _check_steps(n_steps, max_step)
        with arithmetic_guard():
            sol = solve_batch(self, marcher, np.array([self.discharge]), None, n_steps, max_step,
                              critical_tolerance)
        return _above("profile")(self, sol, 0, method=getattr(marcher, "name", str(method)))

    def sweep(self, discharge=None, *, roughness=None, roughness_scale=None, vary=None, method="standard_step",
              n_steps: int = 100, max_step: float | None = None, critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE,
              progress=None, chunk_size: int | None = None, **options):
        """Solve this reach for many discharges, roughness values and other inputs (``vary``) at once.

        See :func:`gvflow.batch.sweep` for the parameters; returns a
        :class:`~gvflow.batch.SweepResult`.
        """
        return _above("sweep")(self, discharge, roughness=roughness, roughness_scale=roughness_scale, vary=vary,
                               method=method, n_steps=n_steps, max_step=max_step,
                               critical_tolerance=critical_tolerance, progress=progress, chunk_size=chunk_size,
                               **options)

    def __repr__(self):
        segs = ", ".join(repr(s) for s in self.segments)
        return (f"Reach(discharge={self.discharge:g}, segments=[{segs}], upstream={self.upstream!r}, "
                f"downstream={self.downstream!r}, units={self.units!r})")


def _check_steps(n_steps, max_step):
    if not isinstance(n_steps, (int, np.integer)) or isinstance(n_steps, bool) or n_steps < 2:
        raise InvalidInputError(f"n_steps must be an integer of at least 2; got {n_steps!r}")
    if max_step is not None:
        max_step = positive_float(max_step, "max_step")
    return int(n_steps), max_step
