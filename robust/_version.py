"""The version of robust (its own module, so that every layer may read it)."""

__version__ = "0.1.0"
