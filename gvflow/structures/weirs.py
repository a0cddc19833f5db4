"""Weirs: discharge from head and head from discharge.

The head ``head`` of a weir is the upstream water level above the crest,
measured far enough upstream to be clear of the drawdown (about 4 to 5 heads).
Each relation comes in two directions: ``*_discharge(head, ...)`` and
``*_head(discharge, ...)``, the second found by bracketed root finding on the
first, so the two are exact inverses of each other.

Approach velocity. The thin-plate relations (Rehbock, Kindsvater-Carter,
Kindsvater-Shen) are calibrated on the measured head: the approach velocity is
already inside their coefficient (the ``head/crest_height`` term), so no
velocity head is added. The broad-crested relation is written on the total
(energy) head H1 = h1 + V1²/2g; when an ``approach_section`` is given, the
approach velocity V1 = Q / A1(crest_height + h1) is included by solving the
relation and the approach area together; without it V1 is neglected.

Submergence. With a tailwater above the crest the thin-plate relations are
reduced by Villemonte's (1947) factor (1 - (h2/h1)^n)^0.385, n the free-flow
head exponent (1.5 rectangular, 2.5 V-notch), up to ``max_submergence``
(default 0.9, common practice); beyond it :class:`NoSolutionError` is raised.
A broad-crested weir keeps its free-flow discharge up to its modular limit
(default 0.66); beyond it the weir is drowned and no longer a control, and
:class:`NoSolutionError` is raised.
"""

from __future__ import annotations

import math

import numpy as np

from .. import coefficients
from .._roots import bracketed_root
from .._validate import finite_array, positive_array, scalar_or_array
from ..errors import InvalidInputError, NoSolutionError
from ..uniform import critical_depth
from ..units import UnitsLike, resolve_units
from ._common import length_per_metre

__all__ = [
    "VILLEMONTE_EXPONENT",
    "DEFAULT_MAX_SUBMERGENCE",
    "BROAD_CRESTED_COEFFICIENT",
    "BROAD_CRESTED_MODULAR_LIMIT",
    "villemonte_factor",
    "rehbock_coefficient",
    "rectangular_weir_discharge",
    "rectangular_weir_head",
    "kindsvater_carter_coefficients",
    "kindsvater_carter_discharge",
    "kindsvater_carter_head",
    "kindsvater_shen_coefficients",
    "v_notch_discharge",
    "v_notch_head",
    "broad_crested_weir_discharge",
    "broad_crested_weir_head",
]

#: Exponent 0.385 of Villemonte's submergence relation (Villemonte 1947).
VILLEMONTE_EXPONENT = coefficients.value("weir.villemonte_exponent")
#: Largest tailwater/upstream head ratio at which the Villemonte reduction is applied (common practice).
DEFAULT_MAX_SUBMERGENCE = coefficients.value("weir.max_submergence")
#: Discharge coefficient of a rectangular-profile (square-edged) broad-crested weir, valid for
#: 0.08 <= H1/L <= 0.33 (Bos 1989, *Discharge Measurement Structures*, §4; from memory - verify).
BROAD_CRESTED_COEFFICIENT = coefficients.value("weir.broad_crested_cd")
#: Modular limit h2/h1 of a rectangular-profile broad-crested weir (Bos 1989; from memory - verify).
BROAD_CRESTED_MODULAR_LIMIT = coefficients.value("weir.broad_crested_modular_limit")
# Rehbock's Cd = a + b h/P (Henderson 1966; from memory - verify) and Francis's contraction factor.
_REHBOCK_A, _REHBOCK_B = coefficients.value("weir.rehbock")
_FRANCIS = coefficients.value("weir.francis_contraction")

# Kindsvater-Carter coefficients against the contraction ratio b/B: Ce = C2 + C1 h1/P and the
# width correction kb [m]; head correction kh = 0.001 m. As tabulated in USBR (2001), *Water
# Measurement Manual*, 3rd ed., ch. 7 and ISO 1438; rows and their sources in gvflow.coefficients.
_KC_RATIO = np.array(coefficients.table("weir.kindsvater_carter_ce").column("b/B"))
_KC_C2 = np.array(coefficients.table("weir.kindsvater_carter_ce").column("C2"))
_KC_C1 = np.array(coefficients.table("weir.kindsvater_carter_ce").column("C1"))
_KC_KB_M = np.array(coefficients.table("weir.kindsvater_carter_kb").column("kb"))
_KC_KH_M = coefficients.value("weir.kindsvater_carter_kh")

