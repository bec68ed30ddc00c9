"""The one base of every result model: frozen (immutable once built) and closed to unknown fields."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict


class Frozen(BaseModel):
    """Base of the result models: frozen, so report writers can only read them; no extra fields."""

    model_config = ConfigDict(frozen=True, extra="forbid")
