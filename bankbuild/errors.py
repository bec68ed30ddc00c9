"""The package's own exceptions.

Every message is one line that names the file, the field (or row) and the problem, so that the CLI can print
it as it is and exit with code 2.
"""

from __future__ import annotations


class BankbuildError(Exception):
    """Base of every error that the CLI turns into exit code 2 and one line."""

    def __init__(self, where: str, field: str, problem: str) -> None:
        self.where = where
        self.field = field
        self.problem = problem
        super().__init__(self.line())

    def line(self) -> str:
        """The one-line message: ``where: field: problem`` (empty parts left out)."""
        parts = [p for p in (self.where, self.field, self.problem) if p]
        return ": ".join(parts)


class SpecError(BankbuildError):
    """A spec file (YAML) that cannot be read or does not validate."""


class CatalogError(BankbuildError):
    """A rating table that cannot be read or breaks its schema."""


class OptionError(BankbuildError):
    """A command-line option with a value the tool cannot use."""
