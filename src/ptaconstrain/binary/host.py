"""The host galaxy: black-hole mass, distance, sky position and their errors.

A dynamical measurement cannot resolve a pair, so ``mass`` is the total mass
M = m1 + m2 of any binary the host may hold.  Dynamical masses scale linearly
with the distance adopted for them: a mass quoted at ``mass_distance`` becomes
M * D / D_ref at the adopted distance D (both the same kind of distance at the
host's redshift), so that h0 scales as D^(2/3) for a fixed angular measurement.
"""

import numpy as np
from astropy import units as u

from .._inputs import (
    check_distance,
    check_field,
    check_mass,
    check_redshift,
    coord_from,
    positive,
    quantity,
)
from ..cosmo import get_cosmology, luminosity_distance_at, redshift_at
from ..errors import InputError

__all__ = ["Host", "hosts_from_table"]


class Host:
    """A galaxy that may hold a massive black-hole binary.

    Parameters
    ----------
    name : str
    mass : Quantity [mass] or number (solMass)
        Total black-hole mass M = m1 + m2, best estimate, at ``mass_distance``
        if that is given, otherwise at the adopted distance.
    distance : Quantity [length] or number (Mpc), optional
        Luminosity distance.  Give this or ``redshift`` (or both).
    redshift : float, optional
        Cosmological redshift; converted to a luminosity distance with
        ``cosmology`` when no distance is given.
    mass_err_dex : float or (float, float), optional
        Log-normal error of the mass in dex, or (lower, upper) dex.
    mass_err_frac : float, optional
        Fractional (1 sigma) mass error; converted to dex as frac / ln 10.
    distance_err : Quantity [length] or number (Mpc), optional
        Gaussian 1 sigma error of the distance.
    distance_err_frac : float, optional
        Fractional 1 sigma distance error.
    velocity_err : Quantity [speed] or number (km/s), optional
        Peculiar-velocity error of a redshift-based distance.
    mass_distance : Quantity [length] or number (Mpc), optional
        Distance at which ``mass`` was measured; the mass is rescaled
        linearly to the adopted distance.
    coord : astropy.coordinates.SkyCoord or str, optional
    ra, dec : str or float, optional
        Alternative to ``coord``.  Numbers are degrees; strings are degrees
        unless sexagesimal (then RA is in hours), see
        :func:`ptaconstrain._inputs.coord_from`.
    velocity_dispersion : Quantity [speed] or number (km/s), optional
        Central stellar velocity dispersion sigma.
    cosmology : astropy.cosmology.Cosmology, optional
        Default: astropy's default cosmology at the time the host is made
        (``astropy.cosmology.default_cosmology``, Planck18 unless changed).

    Attributes
    ----------
    name : str
    mass_quoted : Quantity [solMass]
        The mass as given (at ``mass_distance`` if that is set).
    distance : Quantity [Mpc]
        Adopted luminosity distance.
    redshift : float
        Cosmological redshift (from the distance when not given).
    mass_err_dex : (float, float) or None
        Lower and upper mass error in dex.
    distance_err : Quantity [Mpc] or None
    velocity_err : Quantity [km/s] or None
    mass_distance : Quantity [Mpc] or None
    coord : SkyCoord (ICRS) or None
    velocity_dispersion : Quantity [km/s] or None
    cosmology : astropy.cosmology.Cosmology

    Raises
    ------
    InputError
        One line naming the field, the value and the fix, for any invalid
        value: masses outside 1e3-1e13 solMass, distances outside 0.1 Mpc to
        the distance of z = 10, redshifts outside 0-10, wrong units.

    Examples
    --------
    >>> from astropy.cosmology import Planck18
    >>> h = Host("Example", "2e10 solMass", 95, ra="187.7", dec="12.4", cosmology=Planck18)
    >>> round(float(h.coord.ra.deg), 6), round(h.redshift, 4)
    (187.7, 0.0211)
    """

    def __init__(
        self,
        name,
        mass,
        distance=None,
        *,
        redshift=None,
        mass_err_dex=None,
        mass_err_frac=None,
        distance_err=None,
        distance_err_frac=None,
        velocity_err=None,
        mass_distance=None,
        coord=None,
        ra=None,
        dec=None,
        velocity_dispersion=None,
        cosmology=None,
    ):
        self.name = str(name).strip()
        if not self.name:
            raise InputError("name: must not be empty; give the host a name")
        self.cosmology = get_cosmology(cosmology)
        self.mass_quoted = _scalar(check_mass(mass, "mass"), "mass")
        if distance is None and redshift is None:
            raise InputError(
                "distance: give a luminosity distance (bare numbers are Mpc) or a redshift"
            )
        self.redshift = None if redshift is None else _scalar(check_redshift(redshift), "redshift")
        if distance is not None:
            self.distance = _scalar(
                check_distance(distance, "distance", self.cosmology), "distance"
            )
        else:
            if self.redshift == 0:
                raise InputError(
                    "redshift: must be > 0 when no distance is given; give the distance instead"
                )
            self.distance = check_distance(
                luminosity_distance_at(self.redshift, self.cosmology), "redshift", self.cosmology
            )
        if self.redshift is None:
            self.redshift = redshift_at(self.distance, self.cosmology)
        elif distance is not None and self.redshift > 0:
            d_z = luminosity_distance_at(self.redshift, self.cosmology)
            if not 1 / 1.5 < (self.distance / d_z).value < 1.5:
                raise InputError(
                    f"redshift: z = {self.redshift:g} means D_L = {d_z:.4g}, far from the "
                    f"distance {self.distance:.4g} given: drop one of them or correct it"
                )

        self.mass_err_dex = _dex_pair(mass_err_dex, mass_err_frac)
        self.distance_err = _distance_sigma(self.distance, distance_err, distance_err_frac)
        self.velocity_err = None
        if velocity_err is not None:
            self.velocity_err = _scalar(
                positive(
                    quantity(velocity_err, u.km / u.s, "velocity_err"),
                    "velocity_err",
                    allow_zero=True,
                ),
                "velocity_err",
            )
            if distance is not None:
                raise InputError(
                    "velocity_err: a peculiar-velocity error applies to a redshift distance; "
                    "give the redshift without a distance, or a distance error instead"
                )
        self.mass_distance = None
        if mass_distance is not None:
            self.mass_distance = _scalar(
                check_distance(mass_distance, "mass_distance", self.cosmology), "mass_distance"
            )
        self.coord = coord_from(coord, ra, dec)
        if self.coord is not None and not self.coord.isscalar:
            raise InputError("sky position: give one position for a host")
        self.velocity_dispersion = None
        if velocity_dispersion is not None:
            self.velocity_dispersion = _scalar(
                positive(
                    quantity(velocity_dispersion, u.km / u.s, "velocity_dispersion"),
                    "velocity_dispersion",
                ),
                "velocity_dispersion",
            )

    @property
    def mass(self):
        """Total black-hole mass at the adopted distance (Quantity [solMass])."""
        return self.mass_at(self.distance)

    def mass_at(self, distance):
        """Total mass rescaled to ``distance`` (linear in distance if quoted at one).

        Parameters
        ----------
        distance : Quantity [length]

        Returns
        -------
        Quantity [solMass].
        """
        if self.mass_distance is None:
            return self.mass_quoted * np.ones_like(np.asarray(distance.value, dtype=float))
        return (self.mass_quoted * (distance / self.mass_distance)).to(u.Msun)

    def describe(self):
        """Inputs as a flat dict of strings, for provenance metadata."""
        out = {
            "name": self.name,
            "mass": f"{self.mass.to_value(u.Msun):.6g} solMass",
            "distance": f"{self.distance.to_value(u.Mpc):.6g} Mpc (luminosity)",
            "redshift": f"{self.redshift:.6g}",
        }
        if self.mass_distance is not None:
            out["mass_quoted"] = (
                f"{self.mass_quoted.to_value(u.Msun):.6g} solMass at "
                f"{self.mass_distance.to_value(u.Mpc):.6g} Mpc"
            )
        if self.mass_err_dex is not None:
            out["mass_err_dex"] = "-{:.3g}/+{:.3g}".format(*self.mass_err_dex)
        if self.distance_err is not None:
            out["distance_err"] = f"{self.distance_err.to_value(u.Mpc):.6g} Mpc"
        if self.velocity_err is not None:
            out["velocity_err"] = f"{self.velocity_err.to_value(u.km / u.s):.6g} km/s"
        if self.coord is not None:
            icrs = self.coord.icrs
            out["ra"] = f"{icrs.ra.deg:.6f} deg"
            out["dec"] = f"{icrs.dec.deg:.6f} deg"
        if self.velocity_dispersion is not None:
            out["velocity_dispersion"] = f"{self.velocity_dispersion.to_value(u.km / u.s):.6g} km/s"
        return out

    def __repr__(self):
        return (
            f"Host({self.name!r}, mass={self.mass:.4g}, distance={self.distance:.4g}, "
            f"z={self.redshift:.4g})"
        )


