"""Per-galaxy metrics against explicit formulas, and their invariants."""

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from curves_for_tests import bucket_limit
from hypothesis import given, settings
from hypothesis import strategies as st

from ptaconstrain.catalogue.metrics import galaxy_metrics, most_sensitive_frequency

G, C, MSUN = const.G.si.value, const.c.si.value, const.M_sun.si.value
F0 = 8e-9


CURVE = bucket_limit()
F, THR = CURVE.frequency, CURVE.h0_threshold(CURVE.frequency)


def _h0(m_msun, q, f, d_mpc):
    # Thorne (1987), eq. 46: h0 = 2 (G Mc)^(5/3) (pi f)^(2/3) / (c^4 D), Mc = M eta^(3/5)
    eta = q / (1 + q) ** 2
    mc = m_msun * MSUN * eta**0.6
    return 2 * (G * mc) ** (5 / 3) * (np.pi * f) ** (2 / 3) / (C**4 * d_mpc * 3.0856775814913673e22)


def test_most_sensitive_frequency_is_argmin_of_threshold_over_f_two_thirds():
    # for h = f^(2/3) (1 + ln(f/f1)^2) the minimum of h / f^(2/3) is at f1 exactly
    f = np.logspace(-9, -7, 201) * u.Hz
    f1 = f[77].value
    h = f.value ** (2 / 3) * (1 + np.log(f.value / f1) ** 2)
    assert most_sensitive_frequency(f, h) == 77


def test_metrics_against_explicit_strain():
    m, d = 1.2e10, 80.0
    out = galaxy_metrics([np.log10(m)], [0.0], [d] * u.Mpc, [0.0], F, THR)
    fb = out["f_best"][0].to_value(u.Hz)
    h = _h0(m, 1.0, fb, d)
    assert out["h0_equal_mass"][0] == pytest.approx(h, rel=1e-10, abs=0)
    assert out["h0_ratio"][0] == pytest.approx(h / out["h0_threshold_best"][0], rel=1e-10, abs=0)
    # the smallest excluded q sits exactly on the threshold
    q = out["min_mass_ratio"][0]
    assert 0 < q < 1
    assert _h0(m, q, fb, d) == pytest.approx(out["h0_threshold_best"][0], rel=1e-9, abs=0)


def test_no_mass_ratio_when_equal_mass_is_below_the_limit():
    out = galaxy_metrics([8.0], [0.3], [100] * u.Mpc, [0.0], F, THR)
    assert np.isnan(out["min_mass_ratio"][0]) and out["h0_ratio"][0] < 1


def test_probability_against_monte_carlo():
    # draw log10 M ~ N(mu, 0.3) with numpy and count q = 1 binaries above the limit
    mu, s, d = 9.6, 0.3, 60.0
    out = galaxy_metrics([mu], [s], [d] * u.Mpc, [0.0], F, THR)
    fb, thr = out["f_best"][0].to_value(u.Hz), out["h0_threshold_best"][0]
    draws = np.random.default_rng(3).normal(mu, s, 200_000)
    mc = np.mean(_h0(10**draws, 1.0, fb, d) > thr)
    assert 0.05 < mc < 0.95
    assert out["prob_equal_mass"][0] == pytest.approx(mc, abs=0.005)  # binomial sd 0.001


@settings(max_examples=40, deadline=None)
@given(
    lm=st.floats(8.0, 11.5), d=st.floats(5.0, 500.0), s=st.floats(0.0, 0.5), k=st.floats(1.01, 5.0)
)
def test_farther_never_better(lm, d, s, k):
    # moving a galaxy farther (same redshift) never raises any metric
    out = galaxy_metrics([lm, lm], [s, s], [d, d * k] * u.Mpc, [0.0, 0.0], F, THR)
    q = np.where(np.isnan(out["min_mass_ratio"]), np.inf, out["min_mass_ratio"])
    assert out["h0_ratio"][1] < out["h0_ratio"][0]
    assert out["prob_equal_mass"][1] <= out["prob_equal_mass"][0]
    assert out["expected_number"][1] <= out["expected_number"][0] * (1 + 1e-12)
    assert q[1] >= q[0]


@settings(max_examples=40, deadline=None)
@given(
    lm=st.floats(8.0, 11.0), d=st.floats(5.0, 500.0), s=st.floats(0.0, 0.5), dm=st.floats(0.01, 1.0)
)
def test_heavier_never_worse(lm, d, s, dm):
    # raising the mass never lowers the strain metrics.  The expected number is not
    # monotonic (residence time falls as M^(-5/3), test_population), so it is not here.
    out = galaxy_metrics([lm, lm + dm], [s, s], [d, d] * u.Mpc, [0.0, 0.0], F, THR)
    q = np.where(np.isnan(out["min_mass_ratio"]), np.inf, out["min_mass_ratio"])
    assert out["h0_ratio"][1] > out["h0_ratio"][0]
    assert out["prob_equal_mass"][1] >= out["prob_equal_mass"][0]
    assert q[1] <= q[0]
