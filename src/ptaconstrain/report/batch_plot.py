"""The overview figure of many hosts: each host's tightest bound on one axis."""

import numpy as np

from .statements import figure_statement, sky_text
from .style import unicode_log_ticks

__all__ = ["batch_overview_figure", "MAX_NAMED_HOSTS"]

#: above this many hosts the rows are numbered by rank instead of named
MAX_NAMED_HOSTS = 60


def batch_overview_figure(bounds, title=None):
    """Tightest mass-ratio bound of every host, best first, one row per host.

    The best-fit bound is a filled triangle; for hosts with errors the
    credible bound at the highest credibility is an open triangle joined to
    it; hosts with no bound are listed at the right edge.

    Parameters
    ----------
    bounds : HostBounds
    title : str, optional
        First line of the title (default: what the bounds are).

    Returns
    -------
    matplotlib Figure
    """
    from matplotlib.figure import Figure

    period, q = bounds.tightest()
    order = np.argsort(np.where(np.isfinite(q), q, np.inf), kind="stable")
    n = len(order)
    named = n <= MAX_NAMED_HOSTS
    rows_in = min(max(1.3, 0.2 * n), 11.0) if named else 6.0
    height = rows_in + 2.3  # title 0.75 in, axis label and a 3-line legend 1.55 in
    fig = Figure(figsize=(7.2, height))
    ax = fig.subplots()
    fig.subplots_adjust(
        left=0.3 if named else 0.12, right=0.96, top=1 - 0.75 / height, bottom=1.55 / height
    )
    y = np.arange(n)[::-1]  # the tightest bound at the top
    verb = "excluded" if bounds.is_limit else "detectable"
    qs = q[order]
    ok = np.isfinite(qs)
    ax.plot(
        qs[ok],
        y[ok],
        ls="none",
        marker="v",
        color="#D55E00",
        ms=6 if named else 3,
        label=f"best-fit host: q larger than the marker (to its right) {verb}",
    )
    top = max(bounds.credibility) if bounds.credibility else None
    if top is not None:
        _, cq = bounds.credible(top)
        cq = cq[order]
        has = np.isfinite(cq) & ok
        if has.any():
            ax.hlines(y[has], qs[has], cq[has], color="0.5", lw=0.8)
            ax.plot(
                cq[has],
                y[has],
                ls="none",
                marker="v",
                mfc="white",
                mec="black",
                ms=6 if named else 3,
                label=f"{verb} with probability ≥ {100 * top:g}% over the host's mass "
                "and distance errors (none: no errors, or no such bound)",
            )
    finite = np.concatenate([qs[ok], cq[has] if top is not None and has.any() else []])
    lo = 0.5 * finite.min() if finite.size else 1e-3
    ax.set_xscale("log")
    ax.set_xlim(lo, 1.3)
    if (~ok).any():
        ax.plot(
            np.full((~ok).sum(), 1.0),
            y[~ok],
            ls="none",
            marker="x",
            color="0.4",
            ms=5 if named else 3,
            label=f"no companion {verb} on the grid",
        )
    ax.set_ylim(-0.8, n - 0.2)
    if named:
        names = [bounds.maps[i].host.name for i in order]
        ax.set_yticks(y, names, fontsize=8 if n > 25 else 9)
    else:
        ax.set_ylabel("host, ordered by its tightest bound (best at the top)")
        ax.set_yticks([])
    ax.set_xlabel(
        "tightest bound on the mass ratio q = m₂/m₁ (at the period where it is tightest)",
        fontsize=9,
    )
    unicode_log_ticks(ax.xaxis)
    ax.grid(True, axis="x", which="major", color="0.9")
    fig.legend(
        loc="lower center", bbox_to_anchor=(0.5, 0.02 / height), fontsize=8, frameon=False, ncol=1
    )
    first = bounds.maps[0]
    what = (
        "Companions with q right of each marker are excluded"
        if bounds.is_limit
        else "Companions with q right of each marker would be detectable (forecast)"
    )
    statement = figure_statement(first)
    skies = {sky_text(m.curve) for m in bounds.maps}
    if len(skies) > 1:  # a pulsar array or a limit map: each host at its own position
        statement = statement.rsplit("; ", 1)[0] + "; at each host's own position"
    if len(statement) > 60:  # the axes start at 30% of the width: keep the title inside
        statement = statement.replace("; ", "\n", 1)
    ax.set_title(f"{title or what}\n{statement}", fontsize=9)
    return fig
