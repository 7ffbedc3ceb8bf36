"""Population model: residence times, mass-ratio weights, expected numbers, scatter."""

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from scipy import integrate, stats

from ptaconstrain.binary import waveform as wf
from ptaconstrain.catalogue.population import (
    MassRatioDistribution,
    PopulationModel,
    expected_number,
    mass_limits,
    mass_nodes,
    residence_time,
)

G, C = const.G.si.value, const.c.si.value
MSUN = const.M_sun.si.value
YR = (1 * u.yr).to_value(u.s)


def _fdot(m_tot_msun, q, f):
    """Peters (1964) quadrupole chirp, df/dt = (96/5) pi^(8/3) (G Mc/c^3)^(5/3) f^(11/3)."""
    eta = q / (1 + q) ** 2
    tm = G * m_tot_msun * MSUN * eta**0.6 / C**3
    return 96 / 5 * np.pi ** (8 / 3) * tm ** (5 / 3) * f ** (11 / 3)


def _f_isco(m_tot_msun):
    # Schwarzschild ISCO, f_GW = c^3 / (6^(3/2) pi G M) (Maggiore 2008, eq. 4.39)
    return C**3 / (6**1.5 * np.pi * G * m_tot_msun * MSUN)


@pytest.mark.parametrize(
    "m, q, f1, f2",
    [
        (1e9, 1.0, 3e-9, 1e-8),
        (3e9, 0.1, 1e-8, 1e-7),
        (1e10, 0.01, 2e-9, 5e-9),
    ],
)
def test_residence_time_is_integral_of_inverse_chirp(m, q, f1, f2):
    # t = int df / (df/dt), integrated numerically (Peters 1964)
    ref, _ = integrate.quad(lambda f: 1 / _fdot(m, q, f), f1, f2, epsrel=1e-12)
    got = residence_time(m * u.Msun, q, f1 * u.Hz, f2 * u.Hz).to_value(u.s)
    assert got == pytest.approx(ref, rel=1e-9, abs=0)


def test_residence_time_stops_at_isco():
    m = 2e11  # f_ISCO ~ 2.2e-8 Hz lies inside the band
    f1, f2 = 1e-8, 1e-7
    top = _f_isco(m)
    assert f1 < top < f2
    ref, _ = integrate.quad(lambda f: 1 / _fdot(m, 0.5, f), f1, top, epsrel=1e-12)
    got = residence_time(m * u.Msun, 0.5, f1 * u.Hz, f2 * u.Hz).to_value(u.s)
    assert got == pytest.approx(ref, rel=1e-9, abs=0)
    above = residence_time(m * u.Msun, 0.5, 2 * top * u.Hz, 3 * top * u.Hz)
    assert above.value == 0


@pytest.mark.parametrize("q_low", [0.01, 0.05, 0.3, 0.9])
def test_inverse_eta_tail_log_uniform(q_low):
    # scipy.stats.loguniform is p(q) = 1 / (q ln(1/q_min)) on [q_min, 1]
    d = MassRatioDistribution(q_min=0.01)
    pdf = stats.loguniform(0.01, 1.0).pdf
    ref, _ = integrate.quad(lambda q: pdf(q) * (1 + q) ** 2 / q, q_low, 1.0, epsrel=1e-12)
    assert d.inverse_eta_tail(q_low) == pytest.approx(ref, rel=1e-10, abs=0)


@pytest.mark.parametrize("index", [0.0, 0.5, -2.0, -3.0, 1.0])
def test_inverse_eta_tail_power_law(index):
    d = MassRatioDistribution(q_min=0.02, index=index)
    norm, _ = integrate.quad(lambda q: q**index, 0.02, 1.0, epsrel=1e-13)
    ref, _ = integrate.quad(lambda q: q**index / norm * (1 + q) ** 2 / q, 0.1, 1.0, epsrel=1e-13)
    assert d.inverse_eta_tail(0.1) == pytest.approx(ref, rel=1e-9, abs=0)
    assert integrate.quad(d.pdf, 0.02, 1.0)[0] == pytest.approx(1.0, rel=1e-9, abs=0)


def _flat_curve(level, f_lo=2e-9, f_hi=2e-7, n=40):
    """h0 threshold proportional to f^(2/3): the same cut on eta S in every band."""
    f = np.logspace(np.log10(f_lo), np.log10(f_hi), n)
    return f * u.Hz, level * (f / 1e-8) ** (2 / 3)


