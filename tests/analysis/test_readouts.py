"""Readouts against outside references: astropy's angular-diameter distance, Peters (1964)
merger times, the polarisation-averaged inclination factor in closed form."""

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.analysis.readouts import (
    angular_diameter_distance,
    angular_separation,
    curve_at_inclination,
    default_merger_times,
    merger_time,
    merger_time_lines,
)
from ptaconstrain.binary.host import Host
from ptaconstrain.sensitivity.curve import StrainCurve


def _map(host):
    return exclusion_map(
        host, power_law_limit(), np.logspace(-3, 0, 40), np.geomspace(0.5, 30, 50) * u.yr
    )


@pytest.mark.parametrize("z", [0.01, 0.3, 2.0])
def test_angular_diameter_distance_matches_astropy(z):
    from astropy.cosmology import Planck18

    d_l = Planck18.luminosity_distance(z)
    assert angular_diameter_distance(d_l, z).to_value(u.Mpc) == pytest.approx(
        Planck18.angular_diameter_distance(z).to_value(u.Mpc), rel=1e-10, abs=0
    )  # astropy


def test_angular_separation_is_kepler_over_the_angular_diameter_distance():
    from astropy.cosmology import Planck18

    host = Host("A", 1e10, redshift=0.05, cosmology=Planck18)
    r = _map(host)
    # a^3 = G M P_rest^2 / 4 pi^2 (Kepler), theta = a / D_A (astropy's D_A)
    p_rest = r.period[10] / 1.05
    a = np.cbrt(const.G * 1e10 * u.Msun * p_rest**2 / (4 * np.pi**2))
    theta = (a / Planck18.angular_diameter_distance(0.05)).to(
        u.uas, equivalencies=u.dimensionless_angles()
    )
    assert angular_separation(r)[10].to_value(u.uas) == pytest.approx(theta.value, rel=1e-6, abs=0)


def test_merger_time_is_peters_1964_for_an_equal_mass_binary():
    # Peters (1964) eq. 5.10 for a circular orbit: T = (5/256) c^5 a^4 / (G^3 m1 m2 M)
    host = Host("A", 2e9, 20)
    r = _map(host)
    i = int(np.flatnonzero(np.isfinite(r.max_mass_ratio))[0])
    q = r.max_mass_ratio[i]
    m = 2e9 * u.Msun
    m1, m2 = m / (1 + q), m * q / (1 + q)
    p_rest = r.period[i] / (1 + host.redshift)
    a = np.cbrt(const.G * m * p_rest**2 / (4 * np.pi**2))
    t_peters = (5 / 256 * const.c**5 * a**4 / (const.G**3 * m1 * m2 * m)).to(u.yr)
    assert merger_time(r)[i].to_value(u.yr) == pytest.approx(t_peters.value, rel=1e-9, abs=0)


def test_merger_lines_give_that_merger_time():
    from ptaconstrain.binary import waveform as wf

    host = Host("A", 2e10, 100)
    r = _map(host)
    times, q = merger_time_lines(r, [1e6, 1e8] * u.yr)
    ok = np.isfinite(q[0])
    tau = wf.coalescence_time(host.mass, q[0][ok], r.frequency[ok], host.redshift) / (
        1 + host.redshift
    )
    assert np.allclose(tau.to_value(u.yr), 1e6, rtol=1e-9, atol=0)


def test_default_merger_times_end_at_the_hubble_time():
    from astropy.cosmology import Planck18

    t = default_merger_times()
    assert t[2].to_value(u.Gyr) == pytest.approx(
        Planck18.hubble_time.to_value(u.Gyr), rel=1e-6, abs=0
    )  # astropy


@pytest.mark.parametrize("inc_deg", [0.0, 30.0, 60.0, 90.0])
def test_inclination_factor_is_the_polarisation_average(inc_deg):
    # polarisation average of F+^2 h+^2 + Fx^2 hx^2 with <F+^2> = <Fx^2> and
    # h+ = h0 (1 + cos^2 i), hx = 2 h0 cos i: S/N^2 ~ (1 + c^2)^2 + 4 c^2, whose mean over
    # isotropic cos i is 16/5 (closed form, integrated here numerically with scipy)
    from scipy import integrate

    c = np.cos(np.radians(inc_deg))
    mean, _ = integrate.quad(lambda x: (1 + x * x) ** 2 + 4 * x * x, -1, 1)
    g = ((1 + c * c) ** 2 + 4 * c * c) / (mean / 2)
    f = np.geomspace(2e-9, 3e-7, 30) * u.Hz
    psd = StrainCurve(f, 1e-10 * np.ones(30), "strain_psd", {"span": "10 yr"})
    inclined = curve_at_inclination(psd, inc_deg)
    ratio = inclined.h0_threshold(f[5:6]) / psd.h0_threshold(f[5:6])
    assert ratio[0] == pytest.approx(1 / np.sqrt(g), rel=1e-12, abs=0)


def test_inclination_leaves_an_upper_limit_alone():
    lim = power_law_limit()
    assert curve_at_inclination(lim, 30) is lim
