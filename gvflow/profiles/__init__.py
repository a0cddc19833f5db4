"""The profile engine: the GVF equation, profile classification and marchers."""

from .base import MARCHERS, Marcher, MarchResult, SegmentBatch, get_marcher, register_marcher
from .classify import (
    PROFILE_LABELS,
    PROFILE_SHAPES,
    SLOPE_CLASSES,
    ProfileShape,
    classify,
    classify_slope,
    profile_type,
)
from .direct_step import FRICTION_AVERAGES, direct_step
from .equation import gvf_inverse_slope, gvf_slope, gvf_terms
from .ivp import IVP_METHODS, IVPMarcher
from .standard_step import StandardStep
from .trace import NORMAL_DEPTH_TOLERANCE, TRACE_METHODS, ProfileTrace, trace_profile

__all__ = ["Marcher", "MarchResult", "SegmentBatch", "MARCHERS", "get_marcher", "register_marcher",
           "StandardStep", "IVPMarcher", "IVP_METHODS",
           "gvf_slope", "gvf_inverse_slope", "gvf_terms",
           "classify", "classify_slope", "profile_type", "ProfileShape", "PROFILE_SHAPES", "PROFILE_LABELS",
           "SLOPE_CLASSES",
           "direct_step", "FRICTION_AVERAGES",
           "trace_profile", "ProfileTrace", "NORMAL_DEPTH_TOLERANCE", "TRACE_METHODS"]
