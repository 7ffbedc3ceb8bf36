"""Figures of a catalogue ranking: the targets on the sky, and expected detections by rank.

Equatorial Mollweide map with right ascension increasing to the left (the
astronomical convention, 12h at the centre); targets coloured by the ranking
metric with cividis, a perceptually uniform colour map safe for colour-vision
deficiencies (Nunez et al. 2018, PLoS ONE 13, e0199239); galaxies whose metric
is zero or undefined are small grey dots; a logarithmic colour scale spans at
most four decades below the best value (lower values share its lowest colour);
the sensitivity's sky markers (an array's pulsars), when known, white stars.
Figures are :class:`matplotlib.figure.Figure` objects (no pyplot state);
matplotlib is imported inside the functions.
"""

import numpy as np
from astropy import units as u

from .style import unicode_log_ticks

__all__ = ["metric_label", "sky_figure", "cumulative_figure", "ranking_figures", "FIGURE_STEMS"]

#: file stems of the figures written by :func:`ranking_figures`
FIGURE_STEMS = ("ranking_sky", "ranking_cumulative")
#: decades of the metric spanned by the sky map's logarithmic colour scale
DECADES = 4
#: most galaxies drawn on a sky map; a larger ranking shows its best
#: ``MAX_SKY_POINTS // 10`` and an even thinning of the rest (said in the title)
MAX_SKY_POINTS = 200_000


def _axes(ax, figsize, **kw):
    """(figure, axes): the given axes and its figure, or a new Figure with one axes."""
    if ax is not None:
        return ax.figure, ax
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize)
    return fig, fig.add_subplot(**kw)


def metric_label(metric, verb, rate=None):
    """Axis/colour-bar label of a ranking metric, with its unit."""
    labels = {
        "expected_number": f"expected number of {verb} binaries",
        "h0_ratio": "h0(q = 1) / h0 threshold at f_best",
        "prob_equal_mass": f"P(q = 1 binary {verb} at f_best)",
        "min_mass_ratio": f"smallest mass ratio {verb} at f_best",
    }
    text = labels[metric] + " [dimensionless]"
    if metric == "expected_number" and rate is not None:
        text += f"\n(merger rate {rate} per galaxy)"
    return text


def _x(ra_deg):
    """RA [deg] -> Mollweide x [rad], RA increasing to the left, 12h at the centre."""
    return np.radians(180.0 - np.mod(np.asarray(ra_deg, float), 360.0))


