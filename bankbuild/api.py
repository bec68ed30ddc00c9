"""The Python API, and what the command line shares with it: read a spec and the tables it names, then size.

``import bankbuild`` gives these functions; the command line calls the same ones, so a notebook and a terminal
get the same results and the same errors (:class:`~bankbuild.errors.SpecError`,
:class:`~bankbuild.errors.CatalogError`, :class:`~bankbuild.errors.OptionError`, each with ``where``, ``field``
and ``problem``). Library parameters are named as in Python (``voltage_v``); the command line shows them as its
options (``--voltage-v``).

Nothing heavy is imported at module level: pydantic, yaml and the pipeline load when a function runs, and
pandas only when a ``to_frame()`` view is asked for.

Examples
--------
>>> import bankbuild
>>> project = bankbuild.size({"banks": [{"name": "Line 3", "supply": {"voltage_v": 480, "frequency_hz": 60},
...                                      "need": {"kvar": 300}}]})
>>> bank = project.banks[0]
>>> bank.delivered_kvar, bank.main.device_rating_a
(300.0, 600.0)
"""

from __future__ import annotations

import math
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

from bankbuild.errors import OptionError, SpecError

if TYPE_CHECKING:  # pragma: no cover - names for the signatures only
    from bankbuild.results.rerate import RerateResult
    from bankbuild.results.sizing import ProjectResult
    from bankbuild.spec.read import SpecFile
    from bankbuild.tables.load import TableInfo

SpecSource = str | os.PathLike | dict
"""A spec: a path to a YAML file, YAML text, or a plain mapping (what ``yaml.safe_load`` gives)."""

SPEC_SCHEMA_FILE = "bankbuild.schema.json"  # beside a spec from ``init``; the starter's first line points to it
DEFAULT_KVAR_VOLTAGE_V = 480.0
DEFAULT_KVAR_FREQUENCY_HZ = 60.0


def demo_spec_path() -> Path:
    """The built-in demo spec (an invented plant)."""
    return Path(__file__).parent / "spec" / "data" / "demo.yaml"


def starter_spec_text() -> str:
    """The commented starter spec that ``bankbuild init`` writes."""
    return (Path(__file__).parent / "spec" / "data" / "starter.yaml").read_text(encoding="utf-8")


def _looks_like_yaml(text: str) -> bool:
    """Whether a string is YAML text rather than a file name: it has a line break, a ``key: value`` or braces."""
    stripped = text.strip()
    return "\n" in stripped or ": " in stripped or stripped.startswith("{") or stripped.endswith(":")


def load_spec(spec: SpecSource, *, label: str | None = None) -> SpecFile:
    """Read and validate a spec from a path, YAML text or a mapping; every problem is a :class:`SpecError`.

    Parameters
    ----------
    spec : str, os.PathLike or dict
        A path to a YAML file; YAML text (recognised by a line break or a ``key: value``); or a mapping.
    label : str, optional
        The name errors and documents give the spec (default: the path, ``<spec text>`` or ``<spec dict>``).
    """
    from bankbuild.spec.read import read_spec, read_spec_data, read_spec_text

    if isinstance(spec, dict):
        return read_spec_data(spec, label or "<spec dict>")
    if isinstance(spec, str) and _looks_like_yaml(spec) and not _is_file(spec):
        return read_spec_text(spec, label or "<spec text>")
    if isinstance(spec, (str, os.PathLike)):
        return read_spec(Path(spec))
    raise SpecError("", "", f"a spec is a path, YAML text or a mapping, not {type(spec).__name__}")


def _is_file(text: str) -> bool:
    try:
        return len(text) < 4096 and Path(text).is_file()
    except (OSError, ValueError):
        return False


