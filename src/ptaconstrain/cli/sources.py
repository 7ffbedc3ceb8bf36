"""The one sensitivity of a command: ``--curve``, ``--array`` or ``--limit-map``."""

import click

__all__ = [
    "Sensitivity",
    "load_sensitivity",
    "chosen_source",
    "open_source",
    "load_curves",
    "provenance_files",
    "is_ecsv",
    "column_map",
]


def load_curves(paths, kind=None, confidence=None):
    """One curve, or the tightest of several upper limits (``--curve`` repeated).

    Parameters
    ----------
    paths : str or tuple of str
    kind, confidence
        As :func:`ptaconstrain.sensitivity.curve.load_curve` (``kind`` applies to
        plain-text files only when several are given).

    Returns
    -------
    StrainCurve (a CombinedLimit for several)
    """
    from pathlib import Path

    from ..sensitivity.curve import load_curve

    if not isinstance(paths, tuple):
        return load_curve(paths, kind=kind, confidence=confidence)
    from ..sensitivity.combined import tightest_limit

    curves = [
        load_curve(p, kind=None if is_ecsv(p) else kind, confidence=confidence) for p in paths
    ]
    names = [Path(p).name for p in paths]
    if len(set(names)) < len(names):
        names = [str(p) for p in paths]
    return tightest_limit(curves, names)


def is_ecsv(path):
    """True for an ECSV file (it states its own kind); --kind is for plain text."""
    try:
        with open(path, encoding="utf-8", errors="replace") as fh:
            return fh.readline().startswith("# %ECSV")
    except OSError:
        return False  # load_curve reports a missing file in one line


def provenance_files(option, path):
    """Provenance role -> path: ``curve`` for one, ``curve_1``, ``curve_2``, ... for several."""
    role = option.lstrip("-")
    if isinstance(path, tuple):
        return {f"{role}_{i}": p for i, p in enumerate(path, 1)}
    return {role: path}


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
        """The curve at ``host`` (the plain curve itself for ``--curve``).

        A host without a sky position gets the sky average, with the one warning
        :func:`ptaconstrain.analysis.exclusion.warn_sky_averaged` gives.
        """
        if self.option == "--curve":
            return self.source
        if host.coord is None:
            from ..analysis.exclusion import warn_sky_averaged

            warn_sky_averaged(host, stacklevel=3)
        if self.option == "--array":
            return self.source.curve_at(host.coord, snr=self.snr)
        return self.source.curve_at(host.coord)

    def sky_note(self, host, curve):
        """Where ``curve`` (from :meth:`curve_for`) looks: '' for a plain curve."""
        if self.option == "--curve":
            return ""
        if host.coord is None:
            return "sky-averaged: the host has no --ra/--dec"
        return f"at the host's position ({curve.sky})"

    @property
    def role(self):
        """Provenance key of the file: curve, array or limit_map."""
        return self.option.lstrip("-").replace("-", "_")


def chosen_source(curve_path, array_path, limit_map_path, kind=None, background=None):
    """The one sensitivity option given, after the rules every command shares.

    Parameters
    ----------
    curve_path, array_path, limit_map_path : str, tuple of str or None
        The values of ``--curve``, ``--array`` and ``--limit-map``.
    kind, background
        ``--kind`` (plain-text curves only) and ``--background`` (pulsar lists only).

    Returns
    -------
    option : str
        ``"--curve"``, ``"--array"`` or ``"--limit-map"``.
    path : str or tuple of str

    Raises
    ------
    click.UsageError
        Unless exactly one of the three is given, if its file is missing, or if
        ``kind`` or ``background`` do not apply to it.
    """
    from pathlib import Path

    sources = {"--curve": curve_path, "--array": array_path, "--limit-map": limit_map_path}
    given = [k for k, v in sources.items() if v is not None]
    if len(given) != 1:
        raise click.UsageError(
            "give exactly one of --curve, --array or --limit-map"
            + (f" (got {', '.join(given)})" if given else "")
        )
    option = given[0]
    path = sources[option]
    for one in path if isinstance(path, tuple) else (path,):
        if not Path(one).is_file():
            raise click.UsageError(f"{option} {one}: file not found; check the path")
    if kind is not None and option != "--curve":
        raise click.UsageError("--kind applies to --curve only")
    if background is not None and option != "--array":
        raise click.UsageError(
            "--background: the background enters a forecast from a pulsar "
            "list; give --array (or drop --background)"
        )
    return option, path


def open_source(option, path, kind=None, snr=5.0, confidence=None, background=None):
    """Load the sensitivity :func:`chosen_source` picked; an array's fits run behind a bar."""
    from .progress import progress_bar

    if option == "--curve":
        source = load_curves(path, kind=kind, confidence=confidence)
    elif option == "--array":
        from ..sensitivity.pulsar_list import load_array

        source = load_array(path).with_background(background)
        with progress_bar(len(source), "timing-model fits per pulsar") as bar:
            source.weights(source.default_frequencies(), callback=bar.update)  # cached
    else:
        from ..sensitivity.limit_map import load_limit_map

        source = load_limit_map(path)
    return Sensitivity(source, option, path, snr)


def load_sensitivity(
    curve_path, kind, array_path, limit_map_path, snr=5.0, confidence=None, background=None
):
    """Pick (:func:`chosen_source`) and load (:func:`open_source`) the one sensitivity given.

    Raises
    ------
    click.UsageError
        As :func:`chosen_source`.
    """
    option, path = chosen_source(curve_path, array_path, limit_map_path, kind, background)
    return open_source(option, path, kind, snr, confidence, background)


def column_map(columns_file, column_pairs):
    """The column mapping of ``--columns FILE`` and repeated ``--column FIELD=COLUMN``."""
    from ..catalogue import ColumnMap, load_column_map

    columns = load_column_map(columns_file) if columns_file else ColumnMap()
    extra = {}
    for text in column_pairs:
        field, sep, col = str(text).partition("=")
        if not sep or not field.strip() or not col.strip():
            raise click.BadParameter(
                f"{text!r}: write FIELD=COLUMN, e.g. distance=dist_mpc", param_hint="'--column'"
            )
        extra[field.strip()] = col.strip()
    return ColumnMap({**columns.columns, **extra}, columns.units) if extra else columns
