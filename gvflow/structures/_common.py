"""Helpers shared by the structure modules (private)."""

from __future__ import annotations

import numpy as np

from .._models import FrozenModel  # noqa: F401  (the structures' models share the one error contract)
from .._roots import bracketed_root, expand_upper
from ..units import Units


def length_per_metre(units: Units) -> float:
    """Length units per metre for ``units`` (:attr:`gvflow.Units.length_per_metre`).

    Some published coefficients carry a length (the head and width
    corrections of the thin-plate weir formulas, in millimetres). They are
    stored in metres and scaled with this factor: 1 for metres, 3.28084 for
    feet; for a custom unit system whose length label is neither, the factor
    is inferred from its gravity, g / 9.80665 m/s².
    """
    return units.length_per_metre


def solve_increasing(fun, target, lo, hi, *, what: str, limit: float = np.inf):
    """Solve fun(x) = target for x >= lo, fun increasing, vectorised.

    ``hi`` is a first upper guess, doubled until the residual changes sign.
    """
    target = np.asarray(target, dtype=float)
    lo, hi = np.broadcast_arrays(np.asarray(lo, dtype=float), np.asarray(hi, dtype=float))
    lo = np.broadcast_to(lo, target.shape).astype(float)
    hi = np.broadcast_to(hi, target.shape).astype(float)

    def residual(x):
        return fun(x) - target

    hi = expand_upper(residual, lo, hi, limit=limit, what=what)
    return bracketed_root(residual, lo, hi, rtol=1e-13, what=what)
