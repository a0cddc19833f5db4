"""The profile engine: the GVF equation, profile classification and marchers."""

from .base import MARCHERS, Marcher, MarchResult, SegmentBatch, get_marcher, register_marcher
from .standard_step import StandardStep

__all__ = ["Marcher", "MarchResult", "SegmentBatch", "MARCHERS", "get_marcher", "register_marcher",
           "StandardStep"]