def spec_catalogs_dir(spec_file) -> Path | None:
    """The spec's ``catalogs`` folder, resolved against the spec's own folder and kept inside it."""
    value = spec_file.spec.catalogs
    if value is None:
        return None
    base = spec_file.base_dir
    try:
        target = (base / value).resolve()
    except RuntimeError:  # a loop of links (Python before 3.13 says so with a RuntimeError)
        raise SpecError(spec_file.path, "catalogs", f"{value!r} is a loop of links, not a folder") from None
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
            if entry.suffix.lower() != ".csv":
                continue
            try:
                resolved = entry.resolve()
            except RuntimeError:  # a loop of links (a RuntimeError before Python 3.13, an OSError after)
                raise SpecError(spec_file.path, "catalogs", f"{entry.name} in {spec_file.spec.catalogs!r} is a loop "
                                                            "of links, not a table") from None
            if not resolved.is_relative_to(base):
                raise SpecError(spec_file.path, "catalogs",
                                f"{entry.name} in {spec_file.spec.catalogs!r} links to a file outside the spec's "
                                "folder; copy the table in, or name the folder yourself (`catalogs_dir`)")
    except OSError as exc:
        raise SpecError(spec_file.path, "catalogs", f"cannot read the folder ({exc.strerror or exc})") from None


def _tables_for(spec_file, catalogs_dir: str | os.PathLike | None, demo_prices: bool = False):
    """The tables the spec sizes with and its rule basis (a user's copy beside those tables wins); with
    ``demo_prices`` the built-in (invented) price table unless the folder has its own ``prices.csv``."""
    from bankbuild.tables.load import load_catalogs

    folder = Path(catalogs_dir) if catalogs_dir is not None else spec_catalogs_dir(spec_file)
    return load_catalogs(folder, demo_prices=demo_prices), spec_rule_basis(spec_file, folder)


def size(spec: SpecSource, *, catalogs_dir: str | os.PathLike | None = None, on_bank=None) -> ProjectResult:
    """Size every bank of a spec: the same results as ``bankbuild size SPEC --json``.

    Parameters
    ----------
    spec : str, os.PathLike or dict
        A path to a YAML spec, YAML text, or a mapping with the spec's keys.
    catalogs_dir : str or os.PathLike, optional
        A folder of rating tables that replace the built-in ones (beats the spec's own ``catalogs:``).
    on_bank : callable, optional
        ``on_bank(done, total, name)`` after each bank (a progress display).

    Returns
    -------
    ProjectResult
        Frozen results: ``.banks`` (each with the stable keys as attributes), ``.bom``, ``.provenance``;
        ``to_frame(view)`` gives pandas views, ``model_dump_json()`` the JSON document.

    Raises
    ------
    SpecError, CatalogError
        Bad input, with ``where`` (file), ``field`` and ``problem``.
    """
    from bankbuild.design.sizing import size_project

    spec_file = load_spec(spec)
    tables, basis = _tables_for(spec_file, catalogs_dir)
    return size_project(spec_file.spec, tables, spec_path=spec_file.path, spec_sha256=spec_file.sha256,
                        on_bank=on_bank, basis=basis)


def demo() -> ProjectResult:
    """Size the built-in demo plant (an invented site), its bill of materials priced with invented demo prices."""
    return run_spec(demo_spec_path(), label="demo.yaml (built-in)", demo_prices=True)


def spec_rule_basis(spec_file, tables_dir: Path | None = None):
    """The rule basis the spec names: a rule-basis file beside the spec (kept inside its folder), a user's copy of
    a built-in basis in the tables folder (``rules-nec-2023.yaml`` … as ``catalog copy`` writes them), or the
    built-in file. Every problem names the file, the field and what is wrong."""
    from bankbuild.spec.rulebasis import BUILTIN, builtin_rule_basis, read_rule_basis

    spec = spec_file.spec
    value = spec.rules_file
    if value is not None:
        base = spec_file.base_dir
        try:
            target = (base / value).resolve()
        except (OSError, ValueError) as exc:
            raise SpecError(spec_file.path, "rules", f"not a usable file name ({exc})") from None
        if Path(value).is_absolute() or not target.is_relative_to(base):
            raise SpecError(spec_file.path, "rules", f"{value!r} points outside the spec's folder; keep the "
                                                     "rule-basis file beside the spec")
        if not target.is_file():
            raise SpecError(spec_file.path, "rules", f"rule-basis file {value!r} not found (looked for {target})")
        return read_rule_basis(target)
    key = f"nec-{spec.nec_edition}" if spec.rules == "nec" else spec.rules
    if tables_dir is not None and (Path(tables_dir) / BUILTIN[key]).exists():
        return read_rule_basis(Path(tables_dir) / BUILTIN[key])
    return builtin_rule_basis(spec.rules, spec.nec_edition)


