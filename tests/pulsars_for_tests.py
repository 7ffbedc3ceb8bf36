"""Small invented pulsar arrays and independent reference calculations for the
sensitivity tests (test input and reference code, not library code); importable
because pytest puts tests/ on sys.path (pyproject: pythonpath)."""

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord

from ptaconstrain.sensitivity.pulsar_array import PulsarArray

DAY = 86400.0
SIDEREAL_YEAR_D = 365.256363004  # Astronomical Almanac (from memory)


def small_array(red=False, **kw):
    """Three pulsars with different epochs, cadences and noise (invented)."""
    coord = SkyCoord([10.0, 200.0, 300.0] * u.deg, [20.0, -40.0, 60.0] * u.deg)
    return PulsarArray(
        ["T1", "T2", "T3"],
        coord,
        [0.5, 1.0, 0.3] * u.us,
        [14.0, 21.0, 28.0] * u.d,
        [53000.0, 54000.0, 55000.0],
        [58500.0, 59000.0, 59800.0],
        red_amp=[0.0, 2e-14 if red else 0.0, 0.0],
        red_gamma=[np.nan, 4.0, np.nan],
        name="test",
        **kw,
    )


def timing_fit_columns(mjd):
    """The documented timing model, written out independently of the library."""
    x = (mjd - mjd.mean()) / (mjd[-1] - mjd[0])
    a = 2 * np.pi * (mjd - 51544.5) / SIDEREAL_YEAR_D
    return np.stack(
        [
            np.ones_like(x),
            x,
            x**2,
            np.cos(a),
            np.sin(a),
            x * np.cos(a),
            x * np.sin(a),
            np.cos(2 * a),
            np.sin(2 * a),
        ],
        axis=1,
    )


def cw_residuals(mjd_grid, p, n, h0, f, inc, psi, phi0):
    """Earth-term residual of a circular binary by numerical time integration.

    r(t) = int (1/2) p^i p^j h_ij / (1 + Omega.p) dt (Detweiler 1979, ApJ 234,
    1100), h_ij = h+ e+ + hx ex with h+ = h0 (1 + cos^2 i) cos Phi,
    hx = 2 h0 cos i sin Phi (Maggiore 2008 eqs. 4.29-4.30 for the PTA h0);
    polarisation basis (m, l) of Ellis, Siemens & Creighton (2012) built here
    from the spherical unit vectors, rotated by psi.
    """
    from scipy.integrate import cumulative_trapezoid

    theta, phi = np.arccos(n[2]), np.arctan2(n[1], n[0])
    m = np.array([np.sin(phi), -np.cos(phi), 0.0])
    ell = np.array([np.cos(theta) * np.cos(phi), np.cos(theta) * np.sin(phi), -np.sin(theta)])
    mr, lr = np.cos(psi) * m + np.sin(psi) * ell, -np.sin(psi) * m + np.cos(psi) * ell
    ep = np.outer(mr, mr) - np.outer(lr, lr)
    ex = np.outer(mr, lr) + np.outer(lr, mr)
    t = (mjd_grid - 50000.0) * DAY
    ph = 2 * np.pi * f * t + phi0
    hplus = h0 * (1 + np.cos(inc) ** 2) * np.cos(ph)
    hcross = 2 * h0 * np.cos(inc) * np.sin(ph)
    z = 0.5 * ((p @ ep @ p) * hplus + (p @ ex @ p) * hcross) / (1.0 - p @ n)
    return cumulative_trapezoid(z, t, initial=0.0)


def matched_filter_rho2(arr, n, h0, f, inc, psi, phi0):
    """sum_i r_i^2 / sigma^2 of post-fit residuals (numpy.linalg.lstsq), white noise."""
    total = 0.0
    for k in range(len(arr)):
        mjd = arr.epochs(k)
        grid = np.arange(mjd[0], mjd[-1] + 0.5, 1.0)  # TOAs fall on the 1-day grid
        r_grid = cw_residuals(grid, arr.vectors[k], n, h0, f, inc, psi, phi0)
        r = np.interp(mjd, grid, r_grid)
        mdes = timing_fit_columns(mjd)
        beta = np.linalg.lstsq(mdes, r, rcond=None)[0]
        post = r - mdes @ beta
        total += np.sum(post**2) / arr.toa_rms[k].to_value(u.s) ** 2
    return total


def projected_inverse_covariances(arr):
    """Dense GLS operators G = C^-1 - C^-1 M (M^T C^-1 M)^-1 M^T C^-1 of every pulsar.

    van Haasteren & Levin (2013), MNRAS 428, 1147 (from memory); the red-noise
    covariance from the library's documented Fourier basis, the fit from
    :func:`timing_fit_columns`, the inverse from numpy.linalg.
    """
    from ptaconstrain.sensitivity.timing import red_noise_basis

    gs = []
    for k in range(len(arr)):
        mjd = arr.epochs(k)
        t = (mjd - mjd.mean()) * DAY * u.s
        sig = arr.toa_rms[k].to_value(u.s)
        cov = sig**2 * np.eye(mjd.size)
        red = red_noise_basis(
            t,
            (mjd[-1] - mjd[0]) * u.d,
            arr.toa_rms[k],
            arr.cadence[k],
            arr.red_amp[k],
            arr.red_gamma[k],
        )
        if red is not None:
            cov += red[0] @ np.diag(red[1].to_value(u.s**2)) @ red[0].T
        ci = np.linalg.inv(cov)
        md = timing_fit_columns(mjd)
        gs.append(ci - ci @ md @ np.linalg.solve(md.T @ ci @ md, md.T @ ci))
    return gs
