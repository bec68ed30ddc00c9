"""The results as one JSON document (the stable keys of the product design, and more)."""

from __future__ import annotations

import math

from bankbuild.results.sizing import ProjectResult


def json_safe(value):
    """JSON has no infinity: an unbounded figure (e.g. no resistor needed) is written as null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: json_safe(v) for k, v in value.items()}
    if isinstance(value, list):
        return [json_safe(v) for v in value]
    return value


def project_json(result: ProjectResult) -> str:
    """Serialise the project results; floats are kept at full precision, infinity and NaN become null.

    pydantic's own serialiser writes the same document as ``json.dumps(json_safe(model_dump()), indent=2)``
    about ten times faster (the standard library indents in pure Python): 0.5 s instead of 4.6 s for a
    500-bank plant.
    """
    return result.model_dump_json(indent=2)  # non-finite floats are written as null (pydantic's default)
