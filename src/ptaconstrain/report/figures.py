"""Exclusion figures: mass ratio against orbital period, regions shaded and labelled.

Colours are from the Okabe & Ito (2008) colour-universal-design palette, safe
for the common colour-vision deficiencies; regions are also told apart by
hatching so that the figure survives grey-scale printing.
"""

import numpy as np
from astropy import units as u

from ..analysis.regions import ABOVE_ISCO, ALLOWED, CHIRPING, EXCLUDED, UNCONSTRAINED
from .statements import figure_statement, probability_footer
from .style import MSUN, minor_ticks_as_markers, sci_text, unicode_log_ticks

__all__ = [
    "REGION_STYLE",
    "exclusion_figure",
    "save_figure",
    "unify_symbols",
    "SYMBOLS",
    "shows_in",
    "place_panels",
]

# code: (label for limits, label for forecasts, colour, hatch)
REGION_STYLE = {
    ALLOWED: ("allowed", "not detectable", "#FFFFFF", None),
    EXCLUDED: ("excluded", "detectable", "#56B4E9", None),
    CHIRPING: ("chirping within span", "chirping within span", "#E69F00", "//"),
    UNCONSTRAINED: ("outside curve band", "outside curve band", "#D9D9D9", None),
    ABOVE_ISCO: ("above ISCO (no binary)", "above ISCO (no binary)", "#7F7F7F", "xx"),
}


def _edges(x):
    lx = np.log10(x)
    mid = 0.5 * (lx[1:] + lx[:-1])
    first = lx[0] - (mid[0] - lx[0]) if lx.size > 1 else lx[0] - 0.5
    last = lx[-1] + (lx[-1] - mid[-1]) if lx.size > 1 else lx[-1] + 0.5
    return 10 ** np.concatenate([[first], mid, [last]])


_YR_S = u.yr.to(u.s)
_TITLE_PAD = 34.0  # points above the axes: the top axis (ticks, labels, label) + 6 pt


def _period_to_nhz(x):
    """P [yr] <-> f = 2/P [nHz]; the map is its own inverse."""
    with np.errstate(divide="ignore", over="ignore"):
        return 2.0e9 / (np.asarray(x, dtype=float) * _YR_S)


def _q_to_m2(q, m_tot):
    q = np.asarray(q, dtype=float)
    return m_tot * q / (1.0 + q)


