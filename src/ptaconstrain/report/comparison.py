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
    """
    from matplotlib.figure import Figure

    from .figures import exclusion_figure

    fig = Figure(figsize=(13.0, 6.4), layout="constrained")
    axes = fig.subplots(1, 2)
    for ax, result in zip(axes, (left, right), strict=True):
        exclusion_figure(result, ax=ax)
    fig.suptitle(title, fontsize=11)
    return fig
