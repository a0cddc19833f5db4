"""Base classes of gvflow's pydantic input models (private)."""

from __future__ import annotations

from typing import ClassVar

from pydantic import BaseModel, ConfigDict


class FrozenModel(BaseModel):
    """Immutable, strict model: unknown fields are rejected with their name."""

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
