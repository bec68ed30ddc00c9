"""Between the CLI and the pipeline: read the spec and the tables it names, then size. File reading only."""

from __future__ import annotations

from pathlib import Path

from .errors import SpecError


def demo_spec_path() -> Path:
    """The built-in demo spec (an invented plant)."""
    return Path(__file__).parent / "data" / "demo.yaml"


def starter_spec_text() -> str:
    """The commented starter spec that ``bankbuild init`` writes."""
    return (Path(__file__).parent / "data" / "starter.yaml").read_text(encoding="utf-8")


def spec_catalogs_dir(spec_file) -> Path | None:
    """The spec's ``catalogs`` folder, resolved against the spec's own folder and kept inside it."""
    value = spec_file.spec.catalogs
    if value is None:
        return None
    base = spec_file.base_dir
    target = (base / value).resolve()
    if Path(value).is_absolute() or not target.is_relative_to(base):
        raise SpecError(spec_file.path, "catalogs",
                        f"{value!r} points outside the spec's folder; keep user tables beside the spec, or "
                        "pass --catalogs on the command line")
    return target


def run_spec(spec_path: Path, catalogs_dir: Path | None = None, label: str | None = None):
    """Read ``spec_path``, load the tables (``catalogs_dir`` beats the spec's own), size every bank."""
    from .bank import size_project
    from .catalogs import load_catalogs
    from .specfile import read_spec

    spec_file = read_spec(spec_path)
    tables_dir = catalogs_dir if catalogs_dir is not None else spec_catalogs_dir(spec_file)
    catalogs = load_catalogs(tables_dir)
    return size_project(spec_file.spec, catalogs, spec_path=label or spec_file.path,
                        spec_sha256=spec_file.sha256)
