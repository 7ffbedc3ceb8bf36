"""The background as a common red noise (sensitivity/background.py)."""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from pulsars_for_tests import DAY, small_array, timing_fit_columns

from ptaconstrain.errors import InputError
from ptaconstrain.sensitivity import antenna
from ptaconstrain.sensitivity.background import (
    Background,
    correlated_snr_squared,
    hellings_downs,
    parse_background,
)
from ptaconstrain.sensitivity.pulsar_array import PulsarArray
from ptaconstrain.sensitivity.timing import approximate_weights, red_noise_basis

BG = Background(2.4e-15)  # an amplitude of the order now reported (from memory)
F = np.array([2e-9, 3.2e-9, 5e-9, 8e-9, 1.3e-8, 2e-8, 5e-8, 1e-7]) * u.Hz


def _five_pulsars():
    """Five invented pulsars on one schedule (10 yr, 14 d, 100 ns): 261 TOAs each."""
    coord = SkyCoord([10, 80, 150, 230, 300] * u.deg, [20, -40, 60, -10, 5] * u.deg)
    return PulsarArray(
        [f"X{i}" for i in range(5)],
        coord,
        [0.1] * 5 * u.us,
        [14.0] * 5 * u.d,
        [55000.0] * 5,
        [55000 + 3652.5] * 5,
        name="five",
    )


def test_hellings_downs_is_the_sky_average_of_the_antenna_patterns():
    # Hellings & Downs (1983): Gamma_ab = (3/2) <F+_a F+_b + Fx_a Fx_b>_sky for a != b,
    # evaluated here on a Fibonacci sphere of 200,000 directions (numpy only)
    n = 200_000
    z = 1 - (2 * np.arange(n) + 1) / n
    phi = np.pi * (3 - np.sqrt(5)) * np.arange(n)
    src = np.stack([np.sqrt(1 - z**2) * np.cos(phi), np.sqrt(1 - z**2) * np.sin(phi), z], 1)
    pa = np.array([0.0, 0.0, 1.0])
    for zeta in (30.0, 82.0, 120.0, 180.0):
        pb = np.array([np.sin(np.radians(zeta)), 0.0, np.cos(np.radians(zeta))])
        fpa, fxa = antenna.antenna_pattern(pa, src)
        fpb, fxb = antenna.antenna_pattern(pb, src)
        avg = 1.5 * np.mean(fpa * fpb + fxa * fxb)
        assert float(hellings_downs(np.cos(np.radians(zeta)))) == pytest.approx(avg, abs=2e-4)
    # the auto-correlation includes the pulsar term: Gamma_aa = 1
    assert float(hellings_downs(1.0, same_pulsar=True)) == 1.0


def test_per_pulsar_background_weights_match_a_dense_gls():
    # reference: w = (c^T G c + s^T G s)/2 with G from numpy.linalg on the dense covariance
    # sigma^2 I + F (Phi_red + Phi_bg) F^T (van Haasteren & Levin 2013, from memory)
    arr = small_array(red=True).with_background(BG)
    f = np.geomspace(3e-9, 1e-7, 12) * u.Hz
    w = arr.weights(f).to_value(u.s**-2)
    for k in range(len(arr)):
        mjd = arr.epochs(k)
        t = (mjd - 0.5 * (mjd[0] + mjd[-1])) * DAY
        sig = arr.toa_rms[k].to_value(u.s)
        cov = sig**2 * np.eye(mjd.size)
        for amp, gam in ((arr.red_amp[k], arr.red_gamma[k]), (BG.amplitude, BG.gamma)):
            red = red_noise_basis(
                t * u.s, (mjd[-1] - mjd[0]) * u.d, arr.toa_rms[k], arr.cadence[k], amp, gam
            )
            if red is not None:  # the same modes: the larger set, cut at 1e-4 P_w
                basis, phi = red[0], red[1].to_value(u.s**2)
                cov += basis @ np.diag(phi) @ basis.T
        ci = np.linalg.inv(cov)
        md = timing_fit_columns(mjd)
        g = ci - ci @ md @ np.linalg.solve(md.T @ ci @ md, md.T @ ci)
        arg = 2 * np.pi * np.outer(t, f.to_value(u.Hz))
        ref = 0.5 * (
            np.einsum("if,ij,jf->f", np.cos(arg), g, np.cos(arg))
            + np.einsum("if,ij,jf->f", np.sin(arg), g, np.sin(arg))
        )
        # numpy's dense inverse of this ill-conditioned covariance (red noise ~1e10 above
        # white) agrees to ~5e-5; the library uses Cholesky and Woodbury
        np.testing.assert_allclose(w[k], ref, rtol=1e-4)


