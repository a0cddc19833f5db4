"""Stage-discharge relation given as a table (a rating).

A rating pairs water-surface elevations (stages) with discharges, both
strictly increasing, so that each discharge has one stage and each stage one
discharge. Between the tabulated points it is interpolated linearly; outside
them it is not extrapolated: a discharge or stage beyond the table raises
:class:`InvalidInputError` naming the table's range.
"""

from __future__ import annotations

from typing import Annotated

import numpy as np
from pydantic import Field

from .._validate import finite_array, scalar_or_array
from ..errors import InvalidInputError
from ._common import FrozenModel

__all__ = ["RatingTable"]

_Values = Annotated[tuple[Annotated[float, Field(allow_inf_nan=False)], ...], Field(min_length=2)]


class RatingTable(FrozenModel):
    """A tabulated stage-discharge relation.

    Parameters
    ----------
    stage : sequence of float
        Water-surface elevations, strictly increasing [length].
    discharge : sequence of float
        Discharges at those stages, non-negative and strictly increasing
        [length³/s].

    Raises
    ------
    InvalidInputError
        When the columns differ in length, have fewer than two points, or are
        not strictly increasing (the message names the first offending row).

    Examples
    --------
    >>> from gvflow.structures import RatingTable
    >>> rating = RatingTable(stage=[10.0, 10.5, 11.2], discharge=[0.0, 2.0, 9.0])
    >>> rating.stage_at(5.5)
    10.85
    >>> rating.discharge_at(10.25)
    1.0
    """

    stage: _Values
    discharge: _Values

    def model_post_init(self, __context) -> None:
        st = np.asarray(self.stage)
        q = np.asarray(self.discharge)
        if st.size != q.size:
            raise InvalidInputError(
                f"stage and discharge need the same number of rows; got {st.size} stages and {q.size} discharges"
            )
        if np.any(q < 0):
            i = int(np.flatnonzero(q < 0)[0])
            raise InvalidInputError(f"discharge must be non-negative; row {i} has {q[i]!r}")
        for name, col in (("stage", st), ("discharge", q)):
            steps = np.diff(col)
            if np.any(steps <= 0):
                i = int(np.flatnonzero(steps <= 0)[0]) + 1
                raise InvalidInputError(
                    f"the rating is not monotone: {name} must increase strictly down the table, but row {i} "
                    f"({col[i]!r}) does not exceed row {i - 1} ({col[i - 1]!r}); sort the table and remove "
                    "repeated or falling values"
                )

    def _check_range(self, values, column, name):
        lo, hi = column[0], column[-1]
        bad = (values < lo) | (values > hi)
        if np.any(bad):
            v = float(np.ravel(values)[np.flatnonzero(np.ravel(bad))[0]])
            raise InvalidInputError(
                f"{name} {v:g} lies outside the rating table ({lo:g} to {hi:g}); the table is not extrapolated: "
                "extend it to cover this value"
            )

    def stage_at(self, discharge):
        """Stage for a discharge, linear interpolation [length]. Raises beyond the table."""
        q = finite_array(discharge, "discharge")
        col = np.asarray(self.discharge)
        self._check_range(q, col, "discharge")
        return scalar_or_array(np.interp(q, col, np.asarray(self.stage)))

    def discharge_at(self, stage):
        """Discharge for a stage, linear interpolation [length³/s]. Raises beyond the table."""
        st = finite_array(stage, "stage")
        col = np.asarray(self.stage)
        self._check_range(st, col, "stage")
        return scalar_or_array(np.interp(st, col, np.asarray(self.discharge)))

    @property
    def discharge_range(self) -> tuple[float, float]:
        """Smallest and largest tabulated discharge [length³/s]."""
        return float(self.discharge[0]), float(self.discharge[-1])

    @property
    def stage_range(self) -> tuple[float, float]:
        """Lowest and highest tabulated stage [length]."""
        return float(self.stage[0]), float(self.stage[-1])
