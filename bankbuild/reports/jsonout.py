"""The results as one JSON document (the stable keys of the product design, and more)."""

from __future__ import annotations

import json
import math

from ..results import ProjectResult


def _clean(value):
    """JSON has no infinity: an unbounded figure (e.g. no resistor needed) is written as null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_clean(v) for v in value]
    return value


def project_json(result: ProjectResult) -> str:
    """Serialise the project results; floats are kept at full precision."""
    return json.dumps(_clean(result.model_dump(mode="python")), indent=2, ensure_ascii=False)