def _m2_to_q(m2, m_tot):
    m2 = np.asarray(m2, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return m2 / (m_tot - m2)


def exclusion_figure(result, ax=None, prob_map=None, merger_times=None, reference=None):
    """Draw an :class:`~ptaconstrain.analysis.exclusion.ExclusionMap` on log axes.

    Parameters
    ----------
    result : ExclusionMap
    ax : matplotlib Axes, optional
        Draw into these axes (e.g. one panel of the caller's figure); by
        default a new :class:`matplotlib.figure.Figure` is made, without pyplot.
    prob_map : ProbabilityMap, optional
        From :func:`ptaconstrain.analysis.probability.exclusion_probability`: its
        probability contours are drawn over the deterministic map.
    merger_times : Quantity [time] or True, optional
        Draw lines of equal rest-frame merger time (Peters 1964) as guides; True
        gives 1 Myr, 100 Myr and the Hubble time.
    reference : (ExclusionMap, str), optional
        Another map of the same host and grid and what differs in it (e.g.
        ``(circular, "e = 0")``): its bound (where it is a continuous-wave
        bound) is drawn as a black dashed line over this map, so the two bounds
        compare on one set of axes.

    Returns
    -------
    matplotlib.figure.Figure
        The new figure, or the figure that holds ``ax``.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_map
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> fig = exclusion_figure(result)
    >>> type(fig).__name__, fig.axes[0].get_xscale()
    ('Figure', 'log')
    """
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch

    own_figure = ax is None
    if own_figure:
        # Fixed margins (place_panels below): constrained layout doubles the drawing time.
        # These are the final ones for a two-line title and a four-row legend; they are
        # set first because contour labels are placed in screen space when drawn in.
        fig = Figure(figsize=(7.4, 5.8))
        ax = fig.subplots()
        fig.subplots_adjust(left=0.11, right=0.87, bottom=0.23, top=0.85)
    else:
        fig = ax.figure
    codes = sorted(REGION_STYLE)
    cmap = ListedColormap([REGION_STYLE[c][2] for c in codes])
    norm = BoundaryNorm(np.arange(len(codes) + 1) - 0.5, cmap.N)
    p = result.period.to_value(u.yr)
    q = result.mass_ratio
    pe, qe = _edges(p), _edges(q)
    _draw_regions(ax, pe, qe, result.region, cmap, norm)
    for code in (CHIRPING, ABOVE_ISCO):
        mask = (result.region == code).astype(float)
        if mask.any():
            ax.contourf(
                p, q, mask, levels=[0.5, 1.5], colors="none", hatches=[REGION_STYLE[code][3]]
            )
    label = (
        f"max allowed q ({result.label})"
        if result.is_limit
        else f"detection threshold ({result.label})"
    )
    if prob_map is not None:
        label = f"best-fit host: {label}"
    qmax = result.max_mass_ratio
    chirps = ~result.bound_is_monochromatic & np.isfinite(qmax)
    ax.plot(p, np.where(chirps, np.nan, qmax), color="#0072B2", lw=1.8, label=label)
    if chirps.any():
        ax.plot(
            p,
            np.where(chirps, qmax, np.nan),
            color="#0072B2",
            lw=1.4,
            ls="-.",
            label="same, where the binary chirps (not a CW bound)",
        )
    if reference is not None:
        other, tag = reference
        ax.plot(  # where a CW bound (not where its binary chirps)
            other.period.to_value(u.yr),
            np.where(other.bound_is_monochromatic, other.max_mass_ratio, np.nan),
            color="black",
            lw=1.4,
            ls=(0, (5, 2)),
            label=f"{tag}: {'max allowed q' if other.is_limit else 'detection threshold'}",
        )
    if prob_map is not None:
        from .probability_plot import add_probability_contours

        add_probability_contours(ax, prob_map, levels=prob_map.credibility)
        part = prob_map.above_isco_fraction
        if np.any((part > 0.01) & (part < 1.0)):
            from matplotlib.lines import Line2D

            ax.add_line(Line2D([], [], ls="none", label="(short P: some mass samples above ISCO)"))
        top_level = max(prob_map.credibility)
        cred = prob_map.tightest(top_level)
        if cred is not None:
            cp, cq = cred[0].to_value(u.yr), cred[1]
            ax.plot([cp], [cq], marker="^", color="black", ms=8, ls="none", zorder=5)
            ax.annotate(
                f"q > {cq:.3g} at {100 * top_level:g}%\nprobability",
                (cp, cq),
                xytext=(-40, 34),
                textcoords="offset points",
                fontsize=9,
                ha="right",
                bbox={"boxstyle": "round", "fc": "white", "ec": "0.6", "alpha": 0.9},
                arrowprops={"arrowstyle": "-", "color": "black"},
            )
    if merger_times is not None:
        _merger_lines(ax, result, None if merger_times is True else merger_times)
    if hasattr(result.curve, "source_at"):
        _mark_sources(ax, result)
    if result.hardening_period is not None:
        ax.plot(
            result.hardening_period.to_value(u.yr),
            q,
            color="#009E73",
            ls="--",
            lw=1.4,
            label="hardening radius aₕ = Gμ/4σ² (guide)",
        )
    best = result.tightest()
    if best is not None:
        bp, bq = best[0].to_value(u.yr), best[1]
        ax.plot([bp], [bq], marker="v", color="#D55E00", ms=9, ls="none", zorder=5)
        phrase = "ruled out" if result.is_limit else "detectable"
        # keep the label inside the axes: to the left of a point in the right half
        right_half = np.log(bp / pe[0]) > 0.5 * np.log(pe[-1] / pe[0])
        ax.annotate(
            f"q > {bq:.3g} {phrase}\nat P = {bp:.3g} yr",
            (bp, bq),
            xytext=(-12 if right_half else 12, -30),
            textcoords="offset points",
            ha="right" if right_half else "left",
            fontsize=9,
            color="#D55E00",
            bbox={"boxstyle": "round", "fc": "white", "ec": "none", "alpha": 0.8},
            arrowprops={"arrowstyle": "-", "color": "#D55E00"},
        )
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(pe[0], pe[-1])
    ax.set_ylim(qe[0], min(qe[-1], 1.0))
    ax.set_xlabel("orbital period P [yr] (observer frame)")
    ax.set_ylabel("mass ratio q = m₂/m₁")
    top = ax.secondary_xaxis("top", functions=(_period_to_nhz, _period_to_nhz))
    top.set_xlabel("GW frequency f = 2/P [nHz]")
    m_tot = result.host.mass.to_value(u.Msun)
    right = ax.secondary_yaxis(
        "right", functions=(lambda x: _q_to_m2(x, m_tot), lambda m: _m2_to_q(m, m_tot))
    )
    right.set_ylabel(f"companion mass m₂ [{MSUN}]")
    unicode_log_ticks(ax.xaxis, ax.yaxis, top.xaxis, right.yaxis)
    p_lim, q_lim = ax.get_xlim(), ax.get_ylim()
    minor_ticks_as_markers(ax, ax.xaxis, p_lim, "bottom")
    minor_ticks_as_markers(ax, ax.yaxis, q_lim, "left")
    minor_ticks_as_markers(ax, top.xaxis, _period_to_nhz(p_lim), "top", _period_to_nhz)
    minor_ticks_as_markers(
        ax, right.yaxis, _q_to_m2(q_lim, m_tot), "right", lambda m: _m2_to_q(m, m_tot)
    )
    lim = result.is_limit
    handles = [
        Patch(
            facecolor=REGION_STYLE[c][2],
            edgecolor="0.4",
            hatch=REGION_STYLE[c][3],
            label=REGION_STYLE[c][0 if lim else 1],
        )
        for c in codes
        if np.any(result.region == c)
    ]
    line_handles, _ = ax.get_legend_handles_labels()
    entries = handles + [h for h in line_handles if shows_in(ax, h)]
    ax.legend(
        handles=entries,
        loc="upper center",
        bbox_to_anchor=(0.5, -0.11),
        ncol=2,
        fontsize=8,
        frameon=False,
    )
    kind = figure_statement(result)
    if prob_map is not None:
        fig.text(
            0.01,
            0.005,
            probability_footer(prob_map),
            fontsize=7,
            color="0.3",
            ha="left",
            va="bottom",
        )
    host = result.host
    # A fixed offset above the top axis (its tick labels and label take ~31 pt): with
    # the automatic title position matplotlib lays the top axis out a second time.
    ax.set_title(
        f"{host.name}: M = {sci_text(m_tot)} {MSUN}, luminosity distance "
        f"{host.distance.to_value(u.Mpc):.3g} Mpc\n{_clauses(f'{kind}; {result.orbit}')}",
        fontsize=10,
        y=1.0,
        pad=_TITLE_PAD,
    )
    if own_figure:
        place_panels(fig, [ax])
    return fig


def _clauses(text, width=72):
    """``text`` broken into lines at its '; ' clauses, each line at most ``width`` long."""
    lines = []
    for clause in text.split("; "):
        if lines and len(lines[-1]) + 2 + len(clause) <= width:
            lines[-1] += "; " + clause
        else:
            lines.append(clause)
    return "\n".join(lines)


def _mark_sources(ax, result):
    """Dotted verticals where the tightest of several limits changes, each span named."""
    from matplotlib.lines import Line2D

    p = result.period.to_value(u.yr)
    names = result.curve.source_at(result.frequency)
    names = np.where(np.isfinite(result.max_mass_ratio), names, "")
    change = np.flatnonzero(names[1:] != names[:-1]) + 1
    edges = np.concatenate([[0], change, [p.size]])
    for i0, i1 in zip(edges[:-1], edges[1:], strict=True):
        if names[i0]:
            mid = np.sqrt(p[i0] * p[i1 - 1])
            ax.text(
                mid,
                0.985,
                names[i0],
                transform=ax.get_xaxis_transform(),
                fontsize=7,
                ha="center",
                va="top",
                color="0.15",
                clip_on=True,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.7},
            )
    for i in change:
        if names[i] and names[i - 1]:
            ax.axvline(np.sqrt(p[i - 1] * p[i]), color="0.15", ls=":", lw=1.0)
    if change.size:
        ax.add_line(
            Line2D(
                [],
                [],
                color="0.15",
                ls=":",
                lw=1.0,
                label="the tightest limit changes (named at the top)",
            )
        )


