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
from collections.abc import Callable
from dataclasses import dataclass
from typing import Annotated, ClassVar, Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, ValidationError

from ._core.codes import pass_cost
from ._core.records import Channel, channel, fluid
from ._engine import core
from ._validate import OwnValidationErrors, invalid_input_from, positive_array, scalar_or_array
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
    "composite_manning",
    "COMPOSITE_ROUGHNESS_METHODS",
    "CompositeMethod",
]

#: smallest Manning's n accepted, an input guard rather than a coefficient: about a hundredth of the smoothest
#: real surfaces (glass, n 0.009 to 0.013 after Chow 1959, table 5-6; registry entry friction.manning_n_glass)
MANNING_N_MIN = 1e-4

KIND_MANNING = 0
KIND_CHEZY = 1
KIND_DARCY = 2


class _Roughness(OwnValidationErrors, BaseModel):
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
    n: Annotated[float, Field(ge=MANNING_N_MIN, allow_inf_nan=False)]

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


AnyRoughness = Annotated[Manning | Chezy | DarcyWeisbach, Field(discriminator="law")]


def check_manning_n(n, name: str = "roughness (Manning's n)") -> None:
    """Raise for values of Manning's n below :data:`MANNING_N_MIN` (no real surface is that smooth, and the
    conveyance 1/n would overflow long before n reaches zero)."""
    low = np.asarray(n, dtype=float) < MANNING_N_MIN
    if np.any(low):
        v = float(np.asarray(n, dtype=float)[low].flat[0]) if low.ndim else float(n)
        raise InvalidInputError(f"{name} = {v:.6g} is below {MANNING_N_MIN:g}: far smoother than any real surface "
                                "(smooth glass and plastic are about 0.009); check the value")


def as_roughness(roughness) -> Manning | Chezy | DarcyWeisbach:
    """Accept a float (read as Manning's n) or a roughness object."""
    if isinstance(roughness, (Manning, Chezy, DarcyWeisbach)):
        return roughness
    if isinstance(roughness, (int, float, np.floating, np.integer)) and not isinstance(roughness, bool):
        v = float(roughness)
        if not math.isfinite(v) or v <= 0:
            raise InvalidInputError(f"roughness (Manning's n) must be finite and positive; got {roughness!r}")
        check_manning_n(v)
        return Manning(v)
    raise InvalidInputError(
        "roughness must be a float (Manning's n), gv.Manning(n), gv.Chezy(C) or "
        f"gv.DarcyWeisbach(ks); got {roughness!r}"
    )


def section_roughness(section, roughness):
    """The roughness a call uses: the given one, or None for a section that carries its own (surveyed).

    Raises
    ------
    InvalidInputError
        When a surveyed section is given a roughness too, or a geometric section none.
    """
    if hasattr(type(section), "core_roughness"):  # (on the class: a model's own lookup of a missing name is slow)
        if roughness is not None:
            raise InvalidInputError(f"roughness: {section!r} carries its own roughness per zone; leave roughness "
                                    "out (None), or change the section's roughness")
        return None
    if roughness is None:
        raise InvalidInputError(f"roughness is required for {section!r}: give Manning's n (a float), "
                                "gv.Manning(n), gv.Chezy(C) or gv.DarcyWeisbach(ks)")
    return as_roughness(roughness)