def _scalar(q, field):
    """Refuse arrays where a host takes one value."""
    if np.ndim(q) != 0:
        raise InputError(f"{field}: give one value for a host, got {np.size(q)}")
    return q


def _fraction(value, field):
    """A dimensionless input (dex or fraction) as floats, via the one policy."""
    if isinstance(value, u.Quantity) and value.unit == u.dex:
        value = value.value
    try:
        return np.atleast_1d(quantity(value, u.dimensionless_unscaled, field).value)
    except InputError as err:
        raise InputError(
            f"{field}: cannot read {value!r}; give a finite plain number "
            "(dex for mass_err_dex, a fraction such as 0.1 otherwise)"
        ) from err


def _dex_pair(mass_err_dex, mass_err_frac):
    if mass_err_dex is not None and mass_err_frac is not None:
        raise InputError("mass error: give mass_err_dex or mass_err_frac, not both")
    if mass_err_frac is not None:
        frac = _fraction(mass_err_frac, "mass_err_frac")
        if frac.size != 1 or frac[0] < 0:
            raise InputError(
                f"mass_err_frac: must be one value >= 0 (e.g. 0.2 for 20%), got {mass_err_frac!r}"
            )
        check_field(frac[0], "fraction_err", "mass_err_frac")
        sig = float(frac[0]) / np.log(10.0)
        return (sig, sig)
    if mass_err_dex is None:
        return None
    pair = _fraction(mass_err_dex, "mass_err_dex")
    if pair.size == 1:
        pair = np.repeat(pair, 2)
    if pair.size != 2 or np.any(pair < 0):
        raise InputError(
            f"mass_err_dex: must be one or two finite values >= 0 (dex), got {mass_err_dex!r}"
        )
    check_field(pair, "mass_err_dex")
    return (float(pair[0]), float(pair[1]))