def _merger_lines(ax, result, times):
    """Grey guide lines: binaries above each merge within that (rest-frame) time."""
    from ..analysis.readouts import merger_time_lines

    times, q = merger_time_lines(result, times)
    p = result.period.to_value(u.yr)
    styles = ("-", "--", ":", "-.")
    for i, (t, line) in enumerate(zip(times, q, strict=True)):
        years = t.to_value(u.yr)
        text = (
            f"{years / 1e9:.3g} Gyr"
            if years >= 1e9
            else f"{years / 1e6:.3g} Myr"
            if years >= 1e6
            else f"{years:.3g} yr"
        )
        if i == len(times) - 1 and len(times) == 3:
            text += " (Hubble time)"
        ax.plot(
            p,
            line,
            color="0.25",
            lw=0.9,
            ls=styles[i % len(styles)],
            label=f"merges within {text} above (Peters 1964)",
        )


def shows_in(ax, artist):
    """False for a line with data, none of it inside the axes' limits (no legend entry).

    Artists without data (legend-only entries) and non-lines count as shown.
    """
    from matplotlib.lines import Line2D

    if not isinstance(artist, Line2D):
        return True
    x, y = (np.asarray(a, dtype=float) for a in artist.get_data())
    if x.size == 0:
        return True
    (x0, x1), (y0, y1) = sorted(ax.get_xlim()), sorted(ax.get_ylim())
    return bool(np.any((x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)))


