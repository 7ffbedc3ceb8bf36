"""One exclusion map with the bound of a variant drawn over it (e.g. eccentric vs circular)."""

__all__ = ["comparison_figure"]


def comparison_figure(result, reference, reference_tag, title):
    """Draw ``result`` with the bound of ``reference`` over it, in one panel.

    The reference's full map is a figure of its own; here only its bound is
    drawn (black, dashed), so the two bounds compare on the same axes.

    Parameters
    ----------
    result : ExclusionMap
        Drawn with :func:`~ptaconstrain.report.figures.exclusion_figure`.
    reference : ExclusionMap
        The same host on the same grid under another assumption.
    reference_tag : str
        What the reference assumes, e.g. ``"e = 0"`` or ``"quiet sky"``.
    title : str
        Figure title saying what differs between the two.

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
    >>> fig = comparison_figure(exclusion_map(host, limit, eccentricity=0.5),
    ...                         exclusion_map(host, limit), "e = 0", "e = 0.5 against e = 0")
    >>> fig.get_suptitle(), [t.get_text() for t in fig.axes[0].get_legend().texts][-1]
    ('e = 0.5 against e = 0', 'e = 0: max allowed q')
    """
    from .figures import exclusion_figure, place_panels

    fig = exclusion_figure(result, reference=(reference, reference_tag))
    place_panels(fig, fig.axes[:1], suptitle=True)  # room for the figure title
    fig.suptitle(title, fontsize=11, y=1 - 0.1 / fig.get_figheight(), va="top")
    return fig
