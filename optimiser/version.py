"""The version of stowflow (one place; the package, the reports and ``--version`` read it)."""

__all__ = ["__version__"]

__version__ = "0.1.0"
