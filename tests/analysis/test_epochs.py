"""Forecasts over time (analysis/epochs.py, PulsarArray.extended)."""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord

from ptaconstrain.analysis.epochs import forecast_over_time
from ptaconstrain.binary.host import Host
from ptaconstrain.errors import InputError
from ptaconstrain.sensitivity.pulsar_array import PulsarArray


def _white_array():
    """Four invented white-noise pulsars, 8 yr at 14 d, 200 ns."""
    coord = SkyCoord([10, 100, 200, 300] * u.deg, [-20, 30, 5, -60] * u.deg)
    return PulsarArray(
        ["W1", "W2", "W3", "W4"],
        coord,
        [0.2] * 4 * u.us,
        [14.0] * 4 * u.d,
        [55000.0] * 4,
        [55000 + 8 * 365.25] * 4,
        name="white",
    )


def test_h0_threshold_falls_as_inverse_root_span_for_white_noise():
    # analytic: for white noise rho^2 = sum_i r_i^2 / sigma^2 grows as the number of TOAs,
    # so at fixed S/N h0 ~ T^(-1/2); checked far above 1/T and away from 1/yr, 2/yr
    # (the fit's losses there are O(1/N))
    arr = _white_array()
    f = np.array([9e-8, 1.5e-7, 2.5e-7]) * u.Hz
    src = SkyCoord(150 * u.deg, 10 * u.deg)
    h = {}
    for years in (0, 8, 24):
        ext = arr.extended(years * u.yr)
        h[years] = ext.curve_at(src, frequency=f).h0_threshold(f)
        h[years] = (h[years], ext.span.to_value(u.yr))
    for years in (8, 24):
        expected = np.sqrt(h[0][1] / h[years][1])  # (T / T_0)^(-1/2)
        np.testing.assert_allclose(h[years][0] / h[0][0], expected, rtol=0.01)


def test_extended_array_keeps_cadence_and_scales_rms():
    arr = _white_array()
    ext = arr.extended(5, rms_factor=2.0)
    assert ext.span.to_value(u.yr) == pytest.approx(13.0, rel=1e-9, abs=0)
    np.testing.assert_array_equal(ext.cadence, arr.cadence)
    np.testing.assert_allclose(ext.toa_rms, arr.toa_rms / 2)
    assert "+5 yr" in ext.name and "rms / 2" in ext.name
    with pytest.raises(InputError, match="rms_factor"):
        arr.extended(5, rms_factor=0.5)
    with pytest.raises(InputError, match="years"):
        arr.extended(-1)


def test_forecast_over_time_tightens_and_finds_the_first_epoch():
    arr = _white_array()
    host = Host("Invented", 1e10, 30, ra=150, dec=10)
    q = np.geomspace(1e-4, 1, 40)
    res = forecast_over_time(host, arr, [20, 0, 10] * u.yr, mass_ratio=q)
    np.testing.assert_array_equal(res.years.to_value(u.yr), [0, 10, 20])
    np.testing.assert_allclose(res.span.to_value(u.yr), [8, 18, 28], rtol=1e-3)
    tight = res.tightest_mass_ratio
    assert np.all(np.diff(tight) < 0)  # longer spans detect lighter companions
    # each epoch is the same forecast as a map built directly on the extended array
    from ptaconstrain.analysis.exclusion import exclusion_map

    ext = arr.extended(10 * u.yr)
    direct = exclusion_map(host, ext.curve_at(host.coord), q, res.maps[1].period, warn=False)
    np.testing.assert_array_equal(direct.max_mass_ratio, res.maps[1].max_mass_ratio)
    assert res.first_epoch(tight[1]) == 10 * u.yr
    assert res.first_epoch(tight[2] * 0.5) is None
    t = res.to_table(target_q=float(tight[1]))
    assert list(t["reaches_target"]) == [False, True, True]
    assert t.meta["first_epoch_reaching_target"] == "+10 yr"
    assert "FORECAST" in t.meta["statement"]
