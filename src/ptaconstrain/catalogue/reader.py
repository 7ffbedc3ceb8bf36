"""Galaxy catalogues: reading, column mapping, black-hole masses, bad rows.

A catalogue is anything astropy.table reads (ECSV, CSV, FITS, VOTable) or an
in-memory Table.  Its columns are matched to the *fields* below: by default a
field is the column of the same name (case-insensitive); a mapping given as a
dict or a small TOML file renames them and sets units for columns without one::

    [columns]
    name = "galaxy_id"
    distance = "dist_mpc"
    velocity_dispersion = "sigma"
    [units]
    distance = "Mpc"

Required: ``name``, ``ra`` and ``dec`` (deg, or sexagesimal strings), and
``distance`` (luminosity, Mpc) or ``redshift``.  A row with a valid
distance uses it; otherwise its redshift gives D_L (Planck18 unless another
cosmology is passed); the other of the two follows from the cosmology.

Black-hole mass, in order of preference:

1. a measured total mass (``mass`` in solMass or ``log_mass`` in dex) with its
   1 sigma error (``mass_err_dex``, or ``mass_err`` in solMass converted as
   err / (M ln 10)); a missing error is taken as 0 dex and counted in the
   notes.  ``mass_distance`` (optional) is the distance the mass was derived
   at; it is rescaled linearly to the adopted distance (dynamical masses
   scale as D);
2. otherwise the first relation (ptaconstrain.catalogue.relations, in the order given)
   whose predictor the row has (``velocity_dispersion``, ``bulge_mass``,
   ``k_abs_mag``, ``core_radius``, ``stellar_mass``); its intrinsic scatter
   is the mass error, with the predictor's error (``<predictor>_err``)
   added in quadrature.

The source used for each row is recorded (``mass_source``).  Rows that
cannot be used (missing name, position missing or out of range, distance <= 0 or not finite,
redshift outside (0, 20], mass <= 0, negative errors, no usable mass,
repeated name) are collected with a reason: with ``on_bad="error"`` the
first one raises, with ``on_bad="skip"`` they are dropped and counted.
Nothing is dropped silently.

CSV files are streamed in chunks (astropy's fast reader); ECSV and VOTable
are read whole and FITS memory-mapped, then processed chunk by chunk.
"""

from pathlib import Path

import numpy as np
from astropy import units as u

from ..errors import InputError

__all__ = [
    "FIELDS",
    "REQUIRED",
    "CatalogError",
    "ColumnMap",
    "load_column_map",
    "CatalogReader",
    "Rejections",
    "DistanceRedshift",
    "prepare_chunk",
    "duplicate_mask",
]

#: field -> (default unit or None, description)
FIELDS = {
    "name": (None, "galaxy name, unique"),
    "ra": ("deg", "right ascension (ICRS)"),
    "dec": ("deg", "declination (ICRS)"),
    "distance": ("Mpc", "luminosity distance"),
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
REQUIRED = ("name", "ra", "dec")
_ZMAX = 20.0
_TEXT_FORMATS = {".csv": "csv", ".txt": "csv"}


class CatalogError(InputError):
    """A catalogue (or column mapping) that cannot be used; the message names the fix."""


# ------------------------------------------------------------ column mapping
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
                raise CatalogError(f"column mapping: unit {unit!r} of {field} is unknown") from err

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
                    f"(TOML [columns] {field} = \"...\") or rename it"
                )
        if "distance" not in out and "redshift" not in out:
            raise CatalogError(
                "catalogue has neither a 'distance' nor a 'redshift' column: map one "
                "with --columns"
            )
        return out

    def unit(self, field, column):
        """Unit of ``column`` holding ``field``: the column's own, else the mapping's
        or the field's default."""
        if getattr(column, "unit", None) is not None:
            return u.Unit(column.unit)
        unit = self.units.get(field, FIELDS[field][0])
        return None if unit is None else u.Unit(unit)

    def describe(self):
        """Dict for provenance metadata."""
        return {"columns": dict(self.columns), "units": dict(self.units)}