# Kindsvater-Shen coefficients of fully contracted V-notch weirs against the notch angle [deg]:
# effective discharge coefficient Ce and head correction kh [m] (Shen 1981, USGS Water-Supply
# Paper, as tabulated by Blevins 1984, *Applied Fluid Dynamics Handbook*).
_KS_ANGLE = np.array(coefficients.table("weir.kindsvater_shen").column("notch angle"))
_KS_CE = np.array(coefficients.table("weir.kindsvater_shen").column("Ce"))
_KS_KH_M = np.array(coefficients.table("weir.kindsvater_shen").column("kh"))


# ---------------------------------------------------------------------------
# submergence
# ---------------------------------------------------------------------------

def _check_limit(value, name: str, upper: float = 1.0) -> float:
    v = float(value)
    if not (0.0 < v < upper) or not math.isfinite(v):
        raise InvalidInputError(f"{name} must lie between 0 and {upper:g} (exclusive); got {value!r}")
    return v


def villemonte_factor(submergence, exponent, *, max_submergence: float = DEFAULT_MAX_SUBMERGENCE):
    """Villemonte's reduction of a weir's free-flow discharge by a tailwater.

    Q_s / Q_f = (1 - S^n)^0.385 with S = h2/h1, the downstream head over the
    upstream head (both above the crest), and n the exponent of the free-flow
    head-discharge relation (1.5 rectangular, 2.5 V-notch). S <= 0 (tailwater
    at or below the crest) gives 1.

    Parameters
    ----------
    submergence : float or ndarray
        Submergence ratio S = h2/h1 [-].
    exponent : float
        Free-flow head exponent n [-].
    max_submergence : float
        Largest S at which the relation is applied (default 0.9, common
        practice); the relation drives the discharge to zero as S -> 1 and is
        not a reliable guide close to it.

    Returns
    -------
    float or ndarray
        Ratio of submerged to free-flow discharge [-].

    Raises
    ------
    NoSolutionError
        When S exceeds ``max_submergence``.

    References
    ----------
    Villemonte, J. R. (1947). Submerged-weir discharge studies. *Engineering
    News-Record* 139, 866-869 (from memory - verify).

    Examples
    --------
    >>> from gvflow.structures import villemonte_factor
    >>> round(villemonte_factor(0.5, 1.5), 4)
    0.8454
    """
    s = finite_array(submergence, "submergence")
    n = float(positive_array(exponent, "exponent"))
    smax = _check_limit(max_submergence, "max_submergence")
    if np.any(s > smax):
        worst = float(np.max(s))
        raise NoSolutionError(
            f"the weir is submerged beyond the range of Villemonte's relation: tailwater/upstream head "
            f"ratio {worst:.4g} exceeds max_submergence={smax:g}; the weir no longer controls the upstream "
            "level reliably: treat the reach as continuous open-channel flow past the weir"
        )
    return scalar_or_array(_villemonte(s, n))


def _villemonte(s, n):
    s = np.clip(s, 0.0, 1.0)
    return (1.0 - s ** n) ** VILLEMONTE_EXPONENT


def _tailwater(tailwater_head):
    return None if tailwater_head is None else finite_array(tailwater_head, "tailwater_head")


def _apply_submergence(q_free, head, tw, exponent, max_submergence):
    if tw is None:
        return q_free
    s = np.where(tw > 0, tw / head, 0.0)
    return q_free * np.asarray(villemonte_factor(s, exponent, max_submergence=max_submergence))


def _head_from_discharge(free_fn, q, tw, exponent, max_submergence, what, hmax=None):
    """Invert Q = Qf(h) * Villemonte(h2/h) for h, vectorised (Qf increasing up to ``hmax``)."""
    if tw is None:
        tw = np.zeros(())
    q, tw = np.broadcast_arrays(q, tw)
    lo = np.where(tw > 0, tw, 0.0) * (1.0 + 1e-12)

    def fun(h):
        s = np.where(tw > 0, tw / np.maximum(h, 1e-300), 0.0)
        return free_fn(h) * _villemonte(s, exponent) - q

    r_lo = fun(lo)
    if np.any(r_lo > 0):
        i = int(np.flatnonzero(np.ravel(r_lo > 0))[0])
        raise NoSolutionError(
            f"{what}: discharge {float(np.ravel(q)[i]):g} is below the smallest discharge the relation gives "
            "(its head correction dominates); use a larger discharge or another relation"
        )
    if hmax is not None:
        hi = np.broadcast_to(np.asarray(hmax, dtype=float), q.shape).copy()
        if np.any(fun(hi) <= 0):
            raise NoSolutionError(
                f"{what}: the discharge exceeds the largest the relation can pass (its effective crest "
                "length shrinks with the head); use a wider crest"
            )
    else:
        hi = np.maximum(2.0 * lo, 1.0)
        for _ in range(200):
            need = fun(hi) <= 0
            if not np.any(need):
                break
            hi = np.where(need, 2.0 * hi, hi)
    h = bracketed_root(fun, lo, hi, rtol=1e-13, what=what)
    if np.any(tw > 0):
        s = np.where(tw > 0, tw / h, 0.0)
        villemonte_factor(s, exponent, max_submergence=max_submergence)  # raises beyond the range
    return h