def run_spec(spec_path: Path, catalogs_dir: Path | None = None, label: str | None = None, on_bank=None,
             demo_prices: bool = False):
    """Read ``spec_path``, load the tables (``catalogs_dir`` beats the spec's own), size every bank.

    ``on_bank(done, total, name)`` is passed to :func:`bankbuild.design.sizing.size_project` (a progress bar);
    ``label`` names the spec in the documents; ``demo_prices`` prices with the built-in (invented) prices.
    """
    from bankbuild.design.sizing import size_project
    from bankbuild.spec.read import read_spec

    spec_file = read_spec(spec_path)
    tables, basis = _tables_for(spec_file, catalogs_dir, demo_prices)
    return size_project(spec_file.spec, tables, spec_path=label or spec_file.path,
                        spec_sha256=spec_file.sha256, on_bank=on_bank, basis=basis)


def _in_range(name: str, value: float | None, unit: str) -> None:
    """A parameter within the range the spec's ``supply`` accepts for the same field (one statement of each)."""
    from bankbuild.spec.model import Supply, field_bounds

    if value is None:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise OptionError("", name, f"must be a number (got {value!r})")
    low, high = field_bounds(Supply, name)
    if not math.isfinite(value) or not low <= value <= high or value == 0 == low:
        raise OptionError("", name, f"must be between {low:g} and {high:g} {unit} (got {value:g})")


def transformer_option(kva: float | None, z_pct: float | None, source_sc_mva: float | None) -> dict | None:
    """The new site's transformer from the parameters, or None to keep each bank's own."""
    _in_range("transformer_kva", kva, "kVA")
    _in_range("transformer_z_pct", z_pct, "%")
    _in_range("source_sc_mva", source_sc_mva, "MVA")
    if (kva is None) != (z_pct is None):
        raise OptionError("", "transformer_kva" if kva is None else "transformer_z_pct",
                          "give `transformer_kva` and `transformer_z_pct` together")
    if source_sc_mva is not None and kva is None:
        raise OptionError("", "source_sc_mva", "needs `transformer_kva` and `transformer_z_pct`")
    if kva is None:
        return None
    return {"transformer_kva": kva, "transformer_z_pct": z_pct, "source_sc_mva": source_sc_mva}


def rerate(spec: SpecSource, voltage_v: float, frequency_hz: float | None = None, *,
           catalogs_dir: str | os.PathLike | None = None, transformer_kva: float | None = None,
           transformer_z_pct: float | None = None, source_sc_mva: float | None = None) -> RerateResult:
    """Move each bank of a spec to another supply: the same results as ``bankbuild rerate SPEC --json``.

    Parameters
    ----------
    spec : str, os.PathLike or dict
        The existing bank(s): a path, YAML text or a mapping. A bank's units are its ``units`` key, else the
        ones ``size`` selects.
    voltage_v : float
        New supply line-to-line voltage [V].
    frequency_hz : float, optional
        New supply frequency [Hz]; None keeps each bank's own (the result's ``frequency_hz`` is then None).
    catalogs_dir : str or os.PathLike, optional
        A folder of rating tables that replace the built-in ones.
    transformer_kva, transformer_z_pct, source_sc_mva : float, optional
        The transformer at the new supply [kVA], its impedance [%] and the utility level in series [MVA];
        default: each bank's own.
    """
    from bankbuild.design.rerate import rerate_project

    _in_range("voltage_v", voltage_v, "V")
    _in_range("frequency_hz", frequency_hz, "Hz")
    site = transformer_option(transformer_kva, transformer_z_pct, source_sc_mva)
    spec_file = load_spec(spec)
    tables, basis = _tables_for(spec_file, catalogs_dir)
    return rerate_project(spec_file.spec, tables, float(voltage_v), None if frequency_hz is None
                          else float(frequency_hz), site, spec_path=spec_file.path, spec_sha256=spec_file.sha256,
                          basis=basis)


