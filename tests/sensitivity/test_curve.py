import warnings

import numpy as np
import pytest
from astropy import units as u
from scipy import integrate

from ptaconstrain.errors import PtaconstrainError, PtaconstrainWarning
from ptaconstrain.sensitivity.curve import (
    CurveError,
    StrainCurve,
    detection_threshold_h0,
    load_curve,
    noise_psd_for_threshold,
    save_curve,
)


def test_log_log_interpolation_reproduces_a_power_law_between_nodes(limit_curve):
    # a power law is a straight line in log-log: interpolation must be exact
    f = np.geomspace(2.5e-9, 2.5e-7, 37) * u.Hz
    np.testing.assert_allclose(limit_curve.interpolate(f), 1e-14 * (f.value / 1e-8), rtol=1e-12)


def test_outside_the_band_is_not_constrained(limit_curve):
    got = limit_curve.h0_threshold([1e-9, 1e-6] * u.Hz)
    assert np.all(np.isnan(got))


def test_narrow_spike_survives_interpolation():
    # a one-node spike (like the loss at 1/yr) must not be smoothed away
    f = np.geomspace(1e-9, 1e-7, 101)
    h = np.full_like(f, 1e-14)
    h[50] = 1e-12
    c = StrainCurve(f * u.Hz, h, "h0_limit")
    assert c.interpolate(f[50] * u.Hz) == pytest.approx(1e-12, rel=1e-12, abs=0)
    assert c.interpolate(f[49] * u.Hz) == pytest.approx(1e-14, rel=1e-12, abs=0)


def test_orientation_average_of_polarisation_power_is_four_fifths():
    # h+ = h0 (1 + c^2) cos, hx = 2 h0 c sin (Maggiore 2008 eqs. 4.29-4.30 with the PTA h0):
    # <(1 + c^2)^2 + 4 c^2> over isotropic cos i = 16/5, integrated with scipy.integrate.quad
    mean, _ = integrate.quad(lambda c: ((1 + c * c) ** 2 + 4 * c * c) / 2, -1, 1)
    assert mean == pytest.approx(3.2, rel=1e-12, abs=0)
    # and so h0 = rho sqrt(5 S_n / (16 T)) inverts rho^2 = (16/5) h0^2 T / S_n
    s_n, t, rho = 1e-20 / u.Hz, 10 * u.yr, 5.0
    h0 = detection_threshold_h0(s_n, t, rho)
    assert (mean * h0**2 * t / s_n).decompose().value == pytest.approx(rho**2, rel=1e-12, abs=0)
    assert noise_psd_for_threshold(h0, t, rho).to_value(1 / u.Hz) == pytest.approx(
        1e-20, rel=1e-12, abs=0
    )


def test_characteristic_strain_converts_with_hn2_equals_f_sn():
    # Moore, Cole & Berry (2015), eq. 3: h_n(f)^2 = f S_n(f)
    f = np.geomspace(1e-9, 1e-7, 20) * u.Hz
    hc = 1e-15 * (f / (1e-8 * u.Hz)).value ** 1.5
    c = StrainCurve(f, hc, "characteristic_strain", {"span": "10 yr"})
    s = c.strain_psd(f[3:8])
    np.testing.assert_allclose(s.to_value(1 / u.Hz), hc[3:8] ** 2 / f[3:8].value, rtol=1e-10)
    assert not c.is_limit and c.verb == "detectable"


def test_save_and_load_round_trip(tmp_path, limit_curve):
    path = tmp_path / "c.ecsv"
    save_curve(limit_curve, path)
    back = load_curve(path)
    assert back.kind == "h0_limit" and back.confidence == 0.95
    assert back.span.to_value(u.yr) == pytest.approx(15, rel=1e-6, abs=0)
    np.testing.assert_allclose(back.value, limit_curve.value)
    with pytest.raises(FileExistsError, match="already exists"):
        save_curve(limit_curve, path)


def test_plain_text_needs_a_kind(tmp_path):
    path = tmp_path / "c.txt"
    path.write_text("# f h0\n1e-9 1e-14\n1e-8 2e-14\n1e-7 5e-14\n")
    with pytest.raises(CurveError, match="--kind"):
        load_curve(path)
    with pytest.warns(PtaconstrainWarning) as caught:
        c = load_curve(path, kind="h0_limit")
    text = " ".join(str(w.message) for w in caught)
    assert "states no sky" in text and "95% upper limit is assumed" in text
    assert c.frequency.size == 3 and c.confidence == 0.95


