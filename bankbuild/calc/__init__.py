"""Pure arithmetic on floats: no I/O, no pandas, yaml, typer or reportlab."""

EPS = 1e-9
"""The one tolerance for comparing computed kvar, currents and ratios (absorbs floating-point noise only)."""