def _distance_sigma(distance, distance_err, distance_err_frac):
    if distance_err is not None and distance_err_frac is not None:
        raise InputError("distance error: give distance_err or distance_err_frac, not both")
    if distance_err_frac is not None:
        frac = _fraction(distance_err_frac, "distance_err_frac")
        if frac.size != 1 or frac[0] < 0 or frac[0] >= 1:
            raise InputError(
                f"distance_err_frac: must be in [0, 1) (a fraction, e.g. 0.1 for 10%), "
                f"got {distance_err_frac!r}"
            )
        return distance * float(frac[0])
    if distance_err is None:
        return None
    err = quantity(distance_err, u.Mpc, "distance_err")
    err = _scalar(positive(err, "distance_err", allow_zero=True), "distance_err")
    # at most the distance itself (FRACTION_ERR_MAX), as for a fractional error
    check_field(
        (err / distance).to_value(u.dimensionless_unscaled),
        "fraction_err",
        f"distance_err ({err:.3g}) as a fraction of the distance ({distance:.3g})",
    )
    return err


def hosts_from_table(table):
    """Hosts from a small table with columns as in the shipped ``demo_hosts`` table.

    Required: ``name``, ``mass`` [solMass], ``distance`` [Mpc] (or
    ``redshift``).  Optional: ``mass_err_dex``, ``distance_err`` [Mpc],
    ``mass_distance`` [Mpc], ``ra``/``dec`` [deg], ``sigma`` [km/s].
    For catalogues of many galaxies use :mod:`ptaconstrain.catalogue.reader` instead;
    this builds one :class:`Host` per row.

    Parameters
    ----------
    table : astropy.table.Table

    Returns
    -------
    list of Host

    Examples
    --------
    >>> from astropy.table import QTable
    >>> from ptaconstrain.data import path
    >>> hosts = hosts_from_table(QTable.read(path("demo_hosts.ecsv")))   # invented galaxies
    >>> len(hosts), type(hosts[0]).__name__
    (5, 'Host')
    """
    cols = set(table.colnames)
    missing = [c for c in ("name", "mass") if c not in cols]
    if "distance" not in cols and "redshift" not in cols:
        missing.append("distance (or redshift)")
    if missing:
        raise InputError(f"host table lacks column(s) {', '.join(missing)}: add them")

    def get(row, col, unit=None):
        if col not in cols:
            return None
        v = row[col]
        if isinstance(v, u.Quantity):
            v = v.to_value(unit) if unit is not None and v.unit != u.dex else v.value
        try:
            return None if np.ma.is_masked(v) or np.isnan(v) else float(v)
        except TypeError:
            return v

    hosts = []
    for i, row in enumerate(table):
        try:
            hosts.append(
                Host(
                    str(row["name"]),
                    get(row, "mass", u.Msun),
                    get(row, "distance", u.Mpc),
                    redshift=get(row, "redshift"),
                    mass_err_dex=get(row, "mass_err_dex"),
                    distance_err=get(row, "distance_err", u.Mpc),
                    mass_distance=get(row, "mass_distance", u.Mpc),
                    ra=get(row, "ra", u.deg),
                    dec=get(row, "dec", u.deg),
                    velocity_dispersion=get(row, "sigma", u.km / u.s),
                )
            )
        except InputError as err:
            raise InputError(f"host table row {i + 1}: {err}") from err
    return hosts
