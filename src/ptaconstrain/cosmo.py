"""Luminosity distance <-> redshift: the one implementation the package uses.

Both directions interpolate astropy.cosmology's ``luminosity_distance`` with a
cubic spline of ln D_L against ln z on 3000 nodes for 1e-8 <= z <= 20 (relative
accuracy better than 1e-8), evaluated in numpy from its node values and slopes
(so that the default needs neither astropy.cosmology nor scipy); below z = 1e-8
Hubble's law D_L = c z / H0 is exact to that accuracy.  The cosmology defaults to
astropy's *current default* (``astropy.cosmology.default_cosmology``, Planck18
unless the user set another), so ``with default_cosmology.set(WMAP9): ...`` is honoured everywhere.

For Planck18 the nodes and slopes are shipped (``data/planck18_distance.ecsv``, made by
``examples/make_cosmology_table.py`` from astropy), and ``astropy.cosmology``
(about 2.5 s of CPU to import) is not imported at all while it is the
default: if ``astropy.cosmology`` has not been imported, nobody can have
changed its default, and :func:`get_cosmology` returns :data:`PLANCK18`, a
stand-in that imports ``astropy.cosmology.Planck18`` only when an attribute
other than its name is asked for (e.g. ``H(z)``).
"""

import sys

import numpy as np
from astropy import units as u

__all__ = [
    "get_cosmology",
    "cosmology_by_name",
    "cosmology_name",
    "REALIZATIONS",
    "hubble_time",
    "DistanceRedshift",
    "redshift_at",
    "luminosity_distance_at",
    "spline_nodes",
    "Z_MAX",
    "PLANCK18",
]

#: Largest redshift the interpolation covers.
Z_MAX = 20.0
_Z_MIN = 1e-8
_N_NODES = 3000
_TABLE_FILE = "planck18_distance.ecsv"
_CACHE = {}


class _Planck18:
    """astropy's Planck18, imported on first use of anything but its name."""

    name = "Planck18"

    def _real(self):
        from astropy.cosmology import Planck18

        return Planck18

    def __getattr__(self, attr):
        if attr.startswith("__"):  # pickling, copying: no import for protocol look-ups
            raise AttributeError(attr)
        return getattr(self._real(), attr)

    def __eq__(self, other):
        return other is self or other == self._real()

    def __hash__(self):
        return hash(self.name)

    def __repr__(self):
        return "Planck18 (astropy.cosmology.Planck18; distances from the shipped table)"

    def __reduce__(self):
        return "PLANCK18"  # the module-level singleton


#: The default cosmology while astropy's default is untouched: Planck18
#: (Planck Collaboration 2020, A&A 641, A6), without importing astropy.cosmology.
PLANCK18 = _Planck18()


def get_cosmology(cosmology=None):
    """The cosmology to use: ``cosmology`` if given, else astropy's current default.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional

    Returns
    -------
    astropy.cosmology.Cosmology or the Planck18 stand-in :data:`PLANCK18`
        :data:`PLANCK18` when ``astropy.cosmology`` has not been imported (its
        default is then Planck18).

    Examples
    --------
    >>> from astropy.cosmology import Planck18, WMAP9
    >>> get_cosmology(WMAP9) is WMAP9
    True
    >>> get_cosmology().name   # astropy's default, unless set otherwise
    'Planck18'
    """
    if cosmology is not None:
        return cosmology
    module = sys.modules.get("astropy.cosmology")
    if module is None:
        return PLANCK18
    return module.default_cosmology.get()


#: astropy's built-in realizations (astropy.cosmology.realizations), newest first
REALIZATIONS = ("Planck18", "Planck15", "Planck13", "WMAP9", "WMAP7", "WMAP5", "WMAP3", "WMAP1")


def cosmology_by_name(name):
    """One of astropy's built-in realizations by name; Planck18 without the import.

    Parameters
    ----------
    name : str
        One of :data:`REALIZATIONS` (case-insensitive).

    Returns
    -------
    astropy.cosmology.Cosmology, or :data:`PLANCK18` for "Planck18"

    Raises
    ------
    InputError
        For an unknown name.

    Examples
    --------
    >>> cosmology_by_name("planck18").name
    'Planck18'
    """
    from .errors import InputError

    match = {r.lower(): r for r in REALIZATIONS}.get(str(name).strip().lower())
    if match is None:
        raise InputError(
            f"cosmology: {name!r} is not one of astropy's realizations; use "
            f"one of {', '.join(REALIZATIONS)}"
        )
    if match == "Planck18":
        return PLANCK18
    from astropy.cosmology import realizations

    return getattr(realizations, match)


def cosmology_name(cosmology):
    """A cosmology's name for outputs ('Planck18', 'WMAP9', or its repr if unnamed).

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology or :data:`PLANCK18`

    Returns
    -------
    str

    Examples
    --------
    >>> cosmology_name(PLANCK18)
    'Planck18'
    """
    name = getattr(cosmology, "name", None)
    return str(name) if name else repr(cosmology)


def hubble_time(cosmology=None):
    """The Hubble time 1/H0 of ``cosmology`` (Quantity [Gyr]), without astropy.cosmology.

    H0 follows from the distance spline's first node, where Hubble's law
    D_L = c z / H0 holds to the node's z = 1e-8.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional
        Default: astropy's current default (Planck18, from the shipped table).

    Returns
    -------
    Quantity [Gyr]

    Examples
    --------
    >>> round(float(hubble_time().value), 3)  # Planck18: H0 = 67.66 km/s/Mpc
    14.452
    """
    from astropy import constants as const

    nodes = DistanceRedshift(cosmology)._nodes
    z0, d0 = np.exp(nodes[0][0]), np.exp(nodes[1][0]) * u.Mpc
    return (d0 / (const.c * z0)).to(u.Gyr)


