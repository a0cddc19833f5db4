"""Free overfall at the downstream end of a channel.

Where a channel with subcritical approach flow ends in a free fall, the flow
passes through critical depth a short distance upstream of the brink and
leaves the brink at a smaller depth, because the pressure there is no longer
hydrostatic. For a horizontal or mild rectangular channel Rouse (1936)
measured a brink depth of about 0.715 times the critical depth, with the
critical section roughly 3 to 4 critical depths upstream of the brink
(Rouse, H. (1936). Discharge characteristics of the free overfall. *Civil
Engineering* 6(4), 257-260; as given by Thandaveswara, IIT Madras course
notes on hydraulics, which add 0.705 for a confined nappe; stored address in
:mod:`gvflow.coefficients`). The relation also serves
as a rough discharge measurement (the end-depth method).

For profile computations the control is the critical depth at the critical
section; the brink depth is reported, not imposed.
"""

from __future__ import annotations

import numpy as np

from .. import coefficients
from .._validate import positive_array, scalar_or_array
from ..errors import InvalidInputError
from ..units import UnitsLike, resolve_units

__all__ = [
    "BRINK_DEPTH_RATIO",
    "CRITICAL_SECTION_DISTANCE_RANGE",
    "brink_depth",
    "discharge_from_brink_depth",
    "critical_section_distance",
]

#: Brink depth over critical depth, rectangular channel, subcritical approach (Rouse 1936).
BRINK_DEPTH_RATIO = coefficients.value("overfall.brink_ratio")
#: Distance of the critical section upstream of the brink, in critical depths (Rouse 1936).
CRITICAL_SECTION_DISTANCE_RANGE = coefficients.value("overfall.critical_section_distance")
#: Default distance of the critical section upstream of the brink, the middle of that range (common practice).
CRITICAL_SECTION_FACTOR = coefficients.value("overfall.critical_section_factor")


def brink_depth(discharge, width, units: UnitsLike = "SI"):
    """Depth at the brink of a free overfall in a rectangular channel [length].

    yb = 0.715 yc with yc = (q²/g)^(1/3), q = Q/b; for a horizontal or mild
    channel with subcritical approach flow (Rouse 1936).

    Parameters
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    width : float or ndarray
        Channel width b [length].
    units : "SI", "US" or Units

    Examples
    --------
    >>> from gvflow.structures import brink_depth
    >>> round(brink_depth(2.0, 1.0, units="SI"), 4)
    0.5303
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge") / positive_array(width, "width")
    return scalar_or_array(BRINK_DEPTH_RATIO * np.cbrt(q * q / u.g))


def discharge_from_brink_depth(depth, width, units: UnitsLike = "SI"):
    """Discharge of a rectangular free overfall from its measured brink depth (end-depth method).

    Q = b sqrt(g) (yb / 0.715)^1.5 [length³/s] (Rouse 1936).

    Examples
    --------
    >>> from gvflow.structures import discharge_from_brink_depth
    >>> round(discharge_from_brink_depth(0.5303, 1.0), 3)
    2.0
    """
    u = resolve_units(units)
    yb = positive_array(depth, "depth")
    b = positive_array(width, "width")
    return scalar_or_array(b * np.sqrt(u.g) * (yb / BRINK_DEPTH_RATIO) ** 1.5)


def critical_section_distance(critical_depth, factor: float = CRITICAL_SECTION_FACTOR):
    """Distance from the brink upstream to the critical section of a free overfall [length].

    ``factor`` times the critical depth; Rouse (1936) places the critical
    section about 3 to 4 critical depths upstream;
    the default 3.5 is the middle of that range (common practice).

    Parameters
    ----------
    critical_depth : float or ndarray
        Critical depth yc [length].
    factor : float
        Multiple of yc, between 3 and 4.

    Examples
    --------
    >>> from gvflow.structures import critical_section_distance
    >>> critical_section_distance(0.4)
    1.4
    """
    yc = positive_array(critical_depth, "critical_depth")
    lo, hi = CRITICAL_SECTION_DISTANCE_RANGE
    f = float(factor)
    if not lo <= f <= hi:
        raise InvalidInputError(
            f"factor must lie in Rouse's observed range {lo:g} to {hi:g} critical depths; got {factor!r}"
        )
    return scalar_or_array(f * yc)