def _ecsv(tmp_path, body, header=None):
    header = header or (
        "# %ECSV 1.0\n# ---\n# datatype:\n"
        "# - {name: frequency, unit: Hz, datatype: float64}\n"
        "# - {name: h0_limit, datatype: float64}\n"
        "# schema: astropy-2.0\nfrequency h0_limit\n"
    )
    p = tmp_path / "bad.ecsv"
    p.write_text(header + body)
    return p


@pytest.mark.parametrize(
    "body, message",
    [
        ("1e-8 1e-14\n1e-9 2e-14\n", "strictly increasing"),
        ("1e-9 1e-14\n1e-9 2e-14\n", "strictly increasing"),
        ("-1e-9 1e-14\n1e-8 2e-14\n", "positive"),
        ("1e-9 -1e-14\n1e-8 2e-14\n", "positive"),
        ("1e-9 nan\n1e-8 2e-14\n", "NaN"),
        ("1e-9 1e-14\n", "two rows"),
    ],
)
def test_malformed_curves_are_rejected_with_the_fix(tmp_path, body, message):
    with pytest.raises(CurveError, match=message):
        load_curve(_ecsv(tmp_path, body))


def test_missing_value_column_is_named(tmp_path):
    header = (
        "# %ECSV 1.0\n# ---\n# datatype:\n"
        "# - {name: frequency, unit: Hz, datatype: float64}\n"
        "# - {name: strain, datatype: float64}\n# schema: astropy-2.0\nfrequency strain\n"
    )
    with pytest.raises(CurveError, match="exactly one of the columns"):
        load_curve(_ecsv(tmp_path, "1e-9 1\n1e-8 2\n", header))


def test_frequency_without_unit_is_rejected(tmp_path):
    header = (
        "# %ECSV 1.0\n# ---\n# datatype:\n"
        "# - {name: frequency, datatype: float64}\n"
        "# - {name: h0_limit, datatype: float64}\n# schema: astropy-2.0\n"
        "frequency h0_limit\n"
    )
    with pytest.raises(CurveError, match="no unit"):
        load_curve(_ecsv(tmp_path, "1e-9 1e-14\n1e-8 2e-14\n", header))


def test_garbage_file_is_rejected(tmp_path):
    p = tmp_path / "junk.ecsv"
    p.write_text("# %ECSV 1.0\n# ---\n this is: [not yaml\n")
    with pytest.raises(CurveError, match="not a readable ECSV"):
        load_curve(p)


def test_bare_numbers_are_hz_for_frequency_and_yr_for_span():
    # _inputs policy: a bare frequency is Hz, a bare span is yr.
    f = np.geomspace(1e-9, 1e-7, 5)
    lim = StrainCurve(f * u.Hz, 1e-14 * f / 1e-8, "h0_limit")
    assert lim.h0_threshold(8e-9) == pytest.approx(lim.h0_threshold(8 * u.nHz), rel=1e-12, abs=0)
    psd = StrainCurve(f * u.Hz, np.full(5, 1e-20), "strain_psd", {"span": "10 yr"})
    bare = psd.h0_threshold(1e-8, snr=5.0, span=12)
    # h0 = rho sqrt(5 S_n / (16 T)) (detection_threshold_h0 docstring), T in s by astropy
    expect = 5.0 * np.sqrt(5 * 1e-20 / (16 * (12 * u.yr).to_value(u.s)))
    assert bare == pytest.approx(expect, rel=1e-12, abs=0)
    with pytest.raises(PtaconstrainError, match="span"):
        psd.h0_threshold(1e-8, span=12 * u.m)
    with pytest.raises(PtaconstrainError, match="frequency"):
        psd.h0_threshold(1e-8 * u.m)


def test_guessed_span_of_a_noise_budget_is_announced():
    f = np.geomspace(2e-9, 1e-7, 5) * u.Hz
    psd = StrainCurve(f, np.full(5, 1e-20), "strain_psd")
    with pytest.warns(PtaconstrainWarning, match="span"):
        span = psd.observing_span()
    assert span == (1 / f[0]).to(u.yr)
    with warnings.catch_warnings():
        warnings.simplefilter("error", PtaconstrainWarning)
        psd.h0_threshold(1e-8, span=10 * u.yr)  # given: no warning
        StrainCurve(f, np.full(5, 1e-14), "h0_limit").h0_threshold(1e-8)  # a limit needs none


def test_frequency_unit_hint_names_the_likely_unit():
    from ptaconstrain.sensitivity.curve import frequency_unit_hint

    # a PTA band is ~1 nHz - 1 uHz (common practice): the same band written in nHz or mHz
    assert "look like nHz" in frequency_unit_hint([2.0, 300.0] * u.Hz)
    assert "look like mHz" in frequency_unit_hint([2e-6, 3e-4] * u.Hz)
    assert frequency_unit_hint([2e-9, 3e-7] * u.Hz) == ""
