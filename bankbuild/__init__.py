"""bankbuild: size, protect and document low-voltage power-factor-correction capacitor banks."""

__version__ = "0.1.0"
