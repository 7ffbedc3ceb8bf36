"""Antenna patterns and the S/N algebra of ptaconstrain.sensitivity.antenna."""

import healpy as hp
import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from scipy import integrate

from ptaconstrain.sensitivity import antenna


def _pixel_vectors(nside):
    return np.stack(hp.pix2vec(nside, np.arange(hp.nside2npix(nside))), axis=1)


def _hellings_downs(zeta):
    # Hellings & Downs (1983), ApJ 265, L39, normalised to 1/2 at zero separation
    # (Jenet & Romano 2015, Am. J. Phys. 83, 635; from memory).
    x = (1.0 - np.cos(zeta)) / 2.0
    return 1.5 * x * np.log(x) - x / 4.0 + 0.5


def test_coord_vectors_match_astropy_cartesian():
    # astropy.coordinates Cartesian representation of the same positions
    c = SkyCoord([10.0, 200.0, 300.0] * u.deg, [20.0, -40.0, 75.0] * u.deg)
    expect = c.cartesian.xyz.value.T
    assert np.allclose(antenna.coord_to_vectors(c), expect, atol=1e-14)


def test_sky_mean_of_pattern_power_over_healpix_grid():
    # Closed form: <F+^2 + Fx^2> = <(1 + cos theta)^2 / 4> = 1/3 over the sphere
    # (elementary integral of (1 + mu)^2 / 8 over mu in [-1, 1]); the numerical
    # average uses healpy's equal pixel areas.
    nside = 64
    src = _pixel_vectors(nside)
    pulsar = antenna.coord_to_vectors(SkyCoord(37.0 * u.deg, -21.0 * u.deg))
    fp, fx = antenna.antenna_pattern(pulsar[None, :], src)
    area = hp.nside2pixarea(nside)
    mean = np.sum((fp**2 + fx**2) * area) / (4.0 * np.pi)
    # pixelisation error ~ 1/npix; the pulsar's own pixel is set to 0 (bounded)
    assert mean == pytest.approx(1.0 / 3.0, rel=2e-4, abs=0)
    assert antenna.SKY_MEAN_PATTERN == pytest.approx(mean, rel=2e-4, abs=0)


def test_pattern_power_closed_form_and_psi_invariance():
    # (1/2 p p : e)^2 summed over + and x is (1 - (Omega.p)^2)^2 / 4, hence
    # F+^2 + Fx^2 = (1 - Omega.p)^2 / 4 = (1 + cos theta)^2 / 4 (Omega = -n).
    rng = np.random.default_rng(1)
    p = rng.normal(size=(50, 3))
    p /= np.linalg.norm(p, axis=1, keepdims=True)
    n = rng.normal(size=(50, 3))
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    for psi in (0.0, 0.4, 1.3):
        fp, fx = antenna.antenna_pattern(p, n, psi)
        mu = np.sum(p * n, axis=1)
        assert np.allclose(fp**2 + fx**2, (1 + mu) ** 2 / 4, rtol=1e-12, atol=0)
    assert np.allclose(antenna.pattern_power(p, n), (1 + np.sum(p * n, axis=1)) ** 2 / 4, atol=0)
    grid = antenna.pattern_power_grid(p, n)
    assert np.allclose(np.diag(grid), antenna.pattern_power(p, n), atol=0)


@pytest.mark.parametrize("zeta_deg", [10.0, 45.0, 82.0, 120.0, 170.0])
def test_sky_averaged_correlation_is_hellings_downs(zeta_deg):
    # Hellings & Downs (1983): the sky average of F+_a F+_b + Fx_a Fx_b (earth
    # terms) is (2/3) Gamma(zeta) with Gamma normalised to 1/2 at zeta = 0
    # (Jenet & Romano 2015, from memory: 1/3 - x/6 + x ln x).
    nside = 64
    src = _pixel_vectors(nside)
    a = antenna.unit_vectors(0.3, 0.2)
    axis = np.cross(a, [0.0, 0.0, 1.0])
    axis /= np.linalg.norm(axis)
    z = np.radians(zeta_deg)  # rotate a about axis by zeta (Rodrigues)
    b = a * np.cos(z) + np.cross(axis, a) * np.sin(z) + axis * np.dot(axis, a) * (1 - np.cos(z))
    fpa, fxa = antenna.antenna_pattern(a[None, :], src)
    fpb, fxb = antenna.antenna_pattern(b[None, :], src)
    corr = np.mean(fpa * fpb + fxa * fxb)  # equal-area pixels
    assert corr == pytest.approx(2.0 / 3.0 * _hellings_downs(z), abs=3e-4)


