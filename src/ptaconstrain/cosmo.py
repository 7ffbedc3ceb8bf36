"""Luminosity distance <-> redshift: the one implementation the package uses.

Both directions interpolate astropy.cosmology's ``luminosity_distance`` with a
cubic spline of ln D_L against ln z on 3000 nodes for 1e-8 <= z <= 20 (relative
accuracy better than 1e-8); below z = 1e-8 Hubble's law D_L = c z / H0 is exact
to that accuracy.  The cosmology defaults to astropy's *current default*
(``astropy.cosmology.default_cosmology``, Planck18 unless the user set another),
so ``with default_cosmology.set(WMAP9): ...`` is honoured everywhere.
"""

import numpy as np
from astropy import units as u

__all__ = ["get_cosmology", "DistanceRedshift", "redshift_at", "luminosity_distance_at",
           "Z_MAX"]

#: Largest redshift the interpolation covers.
Z_MAX = 20.0
_Z_MIN = 1e-8
_CACHE = {}


def get_cosmology(cosmology=None):
    """The cosmology to use: ``cosmology`` if given, else astropy's current default.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional

    Returns
    -------
    astropy.cosmology.Cosmology
    """
    if cosmology is not None:
        return cosmology
    from astropy.cosmology import default_cosmology

    return default_cosmology.get()


class DistanceRedshift:
    """Vectorised luminosity distance <-> redshift for one cosmology.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional
        Default: astropy's current default cosmology.

    Examples
    --------
    >>> from astropy.cosmology import Planck18
    >>> dz = DistanceRedshift(Planck18)
    >>> round(float(dz.redshift(100.0)), 4)
    0.0222
    """

    def __init__(self, cosmology=None):
        from scipy.interpolate import CubicSpline

        self.cosmology = get_cosmology(cosmology)
        z = np.logspace(np.log10(_Z_MIN), np.log10(Z_MAX), 3000)
        ld = np.log(self.cosmology.luminosity_distance(z).to_value(u.Mpc))
        lz = np.log(z)
        self._d_of_z = CubicSpline(lz, ld)
        self._z_of_d = CubicSpline(ld, lz)
        self.d_min, self.d_max = float(np.exp(ld[0])), float(np.exp(ld[-1]))

    def distance(self, z):
        """Luminosity distance in Mpc (ndarray) at redshift ``z`` in [0, 20].

        Parameters
        ----------
        z : float or array_like

        Returns
        -------
        ndarray [Mpc]
        """
        z = np.asarray(z, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            d = np.exp(self._d_of_z(np.log(np.clip(z, _Z_MIN, None))))
        return np.where(z < _Z_MIN, self.d_min * z / _Z_MIN, d)

    def redshift(self, d_mpc):
        """Redshift at luminosity distance ``d_mpc`` (Mpc); Hubble's law below z = 1e-8.

        Parameters
        ----------
        d_mpc : float or array_like

        Returns
        -------
        ndarray
        """
        d = np.asarray(d_mpc, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            z = np.exp(self._z_of_d(np.log(np.clip(d, self.d_min, None))))
        return np.where(d < self.d_min, _Z_MIN * d / self.d_min, z)


def _converter(cosmology):
    cosmo = get_cosmology(cosmology)
    key = id(cosmo)
    hit = _CACHE.get(key)
    if hit is None or hit.cosmology is not cosmo:
        hit = _CACHE[key] = DistanceRedshift(cosmo)
    return hit


def redshift_at(distance, cosmology=None):
    """Cosmological redshift at a luminosity distance.

    Parameters
    ----------
    distance : Quantity [length]
    cosmology : astropy.cosmology.Cosmology, optional

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> from astropy import units as u
    >>> from astropy.cosmology import Planck18
    >>> round(float(redshift_at(100 * u.Mpc, Planck18)), 4)
    0.0222
    """
    out = _converter(cosmology).redshift(u.Quantity(distance, u.Mpc).value)
    return float(out) if out.ndim == 0 else out


def luminosity_distance_at(redshift, cosmology=None):
    """Luminosity distance at a redshift.

    Parameters
    ----------
    redshift : float or array_like
    cosmology : astropy.cosmology.Cosmology, optional

    Returns
    -------
    Quantity [Mpc]
    """
    return _converter(cosmology).distance(redshift) * u.Mpc
