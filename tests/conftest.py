"""Shared fixtures for the tests of the main job: the built-in tables, spec builders and a sizing helper.

The example plant in these fixtures is invented (no real site, company or person).
"""

from __future__ import annotations

import copy
from pathlib import Path

import pytest

SPECS_DIR = Path(__file__).parent / "data" / "specs"

# One bank with the fewest keys the spec allows; tests copy it and change what they look at.
BASE_BANK: dict = {
    "name": "Line 3",
    "supply": {"voltage_v": 480, "frequency_hz": 60},
    "need": {"kvar": 300},
}


def bank_dict(**changes) -> dict:
    """A deep copy of :data:`BASE_BANK` with top-level keys replaced (``None`` removes a key)."""
    bank = copy.deepcopy(BASE_BANK)
    for key, value in changes.items():
        if value is None:
            bank.pop(key, None)
        else:
            bank[key] = value
    return bank


def spec_dict(*banks: dict, **top) -> dict:
    """A spec mapping with the given banks (default: one base bank) and top-level keys."""
    return {**top, "banks": list(banks) if banks else [bank_dict()]}


@pytest.fixture(scope="session")
def catalogs():
    """The built-in rating tables, loaded once."""
    from bankbuild.tables.load import load_catalogs

    return load_catalogs()


@pytest.fixture(scope="session")
def size(catalogs):
    """Validate a spec mapping and run the pipeline on it; returns the ProjectResult."""
    from bankbuild.design.sizing import size_project
    from bankbuild.spec.model import Spec

    def run(data: dict, tables=None):
        return size_project(Spec.model_validate(data), tables or catalogs)

    return run


@pytest.fixture(scope="session")
def size_bank(size):
    """Size a single bank given as keyword changes to the base bank; returns its BankResult."""

    def run(rules: str = "nec", tables=None, **changes):
        return size(spec_dict(bank_dict(**changes), rules=rules), tables).banks[0]

    return run


@pytest.fixture
def write_yaml(tmp_path):
    """Write text (or a mapping, dumped as YAML) to a file under tmp_path and return its path."""
    import yaml

    def write(content, name: str = "spec.yaml") -> Path:
        path = tmp_path / name
        text = content if isinstance(content, str) else yaml.safe_dump(content, sort_keys=False)
        path.write_text(text, encoding="utf-8")
        return path

    return write


@pytest.fixture(scope="session")
def make_bank():
    """:func:`bank_dict` as a fixture: ``make_bank(need={...}, steps=[...])``."""
    return bank_dict


@pytest.fixture(scope="session")
def make_spec():
    """:func:`spec_dict` as a fixture: ``make_spec(bank1, bank2, rules="iec")``."""
    return spec_dict
