"""ptaconstrain: bound black-hole companions in galaxies with pulsar-timing-array limits.

Kept import-light on purpose (no astropy here) so that the command line starts
fast; import the submodules you need, e.g. ``from ptaconstrain.analysis.exclusion import
exclusion_map``.
"""

__version__ = "0.1.0"
__all__ = ["__version__"]
