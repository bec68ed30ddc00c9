"""Usage errors of the command-line parser worded like spec errors: ``OPTION: problem``.

A bad number, an unknown option or command, a missing argument: each becomes one line in the shape of a spec
error, with a "did you mean" where one name is close. (The library's own errors name their parameters, which
:class:`bankbuild.cli.app.OptionNames` writes as options.)
"""

from __future__ import annotations

import difflib
import re


def _hint(exc) -> str:
    param = getattr(exc, "param", None)
    if getattr(exc, "param_hint", None):
        hint = exc.param_hint
        return hint if isinstance(hint, str) else " / ".join(hint)
    if param is None:
        return ""
    opts = [o for o in getattr(param, "opts", []) if o.startswith("--")]
    if opts:
        return opts[0]
    return (getattr(param, "human_readable_name", "") or getattr(param, "name", "") or "").upper()


def _value_problem(message: str) -> str:
    """The parser's complaint about a value, in the words of a spec error."""
    lowered = message.lower()
    if "valid number" in lowered or "valid float" in lowered or "parse string as a number" in lowered:
        return "must be a number"
    if "valid integer" in lowered:
        return "must be a whole number"
    if "valid boolean" in lowered:
        return "must be true or false"
    text = message.rstrip(".")
    return text[:1].lower() + text[1:]


def usage_line(exc) -> str:
    """A usage error of the parser as ``OPTION: problem`` (one line, no 'Error:' prefix).

    ``exc`` is one of typer's usage exceptions (``NoSuchOption``, ``MissingParameter``, ``BadParameter``,
    ``BadOptionUsage``, ``UsageError``); an unknown kind keeps its own message.
    """
    kind = type(exc).__name__
    if kind == "NoSuchOption":
        close = difflib.get_close_matches(exc.option_name, list(exc.possibilities or []), n=1, cutoff=0.6)
        if not close and exc.possibilities:
            close = sorted(exc.possibilities)[:1]
        hint = f"; did you mean {close[0]}?" if close else ""
        return f"{exc.option_name}: unknown option{hint}"
    if kind == "MissingParameter":
        param = getattr(exc, "param", None)
        what = "argument" if getattr(param, "param_type_name", "") == "argument" else "option"
        return f"{_hint(exc)}: required {what} is missing"
    if kind == "BadParameter" and exc.message.startswith("got "):  # from the number parser of the command line
        return f"{_hint(exc)}: must be a number ({exc.message})"
    if kind == "BadParameter":
        value = re.search(r"got (.+)$|^'(.*?)'", exc.message)
        problem = _value_problem(exc.message)
        shown = f" (got {value.group(1) or repr(value.group(2))})" if value and problem == "must be a number" else ""
        return f"{_hint(exc)}: {problem}{shown}"
    if kind == "BadOptionUsage":
        message = exc.format_message()
        if "requires an argument" in message:
            return f"{exc.option_name}: needs a value"
        return f"{exc.option_name}: {_value_problem(message)}"
    message = exc.format_message()
    match = re.fullmatch(r"No such command '(.+?)'\.(?: Did you mean '(.+?)'\?)?", message)
    if match:
        ctx = getattr(exc, "ctx", None)
        names = sorted(getattr(ctx.command, "commands", {}) or {}) if ctx is not None else []
        close = [match.group(2)] if match.group(2) else difflib.get_close_matches(match.group(1), names, n=1,
                                                                                  cutoff=0.6)
        hint = f"; did you mean {close[0]}?" if close else (f"; the commands are {', '.join(names)}" if names else "")
        return f"{match.group(1)}: unknown command{hint}"
    return message
