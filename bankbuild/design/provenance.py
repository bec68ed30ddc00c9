"""What every document records of where its numbers came from: version, rule basis, spec and tables."""

from __future__ import annotations

from bankbuild._version import __version__
from bankbuild.results.sizing import Provenance, TableUsed


def provenance(basis, catalogs, spec_path: str | None, spec_sha256: str | None) -> Provenance:
    """The provenance block of a sizing or re-rating run.

    Parameters
    ----------
    basis : bankbuild.spec.rulebasis.RuleBasis
        The rule basis the figures follow: recorded once by code and edition, with its file and content hash,
        and the sentence it has every document print.
    catalogs : bankbuild.tables.load.Catalogs
        The tables used; each is recorded with its file name, content hash and notes.
    spec_path, spec_sha256 : str or None
        The spec file's name and content hash, when it came from a file.
    """
    rules = basis.rules
    return Provenance(
        version=__version__, rules=rules.family, edition=basis.label, rule_basis_id=rules.id,
        rule_basis_file=basis.file_name + ("" if basis.builtin else f" ({basis.path})"),
        rule_basis_sha256=basis.sha256, rule_basis_text=rules.documents.basis_line,
        rule_basis_note=rules.documents.worksheet_note, spec_file=spec_path, spec_sha256=spec_sha256,
        tables=[TableUsed(file_name=t.file_name, sha256=t.sha256, notes=list(t.notes)) for t in catalogs.tables])
