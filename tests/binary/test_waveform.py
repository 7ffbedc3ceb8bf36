import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from hypothesis import given
from hypothesis import strategies as st

from ptaconstrain.binary import waveform as wf


def test_chirp_mass_matches_peters_mathews_definition():
    # Peters & Mathews (1963): Mc = (m1 m2)^(3/5) / (m1 + m2)^(1/5); 1.4 + 1.4 Msun
    m1 = m2 = 1.4
    expected = (m1 * m2) ** 0.6 / (m1 + m2) ** 0.2
    got = wf.chirp_mass(2.8 * u.Msun, 1.0)
    assert got.to_value(u.Msun) == pytest.approx(expected, rel=1e-12, abs=0)
    assert expected == pytest.approx(1.2188, abs=1e-4)  # (from memory) 1.4+1.4 Msun pair


def test_strain_worked_example_from_constants():
    # Thorne (1987) eq. 46 / Maggiore (2008) eq. 4.3 evaluated by hand in SI units
    # with astropy.constants: M = 1e9 Msun, q = 0.5, f = 10 nHz, D_L = 100 Mpc, z = 0.
    G, c = const.G.si.value, const.c.si.value
    m1, m2 = 1e9 / 1.5, 0.5e9 / 1.5
    mc = (m1 * m2) ** 0.6 / (m1 + m2) ** 0.2 * const.M_sun.si.value
    d = (100 * u.Mpc).to_value(u.m)
    expected = 2 * (G * mc) ** (5 / 3) * (np.pi * 1e-8) ** (2 / 3) / (c**4 * d)
    got = wf.strain_amplitude(1e9 * u.Msun, 0.5, 10 * u.nHz, 100 * u.Mpc)
    assert got.value == pytest.approx(expected, rel=1e-10, abs=0)
    # order of magnitude of PTA CW targets, ~1e-16 to 1e-15 (from memory)
    assert 1e-17 < expected < 1e-14


def test_strain_redshift_enters_through_redshifted_chirp_mass():
    # Mz = (1+z) Mc (Maggiore 2008, sec. 4.1.4): h0(M, z) = h0((1+z) M, 0) at the same D_L
    h_z = wf.strain_amplitude(1e9 * u.Msun, 0.3, 8 * u.nHz, 500 * u.Mpc, redshift=0.1)
    h_0 = wf.strain_amplitude(1.1e9 * u.Msun, 0.3, 8 * u.nHz, 500 * u.Mpc)
    assert h_z.value == pytest.approx(h_0.value, rel=1e-12, abs=0)


def test_kepler_one_solar_mass_one_year_is_one_au():
    # Kepler's third law; 1 au = 1.495978707e11 m (IAU 2012 Resolution B2). The Julian
    # year (365.25 d) is 2e-5 shorter than the sidereal year, hence the tolerance.
    a = wf.separation(1 * u.Msun, 1 * u.yr)
    assert a.to_value(u.au) == pytest.approx(1.0, rel=2e-5, abs=0)


def test_period_at_separation_inverts_kepler():
    p = wf.period_at_separation(1 * u.Msun, 1 * u.au)
    # sidereal year (handbook)
    assert p.to_value(u.day) == pytest.approx(365.2568983, rel=2e-5, abs=0)


def test_gw_frequency_is_twice_orbital():
    # dominant quadrupole of a circular orbit radiates at twice the orbital frequency
    assert wf.gw_frequency(2 * u.yr).to_value(u.Hz) == pytest.approx(
        1 / u.yr.to(u.s), rel=1e-6, abs=0
    )
    assert wf.orbital_period(wf.gw_frequency(3.3 * u.yr)).to_value(u.yr) == pytest.approx(
        3.3, rel=1e-6, abs=0
    )


def test_isco_frequency_of_one_solar_mass():
    # f_ISCO ~ 4.4 kHz for 1 Msun (from memory; Maggiore 2008 eq. 4.40 gives 4.4 kHz)
    assert wf.isco_frequency(1 * u.Msun).to_value(u.kHz) == pytest.approx(4.40, rel=0.01, abs=0)


def test_peters_time_from_frequency_equals_time_from_separation():
    # Peters (1964) eq. 5.10: tau = (5/256) c^5 a^4 / (G^3 m1 m2 (m1 + m2)), with the
    # separation from Kepler's law at f_orb = f/2.
    G, c = const.G, const.c
    total, q = 3e9 * u.Msun, 0.25
    m1, m2 = total / (1 + q), total * q / (1 + q)
    f = 20 * u.nHz
    a = wf.separation(total, wf.orbital_period(f))
    tau_a = (5 / 256 * c**5 * a**4 / (G**3 * m1 * m2 * total)).to(u.yr)
    tau_f = wf.coalescence_time(total, q, f)
    assert tau_f.to_value(u.yr) == pytest.approx(tau_a.value, rel=1e-10, abs=0)