def test_orientation_average_is_eight_fifths_of_pattern_power():
    # Direct integration over polarisation psi in [0, pi) and isotropic
    # inclination (cos i uniform) with scipy.integrate.dblquad.
    fp, fx = 0.31, -0.17

    def g(cos_i, psi):
        return antenna.orientation_factor(fp, fx, np.arccos(cos_i), psi)

    val, _ = integrate.dblquad(g, 0.0, np.pi, -1.0, 1.0)
    mean = val / (2.0 * np.pi)
    # <(1 + c^2)^2 + 4 c^2>_i = 16/5, halved by the psi average (Maggiore 2008 eqs. 4.29-4.30)
    assert mean == pytest.approx(1.6 * (fp**2 + fx**2), rel=1e-8, abs=0)


def test_residual_of_cw_is_time_integral_of_redshift():
    # Detweiler (1979), ApJ 234, 1100: r(t) = int (1/2) p^i p^j h_ij / (1 + Omega.p) dt.
    # Build h_ij from the polarisation tensors (basis rotated by psi), integrate
    # numerically (scipy cumulative trapezoid) and compare the residual
    # amplitude with h0 / (2 pi f) sqrt(X^2 + Y^2).
    n = antenna.unit_vectors(1.1, -0.5)
    p = antenna.unit_vectors(4.0, 0.9)
    psi, inc, h0, f = 0.37, 0.8, 1e-14, 2e-8
    m, ell = antenna.polarisation_basis(n)
    mr = np.cos(psi) * m + np.sin(psi) * ell
    lr = -np.sin(psi) * m + np.cos(psi) * ell
    eplus = np.outer(mr, mr) - np.outer(lr, lr)
    ecross = np.outer(mr, lr) + np.outer(lr, mr)
    t = np.linspace(0.0, 5.0 / f, 20001)
    phase = 2 * np.pi * f * t + 0.2
    hp_t = h0 * (1 + np.cos(inc) ** 2) * np.cos(phase)
    hx_t = 2 * h0 * np.cos(inc) * np.sin(phase)
    proj = (
        0.5
        * p
        @ (eplus[None] * hp_t[:, None, None] + ecross[None] * hx_t[:, None, None])
        @ p
        / (1.0 - p @ n)
    )
    r = integrate.cumulative_trapezoid(proj, t, initial=0.0)
    amp_num = 0.5 * (r.max() - r.min())
    fp, fx = antenna.antenna_pattern(p, n)
    amp = antenna.residual_amplitude(h0, f * u.Hz).value * np.sqrt(
        antenna.orientation_factor(fp, fx, inc, psi)
    )
    assert amp_num == pytest.approx(amp, rel=1e-4, abs=0)  # trapezoid error ~ (2 pi dt f)^2 / 12


def test_snr_squared_factorises_and_pulsar_term_doubles():
    # Phase-averaged rho^2 = (h0/2 pi f)^2 sum_p (X^2 + Y^2) w_p (module docstring);
    # orientation-averaged version uses 1.6 (F+^2 + Fx^2).  Gauss-Legendre in
    # cos i (numpy.polynomial.legendre) and uniform psi average the fixed-
    # orientation result exactly (polynomial of degree 4 in cos i, 4 psi harmonics).
    n = antenna.unit_vectors(2.0, 0.3)
    p = np.stack([antenna.unit_vectors(0.1, 0.5), antenna.unit_vectors(3.0, -1.0)])
    w = np.array([[2.0e14, 1.0e14], [5.0e13, 3.0e13]]) * u.s**-2
    f = [3e-9, 2e-8] * u.Hz
    fp, fx = antenna.antenna_pattern(p, n)
    x, wt = np.polynomial.legendre.leggauss(4)
    psis = np.linspace(0, np.pi, 8, endpoint=False)
    acc = 0.0
    for ci, wi in zip(x, wt, strict=True):
        for psi in psis:
            acc = acc + wi / 2 / psis.size * antenna.snr_squared(
                1e-15, f, w, fp, fx, np.arccos(ci), psi
            )
    avg = antenna.orientation_averaged_snr_squared(1e-15, f, w, antenna.pattern_power(p, n))
    assert np.allclose(acc, avg, rtol=1e-10, atol=0)
    twice = antenna.orientation_averaged_snr_squared(
        1e-15, f, w, antenna.pattern_power(p, n), pulsar_term=True
    )
    assert np.allclose(twice, antenna.PULSAR_TERM_FACTOR * avg, atol=0)


