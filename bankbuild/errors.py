"""The package's own exceptions.

Every message is one line that names the file, the field (or row) and the problem, so that the CLI can print
it as it is and exit with code 2.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

_PARAMETER = re.compile(r"`(\w+)`")


class BankbuildError(Exception):
    """Base of every error that the CLI turns into exit code 2 and one line."""

    field_is_parameter = False  # the field names a spec key or table column, not a parameter
    also: tuple[BankbuildError, ...] = ()  # further problems of the same input, each one line (a spec's others)

    def __init__(self, where: str, field: str, problem: str) -> None:
        self.where = where
        self.field = field
        self.problem = problem
        super().__init__(self.line())

    def line(self, names: Mapping[str, str] | None = None) -> str:
        """The one-line message: ``where: field: problem`` (empty parts left out).

        The library names its own parameters: the field, and any parameter the problem mentions written in
        backticks (```pf_target```). A caller with other names for them (the command line's options) passes
        ``names`` to have them written its way; a parameter it does not know keeps its backticks.

        Examples
        --------
        >>> err = OptionError("", "pf_target", "0.8 is below `pf_present` 0.9")
        >>> err.line()
        'pf_target: 0.8 is below `pf_present` 0.9'
        >>> err.line({"pf_target": "--pf-target", "pf_present": "--pf-present"})
        '--pf-target: 0.8 is below --pf-present 0.9'
        """
        field, problem = self.field, self.problem
        if names is not None:
            if self.field_is_parameter:
                field = names.get(field, field)
            problem = _PARAMETER.sub(lambda m: names.get(m.group(1), m.group(0)), problem)
        return ": ".join(p for p in (self.where, field, problem) if p)


class SpecError(BankbuildError):
    """A spec file (YAML) that cannot be read or does not validate."""


class CatalogError(BankbuildError):
    """A rating table that cannot be read or breaks its schema."""


class OptionError(BankbuildError):
    """A parameter (a command-line option, or an argument of the Python API) with a value the tool cannot use.

    ``field`` is the parameter's name in the library (``voltage_v``, ``out_dir``); the command line writes it
    as its option (``--voltage-v``, ``--out``).
    """

    field_is_parameter = True


class DataError(BankbuildError):
    """A file of metered readings that cannot be read: a missing column, a cell that is not a number or a time."""
