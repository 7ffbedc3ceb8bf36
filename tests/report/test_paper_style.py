"""Paper-ready output: style widths, TrueType fonts in PDF, legends, LaTeX tables."""

import warnings

import numpy as np
import pytest
from astropy import units as u
from astropy.table import QTable
from curves_for_tests import power_law_limit

from ptaconstrain.analysis.batch import bound_hosts
from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.errors import InputError
from ptaconstrain.report.batch_tables import summary_table, write_summary_latex
from ptaconstrain.report.figures import save_figure, shows_in
from ptaconstrain.report.paper_style import STYLES, apply_style


def _fig():
    return exclusion_map(
        Host("A", 2e10, 50),
        power_law_limit(),
        np.logspace(-3, 0, 30),
        np.geomspace(0.5, 30, 30) * u.yr,
    ).plot()


@pytest.mark.parametrize("style", list(STYLES))
def test_style_sets_the_width_and_a_legible_text_size(style):
    from matplotlib.text import Text

    fig = apply_style(_fig(), style)
    width, smallest, _ = STYLES[style]
    assert fig.get_size_inches()[0] == pytest.approx(width, rel=1e-6, abs=0)
    sizes = [t.get_fontsize() for t in fig.findobj(Text) if t.get_text()]
    assert min(sizes) >= min(smallest, 7.0) - 1e-9


def test_unknown_style_is_an_input_error():
    with pytest.raises(InputError, match="column, page, slide"):
        apply_style(_fig(), "poster")


def test_pdf_fonts_are_truetype_not_type3(tmp_path):
    save_figure(_fig(), tmp_path / "f", ("pdf",))
    pdf = (tmp_path / "f.pdf").read_bytes()
    # Type 42 embedding writes the TrueType font as a CIDFontType2 (PDF 1.7, 9.7.4)
    assert b"/CIDFontType2" in pdf and b"/Type3" not in pdf


def test_no_legend_entry_for_a_line_outside_the_plot():
    from matplotlib.figure import Figure

    ax = Figure().subplots()
    ax.set_xlim(1, 2)
    ax.set_ylim(1, 2)
    (inside,) = ax.plot([1.5], [1.5])
    (outside,) = ax.plot([5, 6], [5, 6])
    assert shows_in(ax, inside) and not shows_in(ax, outside)


def test_hardening_line_off_the_plot_gets_no_legend_entry():
    # a tiny velocity dispersion puts a_h = G mu / 4 sigma^2 far beyond the periods shown
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = exclusion_map(
            Host("A", 2e10, 50, velocity_dispersion=1),
            power_law_limit(),
            np.logspace(-3, 0, 30),
            np.geomspace(0.5, 30, 30) * u.yr,
        )
    labels = [t.get_text() for t in r.plot().axes[0].get_legend().get_texts()]
    assert not any("hardening" in t for t in labels)


def test_latex_summary_is_aastex_with_units_and_escaped_percent(tmp_path):
    b = bound_hosts(
        [Host("A", 2e10, 50, mass_err_dex=0.2, distance_err=3), Host("B", 5e9, 30)],
        power_law_limit(),
        np.logspace(-3, 0, 30),
        np.geomspace(0.5, 30, 30) * u.yr,
        samples=500,
        seed=1,
    )
    t = summary_table(b)
    write_summary_latex(QTable(t), tmp_path / "s.tex")
    tex = (tmp_path / "s.tex").read_text()
    assert tex.startswith("\\begin{deluxetable*}") and "\\startdata" in tex
    assert "95\\% upper limit" in tex and "M$_\\odot$" in tex
    assert "$2\\times10^{10}$" in tex and "\\nodata" in tex  # B has no credible bound