def _crest_height(crest_height):
    try:
        p = np.asarray(crest_height, dtype=float)
    except (TypeError, ValueError):
        raise InvalidInputError(f"crest_height must be a number; got {crest_height!r}") from None
    if np.any(~np.isfinite(p)) or np.any(p <= 0):
        raise InvalidInputError(
            f"crest_height (height of the crest above the approach channel bed) must be finite and "
            f"positive; got {crest_height!r}"
        )
    return p


# ---------------------------------------------------------------------------
# sharp-crested rectangular: Rehbock with Francis's end contractions
# ---------------------------------------------------------------------------

def rehbock_coefficient(head, crest_height):
    """Rehbock's discharge coefficient of a sharp-crested rectangular weir.

    Cd = 0.611 + 0.08 h/P, for Q = Cd (2/3) sqrt(2g) b h^1.5.

    Parameters
    ----------
    head : float or ndarray
        Upstream water level above the crest h [length].
    crest_height : float or ndarray
        Crest height above the approach channel bed P [length].

    Returns
    -------
    float or ndarray
        Cd [-].

    References
    ----------
    Henderson, F. M. (1966). *Open Channel Flow*, ch. 6, Rehbock's formula
    (from memory - verify).

    Examples
    --------
    >>> from gvflow.structures import rehbock_coefficient
    >>> round(rehbock_coefficient(0.5, 1.0), 3)
    0.651
    """
    h = positive_array(head, "head")
    p = _crest_height(crest_height)
    return scalar_or_array(_REHBOCK_A + _REHBOCK_B * h / p)


def _rehbock_free(h, p, b, nc, g):
    le = b - _FRANCIS * nc * h
    return (_REHBOCK_A + _REHBOCK_B * h / p) * (2.0 / 3.0) * math.sqrt(2.0 * g) * le * h ** 1.5


def _contractions(end_contractions) -> int:
    if end_contractions not in (0, 1, 2) or isinstance(end_contractions, bool):
        raise InvalidInputError(f"end_contractions must be 0, 1 or 2; got {end_contractions!r}")
    return int(end_contractions)


def _check_effective_length(b, nc, h):
    le = b - _FRANCIS * nc * h
    if np.any(le <= 0):
        raise NoSolutionError(
            f"the head {float(np.max(h)):g} is too large for a crest {float(np.min(b)):g} wide with {nc} end "
            "contraction(s): Francis's effective length b - 0.1 n h is not positive; use a wider crest"
        )