def load_column_map(path):
    """Read a column mapping from TOML: tables ``[columns]`` and ``[units]``.

    Parameters
    ----------
    path : str or path-like

    Returns
    -------
    ColumnMap
    """
    from .relations import _toml_load

    path = Path(path)
    try:
        data = _toml_load(path)
    except ValueError as err:
        raise CatalogError(str(err).replace("relations file", "column-mapping file")) from err
    extra = set(data) - {"columns", "units"}
    if extra:
        raise CatalogError(
            f"{path.name}: unknown tables {', '.join(sorted(extra))}; use [columns] and [units]"
        )
    for key in ("columns", "units"):
        if not all(isinstance(v, str) for v in data.get(key, {}).values()):
            raise CatalogError(f"{path.name}: every value in [{key}] must be a string")
    try:
        return ColumnMap(data.get("columns"), data.get("units"))
    except CatalogError as err:
        raise CatalogError(f"{path.name}: {err}") from err


# ------------------------------------------------------------------ reading
class CatalogReader:
    """Chunked access to a catalogue file or an in-memory table.

    Parameters
    ----------
    source : str, path-like or astropy.table.Table
    format : str, optional
        astropy format name; by default from the suffix (``.csv`` streamed,
        ``.ecsv``, ``.fits``/``.fit``, ``.vot``/``.xml``/``.votable``).

    Attributes
    ----------
    n_rows : int
        Number of rows (for CSV, counted from the line count).
    colnames : list of str
    name : str
        File name, or "<table>".
    path : pathlib.Path or None
    """

    def __init__(self, source, format=None):
        from astropy.table import Table

        self.path = None
        self._table = None
        self._stream = False
        if isinstance(source, Table):
            self._table = source
            self.name = "<table>"
        else:
            path = Path(source)
            if not path.is_file():
                raise CatalogError(f"catalogue {path} not found: check the path")
            self.path, self.name = path, path.name
            suffix = path.suffix.lower()
            if format is None and suffix in _TEXT_FORMATS:
                self._stream = True
                self._open_csv(path)
            else:
                self._table = _read_whole(path, format)
        if self._table is not None:
            self.colnames = list(self._table.colnames)
            self.n_rows = len(self._table)

    def _open_csv(self, path):
        from astropy.io import ascii

        try:
            head = ascii.read(path, format="csv", guess=False, data_end=2)
        except Exception as err:  # astropy raises many types for a malformed file
            raise CatalogError(f"{path.name} is not a readable CSV table ({_first(err)})") from err
        self.colnames = list(head.colnames)
        with open(path, "rb") as fh:
            lines = sum(block.count(b"\n") for block in iter(lambda: fh.read(1 << 22), b""))
        self.n_rows = max(lines - 1, 0)
        self._bytes = path.stat().st_size

    def chunks(self, chunk_size=100_000):
        """Yield (first_row, Table) pieces of at most about ``chunk_size`` rows.

        ``first_row`` is the 0-based index of the piece's first row.
        """
        chunk_size = max(int(chunk_size), 1)
        if not self._stream:
            for start in range(0, self.n_rows, chunk_size):
                yield start, self._table[start:start + chunk_size]
            return
        from astropy.io import ascii

        per_row = self._bytes / max(self.n_rows, 1)
        nbytes = int(max(per_row * chunk_size, 1 << 16))
        try:
            gen = ascii.read(self.path, format="csv", guess=False,
                             fast_reader={"chunk_size": nbytes, "chunk_generator": True})
            start = 0
            for piece in gen:
                yield start, piece
                start += len(piece)
        except CatalogError:
            raise
        except Exception as err:
            if isinstance(err, GeneratorExit):
                raise
            raise CatalogError(f"{self.name}: cannot read rows ({_first(err)})") from err


def _first(err):
    text = str(err).strip()
    return text.splitlines()[0] if text else type(err).__name__


def _read_whole(path, format):
    from astropy.table import Table

    suffix = "".join(path.suffixes[-2:]).lower() if path.suffix.lower() == ".gz" else \
        path.suffix.lower()
    kw = {}
    if format is None:
        format = {".ecsv": "ascii.ecsv", ".fits": "fits", ".fit": "fits", ".fits.gz": "fits",
                  ".vot": "votable", ".votable": "votable", ".xml": "votable"}.get(suffix)
    if format == "fits" and suffix != ".fits.gz":
        kw["memmap"] = True
    try:
        import warnings

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return Table.read(path, format=format, **kw) if format else Table.read(path)
    except Exception as err:
        raise CatalogError(
            f"{path.name} is not a readable table ({_first(err)}); use ECSV, CSV, FITS or "
            "VOTable"
        ) from err


