"""The rooms of the package and the arrows between them: each room may import only the rooms listed here.

cli -> api -> design -> calc / tables / spec -> results; cli -> reports -> results. files (a set of files written
whole, under a lock) is a leaf for the rooms that write: tables (catalog copy), reports, api and cli. calc/ is the
bottom layer: the standard library and calc itself, nothing else. reports/ print what results hold: they never
import calc, spec, tables or design. design/ never imports cli or reports. A test below proves the checker
catches a broken arrow.
"""

import ast
import sys
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "bankbuild"

# room -> the package rooms it may import (itself always allowed). "errors" is the shared exception family.
ALLOWED_ROOMS = {
    "calc": set(),
    "results": {"errors"},
    "tables": {"errors", "files"},
    "spec": {"errors"},
    "design": {"calc", "tables", "spec", "results", "errors"},
    "reports": {"results", "errors", "files"},
    "api": {"design", "tables", "spec", "results", "errors", "files"},
    "cli": {"api", "design", "tables", "spec", "results", "reports", "errors", "calc", "__init__", "files"},
    "errors": set(),
    "files": {"errors"},
    "__init__": {"api", "errors", "results", "design", "spec", "tables"},
    "__main__": {"cli"},
    "_version": set(),
}
SHARED = {"errors", "_version"}  # leaf modules every room may import
THIRD_PARTY_OK = {
    "calc": set(),
    "results": {"pydantic", "pandas"},  # pandas only inside results/frames.py's to_frame, imported on use
    "tables": set(),
}


def _room(path: Path) -> str:
    rel = path.relative_to(PACKAGE)
    return rel.parts[0] if len(rel.parts) > 1 else rel.stem


def _imports(path: Path) -> list[str]:
    """Absolute names of every import in a module (nested ones included; relative ones resolved)."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    package = ["bankbuild", *path.relative_to(PACKAGE).parent.parts]
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - node.level + 1]
                name = ".".join(base + ([node.module] if node.module else []))
                if not node.module:  # from . import x: each x is a module of that package
                    found += [f"{name}.{alias.name}" for alias in node.names]
                    continue
                found.append(name)
            else:
                found.append(node.module or "")
    return found


def broken_arrows(room: str, names: list[str]) -> list[str]:
    """The imports of a module in ``room`` that the layout forbids."""
    bad = []
    for name in names:
        parts = name.split(".")
        if parts[0] == "bankbuild":
            if len(parts) == 1:
                target = "__init__"
            else:
                target = parts[1]
            if target not in SHARED and target != room and target not in ALLOWED_ROOMS[room]:
                bad.append(name)
        elif room in THIRD_PARTY_OK and parts[0] not in sys.stdlib_module_names:
            if parts[0] not in THIRD_PARTY_OK[room]:
                bad.append(name)
    return bad


MODULES = sorted(p for p in PACKAGE.rglob("*.py"))


def test_every_module_is_in_a_known_room():
    assert {_room(p) for p in MODULES} <= set(ALLOWED_ROOMS)


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(PACKAGE)))
def test_module_imports_only_allowed_rooms(path):
    room = _room(path)
    bad = broken_arrows(room, _imports(path))
    assert not bad, f"{path.relative_to(PACKAGE)} ({room}/) imports across the layout: {bad}"


@pytest.mark.parametrize(("room", "name"), [
    ("design", "bankbuild.cli.app"),
    ("design", "bankbuild.reports.terminal"),
    ("reports", "bankbuild.calc.power"),
    ("reports", "bankbuild.spec.model"),
    ("reports", "bankbuild.design.sizing"),
    ("calc", "bankbuild.results.sizing"),
    ("calc", "numpy"),
    ("calc", "pandas"),
    ("results", "bankbuild.design.rules"),
    ("calc", "bankbuild.files"),
    ("design", "bankbuild.files"),
])
def test_checker_catches_a_broken_arrow(room, name):
    assert broken_arrows(room, [name]) == [name]


def test_checker_allows_the_arrows_of_the_layout():
    assert broken_arrows("calc", ["math", "bankbuild.calc._domain", "dataclasses"]) == []
    assert broken_arrows("design", ["bankbuild.calc.power", "bankbuild.results.sizing", "bankbuild.tables.rows"]) == []
    assert broken_arrows("reports", ["bankbuild.results.sizing", "reportlab.platypus"]) == []


def test_relative_imports_are_resolved(tmp_path):
    mod = PACKAGE / "reports" / "terminal.py"
    names = _imports(mod)
    assert all(not n.startswith(".") for n in names)


def test_calc_has_modules():
    expected = {"power.py", "capacitor.py", "detuning.py", "discharge.py", "system.py"}
    assert {p.name for p in (PACKAGE / "calc").glob("*.py")} >= expected


def test_developers_guide_names_every_module():
    """DEVELOPERS.md describes the rooms with every module named, so a new module cannot go unmentioned."""
    guide = (PACKAGE.parent / "DEVELOPERS.md").read_text(encoding="utf-8")
    missing = [str(p.relative_to(PACKAGE)) for p in MODULES
               if p.name != "__init__.py" and p.name not in guide]
    assert not missing, f"modules not named in DEVELOPERS.md: {missing}"
