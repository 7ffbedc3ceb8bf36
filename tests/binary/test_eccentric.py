import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from scipy import integrate, optimize

from ptaconstrain.binary import eccentric as ecc
from ptaconstrain.binary import waveform as wf
from ptaconstrain.errors import InputError


def _quadrupole_harmonic_power(e, n_max, samples=4096):
    """Power per harmonic of a Keplerian orbit, from the quadrupole formula, in units
    of the circular power of the same orbit.

    Units G = c = a = M = mu = 1 (so omega = 1).  The relative orbit
    x = cos E - e, y = sqrt(1 - e^2) sin E with Kepler's equation E - e sin E = t
    solved by scipy; the reduced quadrupole Q_ij = x_i x_j - delta_ij r^2 / 3 is
    Fourier-decomposed over one period, and L = (1/5) <Q'''_ij Q'''_ij> (Landau &
    Lifshitz, eq. 110.16; Maggiore 2008, eq. 3.75) gives, per harmonic n >= 1,
    P_n = (2/5) n^6 sum_ij |c_n,ij|^2.  The circular orbit radiates 32/5
    (Peters & Mathews 1963, eq. 16 with mu = M = a = 1).
    """
    t = 2 * np.pi * np.arange(samples) / samples
    big_e = optimize.newton(
        lambda x: x - e * np.sin(x) - t,
        t + e * np.sin(t),
        fprime=lambda x: 1 - e * np.cos(x),
        tol=1e-14,
        maxiter=100,
    )
    x = np.cos(big_e) - e
    y = np.sqrt(1 - e**2) * np.sin(big_e)
    r2 = x**2 + y**2
    q = [x * x - r2 / 3, y * y - r2 / 3, -r2 / 3, x * y, x * y]  # xx, yy, zz, xy, yx
    c = [np.fft.rfft(qi) / samples for qi in q]
    n = np.arange(1, n_max + 1)
    power = sum(np.abs(ci[1 : n_max + 1]) ** 2 for ci in c)
    return n, 2 / 5 * n**6 * power / (32 / 5)


@pytest.mark.parametrize("e", [0.3, 0.7])
def test_g_matches_numerical_quadrupole_integration(e):
    # outside check: quadrupole formula over one Keplerian orbit vs Peters & Mathews
    # (1963) eq. 20. The FFT on 4096 samples has an absolute floor (measured: errors up to
    # 4e-14 of the circular power at e = 0.7, 4e-16 at e = 0.3) and resolves the harmonics
    # above 1e-8 to 2e-10 relative or better (measured); at e = 0.3, 39 of the first 60
    # harmonics lie below 1e-12, so an absolute tolerance of 1e-12 alone would not test them.
    n, p_num = _quadrupole_harmonic_power(e, 400)
    g = ecc.harmonic_power(n[:60], e)
    resolved = p_num[:60] > 1e-8
    assert resolved.sum() >= 15
    np.testing.assert_allclose(g[resolved], p_num[:60][resolved], rtol=1e-9, atol=0)
    np.testing.assert_allclose(g, p_num[:60], rtol=0, atol=1e-13)  # the rest: at the floor
    # the total against F(e), Peters & Mathews (1963) eq. 17 (harmonics beyond 400 carry
    # < 1e-12 of it at e = 0.7)
    assert p_num.sum() == pytest.approx(float(ecc.enhancement_factor(e)), rel=1e-9, abs=0)


def test_circular_limit_and_sum_rule():
    # Peters & Mathews (1963): at e = 0 only n = 2 radiates; sum_n g(n, e) = F(e)
    n = np.arange(1, 6)
    np.testing.assert_array_equal(ecc.harmonic_power(n, 0.0), [0, 1, 0, 0, 0])
    for e in (0.1, 0.5, 0.9):
        total = ecc.harmonic_power(np.arange(1, 5000), e).sum()
        assert total == pytest.approx(float(ecc.enhancement_factor(e)), rel=1e-10, abs=0)


def test_amplitude_ratio_is_two_over_n_sqrt_g():
    # h_n = (2/n) sqrt(g(n, e)) h0; at e = 0, h_2 = h0 (the circular amplitude)
    assert float(ecc.harmonic_amplitude_ratio(2, 0.0)) == 1.0
    n = np.arange(1, 30)
    np.testing.assert_allclose(
        ecc.harmonic_amplitude_ratio(n, 0.6) ** 2 * n**2 / 4, ecc.harmonic_power(n, 0.6), rtol=1e-14
    )


