"""Reading a spec file: safe YAML, size and depth limits, and one-line errors that name file and field."""

from __future__ import annotations

import functools
import hashlib
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from bankbuild.errors import SpecError

MAX_SPEC_BYTES = 4 * 1024 * 1024
MAX_DEPTH = 40
MAX_NODES = 200_000


@dataclass(frozen=True)
class SpecFile:
    """A validated spec with the file it came from and that file's SHA-256."""

    spec: Any  # bankbuild.spec.model.Spec
    path: str
    sha256: str
    base_dir: Path


def read_spec(path: str | Path) -> SpecFile:
    """Read, parse and validate a spec file; every problem is a :class:`SpecError`."""
    where = str(path)
    raw = _read_bytes(Path(path), where)
    data = parse_yaml(raw, where)
    spec = validate_spec(data, where, raw)
    return SpecFile(spec=spec, path=where, sha256=hashlib.sha256(raw).hexdigest(),
                    base_dir=Path(path).resolve().parent)


def read_spec_text(text: str, where: str = "<spec text>", base_dir: Path | None = None) -> SpecFile:
    """Parse and validate a spec given as YAML text (a notebook cell, a string built by a script).

    ``where`` names it in error messages; a ``catalogs:`` folder in it is taken relative to ``base_dir``
    (default: the working folder).
    """
    raw = text.encode("utf-8")
    if len(raw) > MAX_SPEC_BYTES:
        raise SpecError(where, "", f"text is {len(raw):,} bytes; a spec may be at most {MAX_SPEC_BYTES:,} bytes")
    data = parse_yaml(raw, where)
    spec = validate_spec(data, where, raw)
    return SpecFile(spec=spec, path=where, sha256=hashlib.sha256(raw).hexdigest(),
                    base_dir=(base_dir or Path.cwd()).resolve())


def read_spec_data(data: Any, where: str = "<spec dict>", base_dir: Path | None = None) -> SpecFile:
    """Validate a spec given as a plain mapping (what ``yaml.safe_load`` or ``json.load`` returns).

    The same checks as a file's apply (text without control characters, keys that are words); the hash is
    that of the mapping's canonical JSON form.
    """
    import json

    if not isinstance(data, dict):
        raise SpecError(where, "", f"the top level must be a mapping of keys, not {type(data).__name__}")
    _check_text(data, where)
    spec = validate_spec(data, where)
    try:
        canonical = json.dumps(data, sort_keys=True, ensure_ascii=False, default=str).encode("utf-8")
    except (TypeError, ValueError):
        canonical = repr(data).encode("utf-8")
    return SpecFile(spec=spec, path=where, sha256=hashlib.sha256(canonical).hexdigest(),
                    base_dir=(base_dir or Path.cwd()).resolve())


def _read_bytes(path: Path, where: str) -> bytes:
    try:
        if not path.exists():
            raise SpecError(where, "", "no such file")
        if path.is_dir():
            raise SpecError(where, "", "is a folder, not a spec file")
        if not path.is_file():
            raise SpecError(where, "", "is not a regular file (a device, pipe or socket); give a YAML file")
        size = path.stat().st_size
        if size > MAX_SPEC_BYTES:
            raise SpecError(where, "", f"file is {size:,} bytes; a spec may be at most {MAX_SPEC_BYTES:,} bytes")
        with path.open("rb") as handle:  # read at most one byte past the limit, whatever stat said
            raw = handle.read(MAX_SPEC_BYTES + 1)
    except OSError as exc:
        raise SpecError(where, "", f"cannot read the file ({exc.strerror or exc})") from None
    except ValueError as exc:  # a path with a NUL byte in it
        raise SpecError(where, "", f"not a usable file name ({exc})") from None
    if len(raw) > MAX_SPEC_BYTES:
        raise SpecError(where, "", f"file is over {MAX_SPEC_BYTES:,} bytes, the most a spec may be")
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise SpecError(where, "", "is UTF-16 text (an editor's 'Unicode' setting); save it as UTF-8")
    if b"\x00" in raw:
        raise SpecError(where, "", "is a binary file, not YAML text")
    return raw


_BASE60_INT = "|[-+]?[1-9][0-9_]*(?::[0-5]?[0-9])+"
_BASE60_FLOAT = "|[-+]?[0-9][0-9_]*(?::[0-5]?[0-9])+\\.[0-9_]*"


def _without(regex, alternative: str):
    """``regex`` without one of its ``|`` alternatives (PyYAML's resolvers are verbose patterns)."""
    pattern = regex.pattern
    compact = "".join(pattern.split())
    if alternative not in compact:
        raise RuntimeError("PyYAML's number pattern changed; revisit the base-60 rule of the spec loader")
    return re.compile(compact.replace(alternative, ""))


