"""The version of plant-audit (one place; the package and the reports read it here)."""

__version__ = "0.1.0"
