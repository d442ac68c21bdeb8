"""The version of forensic: one place, read by the package, the outputs and the build."""

__all__ = ["__version__"]

__version__ = "0.1.0"
