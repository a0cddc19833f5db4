"""Hydraulic jump relations: Belanger's ratio, energy loss, length and type.

The jump itself is located by the reach solver where the specific forces of
the supercritical and subcritical profiles balance; this module holds the
relations that describe a jump once its sequent depths are known.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import coefficients
from ._validate import positive_array, scalar_or_array
from .errors import InvalidInputError

__all__ = ["Jump", "belanger_ratio", "jump_energy_loss_rectangular", "jump_length", "jump_type",
           "JUMP_TYPES"]

#: Jump types by upstream Froude number (USBR classification as given by
#: Chow 1959, *Open-Channel Hydraulics*, §15-2; bounds read in Hicks, *Civil
#: Engineering Formulas*, fig. 12.17): (lower bound, name).
JUMP_TYPES = tuple(zip(coefficients.value("jump.types"), ("undular", "weak", "oscillating", "steady", "strong"),
                       strict=True))
#: Jump length curve L/y2 against F1 (Peterka 1958, fig. 7; from memory - verify): (F1 points, L/y2 points).
JUMP_LENGTH_CURVE = coefficients.value("jump.length_curve")


def belanger_ratio(froude):
    """Sequent-depth ratio y2/y1 = (sqrt(1 + 8 F1²) - 1)/2 of a jump in a rectangular channel [-].

    Belanger (1828), as given by Chow 1959, eq. 3-23.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.belanger_ratio(10 ** 0.5), 12)  # F1² = 10
    4.0
    """
    f = positive_array(froude, "froude")
    return scalar_or_array((np.sqrt(1.0 + 8.0 * f * f) - 1.0) / 2.0)


def jump_energy_loss_rectangular(upstream_depth, downstream_depth):
    """Head loss in a jump in a rectangular channel, (y2 - y1)³ / (4 y1 y2) [length].

    Chow 1959, eq. 15-2. ``upstream_depth`` (supercritical) must not exceed
    ``downstream_depth`` (subcritical).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.jump_energy_loss_rectangular(1.0, 4.0)  # 27/16 y1
    1.6875
    """
    y1, y2 = _sequent_pair(upstream_depth, downstream_depth)
    return scalar_or_array((y2 - y1) ** 3 / (4.0 * y1 * y2))


def _sequent_pair(upstream_depth, downstream_depth):
    """Checked (y1, y2): positive, and the supercritical depth y1 not above the subcritical y2."""
    y1 = positive_array(upstream_depth, "upstream_depth")
    y2 = positive_array(downstream_depth, "downstream_depth")
    bad = np.broadcast_to(y1 > y2, np.broadcast(y1, y2).shape)
    if np.any(bad):
        a = float(np.broadcast_to(y1, bad.shape)[bad].flat[0])
        b = float(np.broadcast_to(y2, bad.shape)[bad].flat[0])
        raise InvalidInputError(
            f"upstream_depth {a:g} is above downstream_depth {b:g}: a jump rises from the supercritical depth "
            "(upstream_depth) to the subcritical one (downstream_depth); check their order")
    return y1, y2


def _jump_froude(froude):
    """Checked upstream Froude number: positive and at least 1 (no jump forms in subcritical flow)."""
    f = positive_array(froude, "froude")
    if np.any(f < 1.0):
        raise InvalidInputError(
            f"froude must be at least 1 (the upstream Froude number of a jump is supercritical); got "
            f"{float(np.min(f)):g}: give the Froude number of the supercritical depth")
    return f


def jump_length(upstream_depth, downstream_depth, froude):
    """Estimated length of a jump on a horizontal apron [length].

    L ≈ 6.1 y2 on the plateau 4.5 < F1 < 13 of the USBR curve, falling
    linearly to 5.0 y2 at F1 = 3 and to 4.0 y2 at F1 = 1.7 below it (Peterka
    1958, *Hydraulic Design of Stilling Basins and Energy Dissipators*, USBR
    Engineering Monograph 25, fig. 7; curve read from memory). An estimate
    for sizing a stilling reach, not a precise value: published curves differ
    by about 10 %; a stored text gives L = 6 y2 for 4 < F1 < 20 (see
    :mod:`gvflow.coefficients`, ``jump.length_curve``). Raises InvalidInputError when
    ``upstream_depth`` exceeds ``downstream_depth`` or ``froude`` is below 1.

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.jump_length(0.2, 1.5, 6.0), 2)
    9.15
    """
    _, y2 = _sequent_pair(upstream_depth, downstream_depth)
    f = _jump_froude(froude)
    return scalar_or_array(_length_ratio(f) * y2)


def _length_ratio(froude):
    """L / y2 of :func:`jump_length` at upstream Froude number ``froude`` (checked by the caller)."""
    return np.interp(froude, *JUMP_LENGTH_CURVE)


def jump_type(froude):
    """Type of jump by upstream Froude number: undular, weak, oscillating, steady or strong.

    Ranges 1-1.7, 1.7-2.5, 2.5-4.5, 4.5-9, above 9 (USBR, as given by Chow
    1959, §15-2). ``froude`` must be at least 1.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.jump_type(6.0)
    'steady'
    """
    f = float(_jump_froude(froude))
    name = JUMP_TYPES[0][1]
    for lower, label in JUMP_TYPES:
        if f >= lower:
            name = label
    return name


@dataclass(frozen=True)
class Jump:
    """A hydraulic jump located on a reach.

    Attributes
    ----------
    x : float
        Location [length from the upstream end of the reach], where the
        specific forces of the two profiles balance (the jump treated as abrupt).
    upstream_depth : float
        Supercritical sequent depth y1 [length].
    downstream_depth : float
        Subcritical sequent depth y2 [length].
    froude : float
        Upstream Froude number F1 [-].
    energy_loss : float
        Loss of specific energy across the jump, E1 - E2 [length].
    length : float
        Estimated length of the roller (see :func:`jump_length`) [length].
    kind : str
        Jump type by F1 (see :func:`jump_type`).
    segment : int
        Index of the segment holding the jump.
    where : str
        "in segment" or "at a segment junction".
    """

    x: float
    upstream_depth: float
    downstream_depth: float
    froude: float
    energy_loss: float
    length: float
    kind: str
    segment: int
    where: str = "in segment"

    def __repr__(self):
        return (f"Jump(x={self.x:.3f}, upstream_depth={self.upstream_depth:.4f}, "
                f"downstream_depth={self.downstream_depth:.4f}, froude={self.froude:.2f}, kind={self.kind!r})")
