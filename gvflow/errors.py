"""Errors and warnings raised by gvflow.

Every failure a user can cause is a :class:`GVFlowError`, which subclasses
:class:`ValueError`, so ``except ValueError`` catches all of them. Messages
name the offending input and say what to do about it.
"""

from __future__ import annotations

__all__ = [
    "GVFlowError",
    "InvalidInputError",
    "NoSolutionError",
    "ConvergenceError",
    "ControlError",
    "ReachFileError",
    "GVFlowWarning",
]


class GVFlowError(ValueError):
    """Base class of every error gvflow raises for bad input or impossible physics."""


class InvalidInputError(GVFlowError):
    """An argument is out of its valid range (negative, NaN, infinite, wrong type)."""


class NoSolutionError(GVFlowError):
    """The physics has no answer for these inputs.

    Examples: normal depth on a horizontal or adverse bed, or a discharge above
    the uniform-flow capacity of a closed conduit.
    """


class ConvergenceError(GVFlowError):
    """A numerical solver could not meet its tolerance.

    Attributes
    ----------
    iterations : int
        Iterations spent.
    residual : float
        Residual at the last iterate.
    last : float
        Last iterate.
    """

    def __init__(self, message: str, iterations: int = 0, residual: float = float("nan"),
                 last: float = float("nan")):
        super().__init__(message)
        self.iterations = iterations
        self.residual = residual
        self.last = last


class ControlError(GVFlowError):
    """A boundary control cannot be applied as given (wrong regime, missing, inconsistent)."""


class ReachFileError(InvalidInputError):
    """A reach file cannot be read: not JSON, or a field is missing or out of range.

    The message names the file and the path of each bad field
    (``segments.1.section.width``).
    """


class GVFlowWarning(UserWarning):
    """A result was computed but something about it deserves the user's attention.

    Issued once per kind and call for legal but unusual input: Manning's n outside
    0.008-0.20, a bed slope above 0.1, depths many times the channel's width (mixed
    units?), a custom unit system whose g or Manning factor does not fit its length unit.
    """
