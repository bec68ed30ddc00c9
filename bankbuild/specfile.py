"""Reading a spec file: safe YAML, size and depth limits, and one-line errors that name file and field."""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .errors import SpecError

MAX_SPEC_BYTES = 4 * 1024 * 1024
MAX_DEPTH = 40
MAX_NODES = 200_000


@dataclass(frozen=True)
class SpecFile:
    """A validated spec with the file it came from and that file's SHA-256."""

    spec: Any  # bankbuild.models.Spec
    path: str
    sha256: str
    base_dir: Path


def read_spec(path: str | Path) -> SpecFile:
    """Read, parse and validate a spec file; every problem is a :class:`SpecError`."""
    where = str(path)
    raw = _read_bytes(Path(path), where)
    data = parse_yaml(raw, where)
    spec = validate_spec(data, where)
    return SpecFile(spec=spec, path=where, sha256=hashlib.sha256(raw).hexdigest(),
                    base_dir=Path(path).resolve().parent)


def _read_bytes(path: Path, where: str) -> bytes:
    if not path.exists():
        raise SpecError(where, "", "no such file")
    if path.is_dir():
        raise SpecError(where, "", "is a folder, not a spec file")
    try:
        size = path.stat().st_size
        if size > MAX_SPEC_BYTES:
            raise SpecError(where, "", f"file is {size:,} bytes; a spec may be at most {MAX_SPEC_BYTES:,} bytes")
        raw = path.read_bytes()
    except OSError as exc:
        raise SpecError(where, "", f"cannot read the file ({exc.strerror or exc})") from None
    if b"\x00" in raw:
        raise SpecError(where, "", "is a binary file, not YAML text")
    return raw


def parse_yaml(raw: bytes, where: str) -> Any:
    """Parse YAML text safely: no object construction, aliases refused, depth and size bounded."""
    import yaml

    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise SpecError(where, "", f"is not UTF-8 text (byte {exc.start})") from None
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        at = f"line {mark.line + 1}, column {mark.column + 1}" if mark else ""
        problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
        raise SpecError(where, at, f"not valid YAML ({problem})") from None
    if root is None:
        raise SpecError(where, "", "the file is empty: a spec needs at least 'banks'")
    _check_tree(root, where)
    try:
        data = yaml.load(text, Loader=yaml.SafeLoader)  # noqa: S506 - SafeLoader, checked tree above
    except yaml.YAMLError as exc:
        raise SpecError(where, "", f"not valid YAML ({str(exc).splitlines()[0]})") from None
    if not isinstance(data, dict):
        raise SpecError(where, "", f"the top level must be a mapping of keys, not {type(data).__name__}")
    return data


def _check_tree(root: Any, where: str) -> None:
    """Walk the composed node tree: refuse aliases (no expansion bombs), deep nesting and huge documents."""
    import yaml

    stack = [(root, 1)]
    seen = 0
    anchors: set[int] = set()
    while stack:
        node, depth = stack.pop()
        seen += 1
        if seen > MAX_NODES:
            raise SpecError(where, "", f"the document has more than {MAX_NODES:,} entries")
        if depth > MAX_DEPTH:
            line = node.start_mark.line + 1
            raise SpecError(where, f"line {line}", f"nested more than {MAX_DEPTH} levels deep")
        if id(node) in anchors:
            line = node.start_mark.line + 1
            raise SpecError(where, f"line {line}", "YAML aliases (*name) are not accepted in a spec")
        anchors.add(id(node))
        if isinstance(node, yaml.MappingNode):
            for key, value in node.value:
                stack.append((key, depth + 1))
                stack.append((value, depth + 1))
        elif isinstance(node, yaml.SequenceNode):
            stack.extend((child, depth + 1) for child in node.value)


def validate_spec(data: dict, where: str) -> Any:
    """Validate a parsed spec mapping; the first problem becomes one line naming the field."""
    from pydantic import ValidationError

    from .models import Spec

    try:
        return Spec.model_validate(data)
    except ValidationError as exc:
        errors = exc.errors(include_url=False)
        # An unknown key first: a misspelt required key is also reported missing, and the spelling is the cause.
        first = min(errors, key=lambda e: e.get("type") != "extra_forbidden")
        field = field_path(first["loc"], data)
        more = f" (and {len(errors) - 1} more problem{'s' if len(errors) > 2 else ''})" if len(errors) > 1 else ""
        raise SpecError(where, field, _message(first) + _did_you_mean(first, errors) + more) from None


def _did_you_mean(error: dict, errors: list[dict]) -> str:
    """For an unknown key, the closest required key missing beside it (``frequncy_hz`` -> ``frequency_hz``)."""
    import difflib

    loc = error["loc"]
    if error.get("type") != "extra_forbidden" or not loc or not isinstance(loc[-1], str):
        return ""
    missing = [e["loc"][-1] for e in errors if e.get("type") == "missing" and e["loc"][:-1] == loc[:-1]]
    close = difflib.get_close_matches(loc[-1], [m for m in missing if isinstance(m, str)], n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


def field_path(loc: tuple, data: Any = None) -> str:
    """Turn a pydantic location into ``banks[0].supply.voltage_v``, with the bank's name where known."""
    out = ""
    node = data
    for part in loc:
        if isinstance(part, int):
            label = f"[{part}]"
            if isinstance(node, list) and part < len(node) and isinstance(node[part], dict):
                name = node[part].get("name")
                if isinstance(name, str) and name.strip() and out.endswith("banks"):
                    label = f"[{part}] ({name[:40]})"
            out += label
            node = node[part] if isinstance(node, list) and part < len(node) else None
        elif isinstance(part, str) and part and not part[0].isupper() and "[" not in part:
            out += ("." if out else "") + part
            node = node.get(part) if isinstance(node, dict) else None
    return out or "(top level)"


def _message(error: dict) -> str:
    kind = error.get("type", "")
    msg = error.get("msg", "invalid value")
    value = error.get("input")
    if kind == "extra_forbidden":
        return "unknown key (check the spelling; see the spec reference in the README)"
    if kind == "missing":
        return "required key is missing"
    if msg.startswith("Value error, "):
        msg = msg[len("Value error, "):]
    if kind in ("finite_number",):
        return "must be a finite number (not NaN or infinity)"
    shown = repr(value)
    if len(shown) > 40:
        shown = shown[:37] + "..."
    if kind in ("too_short", "too_long"):  # "List should have at least 1 item after validation, not 0"
        return f"{msg[0].lower()}{msg[1:]}".replace(" after validation, not ", " (got ") + ")"
    if kind in ("float_type", "int_type") and isinstance(value, str) and _is_number(value):
        hint = ("YAML reads this exponent form as text: write the number out, or with a point and a signed "
                "exponent like 1.0e+3" if "e" in value.lower()
                else "a number in quotes is text; write it without quotes")
        return f"{msg[0].lower()}{msg[1:]} (got {shown}: {hint})"
    if kind.endswith("_type") or kind.startswith(("greater", "less", "literal", "int_", "float_")):
        return f"{msg[0].lower()}{msg[1:]} (got {shown})"
    return msg


def _is_number(text: str) -> bool:
    """Whether ``text`` reads as a number (YAML 1.1 reads ``1e3`` as text: it wants ``1.0e+3``)."""
    try:
        float(text)
    except ValueError:
        return False
    return True
