"""Catalogue fields and the mapping of a catalogue's columns onto them.

A catalogue's columns are matched to the *fields* below: by default a field is
the column of the same name (case-insensitive); a mapping given as a dict or a
small TOML file renames them and sets units for columns without one::

    [columns]
    name = "galaxy_id"
    distance = "dist_mpc"
    velocity_dispersion = "sigma"
    [units]
    distance = "Mpc"

Required: ``name``, ``ra`` and ``dec``, and ``distance`` (luminosity) or
``redshift``.  A unit stored in the file always wins over the mapping's.
"""

from astropy import units as u

from .._files import read_toml
from .._inputs import check_schema
from ..errors import InputError

__all__ = [
    "FIELDS",
    "REQUIRED",
    "CatalogError",
    "ColumnMap",
    "load_column_map",
    "COLUMN_MAP_SCHEMA",
]

#: schema of a column-mapping TOML file (see :func:`ptaconstrain._inputs.check_schema`)
COLUMN_MAP_SCHEMA = {"columns": {"*": str}, "units": {"*": str}}

#: field -> (default unit or None, description)
FIELDS = {
    "name": (None, "galaxy name, unique"),
    "ra": ("deg", "right ascension (ICRS)"),
    "dec": ("deg", "declination (ICRS)"),
    "distance": ("Mpc", "luminosity distance"),
    "distance_err": ("Mpc", "1 sigma error of the luminosity distance (host tables)"),
    "redshift": (None, "cosmological redshift"),
    "mass": ("solMass", "measured total black-hole mass"),
    "log_mass": (None, "log10 of the measured mass in solMass"),
    "mass_err": ("solMass", "1 sigma error of the measured mass"),
    "mass_err_dex": (None, "1 sigma error of log10 of the measured mass"),
    "mass_distance": ("Mpc", "distance at which the measured mass was derived"),
    "velocity_dispersion": ("km/s", "central stellar velocity dispersion"),
    "velocity_dispersion_err": ("km/s", "its 1 sigma error"),
    "bulge_mass": ("solMass", "bulge stellar mass"),
    "bulge_mass_err": ("solMass", "its 1 sigma error"),
    "stellar_mass": ("solMass", "total stellar mass"),
    "stellar_mass_err": ("solMass", "its 1 sigma error"),
    "k_abs_mag": ("mag", "K-band absolute magnitude (of the bulge)"),
    "k_abs_mag_err": ("mag", "its 1 sigma error"),
    "core_radius": ("kpc", "core (break) radius"),
    "core_radius_err": ("kpc", "its 1 sigma error"),
}
#: fields every catalogue must have (plus distance or redshift)
REQUIRED = ("name", "ra", "dec")


class CatalogError(InputError):
    """A catalogue (or column mapping) that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> try:
    ...     ColumnMap({"colour": "g_r"})
    ... except CatalogError as err:
    ...     print(err)
    column mapping: unknown field 'colour'...
    """


class ColumnMap:
    """Which catalogue column holds which field, and units for unit-less columns.

    Parameters
    ----------
    columns : dict, optional
        field -> column name.  Unmapped fields match a column of the same
        name, ignoring case.
    units : dict, optional
        field -> unit string, used when the column carries no unit (a unit
        stored in the file always wins).

    Raises
    ------
    CatalogError
        For an unknown field or unit.

    Examples
    --------
    >>> cm = ColumnMap({"distance": "dist_kpc"}, {"distance": "kpc"})
    >>> cm.resolve(["name", "RA", "dec", "dist_kpc"])["ra"]
    'RA'
    """

    def __init__(self, columns=None, units=None):
        self.columns = dict(columns or {})
        self.units = dict(units or {})
        for field in list(self.columns) + list(self.units):
            if field not in FIELDS:
                raise CatalogError(
                    f"column mapping: unknown field {field!r}; fields are {', '.join(FIELDS)}"
                )
        for field, unit in self.units.items():
            try:
                u.Unit(unit)
            except ValueError as err:
                raise CatalogError(
                    f"column mapping: unit {unit!r} of {field} is unknown; give an astropy "
                    "unit such as 'Mpc' or 'kpc'"
                ) from err

    def resolve(self, colnames):
        """Map fields to the catalogue's columns.

        Parameters
        ----------
        colnames : list of str

        Returns
        -------
        dict
            field -> column name, for the fields present.

        Raises
        ------
        CatalogError
            If a mapped column is absent or a required field is missing.
        """
        lower = {c.lower(): c for c in colnames}
        out = {}
        for field in FIELDS:
            if field in self.columns:
                col = self.columns[field]
                if col not in colnames:
                    raise CatalogError(
                        f"column {col!r} (mapped to {field}) is not in the catalogue; "
                        f"its columns are {', '.join(colnames)}"
                    )
                out[field] = col
            elif field in lower:
                out[field] = lower[field]
        for field in REQUIRED:
            if field not in out:
                raise CatalogError(
                    f"catalogue has no {field!r} column: map one with --columns "
                    f'(TOML [columns] {field} = "...") or rename it'
                )
        if "distance" not in out and "redshift" not in out:
            raise CatalogError(
                "catalogue has neither a 'distance' nor a 'redshift' column: map one with --columns"
            )
        return out

    def unit(self, field, column):
        """Unit of ``column`` holding ``field``.

        Parameters
        ----------
        field : str
        column : astropy Column or Quantity

        Returns
        -------
        astropy unit or None
            The column's own unit, else the mapping's, else the field's default.
        """
        own = getattr(column, "unit", None)
        if own is not None and own != u.dimensionless_unscaled:
            return u.Unit(own)
        unit = self.units.get(field, FIELDS[field][0])
        return None if unit is None else u.Unit(unit)

    def declared(self, field, column):
        """True when the unit of ``column`` is stated (in the file or the mapping).

        A bare column read in the field's default unit is not declared; only
        such a column can be misread (e.g. kpc taken as Mpc).
        """
        own = getattr(column, "unit", None)
        return (own is not None and own != u.dimensionless_unscaled) or field in self.units

    def describe(self):
        """Dict for provenance metadata."""
        return {"columns": dict(self.columns), "units": dict(self.units)}

    def __repr__(self):
        return f"ColumnMap(columns={self.columns!r}, units={self.units!r})"


def load_column_map(path):
    """Read a column mapping from TOML: tables ``[columns]`` and ``[units]``.

    Parameters
    ----------
    path : str or path-like

    Returns
    -------
    ColumnMap

    Raises
    ------
    CatalogError
        For a missing or malformed file, unknown tables, fields or units.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     toml = Path(tmp) / "columns.toml"
    ...     text = ['[columns]', 'distance = "D_Mpc"', '[units]', 'distance = "Mpc"']
    ...     _ = toml.write_text(chr(10).join(text))
    ...     colmap = load_column_map(toml)
    >>> colmap.resolve(["name", "ra", "dec", "D_Mpc"])["distance"]
    'D_Mpc'
    """
    from pathlib import Path

    path = Path(path)
    data = read_toml(path, "column-mapping file", CatalogError)
    extra = set(data) - {"columns", "units"}
    if extra:
        raise CatalogError(
            f"{path.name}: unknown tables {', '.join(sorted(extra))}; use [columns] and [units]"
        )
    try:
        check_schema(data, COLUMN_MAP_SCHEMA, path.name)
    except InputError as err:
        raise CatalogError(str(err)) from err
    try:
        return ColumnMap(data.get("columns"), data.get("units"))
    except CatalogError as err:
        raise CatalogError(f"{path.name}: {err}") from err
