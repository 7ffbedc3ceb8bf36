"""Pulsar noise model and exact timing-model losses (ptaconstrain.sensitivity.timing)."""

import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from pulsars_for_tests import DAY, timing_fit_columns
from scipy import signal

from ptaconstrain.sensitivity import timing
from ptaconstrain.sensitivity.pulsar_array import PulsarArray


def test_white_noise_psd_is_two_sigma_squared_dt():
    # One-sided PSD of white noise is 2 sigma^2 dt: checked against Welch's
    # periodogram (scipy.signal.welch, one-sided density) of simulated noise.
    sigma, dt = 0.7e-6, 14 * DAY
    rng = np.random.default_rng(3)
    x = rng.normal(0.0, sigma, 2**16)
    _, pxx = signal.welch(x, fs=1.0 / dt, nperseg=1024, return_onesided=True, scaling="density")
    arr = PulsarArray(
        ["W"],
        SkyCoord(0 * u.deg, 0 * u.deg, frame="icrs")[None],
        [0.7] * u.us,
        [14.0] * u.d,
        [50000.0],
        [56000.0],
    )
    ours = arr.noise_psd([1e-8] * u.Hz).to_value(u.s**2 / u.Hz)[0, 0]
    assert np.mean(pxx[1:-1]) == pytest.approx(ours, rel=0.02, abs=0)  # 64 x 127 averages


def test_red_noise_psd_matches_characteristic_strain_form():
    # Jenet et al. (2006), ApJ 653, 1571: h_c = A (f/f_yr)^alpha, gamma = 3 - 2 alpha,
    # and the residual PSD P = h_c^2 / (12 pi^2 f^3).
    f = np.array([1e-9, 1e-8, 1e-7]) * u.Hz
    amp, gamma = 2e-15, 13.0 / 3.0
    fyr = 1.0 / (365.25 * DAY)
    hc = amp * (f.value / fyr) ** ((3.0 - gamma) / 2.0)
    expect = hc**2 / (12 * np.pi**2 * f.value**3)
    assert np.allclose(
        timing.red_noise_psd(f, amp, gamma).to_value(u.s**3), expect, rtol=1e-12, atol=0
    )


def test_design_matrix_spans_the_documented_timing_model():
    # Same column space as the model written out independently (pulsars_for_tests):
    # projecting one onto the other with numpy.linalg.lstsq leaves nothing.
    mjd = 53000.0 + 14.0 * np.arange(300)
    ours = timing.timing_design_matrix(mjd)
    ref = timing_fit_columns(mjd)
    coef = np.linalg.lstsq(ours, ref, rcond=None)[0]
    assert np.max(np.abs(ours @ coef - ref)) < 1e-9
    assert ours.shape == (mjd.size, timing.N_TIMING_PARAMETERS)


def test_red_noise_basis_variances_follow_the_power_law():
    # Each Fourier mode k / T has prior variance P_r(k / T) / T (Lentati et al. 2013,
    # PRD 87, 104021): the power law of Jenet et al. (2006) evaluated independently.
    mjd = 53000.0 + 14.0 * np.arange(300)
    t = (mjd - mjd.mean()) * DAY * u.s
    span = (mjd[-1] - mjd[0]) * u.d
    amp, gam = 3e-14, 4.0
    basis, phi = timing.red_noise_basis(t, span, 0.4 * u.us, 14 * u.d, amp, gam)
    k = basis.shape[1] // 2
    fk = np.arange(1, k + 1) / span.to_value(u.s)
    fyr = 1.0 / (365.25 * DAY)
    pr = amp**2 / (12 * np.pi**2) * fyr**-3 * (fk / fyr) ** -gam
    assert phi.to_value(u.s**2) == pytest.approx(
        np.tile(pr / span.to_value(u.s), 2), rel=1e-10, abs=0
    )
    assert timing.red_noise_basis(t, span, 0.4 * u.us, 14 * u.d, 0.0, np.nan) is None


