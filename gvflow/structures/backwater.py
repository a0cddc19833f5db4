"""How far a downstream control's influence reaches up the channel.

A weir, a culvert or any other downstream control lifts (or draws down) the
water above it; the resulting M1 (M2) profile approaches normal depth
asymptotically upstream and never reaches it. The backwater extent is
therefore defined with a tolerance: the point nearest the control, going
upstream, where the depth has come within ``tolerance`` of the normal depth
(1 % by default, common practice).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import coefficients
from .._validate import positive_float
from ..errors import InvalidInputError

__all__ = ["BackwaterExtent", "backwater_extent"]

#: Default tolerance of the backwater extent, 1 % of normal depth (common practice).
EXTENT_TOLERANCE = coefficients.value("backwater.extent_tolerance")


@dataclass(frozen=True)
class BackwaterExtent:
    """Where the influence of the downstream control fades out.

    Attributes
    ----------
    x : float
        Distance from the upstream end of the reach where the depth comes
        within the tolerance of normal depth [length]; 0 when it does not
        within the reach.
    distance : float
        Distance from the downstream end of the reach up to ``x`` [length].
    depth : float
        Depth at ``x`` [length]: normal depth times (1 ± tolerance), or the
        depth at the upstream end when the extent reaches beyond it.
    normal_depth : float
        Normal depth of the segment holding ``x`` [length] (NaN where the
        segment has none).
    tolerance : float
        Relative distance from normal depth that counts as "at normal depth".
    within_reach : bool
        False when the depth is still farther than the tolerance from normal
        depth at the upstream end: the backwater runs out of the reach.
    """

    x: float
    distance: float
    depth: float
    normal_depth: float
    tolerance: float
    within_reach: bool

    def __repr__(self):
        where = "" if self.within_reach else ", beyond the upstream end"
        return (f"BackwaterExtent(distance={self.distance:.6g} upstream of the downstream end, x={self.x:.6g}, "
                f"depth={self.depth:.6g}, normal_depth={self.normal_depth:.6g}{where})")


def backwater_extent(profile, tolerance: float = EXTENT_TOLERANCE) -> BackwaterExtent:
    """Extent of the backwater (or drawdown) upstream of a reach's downstream end.

    Walking upstream from the downstream end, the first point where
    |y - yn| <= tolerance yn, yn the normal depth of the segment there. The
    point is interpolated linearly in the relative deviation (y - yn)/yn
    between the two stations that straddle the tolerance, so its accuracy
    follows the station spacing of the solve (``n_steps``, ``max_step``).

    Parameters
    ----------
    profile : Profile
        A solved reach.
    tolerance : float
        Relative distance from normal depth counted as normal depth [-];
        default 0.01 (1 %, common practice).

    Returns
    -------
    BackwaterExtent

    Raises
    ------
    InvalidInputError
        For a tolerance that is not positive and below 1.

    Notes
    -----
    Segments without a normal depth (horizontal, adverse) never count as
    "at normal depth": a backwater crossing one runs on to the next segment
    upstream.

    Examples
    --------
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=6000.0, slope=0.001, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.015)], discharge=5.0, downstream=gv.Weir(crest_height=1.5))
    >>> ext = gv.backwater_extent(reach.solve(max_step=10.0))
    >>> ext.within_reach, round(ext.distance, -1)
    (True, 2560.0)
    """
    tol = positive_float(tolerance, "tolerance")
    if tol >= 1:
        raise InvalidInputError(f"tolerance must lie between 0 and 1 (a fraction of normal depth); got {tolerance!r}")
    x = np.asarray(profile.x, dtype=float)
    y = np.asarray(profile.depth, dtype=float)
    yn = np.asarray(profile.normal_depths, dtype=float)[np.asarray(profile.segment, dtype=int)]
    with np.errstate(invalid="ignore"):
        dev = (y - yn) / yn
    close = np.isfinite(dev) & (np.abs(dev) <= tol)
    length = float(x[-1])
    if close[-1]:
        return BackwaterExtent(length, 0.0, float(y[-1]), float(yn[-1]), tol, True)
    hits = np.flatnonzero(close)
    if hits.size == 0:
        return BackwaterExtent(0.0, length, float(y[0]), float(yn[0]), tol, False)
    i = int(hits[-1])  # station i is close; stations i+1 .. end are not
    target = np.copysign(tol, dev[i + 1]) if np.isfinite(dev[i + 1]) else np.copysign(tol, dev[i])
    if np.isfinite(dev[i + 1]) and dev[i + 1] != dev[i]:
        t = float(np.clip((target - dev[i]) / (dev[i + 1] - dev[i]), 0.0, 1.0))
    else:
        t = 0.0  # the next station lies on a segment without normal depth: the extent ends at station i
    xe = float(x[i] + t * (x[i + 1] - x[i]))
    ye = float(y[i] + t * (y[i + 1] - y[i]))
    return BackwaterExtent(xe, length - xe, ye, float(yn[i]), tol, True)
