"""What every document records of where its numbers came from: version, rule basis, spec and tables."""

from __future__ import annotations

from bankbuild._version import __version__
from bankbuild.design.rules import rule_basis
from bankbuild.results.sizing import Provenance, TableUsed


def provenance(spec, catalogs, spec_path: str | None, spec_sha256: str | None) -> Provenance:
    """The provenance block of a sizing or re-rating run.

    Parameters
    ----------
    spec : bankbuild.spec.model.Spec
        The spec that was sized (its rule basis and edition are recorded).
    catalogs : bankbuild.tables.load.Catalogs
        The tables used; each is recorded with its file name, content hash and notes.
    spec_path, spec_sha256 : str or None
        The spec file's name and content hash, when it came from a file.
    """
    basis = rule_basis(spec.rules, spec.nec_edition)
    return Provenance(
        version=__version__, rules=spec.rules, edition=basis.edition, spec_file=spec_path, spec_sha256=spec_sha256,
        tables=[TableUsed(file_name=t.file_name, sha256=t.sha256, notes=list(t.notes)) for t in catalogs.tables])
