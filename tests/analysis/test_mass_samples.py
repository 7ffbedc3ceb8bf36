"""Probability maps from posterior samples of the mass (binary/mass_samples.py,
analysis/sampling.resample_host)."""

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import bucket_limit
from scipy import stats

from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.analysis.sampling import resample_host
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.binary.mass_samples import MassSamples, MassSamplesError, load_mass_samples
from ptaconstrain.errors import PtaconstrainWarning

Q = np.geomspace(1e-4, 1, 40)
P = np.geomspace(0.3, 40, 45) * u.yr


def mc_tol(p, n, k=5.0):
    """k-sigma binomial Monte-Carlo error of a fraction p from n samples."""
    return k * np.sqrt(p * (1 - p) / n) + 1.5 / n


def test_lognormal_samples_reproduce_the_parametric_map():
    # a log-normal posterior (log10 M ~ N(log10 M0, 0.3), drawn with scipy.stats) resampled
    # gives the same probabilities as the parametric --mass-err 0.3 to Monte-Carlo precision;
    # both against the closed form P = Phi(log10(h0/h_thr) / ((5/3) sigma)) (Thorne 1987
    # eq. 46: h0 ~ M^(5/3))
    sigma, m0 = 0.3, 5e8
    post = MassSamples(
        10 ** stats.norm.rvs(np.log10(m0), sigma, size=400_000, random_state=5) * u.Msun
    )
    host = Host("C", m0, 5)
    n = 100_000
    curve = bucket_limit()
    # the distance is exact here, and both say so
    with pytest.warns(PtaconstrainWarning, match="no distance error"):
        a = exclusion_probability(host, curve, Q, P, samples=n, seed=1, mass_samples=post)
    with pytest.warns(PtaconstrainWarning, match="no distance error"):
        b = exclusion_probability(
            Host("C", m0, 5, mass_err_dex=sigma), curve, Q, P, samples=n, seed=2
        )
    f = wf.gw_frequency(P)
    h0 = wf.strain_amplitude(host.mass, Q[:, None], f[None, :], host.distance, host.redshift).value
    expected = stats.norm.cdf(np.log10(h0 / curve.h0_threshold(f)) / (5 / 3 * sigma))
    ok = np.isfinite(expected) & np.isfinite(a.probability)
    assert np.any((expected[ok] > 0.1) & (expected[ok] < 0.9))
    # the posterior itself has 400,000 draws: its own error adds to the resampling error
    tol = mc_tol(expected[ok], n) + mc_tol(expected[ok], 400_000)
    assert np.all(np.abs(a.probability[ok] - expected[ok]) <= tol)
    assert np.all(np.abs(a.probability[ok] - b.probability[ok]) <= 2 * tol)
    for c in a.credibility:
        both = np.isfinite(a.max_mass_ratio[c]) & (a.max_mass_ratio[c] < 0.2)
        np.testing.assert_allclose(a.max_mass_ratio[c][both], b.max_mass_ratio[c][both], rtol=0.05)


def test_weights_and_joint_distances_are_used():
    # weighted rows are drawn in proportion to their weights (multinomial, 5 sigma)
    post = MassSamples([1e9, 2e9, 4e9] * u.Msun, distance=[10, 20, 40] * u.Mpc, weights=[1, 2, 7])
    s = resample_host(Host("W", 2e9, 20), post, n=50_000, seed=3)
    frac = [np.mean(s.mass.value == m) for m in (1e9, 2e9, 4e9)]
    np.testing.assert_allclose(frac, [0.1, 0.2, 0.7], atol=5 * np.sqrt(0.7 * 0.3 / 50_000))
    # pairs stay together: each mass keeps its own distance
    np.testing.assert_array_equal(s.distance.value, s.mass.value / 1e8)
    assert post.effective_size == pytest.approx(100 / 54, rel=1e-6, abs=0)


def test_without_distances_the_mass_follows_the_sampled_distance():
    # dynamical masses scale linearly with the adopted distance (README conventions)
    post = MassSamples(np.full(10, 1e9) * u.Msun)
    host = Host("D", 1e9, 20, mass_distance=20, distance_err=2)
    s = resample_host(host, post, n=20_000, seed=4)
    np.testing.assert_allclose(s.mass.value, 1e9 * s.distance.value / 20, rtol=1e-12)
    assert s.distance.std().value == pytest.approx(2.0, rel=0.05, abs=0)


def test_seed_reproduces_the_draws():
    post = MassSamples(np.geomspace(1e8, 1e10, 50) * u.Msun)
    host = Host("S", 1e9, 20, distance_err=1)
    a = resample_host(host, post, n=1000, seed=9)
    b = resample_host(host, post, n=1000, seed=9)
    np.testing.assert_array_equal(a.mass, b.mass)


def test_file_reading_and_bad_files(tmp_path):
    good = tmp_path / "post.csv"
    good.write_text("mass,distance,weight\n1e9,20,1\n2e9,21,3\n")
    post = load_mass_samples(good)
    assert post.size == 2 and post.distance.unit == u.Mpc and post.weights[1] == 3
    cases = {
        "nomass.csv": ("m,distance\n1e9,20\n2e9,21\n", "no 'mass' column"),
        "log.csv": ("mass\n9.1\n9.3\n", "log10"),
        "nan.csv": ("mass\n1e9\nnan\n", "row 2"),
        "negw.csv": ("mass,weight\n1e9,1\n2e9,-1\n", "weights"),
        "one.csv": ("mass\n1e9\n", "two samples"),
    }
    for name, (text, words) in cases.items():
        p = tmp_path / name
        p.write_text(text)
        with pytest.raises(MassSamplesError, match=words):
            load_mass_samples(p)


def test_shipped_invented_posterior_loads():
    from ptaconstrain.data import path as data_file

    post = load_mass_samples(data_file("demo_mass_samples.ecsv"))
    assert post.size == 2000 and post.distance is not None and post.weights is not None
    # weights uniform in [0.5, 1.5]: Kish's effective size is 12/13 of the rows (from
    # E[w]^2 / E[w^2] = 1 / (1 + 1/12))
    assert post.effective_size / post.size == pytest.approx(12 / 13, rel=0.02, abs=0)