# ------------------------------------------------------------ bad rows
class Rejections:
    """Rows that could not be used, each with a reason, plus counted notes.

    Attributes
    ----------
    notes : dict
        reason -> count, for rows kept with an assumption (e.g. a measured
        mass without an error).
    """

    def __init__(self):
        self._rows, self._names, self._reasons = [], [], []
        self.notes = {}

    def add(self, rows, names, reason):
        """Record rows (0-based indices) rejected for ``reason``."""
        rows = np.asarray(rows, dtype=np.int64)
        if rows.size:
            self._rows.append(rows)
            self._names.append(np.asarray(names, dtype=str))
            self._reasons.append(np.full(rows.size, reason, dtype=object))

    def note(self, reason, count):
        """Count ``count`` rows kept under an assumption described by ``reason``."""
        if count:
            self.notes[reason] = self.notes.get(reason, 0) + int(count)

    @property
    def total(self):
        """Number of rejected rows."""
        return int(sum(r.size for r in self._rows))

    @property
    def counts(self):
        """reason -> number of rejected rows."""
        out = {}
        for reasons in self._reasons:
            for reason in dict.fromkeys(reasons):
                out[reason] = out.get(reason, 0) + int(np.count_nonzero(reasons == reason))
        return out

    def check(self, on_bad):
        """Raise on the first rejected row when ``on_bad == "error"``."""
        if on_bad not in ("error", "skip"):
            raise ValueError(f"on_bad: must be 'error' or 'skip', got {on_bad!r}")
        if on_bad == "error" and self._rows:
            rows = np.concatenate(self._rows)
            i = int(np.argmin(rows))
            row = rows[i]
            name = str(np.concatenate(self._names)[i])
            reason = np.concatenate(self._reasons)[i]
            raise CatalogError(
                f"catalogue row {row + 1} ({name!r}): {reason}; fix it, or skip and count "
                "such rows with --on-bad skip"
            )

    def table(self):
        """Rejected rows as a Table (row: 1-based data row, name, reason), by row."""
        from astropy.table import Table

        if not self._rows:
            return Table({"row": np.zeros(0, np.int64), "name": np.zeros(0, "U1"),
                          "reason": np.zeros(0, "U1")})
        rows = np.concatenate(self._rows)
        order = np.argsort(rows, kind="stable")
        return Table({"row": rows[order] + 1,
                      "name": np.concatenate(self._names)[order],
                      "reason": np.concatenate(self._reasons)[order].astype(str)})

    def summary(self):
        """Lines 'N rows skipped: reason' and 'N rows: note' (empty when clean)."""
        lines = [f"{n} row{'s' if n != 1 else ''} skipped: {r}" for r, n in self.counts.items()]
        lines += [f"{n} row{'s' if n != 1 else ''}: {r}" for r, n in self.notes.items()]
        return lines


def duplicate_mask(names):
    """True for every repeat of a name already seen earlier in ``names``.

    Parameters
    ----------
    names : array of str

    Returns
    -------
    ndarray of bool
    """
    names = np.asarray(names)
    mask = np.ones(names.size, dtype=bool)
    if names.size:
        _, first = np.unique(names, return_index=True)
        mask[first] = False
    return mask


