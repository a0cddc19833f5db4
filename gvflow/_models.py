"""Base classes of gvflow's pydantic input models (private)."""

from __future__ import annotations

from typing import ClassVar

from pydantic import BaseModel, ConfigDict, ValidationError

from ._validate import OwnValidationErrors, own_error


class _RaisesOwnErrors(type(BaseModel)):
    """Metaclass of :class:`FrozenModel`: building a model by calling its class raises gvflow's own errors,
    never pydantic's. A model-level check keeps its own error (a ControlError, say); field errors become
    one InvalidInputError naming each field (:func:`gvflow._validate.own_error`); ``model_validate`` and
    its kin do the same (:class:`gvflow._validate.OwnValidationErrors`)."""

    def __call__(cls, *args, **kwargs):
        try:
            return super().__call__(*args, **kwargs)
        except ValidationError as exc:
            raise own_error(exc, cls.__name__) from None


class FrozenModel(OwnValidationErrors, BaseModel, metaclass=_RaisesOwnErrors):
    """Immutable, strict model: unknown fields are rejected with their name; bad input raises gvflow's
    own errors (see :class:`_RaisesOwnErrors`)."""

    model_config = ConfigDict(frozen=True, extra="forbid")


class SingleValueModel(FrozenModel):
    """A model whose main value may be given positionally: ``Manning(0.015)``."""

    _value_field: ClassVar[str] = ""

    def __init__(self, value=None, /, **data):
        if value is not None:
            data[type(self)._value_field] = value
        super().__init__(**data)

    def __str__(self) -> str:
        return repr(self)
