"""Hydraulic structures: pure relations.

Pure, vectorised relations for weirs, culverts, sluice gates, free
overfalls, pools at the upstream end, and tabulated stage-discharge
relations. Each function states its source; discharges may be NumPy arrays.
The classes that stand these structures at the end of a reach (``Weir``,
``Culvert``, ...) are controls and live in :mod:`gvflow.controls`.

>>> import gvflow.structures as st
>>> round(st.rectangular_weir_head(0.6161, crest_width=2.0, crest_height=1.0), 4)
0.3
"""

from .backwater import BackwaterExtent, backwater_extent
from .culverts import (
    INLET_TYPES,
    BoxBarrel,
    CircularBarrel,
    CulvertHeadwater,
    CulvertInlet,
    DownstreamChannel,
    OutletControl,
    culvert_headwater,
    inlet_control_headwater,
    outlet_control_headwater,
)
from .gates import (
    DEFAULT_CONTRACTION,
    gate_contracted_depth,
    gate_discharge,
    gate_discharge_coefficient,
    gate_flows_free,
    gate_free_flow_limit,
    gate_jet_depth,
    gate_upstream_depth,
)
from .overfall import (
    BRINK_DEPTH_RATIO,
    CRITICAL_SECTION_DISTANCE_RANGE,
    brink_depth,
    critical_section_distance,
    discharge_from_brink_depth,
)
from .overtopping import (
    ROAD_OVERTOPPING_COEFFICIENT,
    ROAD_SUBMERGENCE_CURVES,
    RoadCrest,
    road_overtopping_discharge,
    road_submergence_factor,
)
from .pool import PoolOutflow, critical_entry_head, entrance_depth, pool_discharge
from .rating import RatingTable
from .weirs import (
    BROAD_CRESTED_COEFFICIENT,
    BROAD_CRESTED_MODULAR_LIMIT,
    DEFAULT_MAX_SUBMERGENCE,
    VILLEMONTE_EXPONENT,
    broad_crested_weir_discharge,
    broad_crested_weir_head,
    kindsvater_carter_coefficients,
    kindsvater_carter_discharge,
    kindsvater_carter_head,
    kindsvater_shen_coefficients,
    rectangular_weir_discharge,
    rectangular_weir_head,
    rehbock_coefficient,
    v_notch_discharge,
    v_notch_head,
    villemonte_factor,
)

__all__ = [
    # weirs
    "rehbock_coefficient", "rectangular_weir_discharge", "rectangular_weir_head",
    "kindsvater_carter_coefficients", "kindsvater_carter_discharge", "kindsvater_carter_head",
    "kindsvater_shen_coefficients", "v_notch_discharge", "v_notch_head",
    "broad_crested_weir_discharge", "broad_crested_weir_head", "villemonte_factor",
    "VILLEMONTE_EXPONENT", "DEFAULT_MAX_SUBMERGENCE", "BROAD_CRESTED_COEFFICIENT",
    "BROAD_CRESTED_MODULAR_LIMIT",
    # culverts
    "CircularBarrel", "BoxBarrel", "DownstreamChannel", "CulvertInlet", "INLET_TYPES",
    "inlet_control_headwater", "outlet_control_headwater", "culvert_headwater",
    "OutletControl", "CulvertHeadwater",
    # road overtopping
    "RoadCrest", "road_overtopping_discharge", "road_submergence_factor", "ROAD_OVERTOPPING_COEFFICIENT",
    "ROAD_SUBMERGENCE_CURVES",
    # gates
    "DEFAULT_CONTRACTION", "gate_jet_depth", "gate_discharge_coefficient", "gate_free_flow_limit",
    "gate_flows_free", "gate_contracted_depth", "gate_discharge", "gate_upstream_depth",
    # free overfall
    "BRINK_DEPTH_RATIO", "CRITICAL_SECTION_DISTANCE_RANGE", "brink_depth", "discharge_from_brink_depth",
    "critical_section_distance",
    # pool
    "entrance_depth", "critical_entry_head", "pool_discharge", "PoolOutflow",
    # rating
    "RatingTable",
    # backwater extent of a solved profile
    "backwater_extent", "BackwaterExtent",
]

#: Control classes that lived here before the controls moved to :mod:`gvflow.controls`.
_MOVED_TO_CONTROLS = frozenset({
    "Weir", "WeirFormula", "WEIR_FORMULAS", "Culvert", "FreeOverfall", "StageDischargeTable", "Pool",
    "STRUCTURE_CONTROLS", "solve_discharge_from_pool", "PoolDischarge",
})


def __getattr__(name):
    """Deprecated access to the control classes under their old home (``gvflow.structures.Weir``...).

    They live in :mod:`gvflow.controls` (and at the top level, ``gv.Weir``). This forward is the one
    import of a higher layer left in the structures, kept as a deprecation path; nothing in gvflow uses it
    (``tests/test_layers.py`` allows it here and nowhere else).
    """
    if name in _MOVED_TO_CONTROLS:
        import warnings

        from .. import controls

        warnings.warn(f"gvflow.structures.{name} moved to gvflow.controls.{name} (also gv.{name}); the old "
                      "name will be removed", DeprecationWarning, stacklevel=2)
        return getattr(controls, name)
    raise AttributeError(f"module 'gvflow.structures' has no attribute {name!r}")