def test_coalescence_time_is_three_eighths_f_over_fdot():
    # tau = (3/8) f / (df/dt) for a power law df/dt ~ f^(11/3) (Peters 1964)
    f = np.geomspace(1e-9, 1e-6, 7) * u.Hz
    tau = wf.coalescence_time(1e10 * u.Msun, 0.1, f, redshift=0.2)
    fdot = wf.frequency_derivative(1e10 * u.Msun, 0.1, f, redshift=0.2)
    np.testing.assert_allclose(tau.to_value(u.s), (3 / 8 * f / fdot).to_value(u.s), rtol=1e-12)


def test_chirping_criterion_is_one_frequency_bin():
    # (df/dt) T^2 > 1 (common practice): check on both sides of the boundary
    span = 15 * u.yr
    f = np.geomspace(1e-9, 1e-6, 200) * u.Hz
    fdot = wf.frequency_derivative(2e10 * u.Msun, 1.0, f)
    flag = wf.is_chirping(2e10 * u.Msun, 1.0, f, span)
    np.testing.assert_array_equal(flag, (fdot * span**2).decompose().value > 1)
    assert flag[-1] and not flag[0]


def test_hardening_radius_in_astronomers_units():
    # G = 4.3009e-3 pc Msun^-1 (km/s)^2 (handbook value, from memory); a_h = G mu / 4 sigma^2
    a = wf.hardening_radius(1e8 * u.Msun, 1.0, 200 * u.km / u.s)
    expected = 4.3009e-3 * 0.25e8 / (4 * 200.0**2)
    assert a.to_value(u.pc) == pytest.approx(expected, rel=1e-4, abs=0)


@pytest.mark.parametrize("bad", [0.0, -0.1, 1.5, np.nan])
def test_mass_ratio_outside_unit_interval_is_rejected(bad):
    with pytest.raises(ValueError, match="mass_ratio"):
        wf.symmetric_mass_ratio(bad)


@given(st.floats(min_value=1e-9, max_value=1.0))
def test_eta_inverse_round_trips(q):
    # closed-form root of eta q^2 + (2 eta - 1) q + eta = 0. Relative all the way down to
    # q = 1e-9 (an absolute 1e-12 would allow 1e-3 there); 1e-7 because near q = 1, where
    # d eta / dq = 0, a rounding of eta moves q by ~ sqrt(16 * 1.4e-17) (measured 2.4e-8)
    eta = wf.symmetric_mass_ratio(q)
    assert wf.mass_ratio_from_eta(eta) == pytest.approx(q, rel=1e-7, abs=0)


def test_grid_broadcasting_has_the_outer_shape():
    q = np.geomspace(1e-3, 1, 5)
    f = np.geomspace(1e-9, 1e-7, 7) * u.Hz
    h = wf.strain_amplitude(1e9 * u.Msun, q[:, None], f[None, :], 50 * u.Mpc)
    assert h.shape == (5, 7)
    # h0 ~ f^(2/3) at fixed q (Thorne 1987 eq. 46)
    np.testing.assert_allclose(h[0, 1:] / h[0, :-1], (f[1:] / f[:-1]).value ** (2 / 3))


def test_h0_and_polarisations_carry_the_peters_mathews_luminosity():
    # Independent of how h0 is written: the GW luminosity of a circular binary,
    # L = (32/5) G^4 m1^2 m2^2 (m1 + m2) / (c^5 a^5) (Peters & Mathews 1963, eq. 16),
    # must equal the flux (c^3 / 16 pi G) <hdot+^2 + hdotx^2> through a sphere of
    # radius D (Maggiore 2008, eq. 1.153), averaged over orientation. With the project's
    # polarisations h+ = h0 (1 + cos^2 i) cos Phi, hx = 2 h0 cos i sin Phi the time and
    # orientation mean of hdot+^2 + hdotx^2 is (2 pi f)^2 (8/5) h0^2.
    G, c = const.G, const.c
    total, q, f, d = 2e9 * u.Msun, 0.3, 12 * u.nHz, 80 * u.Mpc
    m1, m2 = total / (1 + q), total * q / (1 + q)
    a = wf.separation(total, wf.orbital_period(f))
    lum = (32 / 5 * G**4 * m1**2 * m2**2 * total / (c**5 * a**5)).to(u.W)
    h0 = wf.strain_amplitude(total, q, f, d)
    flux = c**3 / (16 * np.pi * G) * (2 * np.pi * f) ** 2 * 1.6 * h0**2
    assert (4 * np.pi * d**2 * flux).to_value(u.W) == pytest.approx(lum.value, rel=1e-9, abs=0)


def test_gravitational_radius_of_the_sun():
    # G Msun / c^2 = 1476.625 m (IAU 2015 Resolution B3 nominal solar mass parameter
    # GM = 1.3271244e20 m^3 s^-2, divided by c^2)
    assert wf.gravitational_radius(1 * u.Msun).to_value(u.m) == pytest.approx(
        1.3271244e20 / 299792458.0**2, rel=1e-7, abs=0
    )
