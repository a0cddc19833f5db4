"""Input checks shared by the public functions (private)."""

from __future__ import annotations

import math

import numpy as np

from .errors import InvalidInputError


def positive_array(value, name: str, *, allow_zero: bool = False) -> np.ndarray:
    """Return ``value`` as a float array, raising if any element is not finite and positive."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InvalidInputError(f"{name} must be a number or an array of numbers; got {value!r}") from None
    if arr.ndim == 0:
        v = float(arr)
        if math.isfinite(v) and (v >= 0 if allow_zero else v > 0):
            return arr
    elif ((arr >= 0) if allow_zero else (arr > 0)).all() and np.isfinite(arr).all():
        return arr
    bad = ~np.isfinite(arr) | ((arr < 0) if allow_zero else (arr <= 0))
    if np.any(bad):
        first = float(arr[bad].flat[0]) if arr.ndim else float(arr)
        what = "non-negative" if allow_zero else "positive"
        raise InvalidInputError(f"{name} must be finite and {what}; got {first!r}")
    return arr


def finite_array(value, name: str) -> np.ndarray:
    """Return ``value`` as a float array, raising on NaN or infinity."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InvalidInputError(f"{name} must be a number or an array of numbers; got {value!r}") from None
    if not np.all(np.isfinite(arr)):
        raise InvalidInputError(f"{name} must be finite; got {value!r}")
    return arr


def positive_float(value, name: str, *, allow_zero: bool = False) -> float:
    """Return ``value`` as a Python float, raising if it is not finite and positive."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInputError(f"{name} must be a number; got {value!r}") from None
    if not math.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        what = "non-negative" if allow_zero else "positive"
        raise InvalidInputError(f"{name} must be finite and {what}; got {value!r}")
    return v


def finite_float(value, name: str) -> float:
    """Return ``value`` as a Python float, raising on NaN, infinity or a non-number."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInputError(f"{name} must be a number; got {value!r}") from None
    if not math.isfinite(v):
        raise InvalidInputError(f"{name} must be finite; got {value!r}")
    return v


def scalar_or_array(arr: np.ndarray):
    """A float for a 0-d array, the array otherwise."""
    return float(arr) if arr.ndim == 0 else arr


def short_repr(value, limit: int = 60) -> str:
    """``repr(value)`` cut to about ``limit`` characters, so that a message never echoes a whole document."""
    text = repr(value)
    if len(text) <= limit:
        return text
    return f"{text[:limit - 15]}... ({len(text):,} characters)"


def invalid_input_from(exc, owner: str) -> InvalidInputError:
    """Turn a pydantic ``ValidationError`` raised while building ``owner`` into an InvalidInputError.

    The message names each offending field and the value given, e.g.
    ``"Rectangular: width must be greater than 0; got -1"``.
    """
    parts = []
    for err in exc.errors():
        loc = ".".join(str(p) for p in err.get("loc", ()))
        msg = str(err.get("msg", "is invalid"))
        msg = msg.removeprefix("Value error, ")
        if msg.startswith("Input should be"):
            msg = "must be" + msg[len("Input should be"):]
        text = f"{loc} {msg}" if loc and not msg.startswith(loc) else msg
        if loc and "input" in err:
            text += f"; got {short_repr(err['input'])}"
        parts.append(text)
    return InvalidInputError(f"{owner}: " + "; ".join(parts))


def single_number(value: np.ndarray, name: str) -> float:
    """``value`` (a checked array) as a float; an InvalidInputError naming ``name`` where it holds more than
    one number."""
    if np.size(value) != 1:
        raise InvalidInputError(f"{name} must be a single number; got {np.size(value)} values (call once per "
                                "value)")
    return float(np.ravel(value)[0])


def broadcast(**arrays) -> list:
    """``np.broadcast_arrays`` of the named arrays, in order; arrays of shapes that do not broadcast raise an
    InvalidInputError naming each with its shape."""
    try:
        return np.broadcast_arrays(*arrays.values())
    except ValueError:
        shapes = ", ".join(f"{name} {np.shape(v)}" for name, v in arrays.items())
        raise InvalidInputError(f"arrays of shapes that do not fit together ({shapes}): give arrays of one shape, "
                                "or scalars beside them") from None


def own_error(exc, owner: str) -> ValueError:
    """The gvflow error to raise for a pydantic ``ValidationError`` met while building or validating
    ``owner``: a model-level check's own error (a ControlError, say) where it is the only problem, else
    one InvalidInputError naming each field (:func:`invalid_input_from`)."""
    from .errors import GVFlowError

    errors = exc.errors()
    if len(errors) == 1 and not errors[0].get("loc"):
        original = (errors[0].get("ctx") or {}).get("error")
        if isinstance(original, GVFlowError):
            return original
    return invalid_input_from(exc, owner)


class OwnValidationErrors:
    """Mixin placed before pydantic's ``BaseModel``: ``model_validate``, ``model_validate_json`` and
    ``model_validate_strings`` raise gvflow's errors (:func:`own_error`), never pydantic's
    ``ValidationError``. (:mod:`gvflow.io` reads reach files through the model's validator itself, to
    list every problem with its path.)"""

    @classmethod
    def _validating(cls, how, *args, **kwargs):
        from pydantic import ValidationError

        try:
            return getattr(super(), how)(*args, **kwargs)
        except ValidationError as exc:
            raise own_error(exc, cls.__name__) from None

    @classmethod
    def model_validate(cls, *args, **kwargs):
        return cls._validating("model_validate", *args, **kwargs)

    @classmethod
    def model_validate_json(cls, *args, **kwargs):
        return cls._validating("model_validate_json", *args, **kwargs)

    @classmethod
    def model_validate_strings(cls, *args, **kwargs):
        return cls._validating("model_validate_strings", *args, **kwargs)


def renamed_keyword(value, old_value, *, old: str, new: str, default):
    """The value of a keyword renamed from ``old`` to ``new``: the old name still works, with a FutureWarning.

    Giving both (the new one away from its default) is an InvalidInputError.
    """
    if old_value is None:
        return value
    if value != default:
        raise InvalidInputError(f"give {new}= only; {old}= is its former name")
    import warnings

    warnings.warn(f"{old}= is now called {new}=; the old name will be removed", FutureWarning, stacklevel=3)
    return old_value