@functools.lru_cache(maxsize=1)
def _yaml_loader():
    """The safe loader (its C build, libyaml, where installed: same rules, many times faster), adapted.

    Dates stay text (a date in a spec is a title-block field, and ``2026-13-45`` must not crash the
    reader), and a number too long to convert is a YAML error with its line, not a crash.
    """
    import yaml

    base = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

    class SpecLoader(base):  # type: ignore[misc, valid-type]
        pass

    # Dates stay text; and YAML 1.1's base-60 numbers are not numbers here: an unquoted step pattern 1:2:2
    # would otherwise be read as 3722 (1·3600 + 2·60 + 2). It stays the text 1:2:2.
    stamp = "tag:yaml.org,2002:timestamp"
    sexagesimal = {"tag:yaml.org,2002:int": _BASE60_INT, "tag:yaml.org,2002:float": _BASE60_FLOAT}
    SpecLoader.yaml_implicit_resolvers = {
        first: [(tag, _without(rx, sexagesimal[tag]) if tag in sexagesimal else rx)
                for tag, rx in resolvers if tag != stamp]
        for first, resolvers in base.yaml_implicit_resolvers.items()}

    def construct_int(loader, node):
        try:
            return base.construct_yaml_int(loader, node)
        except ValueError:
            raise yaml.constructor.ConstructorError(
                None, None, f"a number of {len(node.value):,} characters is too long", node.start_mark) from None

    SpecLoader.add_constructor("tag:yaml.org,2002:int", construct_int)
    return SpecLoader


def _yaml_problem(exc: Exception, where: str, text: str = "") -> SpecError:
    mark = getattr(exc, "problem_mark", None)
    at = f"line {mark.line + 1}, column {mark.column + 1}" if mark else ""
    lines = text.split("\n")
    tabbed = mark is not None and mark.line < len(lines) and "\t" in lines[mark.line][: mark.column + 1]
    if tabbed or "tab character" in str(exc) or "'\\t'" in str(exc):
        return SpecError(where, f"line {mark.line + 1}" if mark else "",
                         "not valid YAML: a tab character indents this line; YAML indents with spaces only (set "
                         "the editor to insert spaces)")
    problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
    return SpecError(where, at, f"not valid YAML ({problem})")


def parse_yaml(raw: bytes, where: str) -> Any:
    """Parse YAML text safely: no object construction, aliases refused, depth and size bounded.

    The event stream is scanned first (no objects built, stopped at the first problem), so that alias
    bombs, deep nesting and huge documents are refused in a fraction of a second; only then is the text
    loaded with the safe loader, which builds plain mappings, lists, text and numbers only.
    """
    import yaml

    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise SpecError(where, f"line {line}", f"is not UTF-8 text (byte {exc.start}); save it as UTF-8") from None
    try:
        nodes = _scan_events(text, where)
    except yaml.YAMLError as exc:
        raise _yaml_problem(exc, where, text) from None
    if nodes == 0:
        raise SpecError(where, "", "the file is empty: a spec needs at least 'banks'")
    try:
        data = yaml.load(text, Loader=_yaml_loader())  # noqa: S506 - a safe loader, events checked above
    except yaml.YAMLError as exc:
        raise _yaml_problem(exc, where, text) from None
    except (ValueError, OverflowError) as exc:  # e.g. a 5,000-digit number or a date like 2026-13-45
        shown = str(exc).split(":")[0][:80]
        raise SpecError(where, "", f"a value cannot be read ({shown})") from None
    if not isinstance(data, dict):
        raise SpecError(where, "", f"the top level must be a mapping of keys, not {type(data).__name__}")
    _check_text(data, where)
    return data


# Bidirectional overrides and isolates can make text on a document read differently from what it holds; the
# control characters (Unicode category Cc) are exactly U+0000-U+001F and U+007F-U+009F.
_BAD_CHAR = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def _bad_char(text: str) -> str | None:
    """The first control or direction-override character in ``text`` (as ``U+001B``), or None.

    >>> _bad_char("Line 3"), _bad_char("a\x1b[31m"), _bad_char("\u202eevil")
    (None, 'U+001B', 'U+202E')
    """
    found = _BAD_CHAR.search(text)
    return f"U+{ord(found.group()):04X}" if found else None


