"""Figures state what they are, at which confidence, for which sky (wording checks)."""

import warnings

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.binary.host import Host
from ptaconstrain.report.statements import figure_statement, sky_text
from ptaconstrain.sensitivity.curve import StrainCurve


def _texts(fig):
    from matplotlib.text import Text

    # a title's line breaks fall between the statement's clauses ('; ')
    return "\n".join(t.get_text().replace("\n", "; ") for t in fig.findobj(Text))


def _psd(sky="averaged"):
    f = np.geomspace(2e-9, 3e-7, 40)
    return StrainCurve(
        f * u.Hz, 1e-10 * (f / 1e-8) ** -2 + 1e-12, "strain_psd", {"span": "12 yr", "sky": sky}
    )


@pytest.mark.parametrize(
    "meta, text",
    [
        ({}, "sky-averaged"),
        ({"sky": "averaged"}, "sky-averaged"),
        ({"sky": "ra=284.1000deg dec=-37.2000deg"}, "RA 284.10°, Dec -37.20°"),
        (
            {"sky": "averaged", "sky_note": "mean of the map's pixels (no host position)"},
            "mean of the map's pixels",
        ),
    ],
)
def test_sky_in_words(meta, text):
    assert sky_text(_psd().__class__(_psd().frequency, _psd().value, "strain_psd", meta)) == text


def test_limit_figure_states_exclusion_confidence_and_sky():
    result = exclusion_map(Host("A", 2e10, 50), power_law_limit())
    fig = result.plot()
    assert "exclusion, 95% upper limit; sky-averaged" in _texts(fig)


def test_forecast_at_a_position_states_snr_span_and_position():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = exclusion_map(Host("A", 2e10, 50), _psd("ra=10.0000deg dec=-5.0000deg"), snr=7)
    line = figure_statement(result)
    assert line == (
        "forecast, not an exclusion: S/N ≥ 7 over 12 yr (orientation-averaged); "
        "at RA 10.00°, Dec -5.00°"
    )
    assert line in _texts(result.plot())


def test_probability_contours_get_one_line_saying_what_they_are_over():
    host = Host("A", 2e10, 50, mass_err_dex=0.2, distance_err=5)
    prob = exclusion_probability(
        host,
        power_law_limit(),
        np.logspace(-3, 0, 30),
        np.geomspace(0.5, 20, 30) * u.yr,
        samples=500,
        seed=1,
    )
    text = _texts(prob.plot())
    assert text.count("probability over the host's mass and distance errors") == 1
    assert "on top of the limit's own confidence" in text


def test_saved_figures_use_one_form_of_the_comparison_sign(tmp_path):
    from ptaconstrain.report.figures import save_figure

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        fig = exclusion_map(Host("A", 2e10, 50), _psd()).plot()
    save_figure(fig, tmp_path / "f", ("png",))
    text = _texts(fig)
    assert ">=" not in text and "≥" in text


def test_a_forecast_with_a_background_says_so():
    # the noise a forecast assumes is part of what its figure states
    from ptaconstrain.data import path
    from ptaconstrain.sensitivity.background import Background
    from ptaconstrain.sensitivity.pulsar_list import load_array

    array = load_array(path("demo_array")).with_background(Background(2.4e-15))
    host = Host("Statement host", 2e10, 100)
    result = exclusion_map(host, array.curve_at(None), warn=False)
    text = figure_statement(result)
    assert "background A = 2.4e-15, γ = 4.333 as noise" in text
    quiet = exclusion_map(host, load_array(path("demo_array")).curve_at(None), warn=False)
    assert "background" not in figure_statement(quiet)
