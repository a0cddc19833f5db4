"""Unit systems.

gvflow does no unit conversion inside the physics. A unit system carries the
two constants that depend on it, the acceleration of gravity ``g`` and the
Manning factor ``k`` (1.0 in SI, 1.486 in US customary units), and the labels
used in reports and plots. Lengths are in the system's length unit throughout.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, ValidationError

from ._validate import invalid_input_from
from .errors import InvalidInputError

__all__ = ["Units", "SI", "US", "resolve_units", "UnitsLike"]


class Units(BaseModel):
    """A consistent system of units.

    Parameters
    ----------
    g : float
        Acceleration of gravity [length/s²].
    manning_k : float
        Manning factor k in V = (k/n) R^(2/3) S^(1/2): 1.0 for metres, 1.486 for feet.
    length : str
        Label of the length unit, used in reports.
    kinematic_viscosity : float
        Kinematic viscosity of the water [length²/s], used by Darcy-Weisbach
        friction. Default: water at 20 °C (1.004e-6 m²/s).
    name : str
        Short name for reports.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Units(g=9.81, manning_k=1.0).g
    9.81
    >>> gv.US.manning_k
    1.486
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    g: float = Field(gt=0, allow_inf_nan=False)
    manning_k: float = Field(gt=0, allow_inf_nan=False)
    length: str = "m"
    kinematic_viscosity: float = Field(default=1.004e-6, gt=0, allow_inf_nan=False)
    name: str = "custom"

    def __init__(self, /, **data):
        try:
            super().__init__(**data)
        except ValidationError as exc:
            raise invalid_input_from(exc, "Units") from None

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
        key = units.strip().upper()
        if key == "SI":
            return SI
        if key in ("US", "USC", "US CUSTOMARY"):
            return US
    raise InvalidInputError(
        f"units must be 'SI', 'US' or a gv.Units(g=..., manning_k=...) object; got {units!r}"
    )