def _is_planck18(cosmology):
    if cosmology is PLANCK18:
        return True
    module = sys.modules.get("astropy.cosmology")
    return module is not None and cosmology is module.Planck18


def _shipped_nodes():
    """(ln z, ln D_L/Mpc, d ln D_L / d ln z) of Planck18 from the shipped ECSV table."""
    from .data import path as data_file

    with open(data_file(_TABLE_FILE), encoding="utf-8") as f:
        rows = [line for line in f if not line.startswith("#")]
    # rows[0] is the column-name line "ln_z ln_dl_mpc dln_dl_dln_z"
    nodes = np.array(" ".join(rows[1:]).split(), dtype=float).reshape(-1, 3)
    return nodes[:, 0], nodes[:, 1], nodes[:, 2]


def spline_nodes(cosmology):
    """Nodes of the ln D_L(ln z) cubic spline for ``cosmology`` (needs astropy.cosmology).

    ``luminosity_distance`` at 3000 redshifts evenly spaced in ln z for
    1e-8 <= z <= 20, and the slopes of the not-a-knot cubic spline through them
    (:class:`scipy.interpolate.CubicSpline`).  Values and slopes fix the spline's
    cubic on every interval, so :class:`DistanceRedshift` evaluates it from them
    as a cubic Hermite interpolant, without scipy.  This is how
    ``examples/make_cosmology_table.py`` makes the shipped Planck18 table.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology

    Returns
    -------
    ln_z, ln_dl, slope : ndarray (3000,)
        ln z, ln(D_L / Mpc) and d ln D_L / d ln z at the nodes.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy.cosmology import Planck18
    >>> ln_z, ln_dl, slope = spline_nodes(Planck18)
    >>> ln_z.size, round(float(slope[0]), 3)    # D_L ~ c z / H0 at small z: slope 1
    (3000, 1.0)
    """
    from scipy.interpolate import CubicSpline

    z = np.logspace(np.log10(_Z_MIN), np.log10(Z_MAX), _N_NODES)
    ld = np.log(cosmology.luminosity_distance(z).to_value(u.Mpc))
    lz = np.log(z)
    return lz, ld, CubicSpline(lz, ld)(lz, 1)


def _hermite(x, xk, yk, dk):
    """Cubic Hermite interpolation through (xk, yk) with slopes dk (xk increasing).

    Outside [xk[0], xk[-1]] the end cubics are extended, as CubicSpline does.
    """
    i = np.clip(np.searchsorted(xk, x, side="right") - 1, 0, xk.size - 2)
    h = xk[i + 1] - xk[i]
    t = (x - xk[i]) / h
    t2 = t * t
    t3 = t2 * t
    return (
        (2 * t3 - 3 * t2 + 1) * yk[i]
        + (t3 - 2 * t2 + t) * h * dk[i]
        + (3 * t2 - 2 * t3) * yk[i + 1]
        + (t3 - t2) * h * dk[i + 1]
    )


class DistanceRedshift:
    """Vectorised luminosity distance <-> redshift for one cosmology.

    ln D_L(ln z) is the cubic spline of :func:`spline_nodes` (for Planck18 its
    shipped nodes); the inverse interpolates ln z(ln D_L) through the same nodes
    with the reciprocal slopes (cubic Hermite, accurate to the same order).

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional
        Default: astropy's current default cosmology (:data:`PLANCK18` while
        ``astropy.cosmology`` has not been imported).

    Examples
    --------
    >>> dz = DistanceRedshift()
    >>> round(float(dz.redshift(100.0)), 4)
    0.0222

    Attributes
    ----------
    cosmology : astropy.cosmology.Cosmology or :data:`PLANCK18`
    tabulated : bool
        True when the spline nodes come from the shipped Planck18 table.
    d_min, d_max : float
        Luminosity distances [Mpc] at z = 1e-8 and z = 20.
    """

    def __init__(self, cosmology=None):
        self.cosmology = get_cosmology(cosmology)
        self.tabulated = _is_planck18(self.cosmology)
        if self.tabulated:
            self._nodes = _shipped_nodes()
        else:
            self._nodes = spline_nodes(self.cosmology)
        ld = self._nodes[1]
        self.d_min, self.d_max = float(np.exp(ld[0])), float(np.exp(ld[-1]))

    def _d_of_z(self, lz):
        lzk, ldk, slope = self._nodes
        return _hermite(lz, lzk, ldk, slope)

    def _z_of_d(self, ld):
        lzk, ldk, slope = self._nodes
        return _hermite(ld, ldk, lzk, 1.0 / slope)

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
    if _is_planck18(cosmo):  # the stand-in and astropy's Planck18 share the table
        hit = _CACHE.get("Planck18")
        if hit is None:
            hit = _CACHE["Planck18"] = DistanceRedshift(cosmo)
        return hit
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

    Examples
    --------
    >>> from astropy.cosmology import Planck18
    >>> luminosity_distance_at(0.1, Planck18)
    <Quantity 475.8 Mpc>
    >>> Planck18.luminosity_distance(0.1)        # astropy's integral, for comparison
    <Quantity 475.8 Mpc>
    """
    return _converter(cosmology).distance(redshift) * u.Mpc
