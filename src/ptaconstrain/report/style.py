"""Text style shared by the figures: plain Unicode instead of matplotlib mathtext.

Mathtext (``$...$``) costs a figure about half a second of CPU in a fresh process
(building its parser, loading its fonts, laying out each string), and every
log-axis tick label is mathtext by default (``$\\mathdefault{10^{3}}$``).  The
figures therefore write powers of ten, subscripts and symbols as Unicode
characters of the default font (DejaVu Sans), which draw the same labels as
ordinary text: ``10³``, ``2×10¹⁰``, ``M☉``, ``m₂``, ``≥``.
"""

import re

import numpy as np

__all__ = ["MSUN", "sci_text", "unicode_log_ticks", "minor_ticks_as_markers"]

#: The solar-mass unit as text.
MSUN = "M\u2609"

_SUPERSCRIPT = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")
_MATH_TICK = re.compile(
    r"^\$\\mathdefault\{(-?)(?:([0-9.]+)\\times)?([0-9.]+)(?:\^\{(-?\d+)\})?\}\$$"
)


def sci_text(x, digits=2):
    """``2.2e10`` -> ``'2.2×10¹⁰'`` (``digits`` significant decimals, zeros trimmed).

    Parameters
    ----------
    x : float
    digits : int

    Returns
    -------
    str

    Examples
    --------
    >>> sci_text(2.2e10)
    '2.2×10¹⁰'
    >>> sci_text(1.234e-15, digits=1)
    '1.2×10⁻¹⁵'
    """
    mant, exp = f"{x:.{digits}e}".split("e")
    mant = mant.rstrip("0").rstrip(".")
    return f"{mant}\u00d710{str(int(exp)).translate(_SUPERSCRIPT)}"


def _plain(label):
    """A log formatter's mathtext label as Unicode text ('' stays '')."""
    m = _MATH_TICK.match(label)
    if m is None:
        return label  # anything unexpected keeps matplotlib's own rendering
    sign, coeff, base, exponent = m.groups()
    text = ("\u2212" if sign else "") + (f"{coeff}\u00d7" if coeff else "") + base
    return text + (exponent.translate(_SUPERSCRIPT) if exponent is not None else "")


def unicode_log_ticks(*axes):
    """Give the log-scaled ``axes`` (XAxis/YAxis objects) Unicode tick labels.

    Major and minor formatters keep matplotlib's choice of which ticks get a label
    (:class:`matplotlib.ticker.LogFormatterSciNotation`: decades, and minor ticks
    when an axis spans few decades); only the text is written without mathtext.

    Parameters
    ----------
    *axes : matplotlib.axis.Axis

    Returns
    -------
    None
        The axes' formatters are replaced in place.

    Examples
    --------
    >>> from matplotlib.figure import Figure
    >>> ax = Figure().add_subplot()
    >>> ax.set_xscale("log")
    >>> limits = ax.set_xlim(1, 1e3)
    >>> unicode_log_ticks(ax.xaxis)
    >>> ax.xaxis.get_major_formatter()(100.0)
    '10²'
    """
    from matplotlib.ticker import LogFormatterSciNotation

    class _UnicodeLogFormatter(LogFormatterSciNotation):
        def __call__(self, x, pos=None):
            return _plain(super().__call__(x, pos))

    for axis in axes:
        axis.set_major_formatter(_UnicodeLogFormatter(10))
        axis.set_minor_formatter(_UnicodeLogFormatter(10, labelOnlyBase=False))


_TICK_MARKERS = {"bottom": 3, "top": 2, "left": 0, "right": 1}  # TICKDOWN, TICKUP, ...


def minor_ticks_as_markers(ax, axis, limits, side, to_parent=None):
    """Draw the minor ticks of a log ``axis`` as one marker line of ``ax``.

    Matplotlib makes a Tick object (three lines and two texts) per minor tick, and
    on log axes those objects are most of a figure's drawing time.  When the axis
    spans more than one decade its minor ticks carry no labels, so they are drawn
    instead as a single :class:`~matplotlib.lines.Line2D` of tick markers at the
    positions and with the size, width and colour matplotlib would use (the same
    markers Tick draws), and the axis' own minor locator is switched off.  Over
    one decade or less (labelled minor ticks) nothing is changed.

    Parameters
    ----------
    ax : matplotlib Axes
        The axes the markers are drawn in (the parent of a secondary axis).
    axis : matplotlib.axis.Axis
        The log axis whose minor ticks are replaced (``ax.xaxis``, or a
        secondary axis' ``xaxis``/``yaxis``).
    limits : (float, float)
        The view limits of ``axis`` in its own units.
    side : {"bottom", "top", "left", "right"}
    to_parent : callable, optional
        Maps ``axis`` values to ``ax`` data values (for a secondary axis).

    Returns
    -------
    None
        ``ax`` gains one marker line and ``axis`` loses its minor locator (when the
        axis spans more than a decade).

    Examples
    --------
    >>> from matplotlib.figure import Figure
    >>> ax = Figure().add_subplot()
    >>> ax.set_xscale("log")
    >>> limits = ax.set_xlim(1, 1e3)
    >>> n_lines = len(ax.lines)
    >>> minor_ticks_as_markers(ax, ax.xaxis, limits, "bottom")
    >>> len(ax.lines) - n_lines     # one marker line instead of 16 minor Tick objects
    1
    """
    import matplotlib as mpl
    from matplotlib.lines import Line2D
    from matplotlib.ticker import NullLocator

    lo, hi = sorted(float(v) for v in limits)
    if not (lo > 0 and np.log10(hi / lo) > 1):
        return
    values = np.asarray(axis.get_minor_locator().tick_values(lo, hi), dtype=float)
    decade = np.isclose(np.log10(values), np.round(np.log10(values)), rtol=0, atol=1e-10)
    values = values[(values >= lo * (1 - 1e-10)) & (values <= hi * (1 + 1e-10)) & ~decade]
    axis.set_minor_locator(NullLocator())
    if values.size == 0:
        return
    where = to_parent(values) if to_parent is not None else values
    key = "xtick" if side in ("bottom", "top") else "ytick"
    edge = np.full(values.size, 1.0 if side in ("top", "right") else 0.0)
    if key == "xtick":
        xy, transform = (where, edge), ax.get_xaxis_transform()
    else:
        xy, transform = (edge, where), ax.get_yaxis_transform()
    rc = mpl.rcParams
    ax.add_artist(
        Line2D(
            *xy,
            transform=transform,
            ls="none",
            marker=_TICK_MARKERS[side],
            markersize=rc[f"{key}.minor.size"],
            markeredgewidth=rc[f"{key}.minor.width"],
            color=rc[f"{key}.color"],
            clip_on=False,
            zorder=2.5,
        )
    )