def _check_text(data: Any, where: str) -> None:
    """Refuse keys that are not text, and control characters in any key or text value.

    A spec's text ends up on a terminal and in documents: an escape sequence could rewrite the terminal,
    and a direction override could make a printed name read differently from what it is.
    """
    stack: list[tuple[Any, tuple]] = [(data, ())]
    while stack:
        node, loc = stack.pop()
        if isinstance(node, dict):
            for key, value in node.items():
                if not isinstance(key, str):
                    raise SpecError(where, field_path(loc, data) if loc else "",
                                    f"key {key!r} is not a name; keys are words like voltage_v")
                bad = _bad_char(key)
                if bad:
                    raise SpecError(where, field_path(loc, data) if loc else "",
                                    f"a key holds the control character {bad}; keys are words like voltage_v")
                stack.append((value, (*loc, key)))
        elif isinstance(node, list):
            stack.extend((item, (*loc, i)) for i, item in enumerate(node))
        elif isinstance(node, str):
            bad = _bad_char(node)
            if bad:
                raise SpecError(where, field_path(loc, data),
                                f"text holds the control character {bad}; use printable characters only")


def _scan_events(text: str, where: str) -> int:
    """Walk the YAML events without building anything; return the number of nodes.

    Refuses aliases (no expansion bombs), nesting deeper than :data:`MAX_DEPTH`, more than :data:`MAX_NODES`
    nodes, keys that are not plain scalars, and a key given twice in one mapping (YAML would silently keep
    the last one, so a typo'd duplicate would hide the first value).
    """
    import yaml

    frames: list[list] = []  # per open collection: [is_mapping, expecting_key, keys seen]
    nodes = 0

    def line_of(event) -> str:
        return f"line {event.start_mark.line + 1}"

    def finished() -> None:  # a whole node (scalar or collection) is complete at the current level
        if frames and frames[-1][0]:
            frames[-1][1] = not frames[-1][1]

    for event in yaml.parse(text, Loader=_yaml_loader()):
        if isinstance(event, yaml.AliasEvent):
            raise SpecError(where, line_of(event), "YAML aliases (*name) are not accepted in a spec")
        if isinstance(event, (yaml.ScalarEvent, yaml.MappingStartEvent, yaml.SequenceStartEvent)):
            nodes += 1
            if nodes > MAX_NODES:
                raise SpecError(where, line_of(event), f"the document has more than {MAX_NODES:,} entries")
            is_key = bool(frames) and frames[-1][0] and frames[-1][1]
            if isinstance(event, yaml.ScalarEvent):
                if is_key:
                    if event.value in frames[-1][2]:
                        shown = event.value if len(event.value) <= 40 else event.value[:37] + "..."
                        raise SpecError(where, line_of(event), f"key {shown!r} appears twice in the same mapping")
                    frames[-1][2].add(event.value)
                finished()
                continue
            if is_key:
                raise SpecError(where, line_of(event), "a key must be a plain word, not a list or mapping")
            if len(frames) >= MAX_DEPTH:
                raise SpecError(where, line_of(event), f"nested more than {MAX_DEPTH} levels deep")
            frames.append([isinstance(event, yaml.MappingStartEvent), True, set()])
        elif isinstance(event, (yaml.MappingEndEvent, yaml.SequenceEndEvent)):
            frames.pop()
            finished()
    return nodes


MAX_PROBLEMS = 8
"""The most problems of one spec listed at once (the first ones by line); the rest are counted."""


def validate_spec(data: dict, where: str, raw: bytes | None = None) -> Any:
    """Validate a parsed spec mapping; every problem (up to :data:`MAX_PROBLEMS`) becomes one line naming the field.

    The :class:`SpecError` raised is the first problem by line; ``also`` holds the others, so that a user sees
    every mistake of a file at once. With the file's bytes (``raw``) each line ends with its line number.
    """
    from pydantic import ValidationError

    from bankbuild.spec.model import Spec

    _looks_like_a_spec(data, where, tuple(Spec.model_fields))
    try:
        return Spec.model_validate(data)
    except ValidationError as exc:
        raise spec_problems(exc.errors(include_url=False), data, where, raw) from None


def spec_problems(errors: list[dict], data: Any, where: str, raw: bytes | None = None) -> SpecError:
    """One :class:`SpecError` for a list of pydantic errors: the first by line, the rest in ``also``."""
    lines = _line_finder(raw)
    chosen = _one_per_field(errors, data)
    found = []
    for error in chosen:
        line = lines(error["loc"])
        hint = _did_you_mean(error, errors)
        problem = "unknown key" + hint if hint else _message(error)
        found.append((line if line is not None else 10**9, field_path(error["loc"], data),
                      problem + (f" (line {line})" if line is not None else "")))
    found.sort(key=lambda f: f[0])
    shown = [SpecError(where, field, problem) for _, field, problem in found[:MAX_PROBLEMS]]
    if len(found) > MAX_PROBLEMS:
        left = len(found) - MAX_PROBLEMS
        shown.append(SpecError(where, "", f"and {left} more problem{'s' if left > 1 else ''}"))
    first = shown[0]
    first.also = tuple(shown[1:])
    if first.also:
        more = len(found) - 1
        first.args = (f"{first.line()} (and {more} more problem{'s' if more > 1 else ''}: see .also)",)
    return first