def rectangular_weir_discharge(head, crest_width, crest_height, *, end_contractions: int = 0,
                               tailwater_head=None, max_submergence: float = DEFAULT_MAX_SUBMERGENCE,
                               units: UnitsLike = "SI"):
    """Discharge over a sharp-crested rectangular weir (Rehbock, Francis contractions).

    Q = Cd (2/3) sqrt(2g) (b - 0.1 n h) h^1.5, Cd = 0.611 + 0.08 h/P, with n
    end contractions (0 for a weir across the full channel width, 2 for a
    notch clear of both walls), times Villemonte's factor when a tailwater
    stands above the crest.

    Parameters
    ----------
    head : float or ndarray
        Upstream water level above the crest h [length].
    crest_width : float or ndarray
        Width of the crest across the flow b [length].
    crest_height : float or ndarray
        Crest height above the approach channel bed P [length].
    end_contractions : int
        Number of end contractions, 0, 1 or 2.
    tailwater_head : float or ndarray, optional
        Downstream water level above the crest h2 [length]; at or below zero
        the weir flows free.
    max_submergence : float
        Largest h2/h accepted (see :func:`villemonte_factor`).
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Discharge Q [length³/s].

    Raises
    ------
    InvalidInputError
        For a non-positive head, width or crest height.
    NoSolutionError
        When the weir is submerged beyond ``max_submergence``, or the
        contracted effective length is not positive.

    Notes
    -----
    Rehbock's coefficient as given by Henderson (1966, ch. 6; from memory -
    verify); the contraction correction b' = b - 0.1 n h is Francis's (1883),
    as given by Chow (1959, *Open-Channel Hydraulics*, ch. 14; from memory -
    verify). The approach velocity is inside Cd through h/P.

    Examples
    --------
    >>> from gvflow.structures import rectangular_weir_discharge
    >>> round(rectangular_weir_discharge(0.3, 2.0, 1.0), 4)
    0.6161
    """
    u = resolve_units(units)
    h = positive_array(head, "head")
    b = positive_array(crest_width, "crest_width")
    p = _crest_height(crest_height)
    nc = _contractions(end_contractions)
    tw = _tailwater(tailwater_head)
    _check_effective_length(b, nc, h)
    q = _rehbock_free(h, p, b, nc, u.g)
    return scalar_or_array(np.asarray(_apply_submergence(q, h, tw, 1.5, max_submergence)))