# --------------------------------------------------------- distance <-> z
class DistanceRedshift:
    """Vectorised luminosity distance <-> redshift for one cosmology.

    A cubic spline of ln D_L against ln z on 3000 points in 1e-8 < z <= 20
    (astropy.cosmology gives the nodes) and its inverse; relative accuracy
    better than 1e-8 against ``cosmology.luminosity_distance``.

    Parameters
    ----------
    cosmology : astropy.cosmology.Cosmology, optional
        Default Planck18.
    """

    def __init__(self, cosmology=None):
        from scipy.interpolate import CubicSpline

        if cosmology is None:
            from astropy.cosmology import Planck18 as cosmology
        self.cosmology = cosmology
        z = np.logspace(-8, np.log10(_ZMAX), 3000)
        ld = np.log(cosmology.luminosity_distance(z).to_value(u.Mpc))
        lz = np.log(z)
        self._d_of_z = CubicSpline(lz, ld)
        self._z_of_d = CubicSpline(ld, lz)
        self.d_min, self.d_max = np.exp(ld[0]), np.exp(ld[-1])

    def distance(self, z):
        """Luminosity distance (Mpc, ndarray) at redshift z in (0, 20]."""
        return np.exp(self._d_of_z(np.log(z)))

    def redshift(self, d_mpc):
        """Redshift at luminosity distance d (Mpc); Hubble's law below 1e-8."""
        d = np.asarray(d_mpc, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            z = np.exp(self._z_of_d(np.log(np.clip(d, self.d_min, None))))
        return np.where(d < self.d_min, 1e-8 * d / self.d_min, z)


# ---------------------------------------------------------- one chunk
def _float(table, col):
    """Column as a float ndarray (NaN where masked); its unit is handled by the caller."""
    c = table[col]
    if isinstance(c, u.Quantity):
        return np.array(c.value, dtype=float)
    try:
        return np.ma.filled(np.ma.asarray(c).astype(float), np.nan)
    except (TypeError, ValueError) as err:
        raise CatalogError(f"catalogue column {col!r} is not numeric: map a numeric column") \
            from err


def _values(table, colmap, resolved, field):
    """Field values as floats in the field's default unit, or None when absent."""
    if field not in resolved:
        return None
    col = resolved[field]
    column = table[col]
    data = _float(table, col)
    target = FIELDS[field][0]
    unit = colmap.unit(field, column)
    if target is None or unit is None:
        return data
    target = u.Unit(target)
    if target == u.mag:
        return data
    try:
        return (data * unit).to_value(target)
    except u.UnitsError as err:
        raise CatalogError(
            f"catalogue column {col!r} has unit {unit}, which is not a {target.physical_type} "
            f"as {field} needs: fix the unit or the mapping"
        ) from err


def _sky(table, resolved):
    ra_c, dec_c = table[resolved["ra"]], table[resolved["dec"]]
    if ra_c.dtype.kind in "US" or dec_c.dtype.kind in "US":
        from astropy.coordinates import SkyCoord

        try:
            c = SkyCoord(np.asarray(ra_c, dtype=str), np.asarray(dec_c, dtype=str),
                         unit=(u.hourangle, u.deg), frame="icrs")
        except (ValueError, TypeError) as err:
            raise CatalogError(
                f"catalogue ra/dec strings cannot be parsed ({_first(err)}): give degrees or "
                "'12h30m49s' '+12d23m28s'"
            ) from err
        return c.ra.deg, c.dec.deg
    ra = _float(table, resolved["ra"])
    dec = _float(table, resolved["dec"])
    for col, arr in ((ra_c, ra), (dec_c, dec)):
        if getattr(col, "unit", None) is not None:
            arr[...] = (arr * u.Unit(col.unit)).to_value(u.deg)
    return ra, dec


def prepare_chunk(table, colmap, resolved, relations, start_row, dz, rejections):
    """Turn one piece of a catalogue into per-galaxy arrays (vectorised).

    Parameters
    ----------
    table : astropy.table.Table
    colmap : ColumnMap
    resolved : dict
        From :meth:`ColumnMap.resolve`.
    relations : list of Relation
        In order of preference.
    start_row : int
        0-based index of the table's first row in the catalogue.
    dz : DistanceRedshift
    rejections : Rejections
        Bad rows are added here (and dropped from the result).

    Returns
    -------
    dict of ndarray
        ``row`` (0-based), ``name``, ``ra``, ``dec`` (deg), ``distance`` (Mpc),
        ``redshift``, ``log_mass``, ``log_mass_sigma`` (dex), ``mass_source``,
        and every numeric input field present (in its default unit).
    """
    n = len(table)
    rows = start_row + np.arange(n)
    names = np.char.strip(np.ma.filled(np.ma.asarray(table[resolved["name"]]).astype(str), ""))
    bad = np.zeros(n, dtype=bool)

    def reject(mask, reason):
        new = mask & ~bad
        rejections.add(rows[new], names[new], reason)
        bad[new] = True

    reject(names == "", "name is missing")
    ra, dec = _sky(table, resolved)
    with np.errstate(invalid="ignore"):
        reject(~((ra >= 0) & (ra <= 360) & (np.abs(dec) <= 90)),
               "sky position missing or out of range (need 0 <= RA <= 360 deg and "
               "|Dec| <= 90 deg)")
    ra = np.mod(ra, 360.0)

    dist = _values(table, colmap, resolved, "distance")
    zcol = _values(table, colmap, resolved, "redshift")
    d = np.full(n, np.nan) if dist is None else dist
    z = np.full(n, np.nan) if zcol is None else zcol
    have_d, have_z = np.isfinite(d), np.isfinite(z)
    reject(~np.isnan(d) & ~((d > 0) & (d < np.inf)),
           "impossible distance (must be positive and finite)")
    reject(have_d & (d > dz.d_max), f"distance beyond redshift {_ZMAX:g}")
    reject(~np.isnan(z) & ~have_d & ~((z > 0) & (z <= _ZMAX)),
           f"impossible redshift (need 0 < z <= {_ZMAX:g})")
    reject(have_z & (z < 0), "negative redshift")
    reject(~have_d & ~have_z, "no distance or redshift (blank or NaN)")
    use_z = ~have_d & have_z & ~bad
    with np.errstate(invalid="ignore", divide="ignore"):
        d = np.where(use_z, dz.distance(np.where(use_z, z, 1.0)), d)
        z = np.where(have_d & ~have_z & ~bad, dz.redshift(np.where(have_d, d, 1.0)), z)

    # ------------------------------------------------------------ masses
    log_m = np.full(n, np.nan)
    sig = np.full(n, np.nan)
    source = np.full(n, "", dtype=object)
    inputs = {}
    m = _values(table, colmap, resolved, "mass")
    lm = _values(table, colmap, resolved, "log_mass")
    if m is not None or lm is not None:
        with np.errstate(invalid="ignore", divide="ignore"):
            mm = np.full(n, np.nan) if m is None else m
            reject(~np.isnan(mm) & ~((mm > 0) & (mm < np.inf)),
                   "impossible mass (must be positive and finite)")
            meas = np.where(np.isfinite(mm) & (mm > 0), np.log10(mm), np.nan)
            if lm is not None:
                reject(np.isinf(lm), "impossible log_mass (not finite)")
                meas = np.where(np.isnan(meas), lm, meas)
            err = np.full(n, np.nan)
            edex = _values(table, colmap, resolved, "mass_err_dex")
            elin = _values(table, colmap, resolved, "mass_err")
            if edex is not None:
                reject(edex < 0, "negative mass_err_dex")
                err = np.where(edex >= 0, edex, np.nan)
            if elin is not None:
                reject(elin < 0, "negative mass_err")
                frac = elin / (10.0**meas * np.log(10.0))
                err = np.where(np.isnan(err) & (elin >= 0), frac, err)
            dref = _values(table, colmap, resolved, "mass_distance")
            if dref is not None:
                reject(~np.isnan(dref) & ~(dref > 0), "impossible mass_distance (must be > 0)")
                scale = np.where(dref > 0, np.log10(d / dref), 0.0)
                meas = meas + scale
        have_m = np.isfinite(meas) & ~bad
        rejections.note("measured mass without an error: 0 dex assumed",
                        np.count_nonzero(have_m & np.isnan(err)))
        log_m = np.where(have_m, meas, log_m)
        sig = np.where(have_m, np.nan_to_num(err, nan=0.0), sig)
        source[have_m] = "measured"
        inputs["mass_measured"] = np.where(np.isfinite(meas), 10.0**meas, np.nan)
        inputs["mass_err_dex"] = err

    noted = set()
    for rel in relations:
        x = _values(table, colmap, resolved, rel.predictor)
        if x is None:
            continue
        inputs[rel.predictor] = x
        free = np.isnan(log_m) & ~bad
        est = rel.log_mass(x)
        if rel.form == "power_law" and rel.predictor not in noted:
            noted.add(rel.predictor)
            rejections.note(f"{rel.predictor} <= 0 treated as missing",
                            np.count_nonzero(free & (x <= 0)))
        use = free & np.isfinite(est)
        xerr = _values(table, colmap, resolved, rel.predictor + "_err")
        s = np.full(n, rel.scatter_dex)
        if xerr is not None:
            inputs[rel.predictor + "_err"] = xerr
            reject(use & (xerr < 0), f"negative {rel.predictor}_err")
            prop = np.where(xerr >= 0, rel.log_mass_error(x, np.where(xerr >= 0, xerr, 0)), 0)
            s = np.hypot(s, np.nan_to_num(prop))
            use &= ~bad
        log_m = np.where(use, est, log_m)
        sig = np.where(use, s, sig)
        source[use] = rel.name
    reject(np.isnan(log_m),
           "no usable mass (no measured mass and no predictor for the chosen relations)")

    keep = ~bad
    out = {
        "row": rows[keep],
        "name": names[keep],
        "ra": ra[keep],
        "dec": dec[keep],
        "distance": d[keep],
        "redshift": z[keep],
        "log_mass": log_m[keep],
        "log_mass_sigma": sig[keep],
        "mass_source": source[keep].astype(str),
    }
    for key, arr in inputs.items():
        out[key] = np.asarray(arr, dtype=float)[keep]
    return out
