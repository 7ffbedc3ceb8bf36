import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from curves_for_tests import power_law_limit
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, stats

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.analysis.regions import ABOVE_ISCO, UNCONSTRAINED
from ptaconstrain.analysis.sampling import (
    HostSamples,
    distance_sigma,
    orientation_factor,
    sample_host,
)
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.sensitivity.curve import StrainCurve

# soft assumptions these tests make on purpose (each is tested where it is raised)
fixed_errors = pytest.mark.filterwarnings(
    "ignore:host .* so the samples do not vary:ptaconstrain.errors.PtaconstrainWarning"
)
averaged_orientation = pytest.mark.filterwarnings(
    "ignore:forecasts use the orientation-averaged S/N:ptaconstrain.errors.PtaconstrainWarning"
)

Q = np.geomspace(1e-4, 1, 40)
P = np.geomspace(0.05, 60, 45) * u.yr


def noise_curve():
    """A strain-noise PSD power law (test input, not physics), sky-averaged, 20 yr."""
    f = np.geomspace(2e-9, 3e-7, 50)
    return StrainCurve(
        f * u.Hz, 1e-21 * (f / 1e-8) ** 1.5 * u.Hz**-1, "strain_psd", {"span": "20 yr"}
    )


def mc_tol(p, n, k=5.0):
    """k-sigma binomial Monte-Carlo error of a fraction p from n samples."""
    return k * np.sqrt(p * (1 - p) / n) + 1.5 / n


def brute_force(samples, curve, q, period, snr=5.0, span=None):
    """Cell-by-cell, sample-by-sample comparison of the Thorne (1987, eq. 46) h0."""
    f = wf.gw_frequency(period)
    h0 = wf.strain_amplitude(
        samples.mass[:, None, None],
        q[None, :, None],
        f[None, None, :],
        samples.distance[:, None, None],
        samples.redshift,
    ).value
    if samples.orientation_factor is not None:
        h0 = h0 * np.sqrt(samples.orientation_factor)[:, None, None]
    thr = curve.h0_threshold(f, snr=snr, span=curve.observing_span(span))
    exists = f[None, :] <= samples.isco_frequency[:, None]  # Maggiore (2008) eq. 4.39
    p = ((h0 > thr) & exists[:, None, :]).mean(axis=0)
    p[:, np.isnan(thr) | ~exists.any(axis=0)] = np.nan
    return p


# ------------------------------------------------------------ zero uncertainty
@fixed_errors
@pytest.mark.parametrize("mass", [3e9, 4e10])  # 4e10: short periods above the ISCO
def test_zero_uncertainty_reproduces_the_deterministic_map(limit_curve, mass):
    host = Host("A", mass, 50)
    det = exclusion_map(host, limit_curve, Q, P)
    r = exclusion_probability(host, limit_curve, Q, P, samples=200, seed=1)
    nan_cols = np.isin(det.region, (UNCONSTRAINED, ABOVE_ISCO)).all(axis=0)
    assert nan_cols.any()
    np.testing.assert_array_equal(
        np.isnan(r.probability), np.broadcast_to(nan_cols, Q.shape + P.shape)
    )
    np.testing.assert_array_equal(r.probability[:, ~nan_cols], det.excluded[:, ~nan_cols] * 1.0)
    for c in r.credibility:
        np.testing.assert_array_equal(r.max_mass_ratio[c], det.max_mass_ratio)


@fixed_errors
@averaged_orientation
def test_zero_uncertainty_noise_budget_without_orientation_is_deterministic():
    host = Host("A", 5e9, 30)
    det = exclusion_map(host, noise_curve(), Q, P)
    r = exclusion_probability(host, noise_curve(), Q, P, samples=50, seed=2, orientation=False)
    ok = ~np.isnan(r.probability)
    np.testing.assert_array_equal(r.probability[ok], det.excluded[ok] * 1.0)
    np.testing.assert_array_equal(r.max_mass_ratio[0.95], det.max_mass_ratio)


