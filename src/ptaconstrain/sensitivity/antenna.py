"""Earth-term antenna patterns of pulsars and the S/N of a circular binary.

A plane gravitational wave from a source in direction ``n`` (unit vector from
the Earth to the source) propagates along Omega = -n.  With the polarisation
basis (Ellis, Siemens & Creighton 2012, ApJ 756, 175, eqs. 3-4, from memory)

    m = (sin phi, -cos phi, 0),
    l = (cos theta cos phi, cos theta sin phi, -sin theta),

(theta, phi) the polar angles of ``n``, e+ = m m - l l and ex = m l + l m,
and the antenna patterns of a pulsar in direction ``p`` are

    F^A = (1/2) p^i p^j e^A_ij / (1 + Omega . p)      (Anholm et al. 2009, PRD 79, 084030).

A polarisation angle psi rotates the basis, F+' = F+ cos 2psi + Fx sin 2psi,
Fx' = -F+ sin 2psi + Fx cos 2psi, and the sum F+^2 + Fx^2 does not depend on
psi; it has the closed form (1 + cos theta_p)^2 / 4, theta_p the angle between
the pulsar and the source, whose mean over the sky is 1/3.

Timing residual of a circular binary (earth term).  The residual is the time
integral of the redshift, r(t) = sum_A F^A int h_A dt (Detweiler 1979, ApJ 234,
1100; Jenet et al. 2004, ApJ 606, 799).  With the quadrupole polarisations
for h0 = 2 (G Mz)^(5/3) (pi f)^(2/3) / (c^4 D_L), h+ = h0 (1 + cos^2 i) cos Phi
and hx = 2 h0 cos i sin Phi (Maggiore 2008 eqs. 4.29-4.30; checked against a
direct quadrupole-formula integration in tests/test_sky.py), Phi = 2 pi f t + phi0,
it is

    r(t) = h0 / (2 pi f) [X sin Phi - Y cos Phi],
    X = F+' (1 + cos^2 i),   Y = 2 Fx' cos i,

a sinusoid of amplitude h0 / (2 pi f) sqrt(X^2 + Y^2).

S/N.  Write the residual of pulsar ``p`` as alpha c + beta s with c, s the
cosine and sine of 2 pi f t on its epochs.  After the timing-model fit, with
the projected inverse covariance G of that pulsar, rho_p^2 = (alpha, beta)
W (alpha, beta)^T, W = [[c'Gc, c'Gs], [s'Gc, s'Gs]].  Averaged over the
source phase phi0 the cross terms vanish *exactly*, leaving

    <rho_p^2>_phi0 = (h0 / (2 pi f))^2 (X^2 + Y^2) w_p(f),   w_p = (c'Gc + s'Gs) / 2,

so the phase-averaged S/N of the array is a product of a sky/orientation
factor and a per-pulsar, per-frequency weight w_p(f) that does not depend on
the source direction (computed in :mod:`ptaconstrain.sensitivity.pulsar_array`).  Averaging over
psi and isotropic inclination, <X^2 + Y^2> = (8/5) (F+^2 + Fx^2), because the
inclination mean of (1 + cos^2 i)^2 + 4 cos^2 i is 16/5
(:data:`ptaconstrain.sensitivity.curve.ORIENTATION_MEAN`) and the psi average halves it.

Pulsar term (optional, incoherent).  The full residual is the earth term minus
a pulsar term of equal amplitude (for a binary that does not evolve over the
light-travel time L (1 + cos theta_p) / c, ~ kyr) with a phase offset
2 pi f L (1 + cos theta_p) / c that is effectively random for kpc distances.
Averaged over that random offset, |r_E - r_P|^2 = |r_E|^2 + |r_P|^2, i.e. the
pulsar term doubles rho^2 (:data:`PULSAR_TERM_FACTOR`).  This fails within an
angle ~ sqrt(c / (pi f L)) of the pulsar, where the two terms cancel, and for
binaries that chirp between the two epochs; it is off by default.
"""

import numpy as np

from .curve import ORIENTATION_MEAN

