"""gvflow: gradually varied flow profiles in open channels.

>>> import gvflow as gv
>>> sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
>>> round(gv.normal_depth(sec, 12.0, 0.0008, 0.018), 3)
1.51
"""

from . import coefficients, controls, structures
from ._version import __version__ as __version__
from .batch import SolveManyError, SweepResult, solve_many
from .controls import (
    CriticalFlow,
    Culvert,
    FixedDepth,
    FixedStage,
    FreeOverfall,
    Pool,
    PoolDischarge,
    SluiceGate,
    StageDischargeTable,
    UniformFlow,
    Weir,
    solve_discharge_from_pool,
)
from .design import BestSection, best_hydraulic_section
from .errors import (
    ControlError,
    ConvergenceError,
    GVFlowError,
    GVFlowWarning,
    InvalidInputError,
    NoSolutionError,
    ReachFileError,
)
from .friction import (
    COMPOSITE_ROUGHNESS_METHODS,
    Chezy,
    DarcyWeisbach,
    Manning,
    colebrook_friction_factor,
    composite_manning,
    conveyance,
    friction_slope,
)
from .io import demo_reach, parse_reach, reach_schema, read_reach, write_profile_csv, write_reach
from .jumps import Jump, belanger_ratio, jump_energy_loss_rectangular, jump_length, jump_type
from .plot import plot_profile
from .profiles import (
    PROFILE_SHAPES,
    ProfileTrace,
    classify,
    direct_step,
    gvf_inverse_slope,
    gvf_slope,
    gvf_terms,
    profile_type,
    trace_profile,
)
from .reach import Reach, Segment
from .result import ControlNote, Profile, ProfilePiece
from .section_plot import plot_section
from .sections import (
    Circular,
    Parabolic,
    Rectangular,
    Section,
    StillWater,
    Surveyed,
    Trapezoidal,
    Triangular,
    WideRectangular,
)
from .structures import BackwaterExtent, backwater_extent
from .survey import read_section_csv
from .uncertainty import MonteCarloResult, Uncertain, monte_carlo
from .uniform import (
    CRITICAL_SLOPE_TOLERANCE,
    ConduitCapacity,
    alternate_depth,
    conduit_capacity,
    critical_depth,
    critical_depths,
    critical_slope,
    froude_number,
    normal_depth,
    sequent_depth,
    slope_class,
    specific_energy,
    specific_force,
    uniform_discharge,
    uniform_velocity,
)
from .units import SI, US, Units
from .verify import (
    bresse_length,
    depth_at_distance,
    direct_integration_length,
    hydraulic_exponents,
    profile_length,
    varied_flow_function,
)

__all__ = [
    # reach model and results
    "Reach", "Segment", "FixedDepth", "FixedStage", "UniformFlow", "CriticalFlow", "SluiceGate",
    "Profile", "ProfilePiece", "ControlNote", "Jump",
    "belanger_ratio", "jump_energy_loss_rectangular", "jump_length", "jump_type",
    # structures as controls
    "structures", "controls", "Weir", "Culvert", "FreeOverfall", "StageDischargeTable", "Pool",
    "solve_discharge_from_pool", "PoolDischarge", "backwater_extent", "BackwaterExtent",
    # coefficients with their sources
    "coefficients",
    # reach files, tables, plots
    "read_reach", "write_reach", "read_section_csv", "parse_reach", "reach_schema", "write_profile_csv", "demo_reach",
    "plot_profile", "plot_section",
    # units and errors
    "Units", "SI", "US",
    "GVFlowError", "InvalidInputError", "NoSolutionError", "ConvergenceError", "ControlError",
    "ReachFileError", "GVFlowWarning",
    # sections
    "Section", "Rectangular", "Trapezoidal", "Triangular", "Circular", "Parabolic", "WideRectangular", "Surveyed",
    "StillWater",
    # friction
    "Manning", "Chezy", "DarcyWeisbach", "conveyance", "friction_slope", "colebrook_friction_factor",
    "composite_manning", "COMPOSITE_ROUGHNESS_METHODS",
    # uniform and critical flow
    "normal_depth", "critical_depth", "critical_depths", "critical_slope", "froude_number", "specific_energy",
    "specific_force", "sequent_depth", "alternate_depth", "slope_class", "uniform_discharge",
    "uniform_velocity", "conduit_capacity", "ConduitCapacity", "CRITICAL_SLOPE_TOLERANCE",
    # profile engine and checks
    "gvf_slope", "gvf_inverse_slope", "gvf_terms", "classify", "profile_type", "PROFILE_SHAPES",
    "trace_profile", "ProfileTrace", "direct_step",
    "profile_length", "depth_at_distance", "bresse_length", "varied_flow_function", "hydraulic_exponents",
    "direct_integration_length",
    # design
    "best_hydraulic_section", "BestSection",
    # many scenarios
    "SweepResult", "solve_many", "SolveManyError", "Uncertain", "monte_carlo", "MonteCarloResult",
]
