"""bankbuild: size, protect and document low-voltage power-factor-correction capacitor banks."""

from bankbuild._version import __version__

__all__ = ["__version__"]