# ----------------------------------------------------------------- brute force
@pytest.mark.parametrize("curve", [power_law_limit(), noise_curve()], ids=["limit", "psd"])
def test_matches_brute_force_on_the_same_samples(curve):
    # a massive host with a wide, asymmetric mass error: many periods are above the
    # ISCO for part of the samples, which exercises the per-sample ISCO bookkeeping
    host = Host("B", 3e10, 200, mass_err_dex=(0.2, 0.4), distance_err=20, mass_distance=190)
    q, period = Q[::2], P[::2]
    r = exclusion_probability(host, curve, q, period, samples=2000, seed=5)
    partial = (r.above_isco_fraction > 0) & (r.above_isco_fraction < 1)
    assert partial.sum() >= 3
    expected = brute_force(r.samples, curve, q, period)
    np.testing.assert_array_equal(np.isnan(r.probability), np.isnan(expected))
    # equal up to a sample flipping at a floating-point tie
    np.testing.assert_allclose(r.probability, expected, rtol=0, atol=1.01 / 2000)


def test_credible_bound_agrees_with_the_cell_probabilities():
    # definition: q > q_c is excluded with probability >= c, q < q_c is not
    host = Host("B", 3e10, 200, mass_err_dex=(0.2, 0.4), distance_err=20, mass_distance=190)
    r = exclusion_probability(
        host, power_law_limit(), Q, P, samples=3000, seed=6, credibility=(0.3, 0.5, 0.9, 0.95, 1.0)
    )
    for c, qc in r.max_mass_ratio.items():
        ok = np.isfinite(qc)
        np.testing.assert_array_equal(r.probability[:, ok] >= c, Q[:, None] > qc[None, ok])


# ---------------------------------------------------------- analytic checks
@fixed_errors
def test_lognormal_mass_error_gives_a_normal_cdf(limit_curve):
    # h0 ∝ M^(5/3) (Thorne 1987, eq. 46), so with log10 M ~ N(log10 M0, sigma):
    # P(h0 > h_thr) = Phi(log10(h0_best / h_thr) / ((5/3) sigma))   (scipy.stats.norm)
    sigma = 0.3
    host = Host("C", 5e8, 5, mass_err_dex=sigma)
    n = 100_000
    r = exclusion_probability(host, limit_curve, Q, P, samples=n, seed=11)
    f = wf.gw_frequency(P)
    assert r.above_isco_fraction[np.isfinite(limit_curve.h0_threshold(f))].max() == 0
    h_best = wf.strain_amplitude(
        host.mass, Q[:, None], f[None, :], host.distance, host.redshift
    ).value
    expected = stats.norm.cdf(np.log10(h_best / limit_curve.h0_threshold(f)) / (5 / 3 * sigma))
    ok = np.isfinite(expected)
    assert np.any((expected[ok] > 0.1) & (expected[ok] < 0.9))
    assert np.all(np.abs(r.probability[ok] - expected[ok]) <= mc_tol(expected[ok], n))


@fixed_errors
def test_asymmetric_mass_error_is_a_two_piece_normal(limit_curve):
    # quoted -lo/+hi dex read as the 16th/84th percentiles around the median (common
    # practice): P(eps > w) = norm.sf(w / lo) for w < 0 and norm.sf(w / hi) for w >= 0
    lo, hi = 0.1, 0.35
    host = Host("C", 5e8, 5, mass_err_dex=(lo, hi))
    n = 100_000
    r = exclusion_probability(host, limit_curve, Q, P, samples=n, seed=12)
    f = wf.gw_frequency(P)
    h_best = wf.strain_amplitude(
        host.mass, Q[:, None], f[None, :], host.distance, host.redshift
    ).value
    w = np.log10(limit_curve.h0_threshold(f) / h_best) / (5 / 3)  # needed mass offset, dex
    expected = np.where(w < 0, stats.norm.sf(w / lo), stats.norm.sf(w / hi))
    ok = np.isfinite(expected)
    assert np.all(np.abs(r.probability[ok] - expected[ok]) <= mc_tol(expected[ok], n))
    offset = np.log10((r.samples.mass / host.mass).to_value(u.dimensionless_unscaled))
    # Normal 1-sigma points are the 15.87 / 84.13 percentiles (scipy.stats.norm.cdf(+-1))
    lo_q, hi_q = np.percentile(offset, 100 * stats.norm.cdf([-1.0, 1.0]))
    assert lo_q == pytest.approx(-lo, rel=0.02, abs=0)
    assert hi_q == pytest.approx(hi, rel=0.02, abs=0)


