"""The package version (one place; the package and provenance read it here)."""

__version__ = "0.2.0.dev0"
