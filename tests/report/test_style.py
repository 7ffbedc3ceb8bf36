"""The cheap drawing paths draw what matplotlib's own (slower) paths draw.

References: matplotlib itself -- its LogFormatterSciNotation labels, its minor
tick locations on log and function-log (secondary) axes, and pcolormesh for the
region map.
"""

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.report import figures
from ptaconstrain.report.style import MSUN, minor_ticks_as_markers, sci_text, unicode_log_ticks


def _figure_axes():
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6, 4))
    return fig, fig.subplots()


def test_sci_text():
    assert sci_text(2e10) == "2×10¹⁰"
    assert sci_text(2.25e-3) == "2.25×10⁻³"
    assert MSUN == "M\u2609"


@pytest.mark.parametrize("limits", [(1e-4, 1.0), (0.3, 2.0), (2.0, 5.0), (1e-12, 1e3)])
def test_unicode_tick_labels_are_matplotlibs_labels_in_plain_text(limits):
    # reference: matplotlib's default LogFormatterSciNotation on the same axis
    fig, ax = _figure_axes()
    ax.set_xscale("log")
    ax.set_xlim(*limits)
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig).draw()
    ref_major = [t.get_text() for t in ax.xaxis.get_majorticklabels()]
    ref_minor = [t.get_text() for t in ax.xaxis.get_minorticklabels()]
    unicode_log_ticks(ax.xaxis)
    FigureCanvasAgg(fig).draw()
    new_major = [t.get_text() for t in ax.xaxis.get_majorticklabels()]
    new_minor = [t.get_text() for t in ax.xaxis.get_minorticklabels()]

    def plain(s):
        return (
            s.removeprefix("$\\mathdefault{")
            .removesuffix("}$")
            .replace("\\times", "×")
            .replace("^{", "^")
            .replace("}", "")
            .replace("-", "−")
        )

    def sup(s):  # 10⁻³ -> 10^−3 for comparison with the mathtext text
        table = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789−")
        if "10" in s and s[s.index("10") + 2 :]:
            head, tail = s.split("10", 1)
            return f"{head}10^{tail.translate(table)}"
        return s

    assert [sup(s) for s in new_major] == [plain(s) for s in ref_major]
    assert [sup(s) for s in new_minor] == [plain(s) for s in ref_minor]
    assert not any("$" in s for s in new_major + new_minor)


def _minor_positions(limits, secondary=False):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig, ax = _figure_axes()
    ax.set_yscale("log")
    ax.set_ylim(*limits)
    axis = ax.yaxis
    if secondary:  # a secondary axis in other units, as the figures' m2 axis
        sec = ax.secondary_yaxis("right", functions=(lambda q: 3e9 * q, lambda m: m / 3e9))
        axis = sec.yaxis
    FigureCanvasAgg(fig).draw()
    return fig, ax, axis, np.array(axis.get_minorticklocs())


@pytest.mark.parametrize("secondary", [False, True])
@pytest.mark.parametrize("limits", [(1e-4, 1.0), (0.05, 60.0), (0.2, 3.0)])
def test_minor_tick_markers_sit_where_matplotlib_puts_minor_ticks(limits, secondary):
    # reference: matplotlib's own minor tick locations (ticks drawn inside the view)
    fig, ax, axis, ref = _minor_positions(limits, secondary)
    lo, hi = (3e9 * np.array(limits)) if secondary else limits
    ref = ref[(ref >= lo) & (ref <= hi)]
    ref = ref[~np.isclose(np.log10(ref), np.round(np.log10(ref)), rtol=0, atol=1e-10)]
    before = len(ax.get_children())
    minor_ticks_as_markers(
        ax,
        axis,
        (lo, hi),
        "right" if secondary else "left",
        (lambda m: m / 3e9) if secondary else None,
    )
    added = ax.get_children()[before:] if len(ax.get_children()) > before else []
    if np.log10(hi / lo) <= 1:  # labelled minor ticks: left to matplotlib
        assert not added
        return
    (line,) = [
        a
        for a in ax.get_children()
        if getattr(a, "get_marker", None) and a.get_marker() == (1 if secondary else 0)
    ]
    got = np.sort(line.get_ydata())
    expect = np.sort(ref / 3e9 if secondary else ref)
    np.testing.assert_allclose(got, expect, rtol=1e-12)
    assert len(axis.get_minor_locator()()) == 0  # matplotlib's own minor ticks are off


def _render(fig):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = FigureCanvasAgg(fig)
    canvas.draw()
    return np.asarray(canvas.buffer_rgba())[..., :3].astype(int)


def test_region_image_draws_the_same_cells_as_pcolormesh():
    # reference: matplotlib's pcolormesh of the same codes on the same edges
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.figure import Figure

    r = exclusion_map(
        Host("Image host", 2e10, 100),
        power_law_limit(),
        mass_ratio=np.geomspace(1e-3, 1, 40),
        period=np.geomspace(0.3, 30, 50) * u.yr,
    )
    codes = sorted(figures.REGION_STYLE)
    cmap = ListedColormap([figures.REGION_STYLE[c][2] for c in codes])
    norm = BoundaryNorm(np.arange(len(codes) + 1) - 0.5, cmap.N)
    pe = figures._edges(r.period.to_value(u.yr))
    qe = figures._edges(r.mass_ratio)
    images = []
    for use_image in (True, False):
        fig = Figure(figsize=(6, 4), dpi=100)
        ax = fig.add_axes((0, 0, 1, 1))
        if use_image:
            figures._draw_regions(ax, pe, qe, r.region, cmap, norm)
        else:
            ax.pcolormesh(pe, qe, r.region, cmap=cmap, norm=norm, shading="flat")
        ax.set_xscale("log")
        ax.set_yscale("log")
        ax.set_xlim(pe[0], pe[-1])
        ax.set_ylim(qe[0], 1.0)
        ax.set_axis_off()
        images.append(_render(fig))
    differ = np.any(images[0] != images[1], axis=-1)
    assert len(np.unique(r.region)) >= 3  # several regions, so the test can fail
    # only pixels on cell boundaries may be assigned to the neighbouring cell
    assert differ.mean() < 0.01