def _direct_number(m, d_mpc, f, thr, rate, q_min=0.01):
    """R int dq p(q) int df / fdot over the band where h0 > threshold, by quadrature."""
    pdf = stats.loguniform(q_min, 1.0).pdf
    d_m = d_mpc * u.Mpc.to(u.m)
    f_top = min(f[-1], _f_isco(m))

    def inner(q):
        # Thorne (1987), eq. 46: h0 = 2 (G Mc)^(5/3) (pi f)^(2/3) / (c^4 D); compare at f_lo
        eta = q / (1 + q) ** 2
        mc = m * MSUN * eta**0.6
        h_lo = 2 * (G * mc) ** (5 / 3) * (np.pi * f[0]) ** (2 / 3) / (C**4 * d_m)
        if h_lo <= thr[0] or f_top <= f[0]:
            return 0.0
        t, _ = integrate.quad(lambda x: 1 / _fdot(m, q, x), f[0], f_top, epsrel=1e-11)
        return pdf(q) * t

    val, _ = integrate.quad(inner, q_min, 1.0, epsrel=1e-9, limit=200)
    return rate * val / YR


@pytest.mark.parametrize("m, d", [(5e9, 30.0), (2e10, 200.0), (3e11, 50.0)])
def test_expected_number_matches_direct_double_integral(m, d):
    f, thr = _flat_curve(1e-14)
    pop = PopulationModel(rate=1e-10 / u.yr)
    got = expected_number([np.log10(m)], [0.0], [d] * u.Mpc, [0.0], f, thr, pop)[0]
    ref = _direct_number(m, d, f.value, thr, 1e-10)
    assert ref > 0
    assert got == pytest.approx(ref, rel=1e-7, abs=0)


def test_saturated_number_falls_as_mass_to_minus_five_thirds():
    # When every binary of the population beats the threshold in every band, N = R x
    # residence time, and Peters' tau is proportional to Mc^(-5/3): heavier binaries
    # sweep through the band faster.  (So N is not monotonic in the mass.)
    f, thr = _flat_curve(1e-25)
    pop = PopulationModel()
    n1, n2 = expected_number(np.log10([1e9, 2e9]), 0.0, [20, 20] * u.Mpc, 0.0, f, thr, pop)
    assert n2 / n1 == pytest.approx(2 ** (-5 / 3), rel=1e-12, abs=0)


def test_expected_number_is_linear_in_the_rate():
    f, thr = _flat_curve(1e-14)
    a = expected_number([9.7], [0.3], [40] * u.Mpc, [0.01], f, thr, PopulationModel(1e-10))
    b = expected_number([9.7], [0.3], [40] * u.Mpc, [0.01], f, thr, PopulationModel(3e-10))
    assert b[0] == pytest.approx(3 * a[0], rel=1e-13, abs=0)


@pytest.mark.parametrize("lm, d", [(9.0, 50.0), (9.8, 100.0), (10.5, 50.0), (9.0, 200.0)])
def test_scatter_marginalisation_against_fine_grid_simpson(lm, d):
    # E over log10 M ~ N(lm, 0.29) with scipy.stats.norm; the 16-node rule
    # measured 0.2% or better here, tolerance 1%
    f = np.logspace(np.log10(2e-9), -7, 60) * u.Hz
    x = f.value / 8e-9
    thr = 5e-15 * (x**-2 + x)  # bucket-shaped, PTA-like
    pop = PopulationModel()

    # the integrand on a fine grid (one vectorised call, no scatter) and Simpson's rule
    # from scipy; grid error < 1e-5 even with the kink at the onset
    xs = np.linspace(lm - 5 * 0.29, lm + 5 * 0.29, 40001)
    vals = expected_number(xs, 0.0, np.full(xs.size, d) * u.Mpc, 0.0, f, thr, pop)
    ref = integrate.simpson(stats.norm.pdf(xs, lm, 0.29) * vals, x=xs)
    got = expected_number([lm], [0.29], [d] * u.Mpc, [0.0], f, thr, pop)[0]
    assert got == pytest.approx(ref, rel=0.01, abs=0)


def test_mass_nodes_integrate_the_normal():
    # sum of weights = Phi(b) - Phi(a); weighted mean = mean of the truncated normal
    mu, s = np.array([9.0, 9.0]), np.array([0.3, 0.3])
    lo, hi = np.array([8.8, -np.inf]), np.array([9.5, np.inf])
    x, w = mass_nodes(mu, s, lo, hi, 24, truncate=40)
    norm = stats.norm(9.0, 0.3)
    assert w[0].sum() == pytest.approx(norm.cdf(9.5) - norm.cdf(8.8), rel=1e-12, abs=0)
    assert w[1].sum() == pytest.approx(1.0, rel=1e-12, abs=0)
    tn = stats.truncnorm((8.8 - 9) / 0.3, (9.5 - 9) / 0.3, loc=9, scale=0.3)
    assert (w[0] * x[0]).sum() / w[0].sum() == pytest.approx(tn.mean(), rel=1e-6, abs=0)


