"""One figure of several sensitivity curves: upper limits and forecasts, overlaid."""

import numpy as np
from astropy import units as u

from .overview import OKABE_ITO
from .statements import sky_text
from .style import unicode_log_ticks

__all__ = ["curves_figure"]


def curves_figure(curves, names, snr=5.0, span=None, title=None):
    """The h0 each curve reaches against GW frequency, limits solid, forecasts dashed.

    An upper limit is drawn as its h0; a noise budget as the h0 reaching S/N
    ``snr`` over its span (orientation-averaged), so that both read as "binaries
    above the line are excluded / would be detectable".

    Parameters
    ----------
    curves : sequence of StrainCurve
    names : sequence of str
        Legend names (e.g. file names).
    snr : float
    span : Quantity [time], optional
        Span for noise budgets without one (default each curve's own).
    title : str, optional

    Returns
    -------
    matplotlib Figure
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(7.2, 5.4))
    ax = fig.subplots()
    fig.subplots_adjust(left=0.12, right=0.97, top=0.9, bottom=0.32)
    for i, (curve, name) in enumerate(zip(curves, names, strict=True)):
        f = curve.frequency
        h = curve.h0_threshold(f, snr=snr, span=curve.observing_span(span))
        if curve.is_limit:
            what = f"upper limit, {100 * curve.confidence:.3g}% confidence"
        else:
            what = (
                f"forecast: S/N ≥ {snr:g} over {curve.observing_span(span).to_value(u.yr):.3g} yr"
            )
        ax.plot(
            f.to_value(u.nHz),
            np.asarray(h, dtype=float),
            color=OKABE_ITO[i % len(OKABE_ITO)],
            lw=1.6,
            ls="-" if curve.is_limit else "--",
            label=f"{name}: {what}; {sky_text(curve)}",
        )
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("GW frequency f [nHz]")
    ax.set_ylabel("strain amplitude h₀")
    unicode_log_ticks(ax.xaxis, ax.yaxis)
    ax.grid(True, which="major", color="0.9")
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.13), fontsize=8, frameon=False)
    ax.set_title(
        title
        or "Sensitivity curves: a binary above a solid line is excluded, above "
        "a dashed line\nwould be detectable (forecast, orientation-averaged)",
        fontsize=9,
    )
    return fig
