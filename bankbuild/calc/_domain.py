"""Domain checks shared by the calc modules: impossible input is a programmer's ValueError."""

from __future__ import annotations

import math


def finite_nonneg(name: str, value: float) -> None:
    """Refuse NaN, infinity and negative values."""
    if not (math.isfinite(value) and value >= 0.0):
        raise ValueError(f"{name} must be a finite number >= 0, got {value!r}")


def finite_pos(name: str, value: float) -> None:
    """Refuse NaN, infinity, zero and negative values."""
    if not (math.isfinite(value) and value > 0.0):
        raise ValueError(f"{name} must be a finite number > 0, got {value!r}")