def kvar(kw: float | None = None, pf_present: float | None = None, pf_target: float | None = None, *,
         loads: str | os.PathLike | None = None, voltage_v: float | None = None,
         frequency_hz: float | None = None) -> dict[str, Any]:
    """The quick figure (``bankbuild kvar``): kvar to correct a load, µF per leg, line currents before and after.

    Give ``kw``, ``pf_present`` and ``pf_target``, or ``loads`` (a YAML file with ``loads`` and ``pf_target``).
    Without ``voltage_v`` / ``frequency_hz`` the figures are at 480 V / 60 Hz, and ``assumed`` names the
    parameters that took their default.

    Examples
    --------
    >>> f = kvar(250, 0.72, 0.96, voltage_v=480)
    >>> round(f["required_kvar"], 1)   # 250 kW × (tan φ1 − tan φ2) = 250 × 0.6722: the oracles' example
    168.0
    >>> f["assumed"], f["frequency_hz"]
    (['frequency_hz'], 60.0)
    """
    from bankbuild.design.quick import kvar_figures

    assumed = []
    if voltage_v is None:
        voltage_v = DEFAULT_KVAR_VOLTAGE_V
        assumed.append("voltage_v")
    if frequency_hz is None:
        frequency_hz = DEFAULT_KVAR_FREQUENCY_HZ
        assumed.append("frequency_hz")
    figures = kvar_figures(kw, pf_present, pf_target, None if loads is None else Path(loads), voltage_v,
                           frequency_hz)
    return {**figures, "assumed": assumed}


def check_tables(folder: str | os.PathLike | None = None) -> list[TableInfo]:
    """Check every rating table in ``folder`` (default: the built-in ones); each table's name and SHA-256."""
    from bankbuild.tables.load import builtin_dir, check_catalogs

    return check_catalogs(Path(folder) if folder is not None else builtin_dir())


def copy_tables(folder: str | os.PathLike, *, force: bool = False) -> list[Path]:
    """Copy the built-in rating tables into ``folder`` to edit; ``force`` replaces tables already there."""
    from bankbuild.tables.load import copy_catalogs

    return copy_catalogs(Path(folder), force=force)


def spec_schema() -> dict[str, Any]:
    """The JSON Schema of a spec (draft 2020-12): editors use it to complete keys and underline typos."""
    from bankbuild._version import __version__
    from bankbuild.spec.model import Spec

    schema = Spec.model_json_schema()
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "title": "bankbuild spec", "description": f"A bankbuild {__version__} spec: the banks to size.",
            **{k: v for k, v in schema.items() if k not in ("title", "description")}}


def results_schema(kind: str = "size") -> dict[str, Any]:
    """The JSON Schema of the results: ``size`` (``size --json``) or ``rerate`` (``rerate --json``)."""
    from bankbuild._version import __version__

    if kind == "size":
        from bankbuild.results.sizing import ProjectResult as model
    elif kind == "rerate":
        from bankbuild.results.rerate import RerateResult as model
    else:
        raise OptionError("", "kind", f"must be size or rerate (got {kind!r})")
    schema = model.model_json_schema(mode="serialization")
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "title": f"bankbuild {kind} results",
            "description": f"What bankbuild {__version__} prints with '{kind} --json'.",
            **{k: v for k, v in schema.items() if k not in ("title", "description")}}
