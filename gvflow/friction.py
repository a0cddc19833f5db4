"""Boundary friction: Manning, Chezy and Darcy-Weisbach resistance.

A roughness object states the resistance law and its coefficient; the
functions :func:`conveyance` and :func:`friction_slope` turn it into the
friction slope Sf used by uniform flow and by the gradually varied flow
equation:

* Manning: Sf = (n Q / (k A R^(2/3)))², k = 1 (SI) or 1.486 (US customary)
  (Chow 1959, *Open-Channel Hydraulics*, eq. 5-6).
* Chezy: Sf = Q² / (C² A² R) (Chow 1959, eq. 5-1).
* Darcy-Weisbach: Sf = f Q² / (8 g R A²), f from the Colebrook-White equation
  on the relative roughness ks/(4R) and Reynolds number 4 R V / nu
  (Colebrook 1939; French 1985, *Open-Channel Hydraulics*, §4.2).
"""

from __future__ import annotations

import math
from typing import Annotated, ClassVar, Literal, Union

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, ValidationError

from ._validate import invalid_input_from, positive_array, scalar_or_array
from .errors import ConvergenceError, InvalidInputError
from .units import UnitsLike, resolve_units

__all__ = [
    "Manning",
    "Chezy",
    "DarcyWeisbach",
    "AnyRoughness",
    "as_roughness",
    "conveyance",
    "friction_slope",
    "colebrook_friction_factor",
]

KIND_MANNING = 0
KIND_CHEZY = 1
KIND_DARCY = 2


class _Roughness(BaseModel):
    model_config = ConfigDict(frozen=True, extra="forbid")
    _value_field: ClassVar[str] = "n"

    def __init__(self, value: float | None = None, /, **data):
        if value is not None:
            data[type(self)._value_field] = value
        try:
            super().__init__(**data)
        except ValidationError as exc:
            raise invalid_input_from(exc, type(self).__name__) from None

    def kernel_spec(self) -> tuple[int, float]:  # pragma: no cover - abstract
        """(law code, coefficient) for the compiled kernels."""
        raise NotImplementedError

    def scaled(self, factor: float):
        """The same law with its resistance multiplied by ``factor`` (>1 is rougher)."""
        raise NotImplementedError  # pragma: no cover

    def __str__(self) -> str:
        return repr(self)


class Manning(_Roughness):
    """Manning's roughness coefficient n [s/m^(1/3), used with k in US units].

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Manning(0.015) == gv.Manning(n=0.015)
    True
    """

    law: Literal["manning"] = "manning"
    n: Annotated[float, Field(gt=0, allow_inf_nan=False)]

    def kernel_spec(self):
        return (KIND_MANNING, self.n)

    def scaled(self, factor):
        return Manning(self.n * factor)

    def __repr__(self):
        return f"Manning(n={self.n:g})"


class Chezy(_Roughness):
    """Chezy coefficient C [length^(1/2)/s] in the chosen unit system (larger is smoother).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.Chezy(55.0).C
    55.0
    """

    _value_field: ClassVar[str] = "C"
    law: Literal["chezy"] = "chezy"
    C: Annotated[float, Field(gt=0, allow_inf_nan=False)]

    def kernel_spec(self):
        return (KIND_CHEZY, self.C)

    def scaled(self, factor):
        # Sf scales with 1/C²; "factor" multiplies the resistance like n does.
        return Chezy(self.C / factor)

    def __repr__(self):
        return f"Chezy(C={self.C:g})"


class DarcyWeisbach(_Roughness):
    """Darcy-Weisbach friction with an equivalent sand roughness ks [length].

    The friction factor comes from Colebrook-White at the flow's Reynolds
    number; the kinematic viscosity is the unit system's (water at 20 °C by
    default; pass ``gv.Units(..., kinematic_viscosity=...)`` for another fluid).

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.DarcyWeisbach(0.0015).roughness_height
    0.0015
    """

    _value_field: ClassVar[str] = "roughness_height"
    law: Literal["darcy_weisbach"] = "darcy_weisbach"
    roughness_height: Annotated[float, Field(gt=0, allow_inf_nan=False)]

    def kernel_spec(self):
        return (KIND_DARCY, self.roughness_height)

    def scaled(self, factor):
        return DarcyWeisbach(self.roughness_height * factor)

    def __repr__(self):
        return f"DarcyWeisbach(roughness_height={self.roughness_height:g})"


AnyRoughness = Annotated[Union[Manning, Chezy, DarcyWeisbach], Field(discriminator="law")]


def as_roughness(roughness) -> Manning | Chezy | DarcyWeisbach:
    """Accept a float (read as Manning's n) or a roughness object."""
    if isinstance(roughness, (Manning, Chezy, DarcyWeisbach)):
        return roughness
    if isinstance(roughness, (int, float, np.floating, np.integer)) and not isinstance(roughness, bool):
        v = float(roughness)
        if not math.isfinite(v) or v <= 0:
            raise InvalidInputError(f"roughness (Manning's n) must be finite and positive; got {roughness!r}")
        return Manning(v)
    raise InvalidInputError(
        "roughness must be a float (Manning's n), gv.Manning(n), gv.Chezy(C) or "
        f"gv.DarcyWeisbach(ks); got {roughness!r}"
    )