def test_mass_nodes_upper_tail_is_precise():
    # an interval 7-8 sigma above the mean: probability from the survival function
    x, w = mass_nodes([0.0], [1.0], [7.0], [8.0], 16, truncate=40)
    ref = stats.norm.sf(7.0) - stats.norm.sf(8.0)
    assert w.sum() == pytest.approx(ref, rel=1e-8, abs=0)


def test_mass_limits_bracket_the_nonzero_region():
    f, thr = _flat_curve(1e-14)
    lo, hi = mass_limits([100] * u.Mpc, [0.0], f, thr)
    pop = PopulationModel()
    inside = expected_number(lo + 0.01, 0.0, [100] * u.Mpc, [0.0], f, thr, pop)
    below = expected_number(lo - 0.01, 0.0, [100] * u.Mpc, [0.0], f, thr, pop)
    assert inside[0] > 0 and below[0] == 0
    # above the upper limit f_ISCO is below the lowest band
    assert wf.isco_frequency(10 ** (hi[0] + 0.01) * u.Msun) < f[0]


def test_sky_groups_equal_per_galaxy_thresholds():
    f, thr = _flat_curve(1e-14)
    table = np.stack([thr, 3 * thr])
    idx = np.array([1, 0, 1])
    args = ([9.9, 10.1, 10.3], [0.3, 0.2, 0.0], [50, 60, 70] * u.Mpc, [0.0, 0.01, 0.0], f)
    grouped = expected_number(*args, table, PopulationModel(), sky_index=idx)
    per_row = expected_number(*args, table[idx], PopulationModel())
    np.testing.assert_allclose(grouped, per_row, rtol=1e-14)
    assert grouped[1] > 0


def test_bad_population_parameters():
    with pytest.raises(ValueError, match="q_min"):
        MassRatioDistribution(q_min=0.0)
    with pytest.raises(ValueError, match="rate"):
        PopulationModel(rate=1 * u.km)
    with pytest.raises(ValueError, match="n_nodes"):
        mass_nodes([9.0], [0.3], [8.0], [10.0], 0)


def _brute_number(lm, sig, d, z, f, thr, pop):
    """One galaxy from the definitions: every (node, band) pair, unfiltered nodes,
    Peters residence time per band (residence_time) and the eta-weight tail_from_eta."""
    from ptaconstrain.catalogue.population import band_thresholds

    g = band_thresholds(f, thr)
    lo, hi = mass_limits([d] * u.Mpc, [z], f, thr)
    nodes, weights = mass_nodes([lm], [sig], lo, hi, 16)
    total = 0.0
    for node, w in zip(nodes[0], weights[0], strict=True):
        if w <= 0:
            continue
        m = 10.0**node * u.Msun
        s = wf.strain_prefactor(m, d * u.Mpc, z).to_value(u.Hz ** (-2 / 3))
        # residence time of eta = 1/4 (q = 1); the 1/eta of other q sits inside W
        dt = residence_time(m, 1.0, f[:-1], f[1:], z).to_value(u.yr) * 0.25
        total += w * np.nansum(dt * pop.mass_ratio.tail_from_eta(g / s))
    return pop.rate.to_value(1 / u.yr) * total


@pytest.mark.slow
@pytest.mark.parametrize("index", [-1.0, 0.5])
def test_expected_number_equals_the_row_by_row_definition(index):
    # brute force: _brute_number above, galaxy by galaxy; the batch skips galaxies whose
    # mass range misses the limits and works in place, which must not change the numbers
    rng = np.random.default_rng(3)
    n = 60
    f = np.logspace(np.log10(2e-9), -7, 40) * u.Hz
    x = f.value / 8e-9
    thr = 5e-15 * (x**-2 + x)
    lm = rng.uniform(7.0, 11.5, n)  # from far too light to f_ISCO inside the band
    sig = np.where(rng.random(n) < 0.2, 0.0, rng.uniform(0.05, 0.5, n))
    d = rng.uniform(10, 500, n)
    z = d * 70 / 3e5
    pop = PopulationModel(mass_ratio=MassRatioDistribution(0.01, index))
    got = expected_number(lm, sig, d * u.Mpc, z, f, thr, pop)
    ref = np.array([_brute_number(*a, f, thr, pop) for a in zip(lm, sig, d, z, strict=True)])
    assert 0 < np.count_nonzero(ref) < n
    assert np.array_equal(got == 0, ref == 0)
    assert got == pytest.approx(ref, rel=1e-10, abs=0)
