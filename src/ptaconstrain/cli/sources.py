"""The one sensitivity of a command: ``--curve``, ``--array`` or ``--limit-map``."""

import click

__all__ = ["Sensitivity", "load_sensitivity"]


class Sensitivity:
    """The loaded sensitivity and how to ask it for a host's curve.

    Attributes
    ----------
    source : StrainCurve, PulsarArray or LimitMap
    option : str
        The option that named it (``"--curve"``, ``"--array"``, ``"--limit-map"``).
    path : str
    forecast : bool
        True for a noise budget or a pulsar list (the results are forecasts).
    """

    def __init__(self, source, option, path, snr):
        self.source, self.option, self.path, self.snr = source, option, path, snr
        self.forecast = option == "--array" or (option == "--curve" and not source.is_limit)

    def curve_for(self, host):
        """The curve at ``host`` (the plain curve itself for ``--curve``)."""
        if self.option == "--curve":
            return self.source
        if self.option == "--array":
            return self.source.curve_at(host.coord, snr=self.snr)
        return self.source.curve_at(host.coord)

    @property
    def role(self):
        """Provenance key of the file: curve, array or limit_map."""
        return self.option.lstrip("-").replace("-", "_")


def load_sensitivity(curve_path, kind, array_path, limit_map_path, snr=5.0, confidence=None):
    """Load the one sensitivity given; an array's timing fits run behind a progress bar.

    Raises
    ------
    click.UsageError
        Unless exactly one of the three is given, or if its file is missing.
    """
    from pathlib import Path

    from .progress import progress_bar

    sources = {"--curve": curve_path, "--array": array_path, "--limit-map": limit_map_path}
    given = [k for k, v in sources.items() if v is not None]
    if len(given) != 1:
        raise click.UsageError("give exactly one of --curve, --array or --limit-map"
                               + (f" (got {', '.join(given)})" if given else ""))
    option = given[0]
    path = sources[option]
    if not Path(path).is_file():
        raise click.UsageError(f"{option} {path}: file not found; check the path")
    if kind is not None and option != "--curve":
        raise click.UsageError("--kind applies to --curve only")
    if option == "--curve":
        from ..sensitivity.curve import load_curve

        source = load_curve(path, kind=kind, confidence=confidence)
    elif option == "--array":
        from ..sensitivity.pulsar_list import load_array

        source = load_array(path)
        with progress_bar(len(source), "timing-model fits per pulsar") as bar:
            source.weights(source.default_frequencies(), callback=bar.update)  # cached
    else:
        from ..sensitivity.limit_map import load_limit_map

        source = load_limit_map(path)
    return Sensitivity(source, option, path, snr)
