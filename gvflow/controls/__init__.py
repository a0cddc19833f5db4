"""Boundary controls of a reach: the reach-facing classes, in one package.

A control says what fixes the water level at one end of a reach (or at a
gate between two segments). :mod:`~gvflow.controls.base` holds the control
contract (:class:`Control`, :class:`EndState`) and the plain controls
(:class:`FixedDepth`, :class:`FixedStage`, :class:`UniformFlow`,
:class:`CriticalFlow`, :class:`SluiceGate`); :mod:`~gvflow.controls.structures`
holds the structures as controls (:class:`Weir`, :class:`Culvert`,
:class:`FreeOverfall`, :class:`StageDischargeTable`, :class:`Pool`). The
hydraulic relations they use are pure functions of :mod:`gvflow.structures`;
these classes only tie them to the reach.
"""

from .base import (
    BUILTIN_CONTROLS,
    Control,
    CriticalFlow,
    EndState,
    FixedDepth,
    FixedStage,
    SluiceGate,
    UniformFlow,
    rectangular_width,
)
from .structures import (
    STRUCTURE_CONTROLS,
    WEIR_FORMULAS,
    Culvert,
    FreeOverfall,
    Pool,
    PoolDischarge,
    StageDischargeTable,
    Weir,
    WeirFormula,
    solve_discharge_from_pool,
)

__all__ = [
    "EndState", "Control", "FixedDepth", "FixedStage", "UniformFlow", "CriticalFlow", "SluiceGate",
    "BUILTIN_CONTROLS", "rectangular_width",
    "Weir", "WeirFormula", "WEIR_FORMULAS", "Culvert", "FreeOverfall", "StageDischargeTable", "Pool",
    "STRUCTURE_CONTROLS", "PoolDischarge", "solve_discharge_from_pool",
]