__all__ = [
    "SKY_MEAN_PATTERN",
    "PULSAR_TERM_FACTOR",
    "unit_vectors",
    "coord_to_vectors",
    "polarisation_basis",
    "antenna_pattern",
    "pattern_power",
    "pattern_power_grid",
    "pattern_power_features",
    "orientation_factor",
    "residual_amplitude",
    "snr_squared",
    "orientation_averaged_snr_squared",
]

#: Mean over the sky of F+^2 + Fx^2 (earth term) = <(1 + cos theta)^2 / 4> = 1/3.
SKY_MEAN_PATTERN = 1.0 / 3.0

#: Factor on rho^2 when the pulsar term is added incoherently (see module docstring).
PULSAR_TERM_FACTOR = 2.0


def unit_vectors(lon, lat):
    """Cartesian unit vectors from longitude and latitude in radians.

    Parameters
    ----------
    lon, lat : float or array [rad]

    Returns
    -------
    ndarray (..., 3)
    """
    lon, lat = np.broadcast_arrays(np.asarray(lon, float), np.asarray(lat, float))
    cl = np.cos(lat)
    return np.stack([cl * np.cos(lon), cl * np.sin(lon), np.sin(lat)], axis=-1)


def coord_to_vectors(coord):
    """ICRS Cartesian unit vectors of an astropy SkyCoord (scalar or array).

    Returns
    -------
    ndarray (..., 3)
    """
    icrs = coord.icrs
    return unit_vectors(icrs.ra.rad, icrs.dec.rad)


def polarisation_basis(source):
    """The basis vectors m, l of the polarisation tensors for source directions.

    Parameters
    ----------
    source : array (..., 3)
        Unit vectors from the Earth to the sources.

    Returns
    -------
    (m, l) : two ndarrays (..., 3), orthogonal to ``source`` and to each other.
    """
    source = np.asarray(source, float)
    phi = np.arctan2(source[..., 1], source[..., 0])
    cos_t = np.clip(source[..., 2], -1.0, 1.0)
    sin_t = np.sqrt(1.0 - cos_t**2)
    m = np.stack([np.sin(phi), -np.cos(phi), np.zeros_like(phi)], axis=-1)
    ell = np.stack([cos_t * np.cos(phi), cos_t * np.sin(phi), -sin_t], axis=-1)
    return m, ell


def antenna_pattern(pulsar, source, psi=0.0):
    """Earth-term antenna patterns F+ and Fx.

    Parameters
    ----------
    pulsar : array (..., 3)
        Unit vectors to the pulsars.
    source : array (..., 3)
        Unit vectors to the sources; broadcast against ``pulsar``, e.g.
        ``source[:, None, :]`` against ``pulsar[None, :, :]`` gives a
        (n_source, n_pulsar) grid.
    psi : float or array [rad]
        Polarisation angle, broadcast against the output.

    Returns
    -------
    (F+, Fx) : two ndarrays, broadcast shape without the last axis.
        Zero where the source and the pulsar coincide (the earth-term
        limit there depends on the approach direction).

    Examples
    --------
    >>> import numpy as np
    >>> pulsar = np.array([1.0, 0.0, 0.0])   # 90 deg from the source
    >>> source = np.array([0.0, 0.0, 1.0])
    >>> fplus, fcross = antenna_pattern(pulsar, source)
    >>> print(f"{fplus**2 + fcross**2:.4f}")  # = (1 + cos 90 deg)^2 / 4
    0.2500
    """
    pulsar = np.asarray(pulsar, float)
    m, ell = polarisation_basis(source)
    pm = np.sum(pulsar * m, axis=-1)
    pl = np.sum(pulsar * ell, axis=-1)
    denom = 1.0 - np.sum(pulsar * np.asarray(source, float), axis=-1)  # 1 + Omega.p
    safe = denom > 1e-12
    inv = np.where(safe, 1.0 / np.where(safe, denom, 1.0), 0.0)
    fp = 0.5 * (pm**2 - pl**2) * inv
    fx = pm * pl * inv
    if np.any(np.asarray(psi) != 0):
        c2, s2 = np.cos(2 * np.asarray(psi)), np.sin(2 * np.asarray(psi))
        fp, fx = fp * c2 + fx * s2, -fp * s2 + fx * c2
    return fp, fx


