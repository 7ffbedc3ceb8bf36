"""Reading a pulsar list (the project's pulsar-list file format) into a PulsarArray.

Pulsar-list format
------------------
An ECSV table (astropy's enhanced CSV; CSV and FITS tables are read too), one
pulsar a row:

==============  =========  ==================================================
column          unit       meaning
==============  =========  ==================================================
name            --         unique pulsar name
ra, dec         deg        ICRS position under the package's one sky rule
                           (:func:`ptaconstrain._inputs.angles_deg`): numbers
                           are degrees, also as text ("187.7"); sexagesimal
                           text (with h, : or inner spaces) is hours for RA
                           ("18h55m12s", "18:55:12") and degrees for Dec
elon, elat      deg        instead of ra/dec: ecliptic longitude/latitude
                           (barycentric mean ecliptic of J2000), both in
                           degrees (also sexagesimal "d:m:s" text)
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

Columns without a unit are read in the units above (the package's one
quantity rule, :func:`ptaconstrain._inputs.quantity`); a unit of the wrong
kind is refused.  The file format follows the suffix (:data:`ptaconstrain._files.TABLE_FORMATS`;
others are left to astropy to guess).  When only ``span`` is
given, every pulsar's timing ends at the table's meta ``end_mjd`` (default
MJD 60000).  The meta ``name`` names the array (default: the file name).
TOAs are taken on the regular grid start, start + dt, ... up to the end.
"""

import numpy as np
from astropy import units as u

from .._inputs import (
    SKY_RANGE_TEXT,
    angles_deg,
    check_schema,
    lonlat_deg,
    quantity,
    sky_out_of_range,
)
from ..errors import InputError
from .pulsar_array import ArrayError, PulsarArray

__all__ = ["load_array", "array_from_table"]

#: File suffix -> astropy table format of a pulsar list.
_REQUIRED = ("name", "toa_rms", "cadence")
#: schema of the meta keys a pulsar list may carry (others are kept, unchecked)
PULSAR_LIST_META_SCHEMA = {"name": str, "end_mjd": float, "*": object}


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

    Examples
    --------
    >>> from ptaconstrain.data import path
    >>> array = load_array(path("demo_array.ecsv"))   # the invented demo array
    >>> len(array.names)
    40
    """
    from pathlib import Path

    from .._files import read_table

    path = Path(path)
    t = read_table(path, "pulsar list", ArrayError, hint="write it as ECSV")
    try:
        check_schema(dict(t.meta), PULSAR_LIST_META_SCHEMA, f"pulsar list {path.name} meta")
    except InputError as err:
        raise ArrayError(str(err)) from err
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

    Raises
    ------
    ArrayError
        One line naming the row, column and fix.

    Examples
    --------
    >>> from astropy.table import QTable
    >>> table = QTable({"name": ["Invented A", "Invented B"], "ra": [10.0, 200.0],
    ...                 "dec": [20.0, -40.0], "toa_rms": [0.5, 1.0], "cadence": [14.0, 14.0],
    ...                 "span": [15.0, 12.0]})   # units: deg, us, d, yr
    >>> array = array_from_table(table, name="invented array")
    >>> array.toa_rms
    <Quantity [0.5, 1. ] us>
    """
    cols = set(table.colnames)
    missing = [c for c in _REQUIRED if c not in cols]
    if missing:
        raise ArrayError(
            f"column '{missing[0]}' is missing: the pulsar list needs name, "
            "ra/dec (or elon/elat), toa_rms, cadence and span (or "
            "start_mjd/end_mjd)"
        )
    names = [str(x).strip() for x in table["name"]]
    empty = [i for i, x in enumerate(names) if not x or x == "--"]
    if empty:
        raise ArrayError(f"row {empty[0] + 1}: name is empty: give every pulsar a name")
    coord = _read_position(table, names)
    toa = _quantity(table, "toa_rms", u.us, names)
    cad = _quantity(table, "cadence", u.d, names)
    start, end = _read_epochs(table, names)
    amp = _plain(table, "red_amp") if "red_amp" in cols else None
    gam = _plain(table, "red_gamma") if "red_gamma" in cols else None
    dist = (
        _quantity(table, "distance", u.kpc, names, allow_nan=True) if "distance" in cols else None
    )
    return PulsarArray(
        names, coord, toa, cad, start, end, amp, gam, dist, name=name, pulsar_term=pulsar_term
    )


