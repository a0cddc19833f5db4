"""Boundary controls at the ends of a reach.

A control says what fixes the water level at one end of a reach. The reach
solver asks each control for a depth per scenario (:meth:`Control.depth_at`)
and decides whether that depth can govern: a subcritical depth governs from
the downstream end, a supercritical depth from the upstream end. A control
that cannot govern the regime at its end is not an error: it is recorded as
unused in the result. A control that cannot be applied at all (uniform flow
on a horizontal bed, a depth below critical where the flow must be
subcritical) raises :class:`~gvflow.errors.ControlError` with the reason.

Structures (weirs, culverts, pools, rating tables) are controls too; they
live in :mod:`gvflow.structures` and follow the same contract.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar, Literal

import numpy as np
from pydantic import Field

from .. import coefficients
from .. import units as _units
from .._models import SingleValueModel
from ..errors import ControlError, InvalidInputError, NoSolutionError
from ..sections import Rectangular, WideRectangular
from ..structures.gates import gate_pool_depth, gate_sequent_depth

__all__ = [
    "EndState",
    "Control",
    "FixedDepth",
    "FixedStage",
    "UniformFlow",
    "CriticalFlow",
    "SluiceGate",
    "BUILTIN_CONTROLS",
]


@dataclass(frozen=True, eq=False)
class EndState:
    """What a control sees of the reach end it stands at.

    Attributes
    ----------
    end : {"upstream", "downstream"}
    seg : gvflow.profiles.SegmentBatch
        The end segment with the batch of scenarios (discharge, yc, yn per scenario).
    bed_elevation : float
        Bed elevation at that end [length].
    slope_class : ndarray of str
        "mild", "steep", "critical", "horizontal" or "adverse" per scenario.
    """

    end: str
    seg: object
    bed_elevation: float
    slope_class: np.ndarray

    @property
    def units(self):
        return self.seg.units


class Control(SingleValueModel):
    """Base class of boundary controls.

    Subclasses implement :meth:`depth_at` and :meth:`describe`, and list the
    ends they may stand at in ``ends``.
    """

    ends: ClassVar[tuple[str, ...]] = ("upstream", "downstream")

    def depth_at(self, state: EndState) -> np.ndarray:  # pragma: no cover - abstract
        """Depth this control imposes at its end, one value per scenario [length]."""
        raise NotImplementedError

    def describe(self, units) -> str:
        """One line for reports."""
        return repr(self)

    def notes(self, state: EndState, depth: np.ndarray) -> list[list[str]]:
        """Extra report lines per scenario, written after the solve beside the control's own note.

        Parameters
        ----------
        state : EndState
            The end the control stands at (as given to :meth:`depth_at`).
        depth : ndarray, shape (n,)
            Solved depth at that end, one per scenario [length]: the depth of
            the governing profile there, which differs from :meth:`depth_at`
            where the control did not govern (a drowned gate, a jump swept out).

        Returns
        -------
        list of list of str
            One list of lines per scenario; they become ``ControlNote`` entries
            of kind ``"control detail"``. The base class adds nothing.
        """
        return [[] for _ in range(state.seg.n)]

    def check_solved(self, state: EndState, depth: np.ndarray) -> None:
        """Raise one of gvflow's errors (a :class:`~gvflow.errors.ControlError`, or an
        :class:`~gvflow.errors.InvalidInputError` for a depth no channel holds) where the solved depth at the
        control's end (``depth``, as given to :meth:`notes`) shows it cannot hold the flow; called once the
        passes have found what governs, before the result is returned. The base class accepts every depth."""

    def coefficients(self) -> tuple:
        """Empirical coefficients this control's depth rests on, for the result's report.

        Returns
        -------
        tuple of gvflow.coefficients.Coefficient
            Usage records (:func:`gvflow.coefficients.used` or
            :func:`~gvflow.coefficients.given`), each naming its source and
            status; a solved :class:`~gvflow.result.Profile` lists them. The
            base class uses none.
        """
        return ()

    def plot_mark(self, bed_elevation: float) -> tuple[str, float] | None:
        """Label and top elevation [length] of a structure to mark on the long section, or None."""
        return None

    def check_end(self, end: str) -> None:
        if end not in self.ends:
            raise ControlError(f"{type(self).__name__} can only stand at the {' or '.join(self.ends)} end of a "
                               f"reach, not the {end} end")


class FixedDepth(Control):
    """A depth imposed at one end of the reach (e.g. a measured or design tailwater depth).

    Parameters
    ----------
    depth : float
        Flow depth [length], positive.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.FixedDepth(1.8)
    FixedDepth(depth=1.8)
    """

    _value_field: ClassVar[str] = "depth"
    kind: Literal["fixed_depth"] = "fixed_depth"
    depth: float = Field(gt=0, allow_inf_nan=False)

    def depth_at(self, state):
        return np.full(state.seg.n, self.depth)

    def describe(self, units):
        return f"fixed depth {self.depth:.3f} {units.length}"

    def __repr__(self):
        return f"FixedDepth(depth={self.depth:g})"


class FixedStage(Control):
    """A water-surface elevation imposed at one end (e.g. a lake or river level).

    Parameters
    ----------
    elevation : float
        Water-surface elevation [length], in the datum of the reach.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.FixedStage(101.25).elevation
    101.25
    """

    _value_field: ClassVar[str] = "elevation"
    kind: Literal["fixed_stage"] = "fixed_stage"
    elevation: float = Field(allow_inf_nan=False)

    def depth_at(self, state):
        depth = self.elevation - state.bed_elevation
        if depth <= 0:
            raise ControlError(
                f"FixedStage({self.elevation:g}) at the {state.end} end is at or below the bed "
                f"(bed elevation {state.bed_elevation:g}); raise the stage or check the datum")
        return np.full(state.seg.n, depth)

    def describe(self, units):
        return f"fixed water level {self.elevation:.3f} {units.length}"

    def __repr__(self):
        return f"FixedStage(elevation={self.elevation:g})"


class UniformFlow(Control):
    """The flow is at normal depth at this end (a long prismatic channel continues beyond it).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.UniformFlow()
    UniformFlow()
    """

    kind: Literal["uniform_flow"] = "uniform_flow"

    def depth_at(self, state):
        yn = state.seg.yn
        if np.any(~np.isfinite(yn)):
            bad = state.slope_class[~np.isfinite(yn)][0]
            raise ControlError(
                f"UniformFlow() at the {state.end} end: normal depth does not exist on a {bad} end segment "
                "(or the conduit would surcharge); use FixedDepth, FixedStage or CriticalFlow there")
        return yn.copy()

    def describe(self, units):
        return "normal depth"

    def __repr__(self):
        return "UniformFlow()"


class CriticalFlow(Control):
    """Critical depth at this end: a free overfall, a brink or a critical-flow control section.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.CriticalFlow()
    CriticalFlow()
    """

    kind: Literal["critical_flow"] = "critical_flow"

    def depth_at(self, state):
        return state.seg.yc.copy()

    def describe(self, units):
        return "critical depth"

    def __repr__(self):
        return "CriticalFlow()"


class SluiceGate(Control):
    """A sluice gate at the upstream end releasing a jet at depth ``contraction * opening``.

    Parameters
    ----------
    opening : float
        Gate opening a [length].
    contraction : float
        Contraction coefficient Cc [-]; 0.61 by default (Henderson 1966,
        *Open Channel Flow*, §6.5, as given by Ponce's SDSU notes and Novak
        et al. 2007, eq. 6.4), range about 0.598-0.611.

    Notes
    -----
    The jet (vena contracta) depth Cc·a stands at x = 0. If the subcritical
    flow downstream has the larger specific force there, the jump is drowned
    against the gate; the result says so.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.SluiceGate(opening=0.5).jet_depth, 3)
    0.305
    """

    _value_field: ClassVar[str] = "opening"
    ends: ClassVar[tuple[str, ...]] = ("upstream",)
    kind: Literal["sluice_gate"] = "sluice_gate"
    opening: float = Field(gt=0, allow_inf_nan=False)
    contraction: float = Field(default=coefficients.value("gate.contraction"), gt=0, le=1,
                               allow_inf_nan=False)

    @property
    def jet_depth(self) -> float:
        """Depth of the jet at the vena contracta, Cc·a [length]."""
        return self.contraction * self.opening

    def depth_at(self, state):
        yj = np.full(state.seg.n, self.jet_depth)
        bad = yj >= state.seg.yc
        if np.any(bad):
            i = int(np.flatnonzero(bad)[0])
            raise ControlError(
                f"SluiceGate(opening={self.opening:g}): the jet depth {self.jet_depth:.4g} is not below critical "
                f"depth {state.seg.yc[i]:.4g} for discharge {state.seg.discharge[i]:g}, so the gate does not "
                "release supercritical flow; the opening is too large for this discharge")
        # (whether the lip is clear of the water depends on the water below the gate: check_solved)
        return yj

    def upstream_depth(self, state, tailwater=None):
        """Depth behind the gate for each scenario's discharge [length], in any section.

        :func:`gvflow.structures.gates.gate_pool_depth` with the section at the
        reach's upstream end on both sides of the gate (the gate between two
        segments uses the same relation with the two sections): free flow, or
        submerged against ``tailwater`` (depth at the gate, one per scenario)
        where that has more specific force than the jet.

        Raises
        ------
        ControlError
            When the discharge is too small for the opening: the water behind
            the gate would stand below its lip, so the gate does not control.
        """
        jet = np.full(state.seg.n, self.jet_depth)
        try:
            y1, _ = gate_pool_depth(state.seg, state.seg, jet, tailwater, opening=self.opening)
        except NoSolutionError as exc:
            raise ControlError(
                f"SluiceGate(opening={self.opening:g}): the opening is above the depth the discharge needs behind "
                f"the gate ({exc}), so the gate lip is clear of the water and does not control the flow; lower the "
                "opening") from None
        return y1

    def _drowned(self, depth):
        return np.asarray(depth, dtype=float) > self.jet_depth * (1 + 1e-9)

    def check_solved(self, state, depth):
        """The pool behind a free gate must stand above its lip; a drowned gate holds the water below it
        above the lip (:meth:`upstream_depth` raises otherwise). A pool deeper than any channel holds
        (:data:`gvflow.units.MAX_DEPTH_M`) means an opening far too small for the discharge."""
        pool = self.upstream_depth(state, tailwater=np.where(self._drowned(depth), depth, np.nan))
        y_max = _units.MAX_DEPTH_M * state.units.length_per_metre
        if np.any(pool > y_max):
            raise InvalidInputError(
                f"upstream.opening: {self!r} would hold the water {float(np.max(pool)):.4g} {state.units.length} "
                f"deep behind it, more than any channel holds ({y_max:.4g} {state.units.length}): the opening is "
                "far too small for the discharge; check it and its unit")

    def notes(self, state, depth):
        L = state.units.length
        depth = np.asarray(depth, dtype=float)
        jet = np.full(state.seg.n, self.jet_depth)
        limit = gate_sequent_depth(state.seg, jet)
        drowned = self._drowned(depth)
        y1 = self.upstream_depth(state, tailwater=np.where(drowned, depth, np.nan))
        y_free = gate_pool_depth(state.seg, state.seg, jet, None, opening=None)[0] if np.any(drowned) else y1
        top = state.seg.section.max_depth

        def behind(y):
            return f"{y:.3f} {L}" + (" (a pressure head: the conduit runs full behind the gate)" if y > top else "")

        out = []
        for s in range(state.seg.n):
            sequent = (f"the jet's sequent depth {limit[s]:.3f} {L}" if np.isfinite(limit[s])
                       else "the jet's sequent depth (above the crown)")
            if drowned[s]:
                out.append([f"submerged flow: the water at the gate, {depth[s]:.3f} {L}, stands above {sequent}; "
                            f"depth behind the gate {behind(y1[s])} " + (
                                f"(free flow would need {behind(y_free[s])})" if y_free[s] > self.opening else
                                "(in free flow the water would stand below the gate lip)")])
            else:
                out.append([f"free flow: depth behind the gate {behind(y1[s])}; the jump below stays clear of the "
                            f"gate while the tailwater there is under {sequent}"])
        return out

    def coefficients(self):
        key = "gate.contraction"
        if self.contraction == coefficients.value(key):
            return (coefficients.used(key, used_by="sluice gate"),)
        return (coefficients.given(key, "contraction coefficient Cc", self.contraction, used_by="sluice gate"),)

    def describe(self, units):
        return (f"sluice gate, opening {self.opening:.3f} {units.length}, jet depth {self.jet_depth:.3f} "
                f"{units.length}")

    def __repr__(self):
        return f"SluiceGate(opening={self.opening:g}, contraction={self.contraction:g})"


def rectangular_width(section) -> float | None:
    """Width of a rectangular section (vertical walls), None for any other shape."""
    return float(section.width) if isinstance(section, (Rectangular, WideRectangular)) else None


BUILTIN_CONTROLS = (FixedDepth, FixedStage, UniformFlow, CriticalFlow, SluiceGate)