@fixed_errors
def test_reference_distance_mass_makes_h0_scale_as_d_to_two_thirds():
    # a mass quoted at D_ref scales as D, so h0 ∝ M^(5/3)/D ∝ D^(2/3) (DESIGN.md; Thorne
    # 1987 eq. 46): a pure 8% distance error spreads ln h0 by (2/3) sigma_lnD with the
    # correlation and by 1 x sigma_lnD (h0 ∝ 1/D) without it; sigma_lnD ~ sigma_D / D
    # to first order (delta method).
    frac, n = 0.08, 100_000
    host = Host("D", 1e10, 60, distance_err_frac=frac, mass_distance=60)
    corr = sample_host(host, n, 3)
    flat = sample_host(Host("D", 1e10, 60, distance_err_frac=frac), n, 3)
    s0 = wf.strain_prefactor(1e10 * u.Msun, 60 * u.Mpc, host.redshift)
    sd_corr = np.std(corr.log_scale(s0))
    sd_flat = np.std(flat.log_scale(s0))
    assert sd_corr == pytest.approx(2 / 3 * frac, rel=0.02, abs=0)
    assert sd_flat == pytest.approx(frac, rel=0.02, abs=0)
    # per sample the scaling is exact: ln h0 = (2/3) ln D + const
    np.testing.assert_allclose(
        corr.log_scale(s0), 2 / 3 * np.log(corr.distance / (60 * u.Mpc)), atol=1e-12
    )


@fixed_errors
def test_noise_budget_inclination_probability_closed_form():
    # no host error: detectable iff g(i) > r^2 with r = h_thr / h0, g from the README
    # polarisations; g rises with x = cos^2 i, x* solves (1+x)^2 + 4x = (16/5) r^2, i.e.
    # x* = -3 + sqrt(8 + (16/5) r^2), and |cos i| is uniform on [0, 1] (isotropy)
    curve = noise_curve()
    host = Host("E", 8e9, 25)
    n = 100_000
    r = exclusion_probability(host, curve, Q, P, samples=n, seed=13)
    assert r.orientation
    f = wf.gw_frequency(P)
    h_best = wf.strain_amplitude(
        host.mass, Q[:, None], f[None, :], host.distance, host.redshift
    ).value
    ratio = curve.h0_threshold(f, snr=5.0) / h_best
    x_star = -3 + np.sqrt(8 + 3.2 * ratio**2)
    expected = 1 - np.sqrt(np.clip(x_star, 0, 1))
    ok = np.isfinite(expected)
    assert np.any((expected[ok] > 0.1) & (expected[ok] < 0.9))
    assert np.all(np.abs(r.probability[ok] - expected[ok]) <= mc_tol(expected[ok], n))


def test_orientation_factor_averages_to_one():
    # scipy quadrature of g over isotropic cos i in [-1, 1]: the S/N^2 mean is the
    # orientation-averaged one of curves.detection_threshold_h0
    mean, _ = integrate.quad(lambda c: orientation_factor(c) / 2.0, -1.0, 1.0)
    assert mean == pytest.approx(1.0, rel=1e-12, abs=0)
    # face-on: |h+| = |hx| = 2 h0, so h+^2 + hx^2 phase-averages to 4 h0^2, over the
    # mean 8 h0^2/5: 5/2; edge-on: h+ = h0, hx = 0 -> (1/2)/(8/5) = 5/16
    assert orientation_factor([1.0, -1.0, 0.0]) == pytest.approx(
        [2.5, 2.5, 5 / 16], rel=1e-6, abs=0
    )


# ---------------------------------------------------------- host sampling
def test_peculiar_velocity_error_is_the_hubble_law_nearby():
    # D ~ c z / H0 at z << 1, so sigma_D = sigma_v / H0 (Hubble law; astropy Planck18 H0),
    # up to first-order corrections (2 - q0) z ~ 2.5 z (deceleration q0 ~ -0.5)
    from astropy.cosmology import Planck18

    z = 5e-4
    host = Host("F", 1e9, redshift=z, velocity_err=250)
    expected = (250 * u.km / u.s / Planck18.H0).to(u.Mpc)
    assert distance_sigma(host).to_value(u.Mpc) == pytest.approx(expected.value, rel=3 * z, abs=0)