def _numbers(table, col, unit_text):
    """A column's values as floats (masked -> NaN) and its unit (or None)."""
    c = table[col]
    unit = getattr(c, "unit", None)
    raw = c.value if isinstance(c, u.Quantity) else c
    try:
        values = np.ma.filled(np.ma.asarray(raw, dtype=float), np.nan).reshape(-1)
    except (TypeError, ValueError) as err:
        raise ArrayError(f"column '{col}' is not numeric: give numbers{unit_text}") from err
    return values, unit


def _quantity(table, col, unit, names, allow_nan=False):
    values, cunit = _numbers(table, col, f" in {unit}")
    try:
        q = quantity(values if cunit is None else values * cunit, unit, col, allow_nonfinite=True)
    except InputError as err:
        raise ArrayError(f"column '{col}' has unit {cunit}: give it in {unit}") from err
    if not allow_nan:
        bad = np.flatnonzero(~np.isfinite(q.value))
        if bad.size:
            i = bad[0]
            raise ArrayError(
                f"row {i + 1} ({names[i]}): {col} is NaN or missing: give a value in {unit}"
            )
    return q


def _plain(table, col):
    return _numbers(table, col, "")[0]


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


def _position_columns(table):
    cols = set(table.colnames)
    eq, ecl = {"ra", "dec"} & cols, {"elon", "elat"} & cols
    if eq and ecl:
        raise ArrayError("give either ra/dec or elon/elat columns, not both")
    if not eq and not ecl:
        raise ArrayError(
            "position columns are missing: give ra and dec (ICRS, deg or "
            "sexagesimal) or elon and elat (ecliptic, deg)"
        )
    pair = ("ra", "dec") if eq else ("elon", "elat")
    for c in pair:
        if c not in cols:
            raise ArrayError(
                f"column '{c}' is missing: give positions as ra/dec (ICRS) or "
                "elon/elat (ecliptic), in deg"
            )
    return pair


def _read_position(table, names):
    from astropy.coordinates import BarycentricMeanEcliptic, SkyCoord

    pair = _position_columns(table)
    read = angles_deg if pair[0] == "ra" else lonlat_deg
    try:
        lon, lat, unreadable = read(table[pair[0]], table[pair[1]])
    except InputError as err:
        raise ArrayError(f"columns {pair[0]}/{pair[1]}: {err}") from err
    bad = np.flatnonzero(unreadable)
    if bad.size:
        i = bad[0]
        raise ArrayError(
            f"row {i + 1} ({names[i]}): cannot read position {pair[0]}="
            f"{table[pair[0]][i]!r}, {pair[1]}={table[pair[1]][i]!r} (use deg or e.g. "
            "'18h55m12s' '-37d12m00s')"
        )
    bad = np.flatnonzero(~(np.isfinite(lon) & np.isfinite(lat)))
    if bad.size:
        i = bad[0]
        raise ArrayError(
            f"row {i + 1} ({names[i]}): position is NaN or missing: give {pair[0]} and {pair[1]}"
        )
    bad = np.flatnonzero(sky_out_of_range(lon, lat))
    if bad.size:
        i = bad[0]
        raise ArrayError(
            f"row {i + 1} ({names[i]}): position {pair[0]}={lon[i]:.6g} deg, "
            f"{pair[1]}={lat[i]:.6g} deg is out of range ({SKY_RANGE_TEXT}, "
            "read as longitude/latitude)"
        )
    if pair[0] == "elon":
        return SkyCoord(lon * u.deg, lat * u.deg, frame=BarycentricMeanEcliptic).icrs
    return SkyCoord(lon * u.deg, lat * u.deg, frame="icrs")