def _one_per_field(errors: list[dict], data: Any) -> list[dict]:
    """The errors worth showing: one per field (an unknown key before anything else said of it), and no
    'missing' for a key whose misspelling is reported beside it."""
    import difflib

    spelt = {}
    for e in errors:
        loc = e["loc"]
        if e.get("type") == "extra_forbidden" and loc and isinstance(loc[-1], str):
            spelt.setdefault(tuple(loc[:-1]), []).append(loc[-1])
    kept: dict[str, dict] = {}
    for e in sorted(errors, key=lambda e: e.get("type") != "extra_forbidden"):
        loc = e["loc"]
        if e.get("type") == "missing" and isinstance(loc[-1], str):
            typos = spelt.get(tuple(loc[:-1]), [])
            if any(difflib.get_close_matches(t, [loc[-1]], n=1, cutoff=0.6) for t in typos):
                continue
        kept.setdefault(field_path(loc, data), e)
    return list(kept.values())


def _line_finder(raw: bytes | None):
    """A function from a pydantic location to the line the value (or, for a missing key, its mapping)
    starts on; None without the text, or where the location is not found."""
    if raw is None:
        return lambda loc: None
    import yaml

    try:
        root = yaml.compose(raw.decode("utf-8-sig"), Loader=_yaml_loader())  # events were checked on reading
    except (yaml.YAMLError, UnicodeDecodeError):
        return lambda loc: None

    def find(loc) -> int | None:
        node = root
        for part in loc:
            if isinstance(part, int) and isinstance(node, yaml.SequenceNode) and part < len(node.value):
                node = node.value[part]
            elif isinstance(part, str) and isinstance(node, yaml.MappingNode):
                match = next(((k, v) for k, v in node.value if getattr(k, "value", None) == part), None)
                if match is None:
                    if part[:1].isupper() or "[" in part:  # a union's tag, not a key
                        continue
                    return node.start_mark.line + 1
                key, node = match
                if part == loc[-1]:
                    return key.start_mark.line + 1
        return node.start_mark.line + 1 if node is not None else None

    return find


def _model_keys(loc: tuple) -> list[str]:
    """Every key the spec model accepts where ``loc`` points (a bank, a load, the supply …)."""
    import typing

    from pydantic import BaseModel

    from bankbuild.spec.model import Spec

    def models_in(annotation) -> list[type]:
        if isinstance(annotation, type) and issubclass(annotation, BaseModel):
            return [annotation]
        return [m for arg in typing.get_args(annotation) for m in models_in(arg)]

    models: list[type] = [Spec]
    for part in loc:
        if isinstance(part, str):
            inner = [m for model in models if part in model.model_fields
                     for m in models_in(model.model_fields[part].annotation)]
            if inner or any(part in model.model_fields for model in models):
                models = inner
    return sorted({key for model in models for key in model.model_fields})


def _looks_like_a_spec(data: dict, where: str, keys: tuple[str, ...]) -> None:
    """Refuse a file that is no spec at all (a system file, another tool's YAML) without quoting any of it:
    none of its top-level keys is a spec key, nor close to one. A misspelt spec key still gets its hint."""
    import difflib

    names = [k for k in data if isinstance(k, str)]
    if any(k in keys or difflib.get_close_matches(k.lower(), keys, n=1, cutoff=0.6) for k in names[:1000]):
        return
    raise SpecError(where, "", f"not a bankbuild spec: none of its {len(data):,} top-level keys is a spec key "
                               "(a spec holds 'banks', and may hold 'project', 'rules' and 'catalogs')")


def _did_you_mean(error: dict, errors: list[dict]) -> str:
    """For an unknown key, the closest key that the model there accepts (``frequncy_hz`` -> ``frequency_hz``),
    a missing required key first."""
    import difflib

    loc = error["loc"]
    if error.get("type") != "extra_forbidden" or not loc or not isinstance(loc[-1], str):
        return ""
    missing = [e["loc"][-1] for e in errors if e.get("type") == "missing" and e["loc"][:-1] == loc[:-1]]
    close = difflib.get_close_matches(loc[-1], [m for m in missing if isinstance(m, str)], n=1, cutoff=0.6)
    if not close:
        close = difflib.get_close_matches(loc[-1].lower(), _model_keys(tuple(loc[:-1])), n=1, cutoff=0.6)
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
                if isinstance(name, str) and name.strip() and out.endswith("banks") and not _bad_char(name):
                    label = f"[{part}] ({name[:40]})"
            out += label
            node = node[part] if isinstance(node, list) and part < len(node) else None
        elif isinstance(part, str) and part and not part[0].isupper() and "[" not in part:
            out += ("." if out else "") + part
            node = node.get(part) if isinstance(node, dict) else None
    return out or "(top level)"