def pattern_power(pulsar, source):
    """F+^2 + Fx^2 = (1 + cos theta)^2 / 4, theta the pulsar-source angle.

    Polarisation-independent closed form of the sum of squares of
    :func:`antenna_pattern` (e+ and ex project p p onto the plane transverse
    to the wave, ``|.|^2 = (1 - (Omega.p)^2)^2``).

    Parameters
    ----------
    pulsar, source : arrays (..., 3) of unit vectors, broadcast together.

    Returns
    -------
    ndarray, broadcast shape without the last axis.

    Examples
    --------
    >>> import numpy as np
    >>> source = np.array([0.0, 0.0, 1.0])
    >>> pulsars = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 0.0, -1.0]])
    >>> pattern_power(pulsars, source)   # theta = 0, 90, 180 deg
    array([1.  , 0.25, 0.  ])
    """
    mu = np.sum(np.asarray(pulsar, float) * np.asarray(source, float), axis=-1)
    return 0.25 * (1.0 + mu) ** 2


def pattern_power_grid(pulsar, source):
    """F+^2 + Fx^2 for every (source, pulsar) pair, as one matrix product.

    Parameters
    ----------
    pulsar : array (n_p, 3)
    source : array (n_s, 3)

    Returns
    -------
    ndarray (n_s, n_p), (1 + source . pulsar)^2 / 4.
    """
    mu = np.asarray(source, float) @ np.asarray(pulsar, float).T
    mu += 1.0
    mu *= mu
    mu *= 0.25
    return mu


def pattern_power_features(vectors):
    """Ten quadratic features phi(v) with F+^2 + Fx^2 = phi(source) . phi(pulsar).

    (1 + n.p)^2 / 4 = 1/4 + (n.p) / 2 + (n.p)^2 / 4 is a quadratic form in
    each unit vector, so with phi(v) = (1/2, x/r2, y/r2, z/r2, x^2/2, y^2/2,
    z^2/2, xy/r2, xz/r2, yz/r2), r2 = sqrt(2), the pattern power of every
    (source, pulsar) pair is phi(sources) @ phi(pulsars).T, and a sky map
    sum_p (F+^2 + Fx^2)_p s_p(f) = phi(sources) @ (phi(pulsars).T @ s): ten
    terms per pixel whatever the number of pulsars.  Exact in exact
    arithmetic; in floating point the absolute error is a few 1e-16 of
    sum_p s_p, so only pixels where the whole array is nearly blind (a
    single pulsar's antipode) lose relative precision.

    Parameters
    ----------
    vectors : array (..., 3) of unit vectors

    Returns
    -------
    ndarray (..., 10)

    Examples
    --------
    >>> import numpy as np
    >>> source = np.array([0.0, 0.0, 1.0])
    >>> pulsars = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 0.0, -1.0]])
    >>> (pattern_power_features(pulsars) @ pattern_power_features(source)).round(12) + 0.0
    array([1.  , 0.25, 0.  ])
    """
    v = np.asarray(vectors, float)
    x, y, z = v[..., 0], v[..., 1], v[..., 2]
    r = np.sqrt(0.5)
    return np.stack(
        [np.full_like(x, 0.5), r * x, r * y, r * z, 0.5 * x * x, 0.5 * y * y, 0.5 * z * z]
        + [r * x * y, r * x * z, r * y * z],
        axis=-1,
    )


def orientation_factor(fplus, fcross, inclination, psi=0.0):
    """X^2 + Y^2 with X = F+' (1 + cos^2 i) and Y = 2 Fx' cos i.

    Parameters
    ----------
    fplus, fcross : arrays
        Patterns at psi = 0 (:func:`antenna_pattern`).
    inclination, psi : float or array [rad]

    Returns
    -------
    ndarray: the squared residual amplitude in units of (h0 / (2 pi f))^2.
    """
    c2, s2 = np.cos(2 * np.asarray(psi)), np.sin(2 * np.asarray(psi))
    fp = fplus * c2 + fcross * s2
    fx = -fplus * s2 + fcross * c2
    ci = np.cos(inclination)
    return (fp * (1.0 + ci**2)) ** 2 + (2.0 * fx * ci) ** 2


