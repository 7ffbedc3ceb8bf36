"""One figure comparing the mass-ratio bounds of several hosts."""

import numpy as np
from astropy import units as u

from .statements import figure_statement
from .style import minor_ticks_as_markers, unicode_log_ticks

__all__ = ["OKABE_ITO", "overview_figure"]

#: Okabe & Ito (2008) colour-universal-design palette (without black).
OKABE_ITO = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442")


def overview_figure(limit_maps, forecast_maps=(), title=None, names=None):
    """max_mass_ratio against period for each host: one set solid, the other dashed.

    Parameters
    ----------
    limit_maps : sequence of ExclusionMap
        Drawn solid (typically from upper-limit curves: exclusions).
    forecast_maps : sequence of ExclusionMap, optional
        Drawn dashed (typically from noise budgets), same hosts in the same order.
    title : str, optional
    names : (str, str), optional
        Legend text of the solid and dashed sets; default "exclusion (<label>)"
        and "forecast (<label>)".

    Returns
    -------
    matplotlib Figure

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_map
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> fig = overview_figure([result], title="Invented host")
    >>> type(fig).__name__
    'Figure'
    """
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    fig = Figure(figsize=(7.2, 5.6))
    ax = fig.subplots()
    fig.subplots_adjust(left=0.11, right=0.97, top=0.87, bottom=0.3)
    chirped = False
    for i, r in enumerate(limit_maps):
        colour = OKABE_ITO[i % len(OKABE_ITO)]
        chirped |= _plot_bound(ax, r, colour, 1.8, "-", label=r.host.name)
        if i < len(forecast_maps):
            chirped |= _plot_bound(ax, forecast_maps[i], colour, 1.2, "--")
    if names is None:
        names = (
            f"exclusion: {limit_maps[0].label}",
            forecast_maps[0].label if forecast_maps else "",
        )
    styles = [Line2D([], [], color="0.3", lw=1.8, label=names[0])]
    if forecast_maps:
        styles.append(Line2D([], [], color="0.3", lw=1.2, ls="--", label=names[1]))
    if chirped:
        styles.append(
            Line2D(
                [],
                [],
                color="0.3",
                lw=0.9,
                ls=":",
                label="where the binary chirps (not a CW bound)",
            )
        )
    ax.set_xscale("log")
    ax.set_yscale("log")
    lowest = [
        np.nanmin(r.max_mass_ratio)
        for r in (*limit_maps, *forecast_maps)
        if np.isfinite(r.max_mass_ratio).any()
    ]
    qmin = min(np.nanmin(r.mass_ratio) for r in limit_maps)
    ax.set_ylim(max(qmin, 0.5 * min(lowest)) if lowest else qmin, 1.05)
    ax.set_xlabel("orbital period P [yr] (observer frame); each line starts at its host's ISCO")
    ax.set_ylabel("bound on the mass ratio q = m₂/m₁")
    # y=1.0 fixes the title where matplotlib would put it, without a layout pass
    if title is None:
        title = (
            "Companions above each line are excluded (solid) or would be detectable "
            f"(dashed)\nsolid: {figure_statement(limit_maps[0])}"
        )
        if forecast_maps:
            title += f"\ndashed: {figure_statement(forecast_maps[0])}"
    ax.set_title(title, fontsize=9, y=1.0)
    unicode_log_ticks(ax.xaxis, ax.yaxis)
    minor_ticks_as_markers(ax, ax.xaxis, ax.get_xlim(), "bottom")
    minor_ticks_as_markers(ax, ax.yaxis, ax.get_ylim(), "left")
    handles, _ = ax.get_legend_handles_labels()
    ax.legend(
        handles=handles + styles,
        fontsize=8,
        ncol=2,
        loc="upper center",
        bbox_to_anchor=(0.5, -0.13),
        frameon=False,
    )
    ax.grid(True, which="major", color="0.9")
    return fig


def _plot_bound(ax, result, colour, lw, ls, label=None):
    """The bound of one map; dotted where it lies in the chirping region. True if any."""
    p = result.period.to_value(u.yr)
    q = result.max_mass_ratio
    mono = result.bound_is_monochromatic
    ax.plot(p, np.where(mono, q, np.nan), color=colour, lw=lw, ls=ls, label=label)
    chirps = ~mono & np.isfinite(q)
    if chirps.any():
        # include the neighbours so that the two pieces join
        edge = chirps | np.roll(chirps, 1) | np.roll(chirps, -1)
        ax.plot(p, np.where(edge, q, np.nan), color=colour, lw=0.9, ls=":")
    return bool(chirps.any())
