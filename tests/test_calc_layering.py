"""calc/ is the bottom layer: it may import only math, dataclasses, typing, __future__ and calc itself."""

import ast
from pathlib import Path

import pytest

CALC_DIR = Path(__file__).resolve().parent.parent / "bankbuild" / "calc"
ALLOWED = {"math", "dataclasses", "typing", "__future__"}
MODULES = sorted(CALC_DIR.glob("*.py"))


def _imports(tree: ast.AST) -> list[tuple[str, int]]:
    """(module name, relative level) of every import in a module, nested ones included."""
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [(alias.name, 0) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            found.append((node.module or "", node.level))
    return found


def _allowed(name: str, level: int) -> bool:
    if level == 1:  # from . import x / from .x import y: a sibling inside calc
        return True
    if level > 1:  # from .. import: reaches above calc
        return False
    top = name.split(".")[0]
    return top in ALLOWED or name == "bankbuild.calc" or name.startswith("bankbuild.calc.")


def test_calc_has_modules():
    expected = {"power.py", "capacitor.py", "detuning.py", "discharge.py", "system.py"}
    assert {p.name for p in MODULES} >= expected


@pytest.mark.parametrize("path", MODULES, ids=lambda p: p.name)
def test_calc_module_imports_only_allowed(path):
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    bad = [name or "." * level for name, level in _imports(tree) if not _allowed(name, level)]
    assert not bad, f"{path.name} imports outside the calc layer: {bad}"


def test_checker_catches_forbidden_imports():
    tree = ast.parse("import numpy\nfrom pandas import DataFrame\nfrom .. import errors\nimport math\n")
    assert [n for n, lv in _imports(tree) if not _allowed(n, lv)] == ["numpy", "pandas", ""]
