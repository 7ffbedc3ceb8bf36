"""The host galaxy: black-hole mass, distance, sky position and their errors.

A dynamical measurement cannot resolve a pair, so ``mass`` is the total mass
M = m1 + m2 of any binary the host may hold.  Dynamical masses scale linearly
with the distance adopted for them: a mass quoted at ``mass_distance`` becomes
M * D / D_ref at the adopted distance D (both the same kind of distance at the
host's redshift), so that h0 scales as D^(2/3) for a fixed angular measurement.
"""

import numpy as np
from astropy import units as u

__all__ = ["Host", "as_quantity", "hosts_from_table", "parse_coord", "MASS_RANGE"]

#: Plausible total black-hole masses [solMass]; anything outside is a unit slip.
MASS_RANGE = (1e3, 1e13)


def as_quantity(value, unit, field):
    """Return ``value`` as a Quantity in ``unit``; bare numbers are read in ``unit``.

    Parameters
    ----------
    value : Quantity, number or str
        A string such as ``"2e10 solMass"`` is parsed by astropy.
    unit : astropy unit
    field : str
        Named in the error message.

    Returns
    -------
    Quantity in ``unit`` (scalar or array).

    Raises
    ------
    ValueError
        If the value cannot be read or has the wrong physical type.
    """
    try:
        q = u.Quantity(value)
        if q.unit == u.dimensionless_unscaled and not _has_unit(value):
            q = q.value * unit
        q = q.to(unit)
    except (TypeError, ValueError, u.UnitsError) as err:
        raise ValueError(
            f"{field}: cannot read {value!r} as a {unit.physical_type} "
            f"(give a number in {unit} or a value with units, e.g. '1 {unit}')"
        ) from err
    if not np.all(np.isfinite(q.value)):
        raise ValueError(f"{field}: must be finite, got {value!r}")
    return q


def _has_unit(value):
    if isinstance(value, u.Quantity):
        return value.unit != u.dimensionless_unscaled
    return isinstance(value, str) and any(c.isalpha() for c in value.replace("e", ""))


def _positive(q, field):
    if np.any(q.value <= 0):
        raise ValueError(f"{field}: must be positive, got {q}")
    return q


def parse_coord(coord, ra, dec):
    """A SkyCoord from ``coord`` or from RA/Dec (strings or degrees); None if none given.

    Raises
    ------
    ValueError
        Naming the sky position and the accepted forms.
    """
    if coord is None and ra is None and dec is None:
        return None
    from astropy.coordinates import SkyCoord

    if coord is not None:
        if isinstance(coord, SkyCoord):
            return coord
        try:
            return SkyCoord(coord)
        except (ValueError, TypeError, u.UnitsError) as err:
            raise ValueError(f"sky position: cannot read {coord!r} ({err})") from err
    if ra is None or dec is None:
        raise ValueError("sky position: give both RA and Dec, or neither")
    ra_unit = u.hourangle if isinstance(ra, str) and any(c in ra for c in "h: ") else u.deg
    for value, lo, hi, what in ((ra, 0.0, 360.0, "RA"), (dec, -90.0, 90.0, "Dec")):
        try:
            x = float(value)
        except (TypeError, ValueError):
            continue  # sexagesimal strings are checked by SkyCoord
        if not (lo <= x <= hi) or (what == "RA" and x == hi) or not np.isfinite(x):
            raise ValueError(f"sky position: {what} = {value!r} deg is outside "
                             f"[{lo:g}, {hi:g}{')' if what == 'RA' else ']'}: check it")
    try:
        return SkyCoord(ra, dec, unit=(ra_unit, u.deg), frame="icrs")
    except (ValueError, TypeError, u.UnitsError) as err:
        raise ValueError(
            f"sky position: cannot read RA={ra!r}, Dec={dec!r} "
            "(use e.g. '12h30m49s' '+12d23m28s' or degrees)"
        ) from err


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
    ra, dec : str or float (deg), optional
        Alternative to ``coord``.
    velocity_dispersion : Quantity [speed] or number (km/s), optional
        Central stellar velocity dispersion sigma.
    cosmology : astropy.cosmology.Cosmology, optional
        Default Planck18.

    Raises
    ------
    ValueError
        Naming the field and the reason, for any invalid value.
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
            raise ValueError("name: must not be empty")
        self._cosmology = cosmology
        self.mass_quoted = _positive(as_quantity(mass, u.Msun, "mass"), "mass")
        if not MASS_RANGE[0] <= self.mass_quoted.to_value(u.Msun) <= MASS_RANGE[1]:
            raise ValueError(
                f"mass: {self.mass_quoted:.3g} is outside {MASS_RANGE[0]:.0e}-"
                f"{MASS_RANGE[1]:.0e} solMass for a massive black hole: check the units")
        if distance is None and redshift is None:
            raise ValueError("distance: give a luminosity distance or a redshift")
        self.distance = None
        self.redshift = None
        if redshift is not None:
            z = float(redshift)
            if not np.isfinite(z) or z < 0:
                raise ValueError(f"redshift: must be finite and >= 0, got {redshift!r}")
            self.redshift = z
        if distance is not None:
            self.distance = _positive(as_quantity(distance, u.Mpc, "distance"), "distance")
        if self.distance is None:
            if self.redshift == 0:
                raise ValueError("redshift: must be > 0 when no distance is given")
            self.distance = self.cosmology.luminosity_distance(self.redshift).to(u.Mpc)
        if self.redshift is None:
            self.redshift = _redshift_of(self.distance, self.cosmology)
        elif distance is not None and self.redshift > 0:
            d_z = self.cosmology.luminosity_distance(self.redshift).to(u.Mpc)
            if not 1 / 1.5 < (self.distance / d_z).value < 1.5:
                raise ValueError(
                    f"redshift: z = {self.redshift:g} means D_L = {d_z:.4g}, far from the "
                    f"distance {self.distance:.4g} given: drop one of them or correct it")

        self.mass_err_dex = _dex_pair(mass_err_dex, mass_err_frac)
        self.distance_err = _distance_sigma(self.distance, distance_err, distance_err_frac)
        self.velocity_err = None
        if velocity_err is not None:
            self.velocity_err = as_quantity(velocity_err, u.km / u.s, "velocity_err")
            if self.velocity_err.value < 0:
                raise ValueError("velocity_err: must be >= 0")
            if distance is not None:
                raise ValueError(
                    "velocity_err: a peculiar-velocity error applies to a redshift distance; "
                    "give the redshift without a distance, or a distance error instead")
        self.mass_distance = None
        if mass_distance is not None:
            self.mass_distance = _positive(
                as_quantity(mass_distance, u.Mpc, "mass_distance"), "mass_distance"
            )
        self.coord = parse_coord(coord, ra, dec)
        self.velocity_dispersion = None
        if velocity_dispersion is not None:
            self.velocity_dispersion = _positive(
                as_quantity(velocity_dispersion, u.km / u.s, "velocity_dispersion"),
                "velocity_dispersion",
            )

    @property
    def cosmology(self):
        """The cosmology used for redshift <-> distance (Planck18 by default)."""
        if self._cosmology is None:
            from astropy.cosmology import Planck18

            self._cosmology = Planck18
        return self._cosmology

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
            out["velocity_dispersion"] = (
                f"{self.velocity_dispersion.to_value(u.km / u.s):.6g} km/s"
            )
        return out

    def __repr__(self):
        return (
            f"Host({self.name!r}, mass={self.mass:.4g}, distance={self.distance:.4g}, "
            f"z={self.redshift:.4g})"
        )


