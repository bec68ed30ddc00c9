"""The package version, in a leaf module every room may import (the package root imports the API)."""

__version__ = "0.1.0"