@pytest.mark.parametrize("e", [0.0, 0.3, 0.5, 0.7, 0.95])
def test_harmonic_count_rule(e):
    # rule: the smallest N with sum_{n <= N} g >= 99.9 % of F(e); N - 1 does not reach it
    n = ecc.harmonic_numbers(e)
    g_all = ecc.harmonic_power(np.arange(1, n.max() + 1), e)
    target = 0.999 * float(ecc.enhancement_factor(e))
    assert g_all.sum() >= target
    assert g_all[:-1].sum() < target


def test_decay_rates_circular_limit_matches_frequency_derivative():
    # Peters (1964) eq. 5.6 at e = 0 and Kepler's law give df/dt of waveform.py:
    # f ~ a^(-3/2) so df/dt = -(3/2) f (da/dt) / a
    m, q, p = 1e9 * u.Msun, 0.3, 2 * u.yr
    a = wf.separation(m, p)
    dadt, dedt = ecc.decay_rates(m, q, a, 0.0)
    f = wf.gw_frequency(p)
    fdot = (-1.5 * f * dadt / a).to(u.Hz / u.s)
    assert fdot.value == pytest.approx(wf.frequency_derivative(m, q, f).value, rel=1e-12, abs=0)
    assert dedt.value == 0.0


@pytest.mark.parametrize("e0", [0.3, 0.7])
def test_merger_time_against_integrating_peters_equations(e0):
    # outside check: integrate Peters (1964) da/dt, de/dt (eqs. 5.6-5.7) with scipy until
    # a reaches 1e-3 a0, vs the quadrature of eq. 5.14
    m, q, p = 1e9 * u.Msun, 0.5, 1 * u.yr
    a0 = wf.separation(m, p)
    beta = 64 / 5 * const.G**3 * m**3 * wf.symmetric_mass_ratio(q) / const.c**5
    t_unit = (a0**4 / beta).to(u.yr).value  # time in units of a0^4 / beta

    def rhs(_, y):
        a, e = y
        fe = (1 + 73 / 24 * e**2 + 37 / 96 * e**4) / (1 - e**2) ** 3.5
        return [-fe / a**3, -19 / 12 * e / (a**4 * (1 - e**2) ** 2.5) * (1 + 121 / 304 * e**2)]

    def hit(_, y):
        return y[0] - 1e-3

    hit.terminal = True
    sol = integrate.solve_ivp(rhs, (0, 1), [1.0, e0], events=hit, rtol=1e-11, atol=1e-14)
    t_num = sol.t_events[0][0] * t_unit
    t = ecc.merger_time(m, q, p, e0).to_value(u.yr)
    # the last 1e-3 a0 takes (1e-3)^4 of the circular time: negligible at this tolerance
    assert t == pytest.approx(t_num, rel=1e-6, abs=0)


def test_merger_time_limits():
    # Peters (1964) eq. 5.14 reduces to T_c at e0 = 0 and to (768/425) T_c (1 - e0^2)^(7/2)
    # as e0 -> 1 (Peters 1964, eq. 5.14 limit; the correction falls off like
    # sqrt(1 - e0^2), so at e0 = 0.99999 it is below 1 %)
    m, q, p = 1e9 * u.Msun, 0.5, 1 * u.yr
    tc = wf.coalescence_time(m, q, wf.gw_frequency(p))
    assert ecc.merger_time(m, q, p, 0.0) == tc
    e0 = 0.99999
    assert ecc.merger_time_factor(e0) == pytest.approx(
        768 / 425 * (1 - e0**2) ** 3.5, rel=1e-2, abs=0
    )


def test_pericentre_isco():
    # a (1 - e) = 6 G M / c^2 with Kepler's third law: f = f_ISCO (1 - e)^(3/2)
    m = 1e10 * u.Msun
    f = ecc.pericentre_isco_frequency(m, 0.5)
    a = wf.separation(m, wf.orbital_period(f))
    assert (a * 0.5 / (6 * wf.gravitational_radius(m))).decompose().value == pytest.approx(
        1.0, rel=1e-12, abs=0
    )
    assert ecc.pericentre_isco_frequency(m, 0.0) == wf.isco_frequency(m)


@pytest.mark.parametrize("bad", [-0.1, 0.96, 1.0, float("nan"), "2 km", [0.1, 0.2]])
def test_eccentricity_out_of_range_is_refused(bad):
    with pytest.raises(InputError, match="eccentricity"):
        ecc.harmonic_numbers(bad)