def rectangular_weir_head(discharge, crest_width, crest_height, *, end_contractions: int = 0,
                          tailwater_head=None, max_submergence: float = DEFAULT_MAX_SUBMERGENCE,
                          units: UnitsLike = "SI"):
    """Upstream head over a sharp-crested rectangular weir for a discharge (inverse of
    :func:`rectangular_weir_discharge`).

    Parameters
    ----------
    discharge : float or ndarray
        Discharge Q [length³/s].
    crest_width, crest_height, end_contractions, tailwater_head, max_submergence, units
        As in :func:`rectangular_weir_discharge`.

    Returns
    -------
    float or ndarray
        Upstream water level above the crest h [length].

    Raises
    ------
    NoSolutionError
        When the tailwater submerges the weir beyond ``max_submergence`` at
        this discharge.

    Examples
    --------
    >>> from gvflow.structures import rectangular_weir_head
    >>> round(rectangular_weir_head(0.6161, 2.0, 1.0), 4)
    0.3
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    b = positive_array(crest_width, "crest_width")
    p = _crest_height(crest_height)
    nc = _contractions(end_contractions)
    tw = _tailwater(tailwater_head)
    q, b, p = np.broadcast_arrays(q, b, p)

    def free(h):
        return _rehbock_free(h, p, b, nc, u.g)

    # With contractions Q(h) peaks where d/dh[(b - f n h) h^1.5] = 0, at h = 0.6 b / (f n) (6 b / n for f = 0.1).
    hmax = None if nc == 0 else 0.6 * b / (_FRANCIS * nc)
    h = _head_from_discharge(free, q, tw, 1.5, max_submergence, "rectangular weir head", hmax=hmax)
    _check_effective_length(b, nc, h)
    return scalar_or_array(h)


# ---------------------------------------------------------------------------
# sharp-crested rectangular: Kindsvater-Carter
# ---------------------------------------------------------------------------

def kindsvater_carter_coefficients(width_ratio, units: UnitsLike = "SI"):
    """Kindsvater-Carter coefficients for a contraction ratio b/B.

    Linear interpolation in the published table: Ce = C2 + C1 h/P and the
    width correction kb.

    Parameters
    ----------
    width_ratio : float or ndarray
        Crest width over approach channel width b/B, 0 to 1 [-] (1: no end
        contractions).
    units : "SI", "US" or Units
        Unit system of the returned kb.

    Returns
    -------
    tuple of (float or ndarray)
        ``(c1, c2, kb)``: slope C1 [-], intercept C2 [-], width correction kb
        [length]. The head correction is kh = 0.001 m in all cases.

    References
    ----------
    Kindsvater, C. E. & Carter, R. W. (1957). Discharge characteristics of
    rectangular thin-plate weirs. *J. Hydraulics Div. ASCE* 83(HY6).
    USBR (2001). *Water Measurement Manual*, 3rd ed., ch. 7 (table of C1, C2
    and kb against b/B; from memory - verify). The rows b/B = 1 (C2 0.602,
    C1 0.075) and b/B = 0.5 (0.592, 0.011) were read in Novak et al. (2007),
    *Hydraulic Structures*, 4th ed., Table 8.1; sources per row in
    :mod:`gvflow.coefficients`.

    Examples
    --------
    >>> from gvflow.structures import kindsvater_carter_coefficients
    >>> c1, c2, kb = kindsvater_carter_coefficients(1.0)
    >>> c1, c2, kb
    (0.075, 0.602, -0.0009)
    """
    u = resolve_units(units)
    r = finite_array(width_ratio, "width_ratio")
    if np.any((r < 0) | (r > 1)):
        raise InvalidInputError(f"width_ratio b/B must lie between 0 and 1; got {width_ratio!r}")
    c1 = np.interp(r, _KC_RATIO, _KC_C1)
    c2 = np.interp(r, _KC_RATIO, _KC_C2)
    kb = np.interp(r, _KC_RATIO, _KC_KB_M) * length_per_metre(u)
    return scalar_or_array(c1), scalar_or_array(c2), scalar_or_array(kb)


def _kc_parts(crest_width, crest_height, channel_width, u):
    b = positive_array(crest_width, "crest_width")
    p = _crest_height(crest_height)
    if channel_width is None:
        ratio = np.ones(b.shape)
    else:
        bb = positive_array(channel_width, "channel_width")
        if np.any(b > bb * (1 + 1e-12)):
            raise InvalidInputError(
                f"crest_width {float(np.max(b)):g} exceeds channel_width {float(np.min(bb)):g}; the crest "
                "cannot be wider than the approach channel"
            )
        ratio = np.minimum(b / bb, 1.0)
    c1, c2, kb = (np.asarray(v) for v in kindsvater_carter_coefficients(ratio, u))
    kh = _KC_KH_M * length_per_metre(u)
    return b, p, c1, c2, kb, kh


def _kc_free(h, b, p, c1, c2, kb, kh, g):
    return (c2 + c1 * h / p) * (2.0 / 3.0) * math.sqrt(2.0 * g) * (b + kb) * (h + kh) ** 1.5


def kindsvater_carter_discharge(head, crest_width, crest_height, *, channel_width=None, tailwater_head=None,
                                max_submergence: float = DEFAULT_MAX_SUBMERGENCE, units: UnitsLike = "SI"):
    """Discharge over a sharp-crested rectangular weir by the Kindsvater-Carter method.

    Q = Ce (2/3) sqrt(2g) (b + kb) (h + kh)^1.5 with Ce = C2 + C1 h/P; C1, C2
    and kb depend on the contraction ratio b/B
    (:func:`kindsvater_carter_coefficients`), kh = 0.001 m. Without
    ``channel_width`` the crest spans the channel (b/B = 1, no end
    contractions). A tailwater above the crest applies Villemonte's factor.

    Parameters
    ----------
    head : float or ndarray
        Upstream water level above the crest h [length].
    crest_width : float or ndarray
        Crest width b [length].
    crest_height : float or ndarray
        Crest height above the approach bed P [length].
    channel_width : float or ndarray, optional
        Approach channel width B [length]; omit for a full-width weir.
    tailwater_head : float or ndarray, optional
        Downstream water level above the crest [length].
    max_submergence : float
        Largest tailwater/upstream head ratio accepted.
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Discharge Q [length³/s].

    Notes
    -----
    Limits of the calibration (USBR 2001, ch. 7; from memory - verify):
    h/P <= 2.5, h >= 0.03 m, P >= 0.1 m, b >= 0.15 m; outside them the
    relation is extrapolated.

    References
    ----------
    Kindsvater & Carter (1957); USBR (2001), *Water Measurement Manual*, ch. 7.

    Examples
    --------
    >>> from gvflow.structures import kindsvater_carter_discharge
    >>> round(kindsvater_carter_discharge(0.3, 2.0, 0.4), 4)
    0.6416
    """
    u = resolve_units(units)
    h = positive_array(head, "head")
    b, p, c1, c2, kb, kh = _kc_parts(crest_width, crest_height, channel_width, u)
    tw = _tailwater(tailwater_head)
    q = _kc_free(h, b, p, c1, c2, kb, kh, u.g)
    return scalar_or_array(np.asarray(_apply_submergence(q, h, tw, 1.5, max_submergence)))


def kindsvater_carter_head(discharge, crest_width, crest_height, *, channel_width=None, tailwater_head=None,
                           max_submergence: float = DEFAULT_MAX_SUBMERGENCE, units: UnitsLike = "SI"):
    """Upstream head over a Kindsvater-Carter weir for a discharge (inverse of
    :func:`kindsvater_carter_discharge`).

    Returns
    -------
    float or ndarray
        Upstream water level above the crest h [length].

    Examples
    --------
    >>> from gvflow.structures import kindsvater_carter_head
    >>> round(kindsvater_carter_head(0.6416, 2.0, 0.4), 4)
    0.3
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    b, p, c1, c2, kb, kh = _kc_parts(crest_width, crest_height, channel_width, u)
    tw = _tailwater(tailwater_head)
    q, b, p, c1, c2, kb = np.broadcast_arrays(q, b, p, c1, c2, kb)

    def free(h):
        return _kc_free(h, b, p, c1, c2, kb, kh, u.g)

    return scalar_or_array(_head_from_discharge(free, q, tw, 1.5, max_submergence, "Kindsvater-Carter head"))