def _log_uniform(edges):
    steps = np.diff(np.log(edges))
    return edges.size > 1 and np.allclose(steps, steps[0], rtol=1e-6, atol=0)


def _draw_regions(ax, pe, qe, region, cmap, norm):
    """The region codes, cell (i, j) filling [pe[j], pe[j+1]] x [qe[i], qe[i+1]].

    On grids evenly spaced in log P and log q (every grid the package makes) the
    cells are one image in axes coordinates, resampled by nearest neighbour: the
    same picture as a quad mesh for a fraction of the drawing time.  Other grids
    are drawn as a (rasterised) quad mesh.  Call after nothing else: the axes
    limits must become (pe[0], pe[-1]) and (qe[0], <= qe[-1]).
    """
    if not (_log_uniform(pe) and _log_uniform(qe)):
        ax.pcolormesh(pe, qe, region, cmap=cmap, norm=norm, shading="flat", rasterized=True)
        return
    from matplotlib.image import AxesImage

    # x spans the axes exactly; y may be cut at q = 1 (set_ylim below), so the
    # image's top edge is placed at its log-fraction of the shown q range
    q_top = min(qe[-1], 1.0)
    y_top = np.log(qe[-1] / qe[0]) / np.log(q_top / qe[0])
    # colours looked up once per cell (RGBA bytes): the drawing then only resamples
    image = AxesImage(
        ax,
        interpolation="nearest",
        origin="lower",
        extent=(0.0, 1.0, 0.0, y_top),
        transform=ax.transAxes,
    )
    image.set_data(cmap(norm(region), bytes=True))
    ax.add_image(image)


# The fixed layout of an exclusion panel, in inches, measured once from the figure at
# its default size (7.4 x 5.8 in): the axes are 3.6 in high; below them the period axis
# and a legend of up to four rows take 1.33 in, each further row 0.17 in (8 pt text);
# above them the frequency axis (_TITLE_PAD) and a title of up to two lines take
# 0.87 in, each further line 1/6 in (10 pt text, matplotlib's line spacing 1.2).  The
# tick labels and the axis labels beside the axes take 0.61 in on the left and 0.60 in
# on the right.
_AXES_HEIGHT = 0.62 * 5.8
_BELOW, _ABOVE = 0.23 * 5.8, 0.15 * 5.8
_LEFT, _RIGHT = 0.11 * 7.4, 0.13 * 7.4
_ROW, _LINE = 0.17, 10 * 1.2 / 72
_BESIDE = 0.61 + 0.60 + 0.15  # between two panels: both sides' labels and a gap
_SUPTITLE = 0.36  # a one-line figure title at 11 pt above the panels' titles


