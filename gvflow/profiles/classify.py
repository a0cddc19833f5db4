"""The twelve gradually varied flow profile types and their expected shapes.

A profile's type follows from the slope class (mild, steep, critical,
horizontal, adverse: :func:`gvflow.slope_class`) and the zone its depth lies
in: zone 1 above both normal and critical depth, zone 2 between them, zone 3
below both (Chow 1959, *Open-Channel Hydraulics*, §9-2, fig. 9-2). Horizontal
and adverse beds have no normal depth and so no zone 1; a critical slope has
no zone 2.

Boundaries: a depth equal to a reference depth is placed in zone 2 where
zone 2 exists (on a mild slope y = yn and y = yc are both M2; on a steep
slope y = yc and y = yn are both S2). Where it does not, a depth equal to
critical depth counts as above it (C1, H2, A2).

:data:`PROFILE_SHAPES` gives, for each label, what theory says the curve
does, so a computed profile can be checked against it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._core.codes import REGIME_NAMES, REGIME_SUB, REGIME_SUPER, SLOPE_CLASS_NAMES
from .._validate import broadcast, finite_array, positive_array, positive_float, renamed_keyword
from ..errors import InvalidInputError, NoSolutionError
from ..uniform import CRITICAL_SLOPE_TOLERANCE, critical_depth, normal_depth, slope_classes
from ..units import UnitsLike

__all__ = ["ProfileShape", "PROFILE_SHAPES", "PROFILE_LABELS", "SLOPE_CLASSES", "classify", "profile_type",
           "classify_slope"]

SLOPE_CLASSES = SLOPE_CLASS_NAMES
_LETTER = {"mild": "M", "steep": "S", "critical": "C", "horizontal": "H", "adverse": "A"}


@dataclass(frozen=True)
class ProfileShape:
    """What theory says a profile type looks like (x measured downstream).

    Attributes
    ----------
    label : str
        "M1" ... "A3".
    slope_class : str
        "mild", "steep", "critical", "horizontal" or "adverse".
    zone : int
        1 (above normal and critical depth), 2 (between) or 3 (below both).
    depth_range : str
        The inequality that defines the type (yn normal, yc critical depth).
    dydx_sign : int
        Sign of dy/dx in the downstream direction: +1 depth rises downstream,
        -1 depth falls downstream.
    regime : str
        "subcritical" or "supercritical".
    direction : str
        Direction it is computed in from its control: "upstream" for
        subcritical types, "downstream" for supercritical ones.
    upstream_end, downstream_end : str
        What the depth tends to at each end: "normal depth" (approached
        asymptotically), "critical depth" (reached at a finite distance with a
        vertical tangent in theory: a control, a jump or choking), "critical
        and normal depth" (critical slope), "horizontal surface" (depth grows
        without bound, the water surface tending to level), or "control" (the
        profile starts at a structure, such as a gate, and is cut off there).
    tends_to : str
        What it tends to in the direction it is computed: the end it is
        traced toward.
    """

    label: str
    slope_class: str
    zone: int
    depth_range: str
    dydx_sign: int
    regime: str
    direction: str
    upstream_end: str
    downstream_end: str

    @property
    def tends_to(self) -> str:
        return self.upstream_end if self.direction == "upstream" else self.downstream_end


def _shape(label, sc, zone, rng, sign, up, down):
    sub = label in ("M1", "M2", "S1", "C1", "H2", "A2")
    regime = REGIME_NAMES[REGIME_SUB if sub else REGIME_SUPER]
    direction = "upstream" if sub else "downstream"
    return ProfileShape(label, sc, zone, rng, sign, regime, direction, up, down)


#: Expected shape of each profile type (Chow 1959, *Open-Channel Hydraulics*,
#: §9-2 and fig. 9-2; Henderson 1966, *Open Channel Flow*, §4.3).
PROFILE_SHAPES: dict[str, ProfileShape] = {s.label: s for s in (
    _shape("M1", "mild", 1, "y > yn > yc", +1, "normal depth", "horizontal surface"),
    _shape("M2", "mild", 2, "yn > y > yc", -1, "normal depth", "critical depth"),
    _shape("M3", "mild", 3, "yn > yc > y", +1, "control", "critical depth"),
    _shape("S1", "steep", 1, "y > yc > yn", +1, "critical depth", "horizontal surface"),
    _shape("S2", "steep", 2, "yc > y > yn", -1, "critical depth", "normal depth"),
    _shape("S3", "steep", 3, "yc > yn > y", +1, "control", "normal depth"),
    _shape("C1", "critical", 1, "y > yc = yn", +1, "critical and normal depth", "horizontal surface"),
    _shape("C3", "critical", 3, "yc = yn > y", +1, "control", "critical and normal depth"),
    _shape("H2", "horizontal", 2, "y > yc", -1, "horizontal surface", "critical depth"),
    _shape("H3", "horizontal", 3, "yc > y", +1, "control", "critical depth"),
    _shape("A2", "adverse", 2, "y > yc", -1, "horizontal surface", "critical depth"),
    _shape("A3", "adverse", 3, "yc > y", +1, "control", "critical depth"),
)}

PROFILE_LABELS = tuple(PROFILE_SHAPES)


def classify_slope(slope, normal_depth, critical_depth, critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, *,
                   tolerance=None) -> str:
    """Slope class from the bed slope and the two reference depths.

    Parameters
    ----------
    slope : float
        Bed slope S0 [-].
    normal_depth : float
        Normal depth yn [length] (ignored, may be NaN, when slope <= 0).
    critical_depth : float
        Critical depth yc [length].
    critical_tolerance : float
        Relative band |yn - yc| <= critical_tolerance * yc in which the slope
        counts as critical (default :data:`gvflow.CRITICAL_SLOPE_TOLERANCE`).
        ``tolerance=`` is its former name (still accepted, with a FutureWarning).

    Returns
    -------
    str
        "mild", "steep", "critical", "horizontal" or "adverse".

    Examples
    --------
    >>> from gvflow.profiles import classify_slope
    >>> classify_slope(0.001, 1.08, 0.66)
    'mild'
    >>> classify_slope(0.01, 0.6604, 0.66, critical_tolerance=1e-2)
    'critical'
    """
    critical_tolerance = renamed_keyword(critical_tolerance, tolerance, old="tolerance", new="critical_tolerance",
                                         default=CRITICAL_SLOPE_TOLERANCE)
    s = float(finite_array(slope, "slope"))
    tol = positive_float(critical_tolerance, "critical_tolerance", allow_zero=True)
    yc = float(positive_array(critical_depth, "critical_depth"))
    yn = float(positive_array(normal_depth, "normal_depth")) if s > 0 else math.nan
    return str(slope_classes([s], [yn], [yc], tol)[0])


def classify(slope_class: str, depth, normal_depth, critical_depth):
    """Profile label from the slope class and the depth's zone.

    Parameters
    ----------
    slope_class : str
        "mild", "steep", "critical", "horizontal" or "adverse".
    depth : float or ndarray
        Flow depth y [length].
    normal_depth : float or ndarray
        Normal depth yn [length]; ignored (may be NaN) on horizontal and
        adverse beds. On a critical slope only critical depth is used.
    critical_depth : float or ndarray
        Critical depth yc [length].

    Returns
    -------
    str or ndarray of str
        "M1" ... "A3"; an array of labels for array input. A depth equal to a
        reference depth belongs to zone 2 where zone 2 exists, and counts as
        above critical depth where it does not (see the module notes).

    Notes
    -----
    Chow 1959, *Open-Channel Hydraulics*, §9-2: mild M1 y > yn > yc,
    M2 yn > y > yc, M3 yn > yc > y; steep S1 y > yc > yn, S2 yc > y > yn,
    S3 yc > yn > y; critical C1, C3; horizontal H2, H3; adverse A2, A3.

    Examples
    --------
    >>> from gvflow.profiles import classify
    >>> classify("mild", 2.0, 1.08, 0.66)
    'M1'
    >>> classify("steep", [1.0, 0.5, 0.1], 0.4, 0.66).tolist()
    ['S1', 'S2', 'S3']
    >>> classify("adverse", 0.3, float("nan"), 0.66)
    'A3'
    """
    if slope_class not in _LETTER:
        raise InvalidInputError(f"slope_class must be one of {list(SLOPE_CLASSES)}; got {slope_class!r}")
    y = positive_array(depth, "depth")
    yc = positive_array(critical_depth, "critical_depth")
    if slope_class in ("mild", "steep"):
        yn = positive_array(normal_depth, "normal_depth")
        if slope_class == "mild" and np.any(yn <= yc):
            raise InvalidInputError("a mild slope needs normal_depth > critical_depth; "
                                    f"got {normal_depth!r} and {critical_depth!r}")
        if slope_class == "steep" and np.any(yn >= yc):
            raise InvalidInputError("a steep slope needs normal_depth < critical_depth; "
                                    f"got {normal_depth!r} and {critical_depth!r}")
    labels = _zone_labels(slope_class, y, yn if slope_class in ("mild", "steep") else yc, yc)
    return str(labels) if labels.ndim == 0 else labels


_CLASS_CODE = {c: i for i, c in enumerate(SLOPE_CLASSES)}
_ZONE_LABELS = np.array([_LETTER[c] + z for c in SLOPE_CLASSES for z in "123"])


def _zone_labels(slope_class, y: np.ndarray, yn: np.ndarray, yc: np.ndarray) -> np.ndarray:
    """:func:`classify` for checked float arrays, ``slope_class`` one name or one per depth (private: the
    solvers call it on their own depths)."""
    code = (_CLASS_CODE[slope_class] if isinstance(slope_class, str)
            else np.array([_CLASS_CODE[c] for c in np.asarray(slope_class).tolist()], dtype=np.int64))
    two = np.where(y > np.maximum(yn, yc), 0, np.where(y < np.minimum(yn, yc), 2, 1))  # mild, steep
    one = np.where(y >= yc, np.where(code == 2, 0, 1), 2)  # critical: C1 C3; horizontal, adverse: H2 H3, A2 A3
    return _ZONE_LABELS[3 * code + np.where(code <= 1, two, one)]


def profile_type(section, discharge, slope, roughness, depth, units: UnitsLike = "SI",
                 critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, alpha: float = 1.0, *, tolerance=None):
    """Profile type (M1 ... A3) of a flow at ``depth`` in a prismatic channel.

    Computes the normal and critical depths, the slope class (critical when
    |yn - yc| <= ``critical_tolerance`` · yc) and the zone of ``depth``.

    Parameters
    ----------
    section : Section
        Cross-section.
    discharge : float or ndarray
        Discharge Q [length³/s].
    slope : float or ndarray
        Bed slope S0 [-], positive falling downstream.
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance law; a float is Manning's n.
    depth : float or ndarray
        Flow depth [length]. Discharge, slope and depth broadcast together.
    units : "SI", "US" or Units
        Unit system.
    critical_tolerance : float
        Critical-slope band, relative to critical depth (default
        :data:`gvflow.CRITICAL_SLOPE_TOLERANCE` = 1e-3). ``tolerance=`` is its
        former name (still accepted, with a FutureWarning).
    alpha : float
        Energy coefficient [-] used in the critical depth.

    Returns
    -------
    str or ndarray of str
        The label(s).

    Raises
    ------
    NoSolutionError
        In a closed conduit whose discharge exceeds its uniform-flow capacity
        on a positive slope (no normal depth, so no slope class).

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> gv.profile_type(sec, 5.0, 0.001, 0.015, 2.0)
    'M1'
    >>> gv.profile_type(sec, 5.0, 0.0, 0.015, [1.0, 0.3]).tolist()
    ['H2', 'H3']
    """
    critical_tolerance = renamed_keyword(critical_tolerance, tolerance, old="tolerance", new="critical_tolerance",
                                         default=CRITICAL_SLOPE_TOLERANCE)
    tol = positive_float(critical_tolerance, "critical_tolerance", allow_zero=True)
    q = positive_array(discharge, "discharge")
    y = positive_array(depth, "depth")
    q, s, y = broadcast(discharge=q, slope=finite_array(slope, "slope"), depth=y)
    qf, sf, yf = (np.ravel(a).astype(float) for a in (q, s, y))
    yc = np.atleast_1d(critical_depth(section, qf, units, alpha)).astype(float)
    yn = np.full(qf.size, math.nan)
    pos = sf > 0
    if np.any(pos):
        try:
            yn[pos] = normal_depth(section, qf[pos], sf[pos], roughness, units)
        except NoSolutionError as exc:
            raise NoSolutionError(f"no profile type: {exc}") from None
    labels = _zone_labels(slope_classes(sf, yn, yc, tol), yf, np.where(np.isnan(yn), yc, yn), yc).reshape(y.shape)
    return str(labels) if labels.ndim == 0 else labels
