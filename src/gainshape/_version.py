"""The version of gainshape, written in this one place (pyproject.toml reads it)."""

__version__ = "0.1.0"