def place_panels(fig, axes, suptitle=False):
    """Fixed positions for exclusion panels side by side, from counted lines and rows.

    The figure keeps its width and gets the height its panels need: the legend rows
    below and the title lines above are counted (no text is measured, no layout
    engine runs), so the single figure is laid out in one drawing pass.  A figure
    title (``fig.suptitle``), if ``suptitle``, is placed above the panels.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    axes : sequence of matplotlib Axes
        Panels drawn by :func:`exclusion_figure`, left to right.
    suptitle : bool
        Leave room at the top for the figure's title.

    Returns
    -------
    None
        ``fig`` is resized and its axes are placed.

    Examples
    --------
    >>> from matplotlib.figure import Figure
    >>> fig = Figure(figsize=(13.0, 6.0))
    >>> axes = fig.subplots(1, 2)
    >>> place_panels(fig, axes)
    >>> [round(float(v), 3) for v in fig.get_size_inches()]   # empty panels: base height
    [13.0, 5.8]
    """
    rows = lines = 0
    for ax in axes:
        legend = ax.get_legend()
        if legend is not None:
            rows = max(rows, -(-len(legend.texts) // legend._ncols))
        lines = max(lines, ax.get_title().count("\n") + 1)
    more_below = max(0, rows - 4) * _ROW
    more_above = max(0, lines - 2) * _LINE + (_SUPTITLE if suptitle else 0.0)
    below, above = _BELOW + more_below, _ABOVE + more_above
    width = fig.get_figwidth()
    height = 5.8 + more_below + more_above  # = below + _AXES_HEIGHT + above
    fig.set_figheight(height)
    n = len(axes)
    if n == 1:
        left, right, gap = _LEFT, _RIGHT, 0.0
    else:  # the margins the labels need, shared out: panels as wide as the figure allows
        left = right = 0.61 + 0.1
        gap = _BESIDE
    panel = (width - left - right - (n - 1) * gap) / n
    fig.subplots_adjust(
        left=left / width,
        right=1 - right / width,
        bottom=below / height,
        top=1 - above / height,
        wspace=gap / panel if n > 1 else None,
    )


def save_figure(fig, stem, formats=("png",), overwrite=False, dpi=150):
    """Save ``fig`` as ``stem.<fmt>`` for each format, atomically.

    The figure is written with :meth:`matplotlib.figure.Figure.savefig` (no
    pyplot, no backend switch) and left open: it belongs to the caller.

    Parameters
    ----------
    fig : matplotlib Figure
    stem : path-like without suffix
    formats : sequence of str
    overwrite : bool
    dpi : int

    Returns
    -------
    list of pathlib.Path written.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_map
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> result = exclusion_map(Host("Invented galaxy", 2e10, 100), curve)
    >>> import tempfile
    >>> from pathlib import Path
    >>> fig = result.plot()
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     written = save_figure(fig, Path(tmp) / "invented", formats=("png", "pdf"))
    ...     print([Path(p).name for p in written])
    ['invented.png', 'invented.pdf']
    """
    from pathlib import Path

    from matplotlib import rc_context

    from .._files import atomic_write

    unify_symbols(fig)
    written = []
    for fmt in formats:
        path = Path(f"{stem}.{fmt}")
        # PNG: zlib level 3 instead of 6 halves the encoding time for ~10% more bytes
        extra = {"pil_kwargs": {"compress_level": 3}} if fmt == "png" else {}
        # TrueType (Type 42) fonts in PDF/PS: journals ask for them, and text stays editable;
        # glyphs unhinted in PNG, as PDF viewers draw them: at 150 dpi they look the
        # same, and FreeType's hinting took ~15% of the time to draw a figure (measured)
        with (
            atomic_write(path, overwrite) as tmp,
            rc_context({"pdf.fonttype": 42, "ps.fonttype": 42, "text.hinting": "no_hinting"}),
        ):
            fig.savefig(tmp, format=fmt, dpi=dpi, **extra)
        written.append(path)
    return written


#: ASCII comparison signs and the symbols every figure shows instead
SYMBOLS = {">=": "≥", "<=": "≤"}


def unify_symbols(fig):
    """Write ≥ and ≤ in every text of ``fig`` (titles, labels, legends, annotations).

    Labels come from several places (curve labels use ASCII ``>=``); a figure
    shows one form only.  Mathtext (``$...$``) is left alone.  Tick labels are
    not visited: their formatters write them afresh at every drawing, and
    visiting them would make the axes build their tick objects early.
    """
    for text in _texts(fig):
        s = text.get_text()
        if s and "$" not in s and any(k in s for k in SYMBOLS):
            for ascii_sign, symbol in SYMBOLS.items():
                s = s.replace(ascii_sign, symbol)
            text.set_text(s)


def _texts(artist):
    """The Text artists at and below ``artist``; of an Axis only its label and offset."""
    from matplotlib.axis import Axis
    from matplotlib.text import Text

    if isinstance(artist, Text):
        yield artist
    children = (
        (artist.label, artist.offsetText) if isinstance(artist, Axis) else artist.get_children()
    )
    for child in children:
        yield from _texts(child)
