"""bankbuild: size, protect and document low-voltage power-factor-correction capacitor banks.

The Python API (the command line calls the same functions)::

    import bankbuild

    project = bankbuild.size("line3.yaml")          # a path, YAML text or a dict
    for bank in project.banks:
        print(bank.name, bank.delivered_kvar, bank.main.device_rating_a)
    steps = project.banks[0].to_frame("steps")       # pandas views: steps, checks, protection, bom

Bad input raises :class:`SpecError`, :class:`CatalogError` or :class:`OptionError` (all
:class:`BankbuildError`), each with ``where`` (the file), ``field`` and ``problem``. Importing the package is
light: pydantic and the pipeline load on the first call, pandas on the first ``to_frame()``.
"""

from bankbuild._version import __version__
from bankbuild.errors import BankbuildError, CatalogError, OptionError, SpecError

_API = ("check_tables", "copy_tables", "demo", "kvar", "load_spec", "rerate", "results_schema", "size",
        "spec_schema")

__all__ = [
    "BankbuildError", "CatalogError", "OptionError", "SpecError", "__version__", *_API,
]


def __getattr__(name: str):
    """The API functions, loaded with :mod:`bankbuild.api` on first use (the command line's ``--help`` and
    every import of a sub-module skip it)."""
    if name in _API:
        from bankbuild import api

        return getattr(api, name)
    raise AttributeError(f"module 'bankbuild' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *_API})