def colebrook_friction_factor(reynolds, relative_roughness):
    """Darcy friction factor f from the Colebrook-White equation.

    Solves 1/sqrt(f) = -2 log10(eps/3.7 + 2.51/(Re sqrt(f))) by Newton's method
    on x = 1/sqrt(f), starting from the Swamee-Jain explicit estimate, to 1e-13
    relative. Below Re = 2000 the laminar value f = 64/Re is returned (the
    pipe's; open channels run about 50 % higher, so laminar results are
    approximate). The relation itself lives in :func:`gvflow._core.resistance.colebrook`.

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

    Raises
    ------
    ConvergenceError
        If the iteration does not converge (it converges in a few steps for any valid input).

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
    out = np.empty(re.size)
    core("arrays", re.size).colebrook_many(np.ascontiguousarray(re.reshape(-1)),
                                           np.ascontiguousarray(eps.reshape(-1)), out)
    if not np.all(np.isfinite(out)):
        raise ConvergenceError("Colebrook-White iteration did not converge", iterations=50)
    return scalar_or_array(out.reshape(re.shape))


def _kfactor(section, depth, roughness, units, discharge):
    """Conveyance K with Q = K sqrt(Sf), on validated arrays, from the physics core."""
    if isinstance(roughness, DarcyWeisbach) and discharge is None:
        raise InvalidInputError("Darcy-Weisbach conveyance depends on the discharge; pass discharge=")
    y, q = np.broadcast_arrays(np.asarray(depth, dtype=float), 1.0 if discharge is None else discharge)
    flat_y = np.ascontiguousarray(y.reshape(-1))
    out = np.empty(flat_y.size)
    ch = core_channel(section, roughness)
    with np.errstate(over="ignore"):
        core("arrays", flat_y.size * pass_cost(ch.kind, ch.par)).conveyance_many(
            ch, fluid(units), np.ascontiguousarray(q.reshape(-1), dtype=float), flat_y, out)
    if not np.all(np.isfinite(out)):
        i = int(np.flatnonzero(~np.isfinite(out))[0])
        if out[i] == np.inf:
            raise InvalidInputError(f"depth: the conveyance at depth {flat_y[i]:.4g} is beyond the range of floating "
                                    "point numbers; check the depth and its unit")
        raise ConvergenceError("Colebrook-White iteration did not converge", iterations=50)
    return out.reshape(y.shape)


def core_channel(section, roughness=None) -> Channel:
    """The :class:`~gvflow._core.records.Channel` record of a section with its roughness.

    Without a roughness (for relations that do not depend on it: critical flow, specific
    energy and force) the record carries a placeholder Manning's n of 1.
    """
    kind, par = section.core_params()
    if hasattr(section, "core_roughness"):  # a surveyed section carries one roughness per zone
        return channel(kind, par, *section.core_roughness())
    law, value = (KIND_MANNING, 1.0) if roughness is None else roughness.kernel_spec()
    return channel(kind, par, law, value)


def conveyance(section, depth, roughness=None, units: UnitsLike = "SI", discharge=None):
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
    rough = section_roughness(section, roughness)
    y = section._depth(depth)
    q = None if discharge is None else positive_array(discharge, "discharge")
    return scalar_or_array(np.asarray(_kfactor(section, y, rough, u, q)))


def friction_slope(section, discharge, depth, roughness=None, units: UnitsLike = "SI"):
    """Friction slope Sf [-] of a flow ``discharge`` at ``depth``: Sf = (Q/K)².

    Examples
    --------
    >>> import gvflow as gv
    >>> round(gv.friction_slope(gv.Rectangular(width=2.0), 2.0, 1.0, 0.013), 8)
    0.00042585
    """
    u = resolve_units(units)
    rough = section_roughness(section, roughness)
    y = section._depth(depth)
    q = positive_array(discharge, "discharge")
    k = _kfactor(section, y, rough, u, q)
    return scalar_or_array(np.asarray((q / k) ** 2))


# -- composite roughness ---------------------------------------------------
#
# A section lined with different materials along its wetted perimeter (a
# concrete bed with grassed banks, say) is given one equivalent Manning's n.
# Each method assumes something different about how the flow area divides
# among the linings; Chow (1959, *Open-Channel Hydraulics*, ch. 6) gives all
# three. n_i and P_i are the roughness and wetted perimeter of lining i,
# P = sum P_i, R = A/P.


def _n_horton_einstein(p, n, r, p_total):
    # Equal mean velocity in every sub-area: n = (sum P_i n_i^1.5 / P)^(2/3).
    return (np.sum(p * n ** 1.5, axis=-1) / p_total) ** (2.0 / 3.0)


def _n_pavlovskii(p, n, r, p_total):
    # Total resisting force is the sum of the sub-area forces: n = (sum P_i n_i² / P)^(1/2).
    return np.sqrt(np.sum(p * n * n, axis=-1) / p_total)


def _n_lotter(p, n, r, p_total):
    # Total discharge is the sum of the sub-area discharges:
    # n = P R^(5/3) / sum(P_i R_i^(5/3) / n_i), with A = sum P_i R_i.
    r_total = np.sum(p * r, axis=-1) / p_total
    return p_total * r_total ** (5.0 / 3.0) / np.sum(p * r ** (5.0 / 3.0) / n, axis=-1)


@dataclass(frozen=True)
class CompositeMethod:
    """One composite-roughness method: its function, what it needs and where it comes from."""

    function: Callable
    needs_hydraulic_radii: bool
    assumption: str
    source: str


#: Registry of composite-roughness methods, keyed by the ``method=`` name.
COMPOSITE_ROUGHNESS_METHODS: dict[str, CompositeMethod] = {
    "horton_einstein": CompositeMethod(
        _n_horton_einstein, False, "equal mean velocity in every sub-area",
        "Horton (1933); Einstein (1934); as given in Chow 1959, ch. 6"),
    "pavlovskii": CompositeMethod(
        _n_pavlovskii, False, "total resisting force is the sum of the sub-area forces",
        "Pavlovskii (1931); Einstein and Banks (1950); as given in Chow 1959, ch. 6"),
    "lotter": CompositeMethod(
        _n_lotter, True, "total discharge is the sum of the sub-area discharges",
        "Lotter (1933); as given in Chow 1959, ch. 6"),
}
COMPOSITE_ROUGHNESS_METHODS["einstein_banks"] = COMPOSITE_ROUGHNESS_METHODS["pavlovskii"]


def _roughness_values(roughnesses) -> np.ndarray:
    if isinstance(roughnesses, (list, tuple)):
        vals = []
        for r in roughnesses:
            if isinstance(r, (Chezy, DarcyWeisbach)):
                raise InvalidInputError(
                    f"roughnesses must be Manning's n values (floats or gv.Manning); got {r!r}")
            vals.append(r.n if isinstance(r, Manning) else r)
        roughnesses = vals
    return positive_array(roughnesses, "roughnesses")


def composite_manning(wetted_perimeters, roughnesses, method: str = "horton_einstein",
                      hydraulic_radii=None):
    """Equivalent Manning's n of a section lined with different materials.

    Parameters
    ----------
    wetted_perimeters : array_like
        Wetted perimeter P_i of each lining [length], materials along the
        last axis (leading axes, e.g. depths, broadcast). A lining that is
        dry at this depth may have P_i = 0; the total must be positive.
    roughnesses : array_like
        Manning's n_i of each lining (floats or ``gv.Manning``), broadcast
        against ``wetted_perimeters``.
    method : str
        ``"horton_einstein"`` (default; equal velocity in every sub-area),
        ``"pavlovskii"`` (alias ``"einstein_banks"``; the total resisting
        force is the sum of the sub-area forces) or ``"lotter"`` (the total
        discharge is the sum of the sub-area discharges; needs
        ``hydraulic_radii``). See :data:`COMPOSITE_ROUGHNESS_METHODS`.
    hydraulic_radii : array_like, optional
        Hydraulic radius R_i = A_i/P_i of the sub-area belonging to each lining
        [length]; required by ``"lotter"``, ignored by the others.

    Returns
    -------
    float or ndarray
        Equivalent Manning's n [same unit as n_i]; the last axis is reduced.

    Raises
    ------
    InvalidInputError
        For an unknown method, a negative, NaN or infinite perimeter, a
        non-positive roughness, no wetted perimeter at all, or a missing
        ``hydraulic_radii`` for the Lotter method.

    Notes
    -----
    With P = sum P_i and R = A/P:

    * Horton-Einstein: n = (sum P_i n_i^1.5 / P)^(2/3)
    * Pavlovskii / Einstein-Banks: n = (sum P_i n_i² / P)^(1/2)
    * Lotter: n = P R^(5/3) / sum(P_i R_i^(5/3) / n_i), A = sum P_i R_i

    The unit factor k of Manning's equation cancels, so the result holds in
    SI and US customary units alike.

    References
    ----------
    Chow, V. T. (1959). *Open-Channel Hydraulics*. McGraw-Hill, ch. 6
    (equivalent roughness of composite sections).
    Horton, R. E. (1933). Separate roughness coefficients for channel bottom
    and sides. *Engineering News-Record* 111(22).
    Einstein, H. A. (1934). Der hydraulische oder Profil-Radius.
    *Schweizerische Bauzeitung* 103(8).
    Einstein, H. A. and Banks, R. B. (1950). Fluid resistance of composite
    roughness. *Transactions, American Geophysical Union* 31(4).

    Examples
    --------
    A 3 m wide rectangular channel flowing 1.5 m deep with a concrete bed
    (n = 0.013) and rubble walls (n = 0.025):

    >>> import gvflow as gv
    >>> round(gv.composite_manning([3.0, 3.0], [0.013, 0.025]), 5)
    0.01947
    >>> round(gv.composite_manning([3.0, 3.0], [0.013, 0.025], method="pavlovskii"), 5)
    0.01992
    """
    try:
        entry = COMPOSITE_ROUGHNESS_METHODS[method]
    except (KeyError, TypeError):
        choices = ", ".join(repr(k) for k in COMPOSITE_ROUGHNESS_METHODS)
        raise InvalidInputError(
            f"composite roughness method {method!r} is unknown; valid choices are {choices}") from None
    p = positive_array(wetted_perimeters, "wetted_perimeters", allow_zero=True)
    n = _roughness_values(roughnesses)
    if entry.needs_hydraulic_radii:
        if hydraulic_radii is None:
            raise InvalidInputError(
                f"method {method!r} needs hydraulic_radii (R_i = A_i/P_i of each lining's sub-area)")
        r = positive_array(hydraulic_radii, "hydraulic_radii")
    else:
        r = np.ones(())
    if p.ndim == 0 or p.shape[-1] == 0:
        raise InvalidInputError("wetted_perimeters must list at least one lining (materials on the last axis)")
    try:
        p, n, r = np.broadcast_arrays(p, n, r)
    except ValueError:
        raise InvalidInputError(
            f"wetted_perimeters {np.shape(p)}, roughnesses {np.shape(n)} and hydraulic_radii "
            f"{np.shape(r)} must have matching shapes (materials on the last axis)") from None
    p_total = np.sum(p, axis=-1)
    if np.any(p_total <= 0):
        raise InvalidInputError("wetted_perimeters must add up to a positive total; got all zero")
    return scalar_or_array(np.asarray(entry.function(p, n, r, p_total)))
