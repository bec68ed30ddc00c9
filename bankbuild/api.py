"""Between the CLI and the pipeline: read the spec and the tables it names, then size. File reading only."""

from __future__ import annotations

from pathlib import Path

from bankbuild.errors import SpecError


def demo_spec_path() -> Path:
    """The built-in demo spec (an invented plant)."""
    return Path(__file__).parent / "spec" / "data" / "demo.yaml"


def starter_spec_text() -> str:
    """The commented starter spec that ``bankbuild init`` writes."""
    return (Path(__file__).parent / "spec" / "data" / "starter.yaml").read_text(encoding="utf-8")


def spec_catalogs_dir(spec_file) -> Path | None:
    """The spec's ``catalogs`` folder, resolved against the spec's own folder and kept inside it."""
    value = spec_file.spec.catalogs
    if value is None:
        return None
    base = spec_file.base_dir
    try:
        target = (base / value).resolve()
    except (OSError, ValueError) as exc:  # a NUL byte, a name too long, a link loop
        raise SpecError(spec_file.path, "catalogs", f"not a usable folder name ({exc})") from None
    if Path(value).is_absolute() or not target.is_relative_to(base):
        raise SpecError(spec_file.path, "catalogs",
                        f"{value!r} points outside the spec's folder; keep user tables beside the spec, or "
                        "name the folder yourself (`catalogs_dir`)")
    if not target.exists():
        raise SpecError(spec_file.path, "catalogs", f"folder {value!r} not found (looked for {target})")
    if not target.is_dir():
        raise SpecError(spec_file.path, "catalogs", f"{value!r} is not a folder; give the folder that holds the "
                                                    "rating tables")
    _tables_stay_inside(spec_file, target, base)
    return target


def _tables_stay_inside(spec_file, folder: Path, base: Path) -> None:
    """A table file in the spec's folder must not be a link to a file elsewhere (the spec may come from
    someone else; only a path the user types may reach outside the spec's folder)."""
    try:
        entries = sorted(folder.iterdir()) if folder.is_dir() else []
        for entry in entries:
            if entry.suffix.lower() == ".csv" and not entry.resolve().is_relative_to(base):
                raise SpecError(spec_file.path, "catalogs",
                                f"{entry.name} in {spec_file.spec.catalogs!r} links to a file outside the spec's "
                                "folder; copy the table in, or name the folder yourself (`catalogs_dir`)")
    except OSError as exc:
        raise SpecError(spec_file.path, "catalogs", f"cannot read the folder ({exc.strerror or exc})") from None


def run_spec(spec_path: Path, catalogs_dir: Path | None = None, label: str | None = None, on_bank=None):
    """Read ``spec_path``, load the tables (``catalogs_dir`` beats the spec's own), size every bank.

    ``on_bank(done, total, name)`` is passed to :func:`bankbuild.design.sizing.size_project` (a progress bar).
    """
    from bankbuild.design.sizing import size_project
    from bankbuild.spec.read import read_spec
    from bankbuild.tables.load import load_catalogs

    spec_file = read_spec(spec_path)
    tables_dir = catalogs_dir if catalogs_dir is not None else spec_catalogs_dir(spec_file)
    catalogs = load_catalogs(tables_dir)
    return size_project(spec_file.spec, catalogs, spec_path=label or spec_file.path,
                        spec_sha256=spec_file.sha256, on_bank=on_bank)
