"""Unit systems.

gvflow does no unit conversion inside the physics. A unit system carries the
two constants that depend on it, the acceleration of gravity ``g`` and the
Manning factor ``k`` (1.0 in SI, 1.486 in US customary units), and the labels
used in reports and plots. Lengths are in the system's length unit throughout.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator, model_validator

from ._validate import OwnValidationErrors, invalid_input_from
from ._warn import warn
from .errors import InvalidInputError

__all__ = ["Units", "SI", "US", "resolve_units", "UnitsLike"]


#: Gravity ranges [length/s²] that tell the length unit when ``Units(length=...)`` is omitted: Earth's
#: gravity is 9.78-9.83 m/s² (32.09-32.26 ft/s²) from equator to pole (from memory); the ranges also
#: admit the rounded 10 m/s² and 32 ft/s².
_LENGTH_FROM_G = {"m": (9.5, 10.1), "ft": (31.0, 33.0)}


#: Kinematic viscosity of water at 20 °C [m²/s] (from memory).
_WATER_NU_M2S = 1.004e-6
#: Standard gravity [m/s²] (CGPM 1901, exact) and the international foot [m] (1959, exact).
_G_STANDARD = 9.80665
_FOOT = 0.3048
_METRE_LABELS = ("m", "metre", "meter", "metres", "meters")
_FOOT_LABELS = ("ft", "foot", "feet")


def _length_per_metre(label: str, g: float) -> float:
    label = label.strip().lower()
    if label in _METRE_LABELS:
        return 1.0
    if label in _FOOT_LABELS:
        return 1.0 / _FOOT
    return g / _G_STANDARD


#: Deepest water accepted anywhere [m] (ten kilometres: deeper than any channel or sea); see
#: :mod:`gvflow._plausible` for the other bounds of what is computed.
MAX_DEPTH_M = 1.0e4


class Units(OwnValidationErrors, BaseModel):
    """A consistent system of units.

    Parameters
    ----------
    g : float
        Acceleration of gravity [length/s²].
    manning_k : float
        Manning factor k in V = (k/n) R^(2/3) S^(1/2): 1.0 for metres, 1.486 for feet.
    length : str, optional
        Label of the length unit, used in reports and to express the
        structures' published metre-valued constants (weir head and width
        corrections) in this system. When omitted it is taken from ``g``:
        "m" for g within 9.5-10.1 (metres per second squared), "ft" for g
        within 31-33 (feet); for any other ``g`` give it (e.g. ``length="cm"``).
    kinematic_viscosity : float
        Kinematic viscosity of the water [length²/s], used by Darcy-Weisbach
        friction. Default: water at 20 °C (1.004e-6 m²/s), in the system's
        length unit (1.081e-5 ft²/s in feet).
    name : str
        Short name for reports.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Units(g=9.81, manning_k=1.0).g
    9.81
    >>> gv.US.manning_k
    1.486
    >>> gv.Units(g=32.2, manning_k=1.49).length
    'ft'
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    g: float = Field(gt=0, allow_inf_nan=False)
    manning_k: float = Field(gt=0, allow_inf_nan=False)
    length: str = Field(default=None, validate_default=False)
    kinematic_viscosity: float = Field(default=None, gt=0, allow_inf_nan=False, validate_default=False)
    name: str = "custom"

    def __init__(self, /, **data):
        try:
            super().__init__(**data)
        except ValidationError as exc:
            raise invalid_input_from(exc, "Units") from None

    @model_validator(mode="before")
    @classmethod
    def _length_from_gravity(cls, data):
        if not isinstance(data, dict):
            return data
        try:
            g = float(data.get("g"))
        except (TypeError, ValueError):
            return data  # the field check reports it
        if data.get("length") is None:
            for label, (lo, hi) in _LENGTH_FROM_G.items():
                if lo <= g <= hi:
                    data = {**data, "length": label}
                    break
            else:
                raise ValueError(f"length is required for g = {g:g}: it cannot be told from g (9.5-10.1 means "
                                 "metres, 31-33 feet); give length='m', 'ft' or the name of your length unit")
        if data.get("kinematic_viscosity") is None and isinstance(data["length"], str):
            # the default is water's at 20 °C in m²/s; express it in the system's length unit
            per_m = _length_per_metre(data["length"], g)
            data = {**data, "kinematic_viscosity": _WATER_NU_M2S * per_m * per_m}
        return data

    @model_validator(mode="after")
    def _warn_mixed(self):
        label = self.length.strip().lower()
        known = label in _METRE_LABELS or label in _FOOT_LABELS
        if not known:
            return self
        lo, hi = _LENGTH_FROM_G["m" if label in _METRE_LABELS else "ft"]
        k_expected = self.length_per_metre ** (1.0 / 3.0)
        odd = []
        if not lo <= self.g <= hi:
            odd.append(f"g = {self.g:g} {self.length}/s² (Earth's gravity lies in {lo:g}-{hi:g})")
        if abs(self.manning_k / k_expected - 1.0) > 0.03:
            odd.append(f"manning_k = {self.manning_k:g} (about {k_expected:.3f} in {self.length})")
        if odd:
            warn(f"Units: {' and '.join(odd)}: this does not fit the length unit {self.length!r}; check for "
                 "mixed units, or give the right length=")
        return self

    @property
    def length_per_metre(self) -> float:
        """Length units per metre: 1 for metres, 3.28084 for feet; for another label, inferred from gravity
        as g / 9.80665 m/s² (standard gravity). Published metre-valued constants are scaled by it."""
        return _length_per_metre(self.length, self.g)

    @field_validator("length")
    @classmethod
    def _length_named(cls, v):
        if not isinstance(v, str) or not v.strip():
            raise ValueError("must name the length unit ('m', 'ft', ...)")
        return v

    @property
    def discharge(self) -> str:
        """Label of the discharge unit."""
        return f"{self.length}³/s"

    @property
    def velocity(self) -> str:
        """Label of the velocity unit."""
        return f"{self.length}/s"

    def __repr__(self) -> str:
        return f"Units(name={self.name!r}, g={self.g}, manning_k={self.manning_k}, length={self.length!r})"


# Standard gravity (CGPM 1901, exact) and its value in feet; Manning factor
# 1.486 is the trade's value for US customary units (Chow 1959, eq. 5-6).
SI = Units(g=9.80665, manning_k=1.0, length="m", kinematic_viscosity=1.004e-6, name="SI")
US = Units(g=32.174, manning_k=1.486, length="ft", kinematic_viscosity=1.081e-5, name="US")

UnitsLike = Literal["SI", "US"] | Units
_BY_NAME = {"SI": SI, "US": US}


def resolve_units(units: UnitsLike | str = "SI") -> Units:
    """Return the :class:`Units` object for ``"SI"``, ``"US"`` or a ``Units`` instance.

    Raises
    ------
    InvalidInputError
        For any other value.
    """
    if isinstance(units, Units):
        return units
    if isinstance(units, str):
        if units in _BY_NAME:  # (the usual spellings, without the string work)
            return _BY_NAME[units]
        key = units.strip().upper()
        if key == "SI":
            return SI
        if key in ("US", "USC", "US CUSTOMARY"):
            return US
    raise InvalidInputError(
        f"units must be 'SI', 'US' or a gv.Units(g=..., manning_k=...) object; got {units!r}"
    )