def residual_amplitude(h0, frequency):
    """h0 / (2 pi f): the scale of the timing residual of a CW (seconds).

    Parameters
    ----------
    h0 : float or array, dimensionless
    frequency : Quantity [frequency]

    Returns
    -------
    Quantity [s]
    """
    from astropy import units as u

    return (np.asarray(h0) / (2.0 * np.pi * frequency)).to(u.s)


def snr_squared(h0, frequency, weight, fplus, fcross, inclination, psi=0.0, pulsar_term=False):
    """Phase-averaged S/N^2 of a binary summed over pulsars.

    rho^2 = (h0 / (2 pi f))^2 sum_p (X_p^2 + Y_p^2) w_p(f); see the module
    docstring.

    Parameters
    ----------
    h0 : float or array
    frequency : Quantity (n_f,)
    weight : Quantity (n_p, n_f) [1/s^2]
        Post-fit sensitivity weights w_p(f) (``PulsarArray.weights``).
    fplus, fcross : arrays (..., n_p)
        Antenna patterns of the source direction(s) for each pulsar.
    inclination, psi : float [rad]
    pulsar_term : bool
        Add the pulsar term incoherently (x 2).

    Returns
    -------
    ndarray (..., n_f)

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> f = [10.0] * u.nHz
    >>> weight = np.full((1, 1), 1e13) / u.s**2      # w_p(f): one pulsar, one frequency
    >>> fplus, fcross = antenna_pattern(np.array([[1.0, 0.0, 0.0]]), np.array([0.0, 0.0, 1.0]))
    >>> rho2 = snr_squared(1e-14, f, weight, fplus, fcross, inclination=0.0)
    >>> rho2.shape
    (1,)
    >>> bool(snr_squared(2e-14, f, weight, fplus, fcross, 0.0)[0] / rho2[0] == 4.0)  # ~ h0^2
    True
    """
    from astropy import units as u

    g = orientation_factor(fplus, fcross, inclination, psi)
    total = g @ weight.to_value(u.s**-2)
    amp = residual_amplitude(1.0, frequency).to_value(u.s)
    k = PULSAR_TERM_FACTOR if pulsar_term else 1.0
    return k * np.asarray(h0) ** 2 * amp**2 * total


def orientation_averaged_snr_squared(h0, frequency, weight, power, pulsar_term=False):
    """Mean S/N^2 over phase, polarisation and isotropic inclination.

    rho^2 = (h0 / (2 pi f))^2 (16/5) (1/2) sum_p (F+^2 + Fx^2)_p w_p(f).

    Parameters
    ----------
    h0 : float or array
    frequency : Quantity (n_f,)
    weight : Quantity (n_p, n_f) [1/s^2]
    power : array (..., n_p)
        F+^2 + Fx^2 per pulsar (:func:`pattern_power`); use
        :data:`SKY_MEAN_PATTERN` for every pulsar to average over the sky too.
    pulsar_term : bool

    Returns
    -------
    ndarray (..., n_f)

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> f = [10.0] * u.nHz
    >>> weight = np.full((3, 1), 1e13) / u.s**2      # three equal pulsars, one frequency
    >>> rho2 = orientation_averaged_snr_squared(1e-14, f, weight, np.full(3, SKY_MEAN_PATTERN))
    >>> one = orientation_averaged_snr_squared(1e-14, f, weight[:1], np.full(1, SKY_MEAN_PATTERN))
    >>> print(f"{rho2[0] / one[0]:.3f}")   # S/N^2 adds over pulsars
    3.000
    """
    from astropy import units as u

    total = np.asarray(power, float) @ weight.to_value(u.s**-2)
    amp = residual_amplitude(1.0, frequency).to_value(u.s)
    k = PULSAR_TERM_FACTOR if pulsar_term else 1.0
    return k * 0.5 * ORIENTATION_MEAN * np.asarray(h0) ** 2 * amp**2 * total