def test_background_weights_follow_the_continuum_limit_where_it_holds():
    # w ~ N dt / (P_w + P_b) away from 1/T and 1/yr (timing.py's stated domain, 15 %)
    arr = _five_pulsars().with_background(BG)
    f = np.array([1.3e-8, 2e-8, 4e-8, 1e-7]) * u.Hz
    exact = arr.weights(f)[0]
    approx = approximate_weights(arr.n_toas[0], arr.cadence[0], arr.noise_psd(f)[0])
    np.testing.assert_allclose(exact, approx, rtol=0.15)


def test_dense_uncorrelated_check_reproduces_the_per_pulsar_treatment():
    arr = _five_pulsars()
    src = SkyCoord(100 * u.deg, 30 * u.deg)
    per_pulsar = arr.with_background(BG).snr_squared(1e-14, F, coord=src)
    dense = correlated_snr_squared(arr, BG, 1e-14, F, src, correlated=False)
    np.testing.assert_allclose(dense, per_pulsar, rtol=1e-9)
    quiet = correlated_snr_squared(arr, None, 1e-14, F, src)
    np.testing.assert_allclose(quiet, arr.snr_squared(1e-14, F, coord=src), rtol=1e-9)


@pytest.mark.parametrize("ra, dec", [(100, 30), (280, -40), (10, 20)])
def test_hellings_downs_correlations_change_snr_by_at_most_about_ten_percent(ra, dec):
    # measured (README): the correlated (dense, Hellings & Downs 1983) S/N^2 is 0.89-0.98 of
    # the per-pulsar one where the background dominates (f < 10 nHz) and > 0.998 at 50 nHz
    arr = _five_pulsars()
    src = SkyCoord(ra * u.deg, dec * u.deg)
    hd = correlated_snr_squared(arr, BG, 1e-14, F, src, correlated=True)
    per = correlated_snr_squared(arr, BG, 1e-14, F, src, correlated=False)
    ratio = hd / per
    assert np.all((ratio > 0.85) & (ratio < 1.0 + 1e-9))
    assert np.all(ratio[F >= 5e-8 * u.Hz] > 0.998)
    # and the background itself matters at low f: S/N^2 falls by > 100 at 2 nHz
    assert per[0] < 0.01 * arr.snr_squared(1e-14, F[:1], coord=src)[0]


def test_parse_and_validate():
    # gamma = 13/3 for GW-driven circular binaries (Phinney 2001, from memory)
    assert parse_background("2.4e-15").gamma == pytest.approx(13 / 3, rel=1e-6, abs=0)
    assert parse_background(" 1e-15 , 3.5 ") == Background(1e-15, 3.5)
    for bad in ("abc", "1e-15,2,3", "-14.6", "0", "1e-15,12", "nan"):
        with pytest.raises(InputError, match="background"):
            parse_background(bad)


def test_array_records_the_background():
    arr = _five_pulsars()
    with_bg = arr.with_background(BG)
    assert arr.background is None and "A = 2.4e-15" in with_bg.describe()["background"]
    curve = with_bg.curve_at(None, frequency=F)
    assert "gamma = 4.333" in curve.meta["background"]
    assert arr.curve_at(None, frequency=F).meta["background"] == "none"