def test_peculiar_velocity_error_follows_the_luminosity_distance_slope():
    # sigma_D = (dD_L/dz) (1+z) sigma_v / c, with dD_L/dz from a central difference of
    # astropy's Planck18 luminosity distance
    from astropy.cosmology import Planck18

    z, sv = 0.1, 300 * u.km / u.s
    host = Host("F", 1e9, redshift=z, velocity_err=sv)
    dz = 1e-4
    slope = (Planck18.luminosity_distance(z + dz) - Planck18.luminosity_distance(z - dz)) / (2 * dz)
    expected = (slope * (1 + z) * sv / const.c).to(u.Mpc)
    assert distance_sigma(host).to_value(u.Mpc) == pytest.approx(expected.value, rel=1e-6, abs=0)


def test_distance_and_velocity_errors_add_in_quadrature():
    a = distance_sigma(Host("F", 1e9, redshift=0.01, distance_err=3.0))
    b = distance_sigma(Host("F", 1e9, redshift=0.01, velocity_err=400))
    ab = distance_sigma(Host("F", 1e9, redshift=0.01, distance_err=3.0, velocity_err=400))
    assert ab.value == pytest.approx(np.hypot(a.value, b.value), rel=1e-12, abs=0)


@fixed_errors
def test_large_distance_errors_are_truncated_at_zero():
    # a 60% error: samples follow a normal truncated at D = 0 (Kolmogorov-Smirnov test
    # against scipy.stats.truncnorm; fixed seed, so the verdict is reproducible)
    d0, sig = 30.0, 18.0
    s = sample_host(Host("G", 1e9, d0, distance_err=sig), 20_000, seed=4)
    d = s.distance.to_value(u.Mpc)
    assert d.min() > 0
    ref = stats.truncnorm(-d0 / sig, np.inf, loc=d0, scale=sig)
    assert stats.kstest(d, ref.cdf).pvalue > 1e-3


# ---------------------------------------------------------- determinism, API
def test_a_seed_reproduces_the_result_and_is_recorded(limit_curve):
    host = Host("H", 1e10, 80, mass_err_dex=0.2, distance_err=8, mass_distance=75)
    a = exclusion_probability(host, limit_curve, Q, P, samples=5000, seed=42)
    b = exclusion_probability(host, limit_curve, Q, P, samples=5000, seed=42)
    c = exclusion_probability(host, limit_curve, Q, P, samples=5000, seed=43)
    np.testing.assert_array_equal(a.probability, b.probability)
    assert not np.array_equal(np.nan_to_num(a.probability), np.nan_to_num(c.probability))
    assert a.seed == 42 and a.n_samples == 5000
    assert a.describe()["probability_seed"] == "42"
    fresh = exclusion_probability(host, limit_curve, Q, P, samples=500)
    again = exclusion_probability(host, limit_curve, Q, P, samples=500, seed=fresh.seed)
    np.testing.assert_array_equal(fresh.probability, again.probability)


@fixed_errors
def test_summary_percentiles_of_the_samples(limit_curve):
    # a symmetric 0.2 dex mass error: 16/84 % of M sit at 10^(-+0.2) of the median
    # (normal 1-sigma points, up to the 15.87 vs 16 % difference, well within 2 %)
    host = Host("H", 1e10, 80, mass_err_dex=0.2)
    r = exclusion_probability(host, limit_curve, Q, P, samples=50_000, seed=8)
    lo, med, hi = r.summary["mass"].to_value(u.Msun)
    assert med == pytest.approx(1e10, rel=0.01, abs=0)
    assert np.log10(hi / med) == pytest.approx(0.2, rel=0.03, abs=0)
    assert np.log10(med / lo) == pytest.approx(0.2, rel=0.03, abs=0)
    assert r.summary["distance"].to_value(u.Mpc) == pytest.approx([80, 80, 80], rel=1e-6, abs=0)


@pytest.fixture(scope="module")
def wide():
    host = Host("I", 2e10, 100, mass_err_dex=0.25, distance_err=10, mass_distance=100)
    curve = power_law_limit()
    samples = sample_host(host, 20_000, seed=9)
    return host, curve, samples


