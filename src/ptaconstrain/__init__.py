"""ptaconstrain: bound black-hole companions in galaxies with pulsar-timing-array limits.

The public names load on first use (PEP 562), so ``import ptaconstrain`` stays
cheap (no astropy, no matplotlib) and the command line starts fast::

    from ptaconstrain import Host, load_curve, exclusion_map

    host = Host("My galaxy", "2e10 solMass", "100 Mpc")
    result = exclusion_map(host, load_curve("limit.ecsv"))

Input errors raise :class:`PtaconstrainError` (a ``ValueError``); soft
assumptions made on the user's behalf warn with :class:`PtaconstrainWarning`.
"""

import importlib

from ._version import __version__

#: public name -> module that defines it
_WHERE = {
    "Host": "ptaconstrain.binary.host",
    "StrainCurve": "ptaconstrain.sensitivity.curve",
    "load_curve": "ptaconstrain.sensitivity.curve",
    "PulsarArray": "ptaconstrain.sensitivity.pulsar_array",
    "load_array": "ptaconstrain.sensitivity.pulsar_list",
    "LimitMap": "ptaconstrain.sensitivity.limit_map",
    "load_limit_map": "ptaconstrain.sensitivity.limit_map",
    "exclusion_map": "ptaconstrain.analysis.exclusion",
    "exclusion_probability": "ptaconstrain.analysis.probability",
    "forecast_over_time": "ptaconstrain.analysis.epochs",
    "Background": "ptaconstrain.sensitivity.background",
    "rank_catalog": "ptaconstrain.catalogue.ranking",
    "PtaconstrainError": "ptaconstrain.errors",
    "PtaconstrainWarning": "ptaconstrain.errors",
}

__all__ = ["__version__", *_WHERE]


def __getattr__(name):
    """Import a public name from its module on first access (PEP 562)."""
    try:
        module = _WHERE[name]
    except KeyError:
        raise AttributeError(f"module 'ptaconstrain' has no attribute {name!r}") from None
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