def _message(error: dict) -> str:
    kind = error.get("type", "")
    key = next((part for part in reversed(error.get("loc", ())) if isinstance(part, str)), "")
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
    if kind in ("too_long", "string_too_long") and isinstance(value, str):
        limit = (error.get("ctx") or {}).get("max_length", "?")
        return f"text of {len(value):,} characters; at most {limit} are allowed"
    if kind in ("too_short", "too_long"):  # "List should have at least 1 item after validation, not 0"
        return f"{msg[0].lower()}{msg[1:]}".replace(" after validation, not ", " (got ") + ")"
    if kind == "list_type" and isinstance(value, dict):
        example = " (as in '- name: Line 3')" if key == "banks" else ""
        return (f"input should be a valid list (got a mapping): start each entry with '- '{example}, even when "
                "there is only one")
    if (kind == "less_than_equal" and key in FRACTION_KEYS and isinstance(value, (int, float))
            and 10 <= value <= 100):
        what = {"efficiency": "an efficiency", "busbar_derating": "a derating"}.get(key, "a power factor")
        return (f"input should be less than or equal to 1 (got {value:g}): {what} is a fraction of one; "
                f"{value / 100:g}?")
    if kind in ("float_type", "int_type") and isinstance(value, str) and not _is_number(value):
        hint = number_hint(value, key)
        if hint:
            return f"must be a number (got {shown}: {hint})"
    if kind in ("float_type", "int_type") and isinstance(value, str) and _is_number(value):
        hint = ("YAML reads this exponent form as text: write the number out, or with a point and a signed "
                "exponent like 1.0e+3" if "e" in value.lower()
                else "a number in quotes is text; write it without quotes")
        return f"{msg[0].lower()}{msg[1:]} (got {shown}: {hint})"
    if kind.endswith("_type") or kind.startswith(("greater", "less", "literal", "int_", "float_")):
        return f"{msg[0].lower()}{msg[1:]} (got {shown})"
    return msg


FRACTION_KEYS = frozenset({"pf", "pf_present", "pf_target", "efficiency", "full_load_pf", "no_load_pf",
                           "busbar_derating"})
"""Keys (and options) that take a fraction of one, not a percentage."""

_NUMBER_AND_UNIT = re.compile(r"\s*([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+))\s*([^\d\s.,+-].*?)\s*")


def number_hint(text: str, name: str = "", what: str = "key") -> str | None:
    """Why a text is not a number and what to write instead, or None when it is nothing like one.

    ``name`` is the key (or option) it was given for; ``what`` says which ("key" or "option").

    >>> number_hint("480V", "voltage_v")
    'write 480; the unit is in the key name'
    >>> number_hint("95%", "pf_target", "option")
    'write 0.95; a power factor is a fraction of one'
    >>> number_hint("0,95", "pf")
    'write 0.95, with a decimal point'
    >>> number_hint("fast") is None
    True
    """
    comma = re.fullmatch(r"\s*([-+]?\d+),(\d+)\s*", text)
    if comma:
        return f"write {comma.group(1)}.{comma.group(2)}, with a decimal point"
    match = _NUMBER_AND_UNIT.fullmatch(text)
    if match is None:
        return None
    number, unit = match.group(1), match.group(2)
    if "," in number:
        return f"write {number.replace(',', '.')}, with a decimal point"
    value = float(number)
    if unit.strip() == "%" and name.split(".")[-1] in FRACTION_KEYS:
        kind = "an efficiency" if "efficiency" in name else "a power factor"
        return f"write {value / 100:g}; {kind} is a fraction of one"
    if unit.strip() == "%" and not name.endswith("_pct"):
        return None
    if unit.strip().lower() == "kv" and name.endswith("_v"):
        return f"write {value * 1000:g} (volts); the unit is in the {what} name"
    return f"write {value:g}; the unit is in the {what} name"


def _is_number(text: str) -> bool:
    """Whether ``text`` reads as a number (YAML 1.1 reads ``1e3`` as text: it wants ``1.0e+3``)."""
    try:
        float(text)
    except ValueError:
        return False
    return True
