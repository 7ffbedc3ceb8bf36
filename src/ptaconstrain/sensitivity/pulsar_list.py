"""Reading a pulsar list (the project's pulsar-list file format) into a PulsarArray.

Pulsar-list format
------------------
An ECSV table (astropy's enhanced CSV; CSV and FITS tables are read too), one
pulsar a row:

==============  =========  ==================================================
column          unit       meaning
==============  =========  ==================================================
name            --         unique pulsar name
ra, dec         deg        ICRS position: numbers (deg) or sexagesimal strings
                           ("18h55m12s", "-37d12m00s"; an RA with h, : or a
                           space is read in hours)
elon, elat      deg        instead of ra/dec: ecliptic longitude/latitude
                           (barycentric mean ecliptic of J2000)
toa_rms         us         white-noise rms of one TOA, sigma
cadence         d          interval between TOAs, dt
span            yr         observing span T_p, *or* both of
start_mjd,      d (MJD)    first and last TOA epochs
end_mjd
red_amp         --         optional red-noise amplitude A (not log10 A);
                           blank or 0 = no red noise
red_gamma       --         spectral index gamma, required where red_amp > 0
distance        kpc        optional; recorded only (the incoherent pulsar
                           term needs none)
==============  =========  ==================================================

Columns without a unit are read in the units above.  When only ``span`` is
given, every pulsar's timing ends at the table's meta ``end_mjd`` (default
MJD 60000).  The meta ``name`` names the array (default: the file name).
TOAs are taken on the regular grid start, start + dt, ... up to the end.
"""

import numpy as np
from astropy import units as u

from .pulsar_array import ArrayError, PulsarArray

__all__ = ["load_array", "array_from_table"]


def load_array(path, pulsar_term=False):
    """Read a pulsar list (format in the module docstring).

    Parameters
    ----------
    path : str or path-like
    pulsar_term : bool
        Add the pulsar term incoherently.

    Returns
    -------
    PulsarArray

    Raises
    ------
    ArrayError
        One line naming the file, row, column and fix.
    """
    from pathlib import Path

    from astropy.table import Table

    path = Path(path)
    if not path.is_file():
        raise ArrayError(f"pulsar list {path} not found: check the path")
    fmt = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv", ".fits": "fits"}.get(path.suffix.lower())
    try:
        t = Table.read(path, format=fmt) if fmt else Table.read(path)
    except Exception as err:  # astropy raises many types for a malformed file
        msg = str(err).splitlines()[0] if str(err) else type(err).__name__
        raise ArrayError(f"{path.name} is not a readable table ({msg}): write it as ECSV") \
            from err
    try:
        return array_from_table(t, name=t.meta.get("name", path.stem), pulsar_term=pulsar_term)
    except ArrayError as err:
        raise ArrayError(f"pulsar list {path.name}, {err}") from err


def array_from_table(table, name="pulsar array", pulsar_term=False):
    """Build a :class:`PulsarArray` from an astropy table in the pulsar-list format.

    Parameters
    ----------
    table : astropy.table.Table or QTable
    name : str
    pulsar_term : bool

    Returns
    -------
    PulsarArray
    """
    cols = set(table.colnames)
    missing = [c for c in ("name", "toa_rms", "cadence") if c not in cols]
    if missing:
        raise ArrayError(f"column '{missing[0]}' is missing: the pulsar list needs name, "
                         "ra/dec (or elon/elat), toa_rms, cadence and span (or "
                         "start_mjd/end_mjd)")
    names = [str(x).strip() for x in table["name"]]
    for i, x in enumerate(names):
        if not x or x == "--":
            raise ArrayError(f"row {i + 1}: name is empty: give every pulsar a name")
    coord = _read_position(table, names)
    toa = _quantity(table, "toa_rms", u.us, names)
    cad = _quantity(table, "cadence", u.d, names)
    start, end = _read_epochs(table, names)
    amp = _plain(table, "red_amp", names) if "red_amp" in cols else None
    gam = _plain(table, "red_gamma", names) if "red_gamma" in cols else None
    dist = _quantity(table, "distance", u.kpc, names, allow_nan=True) \
        if "distance" in cols else None
    return PulsarArray(names, coord, toa, cad, start, end, amp, gam, dist, name=name,
                       pulsar_term=pulsar_term)


def _values(col):
    data = col.filled(np.nan) if hasattr(col, "filled") and np.ma.is_masked(col) else col
    return data