@settings(max_examples=15, deadline=None)
@given(st.lists(st.floats(0.01, 1.0), min_size=2, max_size=5, unique=True))
def test_credible_bound_is_monotone_in_credibility(wide, levels):
    host, curve, samples = wide
    r = exclusion_probability(host, curve, Q, P, samples=samples, credibility=levels)
    qs = [r.max_mass_ratio[c] for c in sorted(levels)]
    for lo, hi in zip(qs[:-1], qs[1:], strict=True):
        ok = np.isfinite(lo)
        assert np.all(lo[ok] <= hi[ok])


def test_probability_rises_with_mass_ratio_and_lies_in_unit_interval(wide):
    host, curve, samples = wide
    r = exclusion_probability(host, curve, Q, P, samples=samples)
    p = r.probability[:, np.isfinite(r.probability).all(axis=0)]
    assert p.size and np.all((p >= 0) & (p <= 1))
    assert np.all(np.diff(p, axis=0) >= 0)


def test_tightest_credible_bound_is_weaker_than_best_fit(wide):
    host, curve, samples = wide
    r = exclusion_probability(host, curve, Q, P, samples=samples)
    (_, q95), (_, qbest) = r.tightest(0.95), r.deterministic.tightest()
    assert q95 > qbest
    with pytest.raises(ValueError, match="credibility"):
        r.tightest(0.8)


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"credibility": 0.0}, "credibility"),
        ({"credibility": (0.5, 1.5)}, "credibility"),
        ({"samples": 0}, "samples"),
        ({"seed": -1}, "seed"),
        ({"seed": "abc"}, "seed"),
    ],
)
def test_bad_inputs_name_the_field(limit_curve, kwargs, match):
    host = Host("J", 1e10, 50, mass_err_dex=0.1)
    with pytest.raises(ValueError, match=match):
        exclusion_probability(host, limit_curve, Q, P, **kwargs)


@fixed_errors
def test_noise_budget_refuses_samples_without_orientation():
    host = Host("J", 1e10, 50)
    s = sample_host(host, 100, seed=1)
    assert isinstance(s, HostSamples)
    with pytest.raises(ValueError, match="orientation"):
        exclusion_probability(host, noise_curve(), Q, P, samples=s)


# ---------------------------------------------------------- report pieces
def test_probability_columns_one_per_credibility(wide):
    from ptaconstrain.report.probability_plot import probability_columns, probability_descriptions

    host, curve, samples = wide
    r = exclusion_probability(host, curve, Q, P, samples=samples, credibility=(0.68, 0.95))
    cols = probability_columns(r)
    assert list(cols) == ["max_mass_ratio_0.68", "max_mass_ratio_0.95"]
    np.testing.assert_array_equal(cols["max_mass_ratio_0.95"], r.max_mass_ratio[0.95])
    assert set(probability_descriptions(r)) == set(cols)


def test_contours_trace_the_credible_bound(wide):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from ptaconstrain.report.probability_plot import add_probability_contours

    host, curve, samples = wide
    q = np.geomspace(1e-3, 1, 200)
    period = np.geomspace(2, 20, 60) * u.yr
    r = exclusion_probability(host, curve, q, period, samples=samples)
    fig, ax = plt.subplots()
    try:
        cs = add_probability_contours(ax, r, levels=(0.5, 0.95), best_fit=True)
        assert list(cs.levels) == [0.5, 0.95]
        assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
        labels = [t.get_text() for t in ax.texts]
        assert "95%" in labels and "50%" in labels
        # the 95% contour lies on max_mass_ratio_0.95, within one grid step of q
        seg = np.concatenate(cs.allsegs[1])
        bound = np.interp(np.log(seg[:, 0]), np.log(period.value), np.log(r.max_mass_ratio[0.95]))
        inside = (seg[:, 1] < 0.9) & (seg[:, 0] > 2.2) & (seg[:, 0] < 18)
        step = np.log(q[1] / q[0])
        assert inside.any()
        assert np.all(np.abs(np.log(seg[inside, 1]) - bound[inside]) <= 1.5 * step)
    finally:
        plt.close(fig)
