"""Warnings attributed to the user's own line (private; the bottom layer, beside the errors)."""

from __future__ import annotations

import os
import sys
import warnings

import pydantic

from .errors import GVFlowWarning

_PACKAGE_DIR = os.path.dirname(os.path.abspath(__file__))
_PYDANTIC_DIR = os.path.dirname(os.path.abspath(pydantic.__file__))


def warn(message: str) -> None:
    """Issue a GVFlowWarning attributed to the first caller outside gvflow (and pydantic, which builds its
    models)."""
    frame, level = sys._getframe(0), 1
    while frame is not None and os.path.abspath(frame.f_code.co_filename).startswith((_PACKAGE_DIR,
                                                                                     _PYDANTIC_DIR)):
        frame, level = frame.f_back, level + 1
    warnings.warn(message, GVFlowWarning, stacklevel=level)