def test_post_fit_weights_equal_dense_generalised_least_squares():
    # G = C^-1 - C^-1 M (M^T C^-1 M)^-1 M^T C^-1 (van Haasteren & Levin 2013,
    # MNRAS 428, 1147; from memory) with the dense covariance C = sigma^2 I + F Phi F^T,
    # solved with numpy.linalg against the library's Woodbury route.
    mjd = 53000.0 + 14.0 * np.arange(300)
    sig = 0.4e-6
    amp, gam = 3e-14, 4.0
    f = np.array([3.3e-9, 1.1e-8, 4.7e-8])
    t = (mjd - mjd.mean()) * DAY
    span = (mjd[-1] - mjd[0]) * DAY
    basis, phi = timing.red_noise_basis(t * u.s, span * u.s, sig * u.s, 14 * u.d, amp, gam)
    cov = sig**2 * np.eye(mjd.size) + basis @ np.diag(phi.to_value(u.s**2)) @ basis.T
    cinv = np.linalg.inv(cov)
    mdes = timing_fit_columns(mjd)
    g = cinv - cinv @ mdes @ np.linalg.solve(mdes.T @ cinv @ mdes, mdes.T @ cinv)
    expect = []
    for fi in f:
        c, s = np.cos(2 * np.pi * fi * t), np.sin(2 * np.pi * fi * t)
        expect.append(0.5 * (c @ g @ c + s @ g @ s))
    got = timing.post_fit_weights(mjd, sig * u.s, f * u.Hz, amp, gam).to_value(u.s**-2)
    assert np.allclose(got, expect, rtol=1e-6, atol=0)


def _epochs(kind):
    """TOA epochs (MJD): a regular schedule as PulsarArray.epochs makes it, the same
    with up to 0.1 ms of jitter (offsets from the grid applied to first order: up
    to ~1e-10 rad, far above the rounding the tests allow), or irregular."""
    rng = np.random.default_rng(5)
    if kind == "regular":
        return 53012.3 + 17.0 * np.arange(211)
    if kind == "jittered":
        return 53012.3 + 17.0 * np.arange(211) + rng.uniform(-1e-9, 1e-9, 211)
    return 53012.3 + np.cumsum(rng.uniform(5.0, 30.0, 211))  # gaps of 5-30 d: every sine directly


@pytest.mark.parametrize("kind", ["regular", "jittered", "irregular"])
def test_red_noise_basis_equals_cosines_and_sines_taken_directly(kind):
    # Reference: numpy's cos and sin of 2 pi f_k t for every epoch and mode (the
    # documented basis).  The regular schedule goes through angle addition, the
    # irregular one takes every sine directly; both agree to the rounding of a
    # phase of up to 2 pi x 100 modes / 2 (~300 rad: ~1e-13 absolute).
    mjd = _epochs(kind)
    t = (mjd - 0.5 * (mjd[0] + mjd[-1])) * DAY
    span = (mjd[-1] - mjd[0]) * DAY
    basis, phi = timing.red_noise_basis(t * u.s, span * u.s, 0.1 * u.us, 17 * u.d, 1e-13, 3.0)
    k = phi.size // 2
    arg = 2 * np.pi * np.outer(t, np.arange(1, k + 1) / span)
    assert k > 20
    assert np.max(np.abs(basis - np.concatenate([np.cos(arg), np.sin(arg)], axis=1))) < 1e-12


@pytest.mark.parametrize("kind", ["regular", "jittered", "irregular"])
def test_batched_weights_equal_a_per_frequency_dense_reference(kind):
    # The library fits all frequencies in one batch (sines by angle addition on a
    # regular schedule, one Cholesky and one triangular solve for all of them).
    # Reference, one frequency at a time: cos and sin from numpy, the dense
    # covariance C = sigma^2 I + F Phi F^T inverted by numpy.linalg and the
    # projection G = C^-1 - C^-1 M (M^T C^-1 M)^-1 M^T C^-1 (van Haasteren &
    # Levin 2013, MNRAS 428, 1147; from memory), w = (c'Gc + s'Gs) / 2.  Above
    # 2 / T the weights are not a cancellation, so both agree to ~1e-10.
    mjd = _epochs(kind)
    sig, amp, gam = 0.3e-6, 2e-14, 4.0
    t = (mjd - 0.5 * (mjd[0] + mjd[-1])) * DAY
    span = (mjd[-1] - mjd[0]) * DAY
    cadence = span / (mjd.size - 1) * u.s
    basis, phi = timing.red_noise_basis(t * u.s, span * u.s, sig * u.s, cadence, amp, gam)
    cov = sig**2 * np.eye(mjd.size) + basis @ np.diag(phi.to_value(u.s**2)) @ basis.T
    cinv = np.linalg.inv(cov)
    mdes = timing_fit_columns(mjd)
    g = cinv - cinv @ mdes @ np.linalg.solve(mdes.T @ cinv @ mdes, mdes.T @ cinv)
    f = np.geomspace(2.2 / span, 0.45 / cadence.value, 23)
    expect = []
    for fi in f:
        c, s = np.cos(2 * np.pi * fi * t), np.sin(2 * np.pi * fi * t)
        expect.append(0.5 * (c @ g @ c + s @ g @ s))
    got = timing.post_fit_weights(mjd, sig * u.s, f * u.Hz, amp, gam).to_value(u.s**-2)
    assert got == pytest.approx(expect, rel=1e-10, abs=0)