def _redshift_of(distance, cosmology):
    """Redshift at a luminosity distance (astropy.cosmology.z_at_value)."""
    from astropy.cosmology import z_at_value

    if distance < 1 * u.Mpc:
        # Hubble law is exact to < 1e-4 here and z_at_value has no bracket.
        return float((cosmology.H0 * distance / _c_kms()).to_value(u.dimensionless_unscaled))
    return float(z_at_value(cosmology.luminosity_distance, distance, zmax=20).value)


def _c_kms():
    from astropy.constants import c

    return c.to(u.km / u.s)


def _dex_pair(mass_err_dex, mass_err_frac):
    if mass_err_dex is not None and mass_err_frac is not None:
        raise ValueError("mass error: give mass_err_dex or mass_err_frac, not both")
    if mass_err_frac is not None:
        frac = float(mass_err_frac)
        if not np.isfinite(frac) or frac < 0:
            raise ValueError(f"mass_err_frac: must be finite and >= 0, got {mass_err_frac!r}")
        sig = frac / np.log(10.0)
        return (sig, sig)
    if mass_err_dex is None:
        return None
    pair = np.atleast_1d(np.asarray(mass_err_dex, dtype=float))
    if pair.size == 1:
        pair = np.repeat(pair, 2)
    if pair.size != 2 or not np.all(np.isfinite(pair)) or np.any(pair < 0):
        raise ValueError(
            f"mass_err_dex: must be one or two finite values >= 0 (dex), got {mass_err_dex!r}"
        )
    return (float(pair[0]), float(pair[1]))


def _distance_sigma(distance, distance_err, distance_err_frac):
    if distance_err is not None and distance_err_frac is not None:
        raise ValueError("distance error: give distance_err or distance_err_frac, not both")
    if distance_err_frac is not None:
        frac = float(distance_err_frac)
        if not np.isfinite(frac) or frac < 0 or frac >= 1:
            raise ValueError(
                f"distance_err_frac: must be in [0, 1) (a fraction, e.g. 0.1 for 10%), "
                f"got {distance_err_frac!r}"
            )
        return distance * frac
    if distance_err is None:
        return None
    err = as_quantity(distance_err, u.Mpc, "distance_err")
    if err.value < 0:
        raise ValueError("distance_err: must be >= 0")
    return err


def hosts_from_table(table):
    """Hosts from a small table with columns as in ``src/ptaconstrain/data/demo_hosts.ecsv``.

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
    """
    cols = set(table.colnames)
    missing = [c for c in ("name", "mass") if c not in cols]
    if "distance" not in cols and "redshift" not in cols:
        missing.append("distance (or redshift)")
    if missing:
        raise ValueError(f"host table lacks column(s) {', '.join(missing)}: add them")

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
            hosts.append(Host(
                str(row["name"]), get(row, "mass", u.Msun),
                get(row, "distance", u.Mpc), redshift=get(row, "redshift"),
                mass_err_dex=get(row, "mass_err_dex"),
                distance_err=get(row, "distance_err", u.Mpc),
                mass_distance=get(row, "mass_distance", u.Mpc),
                ra=get(row, "ra", u.deg), dec=get(row, "dec", u.deg),
                velocity_dispersion=get(row, "sigma", u.km / u.s)))
        except ValueError as err:
            raise ValueError(f"host table row {i + 1}: {err}") from err
    return hosts
