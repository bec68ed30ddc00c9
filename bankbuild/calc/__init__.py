"""Pure arithmetic on floats: no I/O, no pandas, yaml, typer or reportlab."""