def sky_figure(
    table, metric, verb, label="", markers=None, top=20, rate=None, ax=None, n_total=None
):
    """Mollweide map of the ranked galaxies coloured by ``metric``.

    Parameters
    ----------
    table : astropy.table.Table
        A ranking table (columns ra, dec [deg], rank and the metric).
    metric : str
    verb : str
        'excluded' or 'detectable'.
    label : str
        Sensitivity label for the title (e.g. '95% upper limit').
    markers : SkyCoord, optional
        Positions to mark (an array's pulsars).
    top : int
        The best ``top`` galaxies get their rank written beside them (at most 20).
    rate : str, optional
        Merger rate, shown with the expected number.
    ax : matplotlib Axes with projection "mollweide", optional
        Drawn into; a new Figure otherwise.
    n_total : int, optional
        ``table`` is already a rank-ordered sample (best rows first) of a ranking
        of this many rows: drawn whole, and the title says so.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.colors import LogNorm, Normalize

    n_all = len(table)
    rows, shown = _sky_rows(n_all)
    if n_total is not None and n_total > n_all:
        shown = f"\nshown: a sample of {n_all:,} of {n_total:,}, the best first"
        n_all = n_total
    ra = u.Quantity(table["ra"], u.deg).value[rows]
    dec = u.Quantity(table["dec"], u.deg).value[rows]
    val = np.asarray(table[metric], dtype=float)[rows]
    fig, ax = _axes(ax, (9.0, 5.2), projection="mollweide")
    ax.grid(True, color="0.8", lw=0.5)
    ticks = np.radians(np.arange(-150, 181, 30))
    ax.set_xticks(ticks)
    ax.set_xticklabels(
        [f"{int(np.mod(180 - np.degrees(t), 360) / 15)}h" for t in ticks], fontsize=8
    )
    good = np.isfinite(val) & (val > 0)
    # markers shrink as the points multiply (equal ink for a few hundred or 10^5 points)
    crowd = min(1.0, np.sqrt(2000.0 / max(len(val), 1)))
    ax.scatter(_x(ra[~good]), np.radians(dec[~good]), s=4 * crowd, c="0.6", lw=0)
    # the legend's marker at the uncrowded size, whatever the size on the map
    ax.scatter([], [], s=4, c="0.6", lw=0, label=f"none {verb} ({np.count_nonzero(~good)})")
    if good.any():
        v = val[good]
        span = v.max() / v.min()
        # at most DECADES decades of colour: smaller values share the lowest colour
        # (arrow on the colour bar), so the few targets that matter stay distinct
        best_low = metric == "min_mass_ratio"  # smaller is better: never clip the best
        vmin = v.min() if best_low else max(v.min(), v.max() / 10.0**DECADES)
        norm = LogNorm(vmin, v.max()) if span > 100 else Normalize(v.min(), v.max())
        extend = "min" if vmin > v.min() else "neither"
        cmap = "cividis_r" if metric == "min_mass_ratio" else "cividis"
        order = np.argsort(v) if metric != "min_mass_ratio" else np.argsort(-v)
        sc = ax.scatter(
            _x(ra[good])[order],
            np.radians(dec[good])[order],
            c=v[order],
            s=np.where(v[order] < vmin, 6, 16) * crowd,
            cmap=cmap,
            norm=norm,
            edgecolors="k",
            linewidths=0.2 if crowd == 1.0 else 0.0,
        )
        cb = fig.colorbar(
            sc, ax=ax, orientation="horizontal", pad=0.07, fraction=0.05, aspect=40, extend=extend
        )
        cb.set_label(metric_label(metric, verb, rate), fontsize=9)
        if isinstance(norm, LogNorm):
            unicode_log_ticks(cb.ax.xaxis)  # plain-text powers of ten, no mathtext
    n_lab = min(int(top), 20, len(table))
    if n_lab and crowd < 1.0:  # among many points: the labelled ones ringed on top
        ax.scatter(
            _x(ra[:n_lab]),
            np.radians(dec[:n_lab]),
            s=30,
            facecolors="none",
            edgecolors="#D55E00",
            linewidths=1.0,
            zorder=4,
        )
    for i in range(n_lab):  # a handful of labels, not a loop over the catalogue
        ax.annotate(
            str(int(table["rank"][i])),
            (_x(ra[i]), np.radians(dec[i])),
            xytext=(3, 3),
            textcoords="offset points",
            fontsize=7,
            zorder=6,
            bbox=None
            if crowd == 1.0
            else {"boxstyle": "round,pad=0.1", "fc": "white", "ec": "none", "alpha": 0.8},
        )
    if markers is not None:
        c = markers.icrs
        ax.scatter(
            _x(c.ra.deg),
            np.radians(c.dec.deg),
            marker="*",
            s=60,
            c="white",
            edgecolors="k",
            linewidths=0.6,
            label=f"pulsars ({len(c)})",
            zorder=5,
        )
    # lower right: the declination labels sit on the left edge of the ellipse
    ax.legend(loc="lower right", bbox_to_anchor=(1.0, -0.02), fontsize=7, frameon=False)
    ax.set_title(
        f"{n_all} galaxies by {metric} - {label} ({verb})\n"
        f"numbers: rank of the top {n_lab}; RA increases to the left{shown}",
        fontsize=10,
        pad=16,
        y=1.0,
    )  # fixed: no layout pass
    return fig


def _sky_rows(n):
    """Rows of a rank-ordered table to draw, and the words saying so ('' when all).

    At most :data:`MAX_SKY_POINTS`: the best tenth of that budget, then every k-th of
    the remaining rows (an even, deterministic thinning that keeps the rank order).
    """
    if n <= MAX_SKY_POINTS:
        return slice(None), ""
    head = MAX_SKY_POINTS // 10
    step = -(-(n - head) // (MAX_SKY_POINTS - head))
    rows = np.concatenate([np.arange(head), np.arange(head, n, step)])
    return rows, (
        f"\nshown: the best {head:,}, then one in {step} of the rest ({rows.size:,} of {n:,})"
    )


def cumulative_figure(table, verb, label="", top=20, rate=None, ax=None, n_total=None):
    """Cumulative expected number of excluded (detectable) binaries against rank.

    Parameters
    ----------
    table : astropy.table.Table
        A ranking table (columns rank, expected_number).
    verb, label : str
    top : int
        Marked with a vertical line.
    rate : str, optional
    ax : matplotlib Axes, optional
        Drawn into; a new Figure otherwise.
    n_total : int, optional
        Rows of the whole ranking when ``table`` holds a rank-ordered sample
        whose ``expected_number`` are the increments of the cumulative sum
        between the sampled ranks (the first ``top`` ranks all present).

    Returns
    -------
    matplotlib.figure.Figure
    """
    n_exp = np.nan_to_num(np.asarray(table["expected_number"], dtype=float))
    rank = np.asarray(table["rank"])
    cum = np.cumsum(n_exp)
    own = ax is None
    fig, ax = _axes(ax, (6.4, 4.4))
    ax.step(rank, cum, where="post", color="#0072B2", lw=1.5)
    ax.set_xscale("log")
    unicode_log_ticks(ax.xaxis)
    ax.set_ylim(bottom=0.0)  # from zero, so the share of the first targets reads right
    ax.set_xlabel(f"rank in the table (as sorted; {n_total or len(table)} galaxies)")
    ax.set_ylabel(f"cumulative expected number\nof {verb} binaries [dimensionless]")
    if 0 < top < len(table):
        ax.axvline(top, color="#E69F00", ls="--", lw=1)
        share = cum[top - 1] / cum[-1] if cum[-1] > 0 else 0.0
        ax.annotate(
            f"top {top}: {100 * share:.0f}% of the total",
            (top, cum[top - 1]),
            xytext=(6, -14),
            textcoords="offset points",
            color="#B36B00",
            fontsize=8,
        )
    rate_txt = f"\nmerger rate {rate} per galaxy" if rate else ""
    ax.set_title(f"Expected {verb} binaries by rank - {label}{rate_txt}", fontsize=9, y=1.0)
    ax.grid(True, which="both", color="0.9")
    if own:
        _fixed_margins(fig, ax, title_lines=2 if rate_txt else 1)
    return fig


def _fixed_margins(fig, ax, title_lines):
    """Margins for the y tick labels, two-line y label and the title: no layout pass.

    The widest y tick label is measured once from the font (the labels are
    numbers whose width varies with the data); the rest is fixed in points:
    from the figure edge the two-line y label, the label and tick pads and the
    tick length take 46.4 pt; below the axes the x label and the log tick labels
    42 pt; above them the offset text and a title line of 9 pt each 10.8 pt.
    """
    import matplotlib as mpl
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import text_to_path

    axis = ax.yaxis
    labels = axis.get_major_formatter().format_ticks(axis.get_major_locator()())
    prop = FontProperties(size=mpl.rcParams["ytick.labelsize"])
    widest = max(
        (text_to_path.get_text_width_height_descent(s, prop, ismath=False)[0] for s in labels),
        default=0.0,
    )
    width, height = fig.get_size_inches() * 72.0  # points
    fig.subplots_adjust(
        left=(widest + 46.4) / width,
        right=1.0 - 10.8 / width,
        bottom=42.0 / height,
        top=1.0 - (15.8 + 10.8 * title_lines) / height,
    )


def ranking_figures(ranking, out_dir, formats=("png",), top=20, overwrite=False):
    """Write the sky map and the cumulative plot of a ranking.

    Parameters
    ----------
    ranking : Ranking
    out_dir : path-like
    formats : sequence of str
    top : int
    overwrite : bool

    Returns
    -------
    list of pathlib.Path written (stems :data:`FIGURE_STEMS`).
    """
    from pathlib import Path

    from .figures import save_figure

    out_dir = Path(out_dir)
    rate = ranking.meta.get("merger_rate_per_galaxy")
    if hasattr(ranking.runs, "take") and ranking.n_ranked > MAX_SKY_POINTS:
        return _sampled_figures(ranking, out_dir, formats, top, overwrite, rate)
    written = []
    fig = ranking.plot(top=top)
    written += save_figure(fig, out_dir / FIGURE_STEMS[0], formats, overwrite)
    table = ranking.table
    if ranking.streamed:  # every ranked row, from disk
        from astropy.table import Table

        table = Table(
            {"rank": ranking.column("rank"), "expected_number": ranking.column("expected_number")},
            copy=False,
        )
    fig = cumulative_figure(table, ranking.verb, ranking.label, top=top, rate=rate)
    written += save_figure(fig, out_dir / FIGURE_STEMS[1], formats, overwrite)
    return written


def _sampled_figures(ranking, out_dir, formats, top, overwrite, rate):
    """The two figures of a very large ranking on disk, from a bounded sample of its rows.

    The sample is the rows :func:`_sky_rows` would draw (the best tenth of the
    budget, then an even thinning), read by position; the cumulative curve is
    exact at every sampled rank (its stored running sum).
    """
    from .figures import save_figure

    rows, _ = _sky_rows(ranking.n_ranked)
    keys = list(dict.fromkeys(["rank", "ra", "dec", ranking.metric, "cumulative_expected_number"]))
    sample = ranking.runs.take(rows, keys)
    fig = sky_figure(
        sample,
        ranking.metric,
        ranking.verb,
        ranking.label,
        markers=ranking.sky_markers,
        top=top,
        rate=rate,
        n_total=ranking.n_ranked,
    )
    written = save_figure(fig, out_dir / FIGURE_STEMS[0], formats, overwrite)
    cum = np.asarray(sample["cumulative_expected_number"], dtype=float)
    sample["expected_number"] = np.diff(np.r_[0.0, cum])
    fig = cumulative_figure(
        sample, ranking.verb, ranking.label, top=top, rate=rate, n_total=ranking.n_ranked
    )
    return written + save_figure(fig, out_dir / FIGURE_STEMS[1], formats, overwrite)