# ---------------------------------------------------------------------------
# V-notch: Kindsvater-Shen
# ---------------------------------------------------------------------------

def kindsvater_shen_coefficients(notch_angle=90.0, units: UnitsLike = "SI"):
    """Kindsvater-Shen coefficients of a fully contracted V-notch weir.

    Linear interpolation in the published table for notch angles 20° to 100°.

    Parameters
    ----------
    notch_angle : float or ndarray
        Included angle of the notch [degrees], 20 to 100.
    units : "SI", "US" or Units
        Unit system of the returned kh.

    Returns
    -------
    tuple of (float or ndarray)
        ``(ce, kh)``: effective discharge coefficient Ce [-] and head
        correction kh [length].

    References
    ----------
    Shen, J. (1981). *Discharge characteristics of triangular-notch thin-plate
    weirs*. USGS Water-Supply Paper 1617-B; coefficients as tabulated by
    Blevins, R. D. (1984). *Applied Fluid Dynamics Handbook*.

    Examples
    --------
    >>> from gvflow.structures import kindsvater_shen_coefficients
    >>> kindsvater_shen_coefficients(90.0)
    (0.5775, 0.001)
    """
    u = resolve_units(units)
    a = finite_array(notch_angle, "notch_angle")
    if np.any((a < _KS_ANGLE[0]) | (a > _KS_ANGLE[-1])):
        raise InvalidInputError(
            f"notch_angle must lie between 20 and 100 degrees (the range of the Kindsvater-Shen table); "
            f"got {notch_angle!r}"
        )
    ce = np.interp(a, _KS_ANGLE, _KS_CE)
    kh = np.interp(a, _KS_ANGLE, _KS_KH_M) * length_per_metre(u)
    return scalar_or_array(ce), scalar_or_array(kh)


def _vnotch_free(h, ce, kh, tan_half, g):
    return ce * (8.0 / 15.0) * math.sqrt(2.0 * g) * tan_half * (h + kh) ** 2.5


def v_notch_discharge(head, *, notch_angle=90.0, tailwater_head=None,
                      max_submergence: float = DEFAULT_MAX_SUBMERGENCE, units: UnitsLike = "SI"):
    """Discharge over a fully contracted V-notch (triangular) thin-plate weir.

    Kindsvater-Shen: Q = Ce (8/15) sqrt(2g) tan(theta/2) (h + kh)^2.5, with Ce
    and kh from :func:`kindsvater_shen_coefficients`; Villemonte's factor
    (exponent 2.5) for a tailwater above the vertex.

    Parameters
    ----------
    head : float or ndarray
        Upstream water level above the vertex of the notch h [length].
    notch_angle : float
        Included notch angle theta [degrees], 20 to 100.
    tailwater_head : float or ndarray, optional
        Downstream water level above the vertex [length].
    max_submergence : float
        Largest tailwater/upstream head ratio accepted.
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Discharge Q [length³/s].

    References
    ----------
    Shen (1981); USBR (2001), *Water Measurement Manual*, ch. 7.

    Examples
    --------
    >>> from gvflow.structures import v_notch_discharge
    >>> round(v_notch_discharge(0.2), 5)
    0.02471
    """
    u = resolve_units(units)
    h = positive_array(head, "head")
    ce, kh = (np.asarray(v) for v in kindsvater_shen_coefficients(notch_angle, u))
    tan_half = np.tan(np.radians(np.asarray(notch_angle, dtype=float)) / 2.0)
    tw = _tailwater(tailwater_head)
    q = _vnotch_free(h, ce, kh, tan_half, u.g)
    return scalar_or_array(np.asarray(_apply_submergence(q, h, tw, 2.5, max_submergence)))