def test_red_noise_lowers_sensitivity_at_low_frequency_as_power_law():
    # With P = P_w + P_r the continuum S/N^2 scales as 1/P (Whittle
    # approximation): w_red / w_white ~ P_w / (P_w + P_r), close to 1 where
    # P_r << P_w, and w_red ~ f^gamma where red noise dominates.
    mjd = 53000.0 + 14.0 * np.arange(int(15 * 365.25 / 14))
    span = (mjd[-1] - mjd[0]) * DAY
    sig, amp, gam = 0.5 * u.us, 3e-14, 13.0 / 3.0
    f = np.array([3.3, 4.4, 5.6, 7.3, 45.5, 61.5, 88.5]) / span * u.Hz
    w0 = timing.post_fit_weights(mjd, sig, f)
    w1 = timing.post_fit_weights(mjd, sig, f, amp, gam)
    pw = timing.white_noise_psd(sig, 14 * u.d)
    pr = timing.red_noise_psd(f, amp, gam)
    ratio = (w1 / w0).to_value(u.dimensionless_unscaled)
    expect = (pw / (pw + pr)).to_value(u.dimensionless_unscaled)
    assert np.all(np.diff(ratio) > 0)  # the loss shrinks with frequency
    assert ratio[:4] == pytest.approx(expect[:4], rel=0.1, abs=0)  # P_r / P_w = 7 ... 350 here
    assert ratio[4:] == pytest.approx(1.0, abs=0.01)  # P_r / P_w < 5e-3 here
    slope = np.log(w1[1] / w1[0]) / np.log(f[1] / f[0])
    assert slope.value == pytest.approx(gam, rel=0.05, abs=0)


def test_analytic_weights_agree_with_exact_in_documented_domain():
    # Module docstring: within 8% (white) and 15% (red-noise dominated) for
    # f >= 4/T_p, |f - k/yr| > 2/T_p (k = 1, 2), f < 1/(2 dt).  Continuum
    # limit of the white-noise matched filter: w = N dt / P = N / (2 sigma^2).
    arr = PulsarArray(
        ["W", "R"],
        SkyCoord([0, 90] * u.deg, [0, 30] * u.deg),
        [1.0, 0.5] * u.us,
        [14.0, 14.0] * u.d,
        [53000.0, 53000.0],
        [58500.0, 58500.0],
        red_amp=[0.0, 3e-14],
        red_gamma=[np.nan, 4.0],
    )
    tp = arr.pulsar_spans[0].to_value(u.s)
    f = np.logspace(np.log10(4 / tp), np.log10(1 / (2 * 14 * DAY)), 300) * u.Hz
    fyr = (f * u.yr).to_value(u.dimensionless_unscaled)
    gap = 2 * u.yr.to(u.s) / tp  # 2 / T_p in units of 1/yr
    dom = (np.abs(fyr - 1) > gap) & (np.abs(fyr - 2) > gap)
    assert dom.sum() > 200
    exact = arr.weights(f, method="exact").value
    approx = arr.weights(f, method="analytic").value
    ratio = approx[:, dom] / exact[:, dom]
    assert np.all(np.abs(ratio[0] - 1) < 0.08)
    red_dom = (arr.noise_psd(f)[1] > 2 * timing.white_noise_psd(0.5 * u.us, 14 * u.d))[dom]
    assert red_dom.sum() > 5
    assert np.all(np.abs(ratio[1][red_dom] - 1) < 0.15)
    assert np.all(np.abs(ratio[1] - 1) < 0.15)
    # and outside the domain (at 1/yr) the approximation is far off: the notch
    iyr = np.argmin(np.abs(fyr - 1))
    assert exact[0, iyr] < 0.5 * approx[0, iyr]


def test_single_blas_thread_limits_and_restores_the_blas_libraries():
    # Reference: threadpoolctl's own report of the loaded BLAS libraries.
    from threadpoolctl import threadpool_info

    from ptaconstrain.sensitivity.timing import single_blas_thread

    before = [d["num_threads"] for d in threadpool_info() if d["user_api"] == "blas"]
    with single_blas_thread():
        inside = [d["num_threads"] for d in threadpool_info() if d["user_api"] == "blas"]
    after = [d["num_threads"] for d in threadpool_info() if d["user_api"] == "blas"]
    assert inside and set(inside) == {1}
    assert after == before
