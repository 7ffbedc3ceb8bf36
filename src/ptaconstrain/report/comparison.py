"""Two exclusion maps side by side (e.g. circular vs eccentric, quiet sky vs background)."""

__all__ = ["comparison_figure"]


def comparison_figure(left, right, title):
    """Draw two :class:`~ptaconstrain.analysis.exclusion.ExclusionMap` results in one figure.

    Parameters
    ----------
    left, right : ExclusionMap
        Drawn with :func:`~ptaconstrain.report.figures.exclusion_figure` into
        the left and right panel.
    title : str
        Figure title saying what differs between the panels.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, StrainCurve, exclusion_map
    >>> f = np.geomspace(2e-9, 3e-7, 40) * u.Hz
    >>> limit = StrainCurve(f, 1e-14 * (f / (1e-8 * u.Hz)).value, "h0_limit",
    ...                     {"span": "15 yr"})  # an invented limit
    >>> host = Host("Invented", 2e10, 50)
    >>> fig = comparison_figure(exclusion_map(host, limit),
    ...                         exclusion_map(host, limit, eccentricity=0.5), "e = 0 and 0.5")
    >>> fig.get_suptitle()
    'e = 0 and 0.5'
    """
    from matplotlib.figure import Figure

    from .figures import exclusion_figure, place_panels

    # fixed positions from counted title lines and legend rows: a layout engine
    # (constrained layout) would measure every text once more before drawing
    fig = Figure(figsize=(13.0, 6.4))
    axes = fig.subplots(1, 2)
    for ax, result in zip(axes, (left, right), strict=True):
        exclusion_figure(result, ax=ax)
    place_panels(fig, axes, suptitle=True)
    fig.suptitle(title, fontsize=11, y=1 - 0.1 / fig.get_figheight(), va="top")
    return fig