def v_notch_head(discharge, *, notch_angle=90.0, tailwater_head=None,
                 max_submergence: float = DEFAULT_MAX_SUBMERGENCE, units: UnitsLike = "SI"):
    """Upstream head over a V-notch weir for a discharge (inverse of :func:`v_notch_discharge`).

    Returns
    -------
    float or ndarray
        Upstream water level above the vertex h [length].

    Examples
    --------
    >>> from gvflow.structures import v_notch_head
    >>> round(v_notch_head(0.02471), 4)
    0.2
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    ce, kh = (np.asarray(v) for v in kindsvater_shen_coefficients(notch_angle, u))
    tan_half = np.tan(np.radians(np.asarray(notch_angle, dtype=float)) / 2.0)
    tw = _tailwater(tailwater_head)
    q, ce, kh, tan_half = np.broadcast_arrays(q, ce, kh, tan_half)

    def free(h):
        return _vnotch_free(h, ce, kh, tan_half, u.g)

    return scalar_or_array(_head_from_discharge(free, q, tw, 2.5, max_submergence, "V-notch head"))


# ---------------------------------------------------------------------------
# broad-crested weir
# ---------------------------------------------------------------------------

def _check_modular(h, tw, modular_limit):
    if tw is None:
        return
    lim = _check_limit(modular_limit, "modular_limit")
    s = np.where(tw > 0, tw / h, 0.0)
    if np.any(s > lim):
        raise NoSolutionError(
            f"the broad-crested weir is drowned: tailwater/upstream head ratio {float(np.max(s)):.4g} exceeds "
            f"its modular limit {lim:g}, so the tailwater, not the weir, sets the upstream level; treat the "
            "reach as continuous open-channel flow over the weir"
        )


def _broad_weir_factor(b, cd, g):
    """Q = factor * H1^1.5 for critical flow on the crest: Cd b sqrt(g) (2/3)^1.5."""
    return cd * b * math.sqrt(g) * (2.0 / 3.0) ** 1.5


def broad_crested_weir_discharge(head, crest_width, crest_height, *,
                                 discharge_coefficient=BROAD_CRESTED_COEFFICIENT, approach_section=None,
                                 tailwater_head=None, modular_limit: float = BROAD_CRESTED_MODULAR_LIMIT,
                                 units: UnitsLike = "SI"):
    """Discharge over a broad-crested weir: critical flow on the crest.

    Q = Cd b sqrt(g) (2 H1 / 3)^1.5 = Cd (2/3) sqrt(2g/3) b H1^1.5, where
    H1 = h + V1²/2g is the upstream energy head above the crest. With Cd = 1
    this is the exact critical-flow relation (the crest carries critical
    depth 2 H1 / 3).

    Parameters
    ----------
    head : float or ndarray
        Upstream water level above the crest h [length].
    crest_width : float or ndarray
        Width of the crest across the flow b [length].
    crest_height : float or ndarray
        Crest height above the approach bed P [length].
    discharge_coefficient : float or ndarray
        Cd [-]; default 0.848, the rectangular-profile (square-edged) weir of
        Bos (1989), valid for 0.08 <= H1/L <= 0.33 with L the crest length
        in the flow direction (from memory - verify). Cd = 1 gives the ideal
        critical-flow weir.
    approach_section : Section, optional
        Cross-section of the approach channel; its flow depth is P + h and
        the approach velocity head is included. Without it V1 is neglected
        (H1 = h).
    tailwater_head : float or ndarray, optional
        Downstream water level above the crest [length]. Up to the modular
        limit the discharge is unaffected.
    modular_limit : float
        Largest tailwater/upstream head ratio at which the weir flows free
        (default 0.66, Bos 1989; from memory - verify).
    units : "SI", "US" or Units

    Returns
    -------
    float or ndarray
        Discharge Q [length³/s].

    Raises
    ------
    NoSolutionError
        When the tailwater drowns the weir beyond its modular limit, or the
        approach section is too small to deliver the flow at subcritical speed.

    Notes
    -----
    With an approach section, Q and H1 are solved together: writing
    x = Q / (C h^1.5), x = (1 + k x²)^1.5 with k = (C h^1.5)² / (2 g A1² h);
    the smaller root (subcritical approach) is taken.

    References
    ----------
    Henderson, F. M. (1966). *Open Channel Flow*, ch. 6 (critical flow on the
    crest, exact). Bos, M. G. (1989). *Discharge Measurement Structures*, 3rd
    ed., ILRI Publication 20, §4 (Cd and modular limit; from memory - verify).

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import broad_crested_weir_discharge
    >>> round(broad_crested_weir_discharge(0.5, 3.0, 0.8), 4)
    1.5332
    >>> round(broad_crested_weir_discharge(0.5, 3.0, 0.8, approach_section=gv.Rectangular(width=3.0)), 4)
    1.5714
    """
    u = resolve_units(units)
    h = positive_array(head, "head")
    b = positive_array(crest_width, "crest_width")
    p = _crest_height(crest_height)
    cd = positive_array(discharge_coefficient, "discharge_coefficient")
    tw = _tailwater(tailwater_head)
    _check_modular(h, tw, modular_limit)
    c = _broad_weir_factor(b, cd, u.g)
    q0 = c * h ** 1.5
    if approach_section is None:
        return scalar_or_array(np.asarray(q0))
    h, p, q0 = np.broadcast_arrays(h, p, q0)
    a1 = np.asarray(approach_section.area(p + h), dtype=float)
    k = q0 * q0 / (2.0 * u.g * a1 * a1 * h)
    s_star = 0.5 * (-1.0 + np.sqrt(1.0 + 4.0 / (9.0 * k)))
    x_star = np.sqrt(s_star / k)

    def fun(x):
        return (1.0 + k * x * x) ** 1.5 - x

    if np.any(fun(x_star) > 0):
        raise NoSolutionError(
            f"the approach section {approach_section!r} is too small for the flow over this weir: no "
            "subcritical approach exists at this head; check the approach section and crest height"
        )
    x = bracketed_root(fun, np.ones(k.shape), x_star, rtol=1e-14, what="broad-crested weir discharge")
    return scalar_or_array(q0 * x)


def broad_crested_weir_head(discharge, crest_width, crest_height, *,
                            discharge_coefficient=BROAD_CRESTED_COEFFICIENT, approach_section=None,
                            tailwater_head=None, modular_limit: float = BROAD_CRESTED_MODULAR_LIMIT,
                            units: UnitsLike = "SI"):
    """Upstream head over a broad-crested weir for a discharge (inverse of
    :func:`broad_crested_weir_discharge`).

    The energy head follows directly, H1 = (Q / (Cd b sqrt(g) (2/3)^1.5))^(2/3);
    with an approach section the approach depth y1 = P + h is the subcritical
    root of y1 + Q²/(2 g A1(y1)²) = P + H1.

    Returns
    -------
    float or ndarray
        Upstream water level above the crest h [length].

    Raises
    ------
    NoSolutionError
        When the approach section cannot carry the flow subcritically at this
        energy (P + H1 below the approach channel's minimum specific energy),
        or the tailwater drowns the weir beyond its modular limit.

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.structures import broad_crested_weir_head
    >>> round(broad_crested_weir_head(1.5714, 3.0, 0.8, approach_section=gv.Rectangular(width=3.0)), 4)
    0.5
    """
    u = resolve_units(units)
    q = positive_array(discharge, "discharge")
    b = positive_array(crest_width, "crest_width")
    p = _crest_height(crest_height)
    cd = positive_array(discharge_coefficient, "discharge_coefficient")
    tw = _tailwater(tailwater_head)
    c = _broad_weir_factor(b, cd, u.g)
    energy_head = (q / c) ** (2.0 / 3.0)
    if approach_section is None:
        h = energy_head
    else:
        q, p, energy_head = np.broadcast_arrays(q, p, energy_head)
        yc = np.asarray(critical_depth(approach_section, q, u), dtype=float)
        target = p + energy_head

        def spec_energy(y):
            a = approach_section._geometry(y)[0]
            return y + q * q / (2.0 * u.g * a * a) - target

        if np.any(spec_energy(yc) > 0):
            raise NoSolutionError(
                f"the approach section {approach_section!r} cannot deliver this discharge subcritically at "
                "the energy the weir needs: the approach would choke; check the section and crest height"
            )
        y1 = bracketed_root(spec_energy, yc, np.maximum(target, yc), rtol=1e-14, what="broad-crested weir head")
        h = y1 - p
        if np.any(h <= 0):
            raise NoSolutionError(
                "the approach flow is too fast for the weir to raise the water above its crest; check the "
                "crest height and the approach section"
            )
    _check_modular(h, tw, modular_limit)
    return scalar_or_array(np.asarray(h))
