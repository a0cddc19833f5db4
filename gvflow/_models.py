"""Base classes of gvflow's pydantic input models (private)."""

from __future__ import annotations

from typing import ClassVar

from pydantic import BaseModel, ConfigDict, ValidationError

from ._validate import invalid_input_from


class _ErrorContract(type(BaseModel)):
    """Metaclass that turns pydantic's ValidationError, raised while a user builds a model, into gvflow's
    :class:`~gvflow.errors.InvalidInputError` naming the field path. Models nested in a reach file are
    validated by pydantic directly (not through this call), so file errors keep their full paths."""

    def __call__(cls, *args, **kwargs):
        try:
            return super().__call__(*args, **kwargs)
        except ValidationError as exc:
            raise invalid_input_from(exc, cls.__name__) from None


class FrozenModel(BaseModel, metaclass=_ErrorContract):
    """Immutable, strict model: unknown fields are rejected with their name, and a bad field raises
    gvflow's :class:`~gvflow.errors.InvalidInputError`, never pydantic's own error."""

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
