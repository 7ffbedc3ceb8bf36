"""Report pieces for probability maps: contours on the exclusion figure, table columns.

The contours are drawn in the Okabe & Ito (2008) reddish purple, one line
style per level (dotted, dashed, solid with rising probability) so that
they stay apart in grey-scale print and from the blue best-fit bound of
:func:`ptaconstrain.report.figures.exclusion_figure`.
"""

import numpy as np
from astropy import units as u

from ..errors import InputError

__all__ = [
    "add_probability_contours",
    "probability_columns",
    "probability_descriptions",
    "column_name",
]

_COLOUR = "#000000"
_BEST_FIT_COLOUR = "#0072B2"
_STYLES = (":", "--", "-", "-.")


def column_name(credibility):
    """Table column of the credible bound, e.g. ``max_mass_ratio_0.95``."""
    return f"max_mass_ratio_{credibility:g}"


def _level_label(level):
    return f"{100 * level:.4g}%"


def add_probability_contours(ax, prob_map, levels=(0.5, 0.9, 0.95), best_fit=False):
    """Draw contours of the exclusion (or detection) probability on q-vs-P axes.

    The axes are those of an exclusion figure: x the observer-frame orbital
    period in yr, y the mass ratio, both logarithmic (set here).  Each
    contour is labelled in place with its probability and has a legend
    entry.

    Parameters
    ----------
    ax : matplotlib Axes
    prob_map : ProbabilityMap
        From :func:`ptaconstrain.analysis.probability.exclusion_probability`.
    levels : sequence of float in (0, 1)
        Probabilities to draw.  Levels the map never crosses are skipped.
    best_fit : bool
        Also draw the best-fit (deterministic) bound as a thin line, for a
        standalone figure; :func:`~ptaconstrain.report.figures.exclusion_figure`
        draws it already.

    Returns
    -------
    matplotlib ContourSet, or None when no level is crossed.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_probability
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=10)
    >>> prob = exclusion_probability(host, curve, samples=2000, seed=1)
    >>> fig = prob.deterministic.plot()
    >>> contours = add_probability_contours(fig.axes[0], prob, levels=(0.9,))
    >>> contours.levels
    array([0.9])
    """
    from matplotlib.lines import Line2D

    levels = sorted(float(v) for v in np.atleast_1d(levels))
    if not levels or not all(0.0 < v < 1.0 for v in levels):
        raise InputError(f"levels: each contour level must be in (0, 1), got {levels!r}")
    p = prob_map.period.to_value(u.yr)
    q = prob_map.mass_ratio
    z = np.ma.masked_invalid(prob_map.probability)
    if best_fit:
        det = prob_map.deterministic
        ax.plot(
            p,
            det.max_mass_ratio,
            color=_BEST_FIT_COLOUR,
            lw=1.4,
            label=f"best-fit bound ({det.label})",
        )
    ax.set_xscale("log")
    ax.set_yscale("log")
    finite = prob_map.probability[np.isfinite(prob_map.probability)]
    drawn = [v for v in levels if finite.size and finite.min() < v < finite.max()]
    if not drawn:
        return None
    styles = [_STYLES[levels.index(v) % len(_STYLES)] for v in drawn]
    cs = ax.contour(p, q, z, levels=drawn, colors=_COLOUR, linestyles=styles, linewidths=1.3)
    places = _label_places(cs.allsegs)
    ax.clabel(
        cs,
        fmt={v: _level_label(v) for v in drawn},
        inline=True,
        fontsize=8,
        manual=places if len(places) == len(drawn) else False,
    )
    what = "excluded" if prob_map.is_limit else "detectable"
    for v, ls in zip(drawn, styles, strict=True):
        ax.add_line(
            Line2D([], [], color=_COLOUR, lw=1.3, ls=ls, label=f"P({what}) = {_level_label(v)}")
        )
    return cs


def _label_places(allsegs):
    """One label position per level, staggered along the bottom of each contour.

    Level k of n is labelled at the vertex nearest (in log P) to the point a
    fraction (k + 1)/(n + 1) of the way from the contour's lowest q to its
    longest period, on the lower branch, so nested labels do not overlap.
    """
    places = []
    n = len(allsegs)
    for k, segs in enumerate(allsegs):
        segs = [s for s in segs if len(s)]
        if not segs:
            return []
        v = np.log10(np.concatenate(segs))
        x0 = v[np.argmin(v[:, 1]), 0]
        target = x0 + (v[:, 0].max() - x0) * (k + 1) / (n + 1)
        near = np.abs(v[:, 0] - target) <= 0.02 * max(np.ptp(v[:, 0]), 1e-9)
        pick = v[near] if near.any() else v
        x, y = pick[np.argmin(pick[:, 1])]
        places.append((10**x, 10**y))
    return places


def probability_columns(prob_map):
    """Per-period table columns of the credible bounds, one per credibility.

    Parameters
    ----------
    prob_map : ProbabilityMap

    Returns
    -------
    dict name -> ndarray (nP,)
        ``max_mass_ratio_<credibility>`` (e.g. ``max_mass_ratio_0.95``),
        dimensionless, in the order of ``prob_map.credibility``; NaN where
        the curve says nothing or no binary exists.

    Examples
    --------
    >>> from astropy import units as u
    >>> from ptaconstrain import Host, exclusion_probability
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit",
    ...                     meta={"confidence": 0.95, "span": "15 yr"})     # invented
    >>> host = Host("Invented galaxy", 2e10, 100, mass_err_dex=0.2, distance_err=10)
    >>> prob = exclusion_probability(host, curve, samples=2000, seed=1)
    >>> list(probability_columns(prob))
    ['max_mass_ratio_0.5', 'max_mass_ratio_0.9', 'max_mass_ratio_0.95']
    """
    return {
        column_name(c): np.asarray(prob_map.max_mass_ratio[c], dtype=float)
        for c in prob_map.credibility
    }


def probability_descriptions(prob_map):
    """One-line description of each column of :func:`probability_columns`.

    Returns
    -------
    dict name -> str
    """
    verb = prob_map.verb
    return {
        column_name(c): (
            f"mass ratio above which companions are {verb} with probability >= {c:g} "
            f"({prob_map.n_samples} host samples, seed {prob_map.seed}); 1 if none is"
        )
        for c in prob_map.credibility
    }