def _quantity(table, col, unit, names, allow_nan=False):
    c = table[col]
    cunit = getattr(c, "unit", None)
    try:
        vals = np.asarray(_values(c.value if isinstance(c, u.Quantity) else c), dtype=float)
    except (TypeError, ValueError) as err:
        raise ArrayError(f"column '{col}' is not numeric: give numbers in {unit}") from err
    if cunit is not None and cunit != u.dimensionless_unscaled:
        try:
            vals = (vals * cunit).to_value(unit)
        except u.UnitsError as err:
            raise ArrayError(f"column '{col}' has unit {cunit}: give it in {unit}") from err
    if not allow_nan:
        bad = np.flatnonzero(~np.isfinite(vals))
        if bad.size:
            i = bad[0]
            raise ArrayError(f"row {i + 1} ({names[i]}): {col} is NaN or missing: give a "
                             f"value in {unit}")
    return vals * unit


def _plain(table, col, names):
    try:
        return np.asarray(_values(table[col]), dtype=float).reshape(-1)
    except (TypeError, ValueError) as err:
        raise ArrayError(f"column '{col}' is not numeric: give numbers") from err


def _read_epochs(table, names):
    cols = set(table.colnames)
    has_span = "span" in cols
    has_mjd = "start_mjd" in cols or "end_mjd" in cols
    if has_span and has_mjd:
        raise ArrayError("give either span or start_mjd/end_mjd columns, not both")
    if has_mjd:
        if not ("start_mjd" in cols and "end_mjd" in cols):
            raise ArrayError("give both start_mjd and end_mjd (or a span column instead)")
        start = _quantity(table, "start_mjd", u.d, names).value
        end = _quantity(table, "end_mjd", u.d, names).value
        return start, end
    if not has_span:
        raise ArrayError("column 'span' is missing: give span [yr] or start_mjd/end_mjd")
    span = _quantity(table, "span", u.yr, names).to_value(u.d)
    try:
        end_ref = float(table.meta.get("end_mjd", 60000.0))
    except (TypeError, ValueError) as err:
        raise ArrayError("meta end_mjd is not a number: give an MJD") from err
    end = np.full(span.shape, end_ref)
    return end - span, end


def _read_position(table, names):
    from astropy.coordinates import BarycentricMeanEcliptic, SkyCoord

    cols = set(table.colnames)
    eq, ecl = {"ra", "dec"} & cols, {"elon", "elat"} & cols
    if eq and ecl:
        raise ArrayError("give either ra/dec or elon/elat columns, not both")
    if not eq and not ecl:
        raise ArrayError("position columns are missing: give ra and dec (ICRS, deg or "
                         "sexagesimal) or elon and elat (ecliptic, deg)")
    pair = ("ra", "dec") if eq else ("elon", "elat")
    for c in pair:
        if c not in cols:
            raise ArrayError(f"column '{c}' is missing: give positions as ra/dec (ICRS) or "
                             "elon/elat (ecliptic), in deg")
    lon_col, lat_col = table[pair[0]], table[pair[1]]

    def build(lon, lat):
        if pair[0] == "elon":
            return SkyCoord(lon, lat, frame=BarycentricMeanEcliptic).icrs
        return SkyCoord(lon, lat, frame="icrs")

    lon, lat = _angle_values(lon_col, pair[0]), _angle_values(lat_col, pair[1])
    try:
        coord = build(lon, lat)
    except (ValueError, TypeError, u.UnitsError):
        for i in range(len(names)):  # find the bad row for the message (failure path only)
            try:
                build(lon[i], lat[i])
            except (ValueError, TypeError, u.UnitsError) as err:
                raise ArrayError(
                    f"row {i + 1} ({names[i]}): cannot read position {pair[0]}="
                    f"{lon[i]!r}, {pair[1]}={lat[i]!r} (use deg or e.g. '18h55m12s' "
                    f"'-37d12m00s')") from err
        raise
    bad = np.flatnonzero(~(np.isfinite(coord.ra.deg) & np.isfinite(coord.dec.deg)))
    if bad.size:
        i = bad[0]
        raise ArrayError(f"row {i + 1} ({names[i]}): position is NaN or missing: give "
                         f"{pair[0]} and {pair[1]}")
    return coord


def _angle_values(col, name):
    """A column as an Angle-compatible Quantity (numbers in deg, strings parsed)."""
    from astropy.coordinates import Angle

    if col.dtype.kind in "USO":
        vals = [str(v).strip() for v in col]
        hours = name == "ra" and any(c in v for v in vals for c in "h: ")
        try:
            return Angle(vals, unit=u.hourangle if hours else u.deg)
        except (ValueError, TypeError, u.UnitsError):
            return np.array(vals, dtype=object)  # per-row error reported by the caller
    unit = getattr(col, "unit", None) or u.deg
    try:
        return (np.asarray(_values(col.value if isinstance(col, u.Quantity) else col),
                           dtype=float) * unit).to(u.deg)
    except u.UnitsError as err:
        raise ArrayError(f"column '{name}' has unit {unit}: give it in deg") from err
