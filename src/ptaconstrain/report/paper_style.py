"""Figure sizes for papers and talks: a journal column, a full page, a slide.

Every figure is designed at about a page width (7.2-7.4 in) with 8-10 pt text.
:func:`apply_style` rescales a finished figure to the chosen width: the figure, its
lines and markers shrink or grow together, while the text is kept at least at the
style's smallest legible size, as journals ask (common practice: a single column
of a two-column journal is about 3.3-3.5 in wide, a full page 6.9-7.1 in; text
should print at 6-7 pt or more).  The layout is the figure's own (fixed margins in
figure fractions), so a column figure keeps every label of the page figure.
"""

__all__ = ["STYLES", "apply_style"]

#: name -> (width [in], smallest text size [pt], text scale for slides)
STYLES = {
    "column": (3.5, 5.5, 1.0),
    "page": (7.1, 7.0, 1.0),
    "slide": (10.0, 12.0, 1.15),
}


def apply_style(fig, style="page"):
    """Rescale ``fig`` in place to the width of ``style`` (column, page or slide).

    Parameters
    ----------
    fig : matplotlib Figure
    style : {"column", "page", "slide"}

    Returns
    -------
    matplotlib Figure
        ``fig`` itself.

    Raises
    ------
    InputError
        For an unknown style.
    """
    from matplotlib.lines import Line2D
    from matplotlib.text import Text

    from ..errors import InputError

    if style not in STYLES:
        raise InputError(f"style: {style!r} is unknown; use one of {', '.join(STYLES)}")
    width, smallest, boost = STYLES[style]
    w0, h0 = fig.get_size_inches()
    s = width / w0
    if abs(s - 1.0) < 1e-3 and boost == 1.0:
        return fig
    fig.set_size_inches(width, h0 * s)
    for text in fig.findobj(Text):
        size = text.get_fontsize()
        text.set_fontsize(max(size * s * boost, min(size, smallest)))
    for line in fig.findobj(Line2D):
        line.set_linewidth(line.get_linewidth() * s)
        line.set_markersize(line.get_markersize() * s)
        line.set_markeredgewidth(line.get_markeredgewidth() * s)
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            for which in ("major", "minor"):
                ticks = axis.get_ticklines(minor=which == "minor")
                if ticks:
                    axis.set_tick_params(
                        which=which,
                        length=ticks[0].get_markersize(),
                        width=ticks[0].get_markeredgewidth(),
                    )
        for spine in ax.spines.values():
            spine.set_linewidth(spine.get_linewidth() * s)
    if s < 0.9:
        # the text no longer fits the page margins: let matplotlib make room for it
        # (titles, outside legends and secondary axes included), growing the height
        for ax in fig.axes:
            _one_entry_a_row(ax)
        fig.set_size_inches(width, h0 * max(s, 0.5) * 1.6)
        fig.set_layout_engine("constrained", h_pad=0.02, w_pad=0.02)
    return fig


def _one_entry_a_row(ax):
    """Redo the legend of ``ax`` with one entry a row (a column is too narrow for two)."""
    old = ax.get_legend()
    if old is None or old._ncols == 1:
        return
    handles, labels = old.legend_handles, [t.get_text() for t in old.get_texts()]
    size = old.get_texts()[0].get_fontsize() if labels else None
    ax.legend(
        handles=handles,
        labels=labels,
        loc="upper center",
        ncol=1,
        fontsize=size,
        bbox_to_anchor=old.get_bbox_to_anchor().transformed(ax.transAxes.inverted()).bounds[:2],
        frameon=old.get_frame_on(),
    )