def colebrook_friction_factor(reynolds, relative_roughness, *, tol: float = 1e-12, max_iter: int = 50):
    """Darcy friction factor f from the Colebrook-White equation.

    Solves 1/sqrt(f) = -2 log10(eps/3.7 + 2.51/(Re sqrt(f))) by Newton's method
    on x = 1/sqrt(f), starting from the Swamee-Jain explicit estimate. Below
    Re = 2000 the laminar value f = 64/Re is returned.

    Parameters
    ----------
    reynolds : float or ndarray
        Reynolds number based on the hydraulic diameter 4R [-].
    relative_roughness : float or ndarray
        ks / (4R) [-].

    Returns
    -------
    float or ndarray
        Friction factor f [-].

    References
    ----------
    Colebrook, C. F. (1939). Turbulent flow in pipes. J. Inst. Civil Eng. 11(4).
    Swamee, P. K. & Jain, A. K. (1976). J. Hydraulics Div. ASCE 102(5).

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.colebrook_friction_factor(1e5, 1e-4), 5)
    0.01852
    """
    re = positive_array(reynolds, "reynolds")
    eps = positive_array(relative_roughness, "relative_roughness", allow_zero=True)
    re, eps = np.broadcast_arrays(re, eps)
    a = eps / 3.7
    b = 2.51 / np.maximum(re, 1.0)
    # Swamee-Jain start, then Newton on g(x) = x + 2 log10(a + b x).
    x = -2.0 * np.log10(a + 5.74 / np.maximum(re, 1.0) ** 0.9)
    ln10 = math.log(10.0)
    for it in range(max_iter):
        inner = a + b * x
        g = x + 2.0 * np.log10(inner)
        dg = 1.0 + 2.0 * b / (inner * ln10)
        step = g / dg
        x = x - step
        if np.all(np.abs(step) <= tol * np.abs(x)):
            break
    else:
        raise ConvergenceError("Colebrook-White iteration did not converge", iterations=max_iter,
                               residual=float(np.max(np.abs(step))), last=float(np.ravel(x)[0]))
    f = 1.0 / (x * x)
    f = np.where(re < 2000.0, 64.0 / re, f)
    return scalar_or_array(f)


def _kfactor(section, depth, roughness, units, discharge):
    """Conveyance K with Q = K sqrt(Sf), on validated arrays."""
    a, p = section._geometry(depth)[:2]
    r = a / p
    if isinstance(roughness, Manning):
        return units.manning_k / roughness.n * a * r ** (2.0 / 3.0)
    if isinstance(roughness, Chezy):
        return roughness.C * a * np.sqrt(r)
    if discharge is None:
        raise InvalidInputError("Darcy-Weisbach conveyance depends on the discharge; pass discharge=")
    v = discharge / a
    re = 4.0 * r * np.abs(v) / units.kinematic_viscosity
    f = np.asarray(colebrook_friction_factor(np.maximum(re, 1e-300), roughness.roughness_height / (4.0 * r)))
    return np.sqrt(8.0 * units.g / f) * a * np.sqrt(r)


def conveyance(section, depth, roughness, units: UnitsLike = "SI", discharge=None):
    """Conveyance K [length³/s] of a section at a depth, so that Q = K sqrt(Sf).

    Parameters
    ----------
    section : Section
        Cross-section.
    depth : float or ndarray
        Flow depth [length].
    roughness : float, Manning, Chezy or DarcyWeisbach
        Resistance law; a float is Manning's n.
    units : "SI", "US" or Units
        Unit system (gives the Manning factor k and g).
    discharge : float or ndarray, optional
        Needed only for Darcy-Weisbach, whose friction factor depends on the
        Reynolds number [length³/s].

    Notes
    -----
    Manning K = (k/n) A R^(2/3); Chezy K = C A R^(1/2) (Chow 1959, §6-2);
    Darcy-Weisbach K = sqrt(8g/f) A R^(1/2).

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.conveyance(gv.Rectangular(width=2.0), 1.0, 0.013), 4)
    96.917
    """
    u = resolve_units(units)
    rough = as_roughness(roughness)
    y = section._depth(depth)
    q = None if discharge is None else positive_array(discharge, "discharge")
    return scalar_or_array(np.asarray(_kfactor(section, y, rough, u, q)))


def friction_slope(section, discharge, depth, roughness, units: UnitsLike = "SI"):
    """Friction slope Sf [-] of a flow ``discharge`` at ``depth``: Sf = (Q/K)².

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.friction_slope(gv.Rectangular(width=2.0), 2.0, 1.0, 0.013), 8)
    0.00042585
    """
    u = resolve_units(units)
    rough = as_roughness(roughness)
    y = section._depth(depth)
    q = positive_array(discharge, "discharge")
    k = _kfactor(section, y, rough, u, q)
    return scalar_or_array(np.asarray((q / k) ** 2))