def test_residual_amplitude_matches_the_quadrupole_formula():
    # Independent of the polarisation convention: build h_ij^TT = (2G / c^4 D) d^2/dt^2
    # (mu x_i x_j)^TT for a Kepler orbit (Maggiore 2008 eq. 3.72), integrate the redshift
    # (1/2) p^i p^j h_ij / (1 + Omega.p) over time (Detweiler 1979), and compare the
    # residual amplitude with h0 / (2 pi f) sqrt(X^2 + Y^2) of antenna.orientation_factor.
    from astropy import constants as const
    from scipy.integrate import cumulative_trapezoid

    from ptaconstrain.binary import waveform as wf

    G, C = const.G.si.value, const.c.si.value
    mass, q, dist = 1e9 * u.Msun, 0.5, 100 * u.Mpc
    f = wf.gw_frequency(2 * u.yr).to_value(u.Hz)
    h0 = wf.strain_amplitude(mass, q, f * u.Hz, dist).value
    m = mass.si.value
    mu, w_orb = m * q / (1 + q) ** 2, np.pi * f
    a = (G * m / w_orb**2) ** (1 / 3)
    rng = np.random.default_rng(3)
    for inc in (0.0, 0.7, np.pi / 2 - 0.2):
        n = rng.normal(size=3)
        n /= np.linalg.norm(n)
        omega = -n
        p = rng.normal(size=3)
        p /= np.linalg.norm(p)
        e1 = np.cross(omega, [0.0, 0.0, 1.0])
        e1 /= np.linalg.norm(e1)
        e2 = np.cross(omega, e1)
        # orbital plane tilted by the inclination about e1 (L along Omega at inc = 0)
        e2t = np.cos(inc) * e2 + np.sin(inc) * omega
        t = np.linspace(0.0, 4.0 / f, 8001)
        x = a * (np.outer(np.cos(w_orb * t), e1) + np.outer(np.sin(w_orb * t), e2t))
        v = a * w_orb * (np.outer(-np.sin(w_orb * t), e1) + np.outer(np.cos(w_orb * t), e2t))
        idd = 2 * mu * (np.einsum("ti,tj->tij", v, v) - w_orb**2 * np.einsum("ti,tj->tij", x, x))
        proj = np.eye(3) - np.outer(omega, omega)
        tt = np.einsum("ik,tkl,lj->tij", proj, idd, proj)
        tt -= 0.5 * proj * np.trace(tt, axis1=1, axis2=2)[:, None, None]
        h = 2 * G / (C**4 * dist.si.value) * tt
        z = 0.5 * np.einsum("i,tij,j->t", p, h, p) / (1 + omega @ p)
        r = cumulative_trapezoid(z, t, initial=0.0)
        true = (r.max() - r.min()) / 2
        fp, fx = antenna.antenna_pattern(p, n)
        # the code's inclination is that of L to the line of sight; psi is free, so
        # compare the psi-independent extremes: at inc = 0 the amplitude does not
        # depend on psi; in general scan psi and require one to match
        psis = np.linspace(0, np.pi, 721)
        code = h0 / (2 * np.pi * f) * np.sqrt(antenna.orientation_factor(fp, fx, inc, psis))
        assert np.min(np.abs(code / true - 1)) < 2e-3
        if inc == 0.0:
            assert np.ptp(code) / true < 1e-9


def test_pattern_power_features_reproduce_the_closed_form():
    # F+^2 + Fx^2 = (1 + cos theta_p)^2 / 4 (module docstring; pattern_power, itself
    # checked above against the Anholm et al. 2009 patterns) as phi(n) . phi(p):
    # exact algebra, so equal to rounding (a few 1e-16 of the largest term, 1).
    rng = np.random.default_rng(11)
    pulsars = rng.normal(size=(50, 3))
    pulsars /= np.linalg.norm(pulsars, axis=1, keepdims=True)
    sky = _pixel_vectors(8)
    direct = antenna.pattern_power(pulsars[None, :, :], sky[:, None, :])
    features = antenna.pattern_power_features(sky) @ antenna.pattern_power_features(pulsars).T
    assert np.max(np.abs(features - direct)) < 2e-15
    assert np.array_equal(antenna.pattern_power_grid(pulsars, sky).shape, features.shape)
