"""The one input policy: units, plausible ranges and sky positions.

Every reader (command line, :class:`~ptaconstrain.binary.Host`, the pulsar list,
the galaxy catalogue, the HEALPix limit map) turns user values into numbers
through this module, so the same text means the same thing everywhere.

Quantities
    A bare number takes the field's documented default unit (``DEFAULT_UNITS``);
    a string with units (``"95 Mpc"``, ``"8 nHz"``) is parsed by astropy; a
    value of the wrong physical type is refused naming the field and the unit
    expected; NaN and infinities are refused.

Sky positions
    Numbers are degrees, always.  Strings are degrees too, unless they are
    sexagesimal, i.e. contain ``h``, ``:`` or inner spaces: then RA is in hours
    (``"12h30m49s"``, ``"12:30:49"``, ``"12 30 49"``) and Dec in degrees.  A
    typographic minus (U+2212) is read as a minus.  RA must lie in [0, 360) deg,
    Dec in [-90, 90] deg.

Plausibility
    A black-hole mass must lie in 1e3-1e13 solMass; a distance between 0.1 Mpc
    and the luminosity distance of z = 10.  Values outside are refused with the
    same message wherever they come from; a catalogue column whose values look
    like log10 masses or like kpc gets a hint (:func:`mass_column_hint`,
    :func:`distance_column_hint`).

Documented ranges (:func:`in_range`, the one range check)
    confidence of a limit in (0, 1); S/N threshold in (0, ``SNR_MAX``];
    mass-ratio index within ``Q_INDEX_RANGE``; a mass error up to
    ``MASS_ERR_DEX_MAX`` dex, a fractional (per-cent) error up to
    ``FRACTION_ERR_MAX``; observing spans up to ``SPAN_MAX``; TOA cadences of
    at least ``CADENCE_MIN``; red-noise amplitude up to ``RED_AMP_MAX`` and
    index within ``RED_GAMMA_RANGE``; orbital periods within ``PERIOD_RANGE``.
    The same limits hold on the command line, in file metadata and in table
    cells.

Resources (:func:`check_memory`)
    Before a large allocation the estimate is compared with the memory limit
    (``DEFAULT_MAX_MEMORY``, 4 GB, raised with ``--max-memory 16GB`` or the
    environment variable ``PTACONSTRAIN_MAX_MEMORY``); above it the work is
    refused with the estimate and the option that reduces it.
"""

import numpy as np
from astropy import units as u

from .errors import InputError

__all__ = [
    "DEFAULT_UNITS",
    "MASS_RANGE",
    "DISTANCE_MIN",
    "Z_LIMIT",
    "quantity",
    "positive",
    "check_mass",
    "check_distance",
    "mass_out_of_range",
    "distance_out_of_range",
    "mass_range_text",
    "distance_range_text",
    "mass_column_hint",
    "distance_column_hint",
    "angles_deg",
    "sky_out_of_range",
    "sky_coord",
    "coord_from",
    "SKY_RANGE_TEXT",
    "lonlat_deg",
    "check_redshift",
    "in_range",
    "out_of_range",
    "range_text",
    "SNR_MAX",
    "Q_INDEX_RANGE",
    "MASS_ERR_DEX_MAX",
    "FRACTION_ERR_MAX",
    "SPAN_MAX",
    "CADENCE_MIN",
    "RED_AMP_MAX",
    "RED_GAMMA_RANGE",
    "PERIOD_RANGE",
    "NAME_MAX",
    "check_name",
    "check_schema",
    "RANGES",
    "check_field",
    "DEFAULT_MAX_MEMORY",
    "ResourceError",
    "parse_bytes",
    "bytes_text",
    "memory_limit",
    "set_memory_limit",
    "check_memory",
    "ECCENTRICITY_MAX",
    "check_eccentricity",
]

#: field kind -> unit a bare number is read in
DEFAULT_UNITS = {
    "mass": u.Msun,
    "distance": u.Mpc,
    "time": u.yr,
    "frequency": u.Hz,
    "speed": u.km / u.s,
    "angle": u.deg,
}
#: plausible total black-hole masses [solMass]
MASS_RANGE = (1e3, 1e13)
#: nearest plausible host distance [Mpc]
DISTANCE_MIN = 0.1
#: farthest plausible host redshift
Z_LIMIT = 10.0
SKY_RANGE_TEXT = "need 0 <= RA < 360 deg and -90 <= Dec <= 90 deg"
#: largest S/N threshold accepted (detection thresholds are ~3-10; common practice)
SNR_MAX = 1e3
#: accepted power-law index of the mass-ratio distribution p(q) ~ q^index
Q_INDEX_RANGE = (-5.0, 5.0)
#: largest mass error accepted [dex]
MASS_ERR_DEX_MAX = 2.0
#: largest fractional error accepted (1 = 100 per cent)
FRACTION_ERR_MAX = 1.0
#: longest observing span accepted (pulsar timing began in 1967)
SPAN_MAX = 100 * u.yr
#: shortest interval between TOAs accepted
CADENCE_MIN = 1 * u.hour
#: largest red-noise amplitude A accepted (measured PTA pulsars: ~1e-15-1e-12)
RED_AMP_MAX = 1e-9
#: accepted red-noise spectral index gamma (P ~ f^-gamma)
RED_GAMMA_RANGE = (0.0, 10.0)
#: accepted orbital periods (1 hour to 1000 yr)
PERIOD_RANGE = (1 * u.hour, 1000 * u.yr)
#: longest host name accepted (it becomes part of file names)
NAME_MAX = 120
#: default memory limit [bytes]
DEFAULT_MAX_MEMORY = 4_000_000_000
_MINUS = "\u2212"


# ------------------------------------------------------------------ quantities
def _has_unit(value):
    if isinstance(value, u.Quantity):
        return value.unit != u.dimensionless_unscaled
    if isinstance(value, str):
        text = value.strip().lower().replace(_MINUS, "-")
        try:
            float(text)
            return False
        except ValueError:
            return True
    return False


def quantity(value, unit, field, *, allow_nonfinite=False):
    """``value`` as a Quantity in ``unit``; bare numbers are read in ``unit``.

    Parameters
    ----------
    value : Quantity, number, array or str
        A string such as ``"2e10 solMass"`` is parsed by astropy.
    unit : str or astropy unit
        The field's default unit (also the unit of the result).
    field : str
        Named in the error message.
    allow_nonfinite : bool
        Let NaN through (for optional, blank catalogue entries).

    Returns
    -------
    Quantity [unit]

    Raises
    ------
    InputError
        For unreadable text, the wrong physical type, or a non-finite value.

    Examples
    --------
    >>> quantity(95, "Mpc", "distance")
    <Quantity 95. Mpc>
    >>> quantity("8 nHz", "Hz", "frequency")
    <Quantity 8.e-09 Hz>
    """
    unit = u.Unit(unit)
    if isinstance(value, str):
        value = value.strip().replace(_MINUS, "-")
    try:
        q = u.Quantity(value)
    except (TypeError, ValueError) as err:
        raise InputError(
            f"{field}: cannot read {value!r} as a {unit.physical_type}; give a number "
            f"(read as {unit}) or a value with units, e.g. '1 {unit}'"
        ) from err
    if q.unit == u.dimensionless_unscaled and not _has_unit(value):
        q = q.value * unit
    try:
        q = q.to(unit)
    except u.UnitsError as err:
        raise InputError(
            f"{field}: {value!r} is not a {unit.physical_type}; give a number (read as "
            f"{unit}) or a value in units of {unit.physical_type}, e.g. '1 {unit}'"
        ) from err
    if not allow_nonfinite and not np.all(np.isfinite(q.value)):
        raise InputError(f"{field}: must be a finite number, got {value!r}")
    return q


def positive(q, field, *, allow_zero=False):
    """Refuse negative (and, unless ``allow_zero``, zero) values of ``q``.

    Parameters
    ----------
    q : Quantity or number
    field : str
    allow_zero : bool

    Returns
    -------
    The input, unchanged.

    Raises
    ------
    InputError
    """
    v = np.asarray(getattr(q, "value", q), dtype=float)
    if np.any(v < 0) or (not allow_zero and np.any(v == 0)):
        raise InputError(f"{field}: must be {'>= 0' if allow_zero else 'positive'}, got {q}")
    return q


# ---------------------------------------------------------------- plausibility
def mass_range_text():
    """The plausible-mass rule as a phrase, for messages and docs."""
    return f"{MASS_RANGE[0]:.0e}-{MASS_RANGE[1]:.0e} solMass".replace("e+0", "e").replace("e+", "e")


def distance_range_text(d_max_mpc=None):
    """The plausible-distance rule as a phrase, for messages and docs."""
    far = f"{d_max_mpc:.3g} Mpc (z = {Z_LIMIT:g})" if d_max_mpc else f"z = {Z_LIMIT:g}"
    return f"{DISTANCE_MIN:g} Mpc to {far}"


def mass_out_of_range(mass_msun):
    """Mask of masses (solMass, array) outside ``MASS_RANGE``; NaN is not flagged.

    Parameters
    ----------
    mass_msun : array_like

    Returns
    -------
    ndarray of bool
    """
    m = np.asarray(mass_msun, dtype=float)
    with np.errstate(invalid="ignore"):
        return (m < MASS_RANGE[0]) | (m > MASS_RANGE[1])


def _d_max(cosmology=None):
    from .cosmo import luminosity_distance_at

    return float(luminosity_distance_at(Z_LIMIT, cosmology).to_value(u.Mpc))


def distance_out_of_range(distance_mpc, cosmology=None):
    """Mask of luminosity distances (Mpc, array) outside the plausible range.

    Parameters
    ----------
    distance_mpc : array_like
    cosmology : astropy.cosmology.Cosmology, optional

    Returns
    -------
    ndarray of bool
    """
    d = np.asarray(distance_mpc, dtype=float)
    with np.errstate(invalid="ignore"):
        return (d < DISTANCE_MIN) | (d > _d_max(cosmology))


def _first_flagged(values, mask):
    """The first value (scalar or array) where ``mask`` is True, as a float."""
    return float(np.atleast_1d(values)[np.atleast_1d(mask)][0])


def _as_given(value, converted, unit):
    """'95 km (3.08e-18 Mpc)' for a value given in other units, else '95 Mpc'."""
    text = f"{converted:.3g} {unit}"
    if _has_unit(value) and np.ndim(getattr(value, "value", value)) == 0:
        return f"{str(value).strip()!r} ({text})"
    return text


def check_mass(mass, field="mass"):
    """A black-hole mass as a Quantity [solMass], refused outside ``MASS_RANGE``.

    Parameters
    ----------
    mass : Quantity, number (solMass) or str
    field : str

    Returns
    -------
    Quantity [solMass]

    Raises
    ------
    InputError
        Naming the value, the plausible range and the likely slip.

    Examples
    --------
    >>> check_mass("2e10 solMass")
    <Quantity 2.e+10 solMass>
    """
    q = quantity(mass, u.Msun, field)
    m = q.to_value(u.Msun)
    out = mass_out_of_range(m)
    if np.any(out):
        bad = _first_flagged(m, out)
        hint = f" (a log10 mass? give 10**{bad:g} = {10**bad:.3g})" if 3 <= bad <= 13 else ""
        raise InputError(
            f"{field}: {_as_given(mass, bad, 'solMass')} is outside the plausible "
            f"{mass_range_text()} for a massive black hole; bare numbers are solMass{hint}"
        )
    return q


def check_distance(distance, field="distance", cosmology=None):
    """A luminosity distance as a Quantity [Mpc], refused outside the plausible range.

    Parameters
    ----------
    distance : Quantity, number (Mpc) or str
    field : str
    cosmology : astropy.cosmology.Cosmology, optional
        For the distance of z = 10.

    Returns
    -------
    Quantity [Mpc]

    Raises
    ------
    InputError

    Examples
    --------
    >>> check_distance("95 Mpc")
    <Quantity 95. Mpc>
    """
    q = quantity(distance, u.Mpc, field)
    d = q.to_value(u.Mpc)
    out = distance_out_of_range(d, cosmology)
    if np.any(out):
        bad = _first_flagged(d, out)
        raise InputError(
            f"{field}: {_as_given(distance, bad, 'Mpc')} is outside the plausible "
            f"{distance_range_text(_d_max(cosmology))}; bare numbers are Mpc"
        )
    return q


def mass_column_hint(mass_msun):
    """A hint when a column read as solMass looks like log10(M / solMass), else ''.

    Parameters
    ----------
    mass_msun : array_like

    Returns
    -------
    str
    """
    m = np.asarray(mass_msun, dtype=float)
    m = m[np.isfinite(m)]
    if m.size and np.median(m) < MASS_RANGE[0] and np.all((m > 3) & (m < 13)):
        return (
            "; the column looks like log10(M/solMass): map it to the log_mass field instead of mass"
        )
    return ""


def distance_column_hint(distance_mpc):
    """A hint when a column read as Mpc looks like kpc, else ''.

    Parameters
    ----------
    distance_mpc : array_like

    Returns
    -------
    str
    """
    d = np.asarray(distance_mpc, dtype=float)
    d = d[np.isfinite(d) & (d > 0)]
    if d.size and np.median(d) > 3e3 and np.median(d) / 1e3 < 3e3:
        return (
            "; the column looks like kpc (median "
            f"{np.median(d):.3g} read as Mpc): set its unit to kpc in the column mapping "
            "(or to Mpc, if it really is Mpc)"
        )
    return ""


# ------------------------------------------------------------------ sky positions
def _column_unit(values, field):
    unit = getattr(values, "unit", None)
    if unit is None or unit == u.dimensionless_unscaled:
        return None
    unit = u.Unit(unit)
    if unit.physical_type != "angle":
        raise InputError(f"{field}: unit {unit} is not an angle; give degrees or sexagesimal text")
    return unit


def _angle_strings(text, is_ra, field):
    """Parse an array of stripped strings; NaN where blank, mask where unreadable."""
    from astropy.coordinates import Angle

    out = np.full(text.shape, np.nan)
    blank = np.isin(np.char.lower(text), ("", "nan", "--", "none", "null"))
    sexa = ~blank & (
        (np.char.find(text, "h") >= 0)
        | (np.char.find(text, "H") >= 0)
        | (np.char.find(text, ":") >= 0)
        | (np.char.find(text, " ") >= 0)
    )
    plain = ~blank & ~sexa
    bad = np.zeros(text.shape, dtype=bool)
    if plain.any():
        try:  # fast path: decimal degrees as text
            out[plain] = text[plain].astype(float)
        except ValueError:
            out[plain], bad[plain] = _parse_each(text[plain], u.deg)
    if sexa.any():
        unit = u.hourangle if is_ra else u.deg
        try:
            out[sexa] = Angle(text[sexa], unit=unit).deg
        except (ValueError, TypeError, u.UnitsError):
            out[sexa], bad[sexa] = _parse_each(text[sexa], unit)
    return out, bad


def _parse_each(text, unit):
    """Element-wise Angle parsing (the failure path only)."""
    from astropy.coordinates import Angle

    out = np.full(text.shape, np.nan)
    bad = np.zeros(text.shape, dtype=bool)
    for i, s in enumerate(text):
        try:  # a plain number ("1e-05" too, which Angle does not parse) is degrees
            out[i] = float(s)
            continue
        except ValueError:
            pass
        try:
            out[i] = Angle(s, unit=unit).deg
        except (ValueError, TypeError, u.UnitsError):
            bad[i] = True
    return out, bad


def _one_angle(values, is_ra, field):
    if isinstance(values, u.Quantity):
        _column_unit(values, field)  # refuses a unit that is not an angle
        deg = np.atleast_1d(
            values.to_value(u.deg) if values.unit != u.dimensionless_unscaled else values.value
        ).astype(float)
        return deg, np.zeros(deg.shape, dtype=bool)
    unit = _column_unit(values, field)
    data = np.ma.asarray(values)
    mask = np.ma.getmaskarray(data).ravel()
    raw = np.atleast_1d(np.ma.getdata(data)).ravel()
    if raw.dtype.kind in "biuf":
        deg = raw.astype(float)
        if unit is not None:
            deg = (deg * unit).to_value(u.deg)
        deg[mask] = np.nan
        return deg, np.zeros(deg.shape, dtype=bool)
    text = np.char.strip(np.char.replace(raw.astype(str), _MINUS, "-"))
    text[mask] = ""
    deg, bad = _angle_strings(text, is_ra, field)
    if unit is not None and unit != u.deg:
        plain = np.char.find(text, ":") < 0  # numbers in a column with an angle unit
        deg = np.where(plain, (deg * unit).to_value(u.deg), deg)
    return deg, bad


def angles_deg(ra, dec):
    """RA and Dec in degrees under the one sky-position rule (vectorised).

    Parameters
    ----------
    ra, dec : number, str, array, astropy Column (plain, masked, numeric, text or mixed)
        Numbers are degrees; strings are degrees unless sexagesimal (``h``,
        ``:`` or inner spaces), where RA is hours.  A column's angle unit is
        honoured.

    Returns
    -------
    ra_deg, dec_deg : ndarray (float)
        NaN where a value is blank, masked or unreadable.
    unreadable : ndarray (bool)
        True where text was given but cannot be read as an angle.

    Raises
    ------
    InputError
        If a column carries a unit that is not an angle.

    Examples
    --------
    >>> ra, dec, bad = angles_deg(["187.7", "12h30m49s"], ["12.4", "\u221205:00:00"])
    >>> [round(float(x), 4) for x in ra], [round(float(x), 4) for x in dec]
    ([187.7, 187.7042], [12.4, -5.0])
    """
    return _angle_pair(ra, dec, True, ("RA", "Dec"), ("RA values", "Dec values"))


def _angle_pair(lon, lat, lon_in_hours, fields, plural):
    """Both angles of a position in degrees, and where either was unreadable."""
    lon_deg, bad_lon = _one_angle(lon, lon_in_hours, fields[0])
    lat_deg, bad_lat = _one_angle(lat, False, fields[1])
    if lon_deg.shape != lat_deg.shape:
        raise InputError(f"sky position: {lon_deg.size} {plural[0]} but {lat_deg.size} {plural[1]}")
    return lon_deg, lat_deg, bad_lon | bad_lat


def sky_out_of_range(ra_deg, dec_deg):
    """Mask of finite positions outside RA [0, 360) or Dec [-90, 90] (degrees).

    Parameters
    ----------
    ra_deg, dec_deg : array_like

    Returns
    -------
    ndarray of bool
    """
    ra = np.asarray(ra_deg, dtype=float)
    dec = np.asarray(dec_deg, dtype=float)
    with np.errstate(invalid="ignore"):
        return ((ra < 0) | (ra >= 360)) | (np.abs(dec) > 90)


def sky_coord(ra, dec, field="sky position"):
    """ICRS SkyCoord from RA/Dec under the one rule, refusing any bad element.

    Parameters
    ----------
    ra, dec : see :func:`angles_deg`
    field : str
        Named in the message.

    Returns
    -------
    astropy.coordinates.SkyCoord
        Scalar for scalar input, else one-dimensional.

    Raises
    ------
    InputError

    Examples
    --------
    >>> c = sky_coord("12:30:00", "-5")
    >>> round(float(c.ra.deg), 6), round(float(c.dec.deg), 6)
    (187.5, -5.0)
    """
    from astropy.coordinates import SkyCoord

    scalar = np.ndim(ra) == 0 and np.ndim(dec) == 0
    ra_deg, dec_deg, bad = angles_deg(ra, dec)
    rows = np.flatnonzero(
        bad | ~np.isfinite(ra_deg) | ~np.isfinite(dec_deg) | sky_out_of_range(ra_deg, dec_deg)
    )
    if rows.size:
        i = rows[0]
        r = ra if scalar else np.atleast_1d(ra)[i]
        d = dec if scalar else np.atleast_1d(dec)[i]
        where = "" if scalar else f" (entry {i + 1})"
        if bad[i] or not (np.isfinite(ra_deg[i]) and np.isfinite(dec_deg[i])):
            raise InputError(
                f"{field}{where}: cannot read RA={r!r}, Dec={d!r}; give degrees or "
                "sexagesimal text such as '12h30m49s' '+12d23m28s'"
            )
        raise InputError(
            f"{field}{where}: RA={r!r}, Dec={d!r} gives RA {ra_deg[i]:.6g} deg, Dec "
            f"{dec_deg[i]:.6g} deg, out of range ({SKY_RANGE_TEXT}); numbers are degrees"
        )
    c = SkyCoord(ra_deg * u.deg, dec_deg * u.deg, frame="icrs")
    return c[0] if scalar else c


def coord_from(coord=None, ra=None, dec=None, field="sky position"):
    """A SkyCoord from ``coord`` or from ``ra``/``dec``; None when none is given.

    Parameters
    ----------
    coord : SkyCoord or str, optional
        A string holds RA and Dec separated by white space or a comma
        (``"187.7 12.4"``, ``"12h30m49s +12d23m28s"``, ``"12 30 49 +12 23 28"``),
        read under the same rule as ``ra``/``dec``.
    ra, dec : optional
        As in :func:`sky_coord`.
    field : str

    Returns
    -------
    SkyCoord or None

    Raises
    ------
    InputError
    """
    if coord is None and ra is None and dec is None:
        return None
    if coord is not None:
        if ra is not None or dec is not None:
            raise InputError(f"{field}: give a coordinate or RA and Dec, not both")
        from astropy.coordinates import SkyCoord

        if isinstance(coord, SkyCoord):
            icrs = coord.icrs
            return sky_coord(icrs.ra.deg, icrs.dec.deg, field)
        parts = str(coord).replace(",", " ").replace(_MINUS, "-").split()
        if len(parts) == 2:
            return sky_coord(parts[0], parts[1], field)
        if len(parts) == 6:
            return sky_coord(" ".join(parts[:3]), " ".join(parts[3:]), field)
        raise InputError(
            f"{field}: cannot read {coord!r}; give RA and Dec, e.g. "
            "'187.7 12.4' (deg) or '12h30m49s +12d23m28s'"
        )
    if ra is None or dec is None:
        raise InputError(f"{field}: give both RA and Dec, or neither")
    return sky_coord(ra, dec, field)


def lonlat_deg(lon, lat):
    """Longitude and latitude of a non-equatorial frame (ecliptic, galactic) in degrees.

    Like :func:`angles_deg`, but both angles are degrees, also when written
    sexagesimally (``"100:30:00"`` is 100.5 deg): only an equatorial RA is
    quoted in hours.

    Parameters
    ----------
    lon, lat : number, str, array or astropy Column

    Returns
    -------
    lon_deg, lat_deg : ndarray (float)
        NaN where blank, masked or unreadable.
    unreadable : ndarray (bool)

    Raises
    ------
    InputError
        If a column carries a unit that is not an angle.

    Examples
    --------
    >>> lon, lat, bad = lonlat_deg(["100:30:00", "20"], ["\u221210.5", "5"])
    >>> [float(x) for x in lon], [float(x) for x in lat]
    ([100.5, 20.0], [-10.5, 5.0])
    """
    return _angle_pair(lon, lat, False, ("longitude", "latitude"), ("longitudes", "latitudes"))


def check_redshift(redshift, field="redshift"):
    """A cosmological redshift, refused outside 0 <= z <= ``Z_LIMIT``.

    Parameters
    ----------
    redshift : number, array or str (dimensionless)
    field : str

    Returns
    -------
    float, or ndarray for array input

    Raises
    ------
    InputError
        For a non-number, a value with units (e.g. cz in km/s) or one out of range.

    Examples
    --------
    >>> check_redshift("0.05")
    0.05
    """
    try:
        z = quantity(redshift, u.dimensionless_unscaled, field).value
    except InputError as err:
        raise InputError(
            f"{field}: cannot read {redshift!r} as a redshift; give a finite "
            "plain number z (not cz in km/s)"
        ) from err
    out = (z < 0) | (z > Z_LIMIT)
    if np.any(out):
        bad = _first_flagged(z, out)
        raise InputError(
            f"{field}: {bad:g} is outside 0 <= z <= {Z_LIMIT:g}; give the "
            "cosmological redshift z (not cz in km/s)"
        )
    return float(z) if np.ndim(z) == 0 else z


#: largest orbital eccentricity accepted (the harmonic sum needs ~(1 - e^2)^(-3/2) terms)
ECCENTRICITY_MAX = 0.95


def check_eccentricity(eccentricity, field="eccentricity"):
    """An orbital eccentricity, refused outside 0 <= e <= ``ECCENTRICITY_MAX``.

    Parameters
    ----------
    eccentricity : number or str (dimensionless)
    field : str

    Returns
    -------
    float

    Raises
    ------
    InputError
        For a non-number, a value with units, an array or one out of range.

    Examples
    --------
    >>> check_eccentricity("0.5")
    0.5
    """
    try:
        e = quantity(eccentricity, u.dimensionless_unscaled, field).value
    except InputError as err:
        raise InputError(
            f"{field}: cannot read {eccentricity!r} as an eccentricity; give a "
            f"plain number in [0, {ECCENTRICITY_MAX:g}]"
        ) from err
    if np.ndim(e) != 0:
        raise InputError(f"{field}: give one number in [0, {ECCENTRICITY_MAX:g}], not an array")
    if not 0.0 <= e <= ECCENTRICITY_MAX:
        raise InputError(
            f"{field}: {float(e):g} is outside 0 <= e <= {ECCENTRICITY_MAX:g} "
            "(0 is a circular orbit; e near 1 needs thousands of harmonics)"
        )
    return float(e)


# ------------------------------------------------------------------ ranges
def range_text(lo, hi, lo_open=False, hi_open=False, unit=""):
    """'0 < x < 1' style text of a range (for messages).

    Examples
    --------
    >>> range_text(0, 1, True, True)
    '0 < x < 1'
    """
    unit = f" {unit}" if unit else ""
    return f"{lo:g}{unit} {'<' if lo_open else '<='} x {'<' if hi_open else '<='} {hi:g}{unit}"


def out_of_range(values, lo, hi, lo_open=False, hi_open=False):
    """Mask of values that are not finite or lie outside [lo, hi] (or the open bounds).

    Parameters
    ----------
    values : array_like of float
    lo, hi : float
    lo_open, hi_open : bool

    Returns
    -------
    ndarray of bool
    """
    v = np.asarray(values, dtype=float)
    with np.errstate(invalid="ignore"):
        low = (v <= lo) if lo_open else (v < lo)
        high = (v >= hi) if hi_open else (v > hi)
    return ~np.isfinite(v) | low | high


def in_range(value, field, lo, hi, *, lo_open=False, hi_open=False, unit=None, fix="", rows=None):
    """A number (or array) refused unless finite and within its documented range.

    The one range check: command-line options, file metadata and table cells
    all pass through it, so the same value gets the same answer everywhere.

    Parameters
    ----------
    value : number, str, array or Quantity
        A Quantity (or text with units) is converted to ``unit`` first.
    field : str
        Named in the message.
    lo, hi : float or Quantity
        The bounds (in ``unit`` if given).
    lo_open, hi_open : bool
        Exclude the bound itself.
    unit : str or astropy unit, optional
        The field's unit; bare numbers are read in it.
    fix : str
        What to do, appended to the message.
    rows : sequence of str, optional
        Labels of the elements (e.g. table rows), named for the first bad one.

    Returns
    -------
    float, ndarray or Quantity (as given, converted to ``unit``)

    Raises
    ------
    InputError
        One line naming the field, the value and the range.

    Examples
    --------
    >>> in_range(0.95, "confidence", 0, 1, lo_open=True, hi_open=True)
    0.95
    >>> in_range("2 d", "cadence", 1, 1e5, unit="hour")
    <Quantity 48. h>
    """
    if unit is not None:
        q = quantity(value, unit, field, allow_nonfinite=True)
        lo = u.Quantity(lo, unit).value
        hi = u.Quantity(hi, unit).value
        values, result, unit_text = q.value, q, str(u.Unit(unit))
    else:
        try:
            values = np.asarray(value, dtype=float)
        except (TypeError, ValueError):
            raise InputError(
                f"{field}: {value!r} is not a number; give a number in "
                f"{range_text(lo, hi, lo_open, hi_open)}"
                f"{'; ' + fix if fix else ''}"
            ) from None
        result = float(values) if values.ndim == 0 else values
        unit_text = ""
    bad = np.flatnonzero(np.atleast_1d(out_of_range(values, lo, hi, lo_open, hi_open)))
    if bad.size:
        v = float(np.atleast_1d(values)[bad[0]])
        where = f" (row {rows[bad[0]]})" if rows is not None else ""
        shown = f"{v:g}{' ' + unit_text if unit_text else ''}"
        raise InputError(
            f"{field}{where}: {shown} is outside "
            f"{range_text(lo, hi, lo_open, hi_open, unit_text)}"
            f"{'; ' + fix if fix else ''}"
        )
    return result


#: field -> (low, high, low open, high open, unit or None, fix): the documented ranges
RANGES = {
    "snr": (0.0, SNR_MAX, True, False, None, "a detection threshold is typically 3-10"),
    "confidence": (0.0, 1.0, True, True, None, "give the limit's confidence level, e.g. 0.95"),
    "q_index": (*Q_INDEX_RANGE, False, False, None, "p(q) ~ q^index; -1 is log-uniform, 0 uniform"),
    "mass_err_dex": (
        0.0,
        MASS_ERR_DEX_MAX,
        False,
        False,
        None,
        "give the mass error in dex, e.g. 0.3",
    ),
    "fraction_err": (
        0.0,
        FRACTION_ERR_MAX,
        False,
        False,
        None,
        "give the error as a fraction (per cent / 100), e.g. 0.1",
    ),
    "span": (0.0, SPAN_MAX.value, True, False, "yr", "give the observing span, e.g. 15 yr"),
    "cadence": (
        CADENCE_MIN.to_value(u.d),
        1e5,
        False,
        False,
        "d",
        "give the interval between TOAs, e.g. 14 d",
    ),
    "red_amp": (
        0.0,
        RED_AMP_MAX,
        False,
        False,
        None,
        "give the amplitude A (not log10 A), 0 for none",
    ),
    "red_gamma": (
        *RED_GAMMA_RANGE,
        False,
        False,
        None,
        "give the spectral index gamma, e.g. 13/3 = 4.33",
    ),
    "period": (
        PERIOD_RANGE[0].to_value(u.yr),
        PERIOD_RANGE[1].to_value(u.yr),
        False,
        False,
        "yr",
        "give orbital periods between 1 hour and 1000 yr",
    ),
}


def check_field(value, field, label=None, rows=None):
    """``value`` checked against the documented range of ``field`` (a key of ``RANGES``).

    Parameters
    ----------
    value : number, str, array or Quantity
    field : str
        Key of :data:`RANGES`.
    label : str, optional
        Named in the message (default ``field``), e.g. a column or option name.
    rows : sequence of str, optional
        Labels of the elements, for a table column.

    Returns
    -------
    float, ndarray or Quantity

    Raises
    ------
    InputError

    Examples
    --------
    >>> check_field("5", "snr")
    5.0
    """
    lo, hi, lo_open, hi_open, unit, fix = RANGES[field]
    return in_range(
        value,
        label or field,
        lo,
        hi,
        lo_open=lo_open,
        hi_open=hi_open,
        unit=unit,
        fix=fix,
        rows=rows,
    )


# ------------------------------------------------------------------ config schemas
_TYPE_WORDS = {
    str: "a string",
    float: "a number",
    int: "an integer",
    bool: "true or false",
    dict: "a table",
    list: "a list",
}


def _type_ok(value, kind):
    if kind is float:
        return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
            value, (bool, np.bool_)
        )
    if kind is int:
        return isinstance(value, (int, np.integer)) and not isinstance(value, (bool, np.bool_))
    return isinstance(value, kind)


def _expected(kind):
    if isinstance(kind, tuple):
        return " or ".join(_expected(k) for k in kind)
    if isinstance(kind, dict):
        return "a table"
    if isinstance(kind, list):
        return "a list of tables ([[...]])"
    return _TYPE_WORDS.get(kind, kind.__name__)


def _shown(value):
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def check_schema(data, schema, where, path=""):
    """Refuse a parsed configuration (TOML, file metadata) that does not fit ``schema``.

    The schema is a dict key -> expected type: ``str``, ``float`` (any number
    but a boolean), ``int``, ``bool``, a tuple of these, a nested dict (a
    table), or a one-element list holding a dict (a list of tables).  The key
    ``"*"`` gives the type of every key not named; without it, unknown keys
    are refused.

    Parameters
    ----------
    data : dict
    schema : dict
    where : str
        The file, named first in the message.
    path : str
        Key prefix of a nested table (internal).

    Raises
    ------
    InputError
        One line naming the file, the key and the expected type.

    Examples
    --------
    >>> check_schema({"columns": {"mass": "M"}}, {"columns": {"*": str}}, "map.toml")
    >>> check_schema({"columns": "M"}, {"columns": {"*": str}}, "map.toml")
    Traceback (most recent call last):
    ...
    ptaconstrain.errors.InputError: map.toml: key 'columns' must be a table, got 'M' (str)
    """
    if not isinstance(data, dict):
        raise InputError(
            f"{where}: {('key ' + repr(path)) if path else 'the file'} must be "
            f"a table, got {_shown(data)} ({type(data).__name__})"
        )
    known = [k for k in schema if k != "*"]
    for key, value in data.items():
        name = f"{path}.{key}" if path else str(key)
        if key in schema:
            kind = schema[key]
        elif "*" in schema:
            kind = schema["*"]
        else:
            raise InputError(
                f"{where}: unknown key {name!r}; expected "
                f"{', '.join(repr(k) for k in known) or 'none'}"
            )
        if kind is object:
            continue
        if isinstance(kind, dict):
            if not isinstance(value, dict):
                raise InputError(
                    f"{where}: key {name!r} must be a table, got "
                    f"{_shown(value)} ({type(value).__name__})"
                )
            check_schema(value, kind, where, name)
            continue
        if isinstance(kind, list):
            if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
                raise InputError(
                    f"{where}: key {name!r} must be {_expected(kind)}, got "
                    f"{_shown(value)} ({type(value).__name__})"
                )
            for i, item in enumerate(value):
                check_schema(item, kind[0], where, f"{name}[{i + 1}]")
            continue
        kinds = kind if isinstance(kind, tuple) else (kind,)
        if not any(_type_ok(value, k) for k in kinds):
            raise InputError(
                f"{where}: key {name!r} must be {_expected(kind)}, got "
                f"{_shown(value)} ({type(value).__name__})"
            )


def check_name(name, field="name"):
    """A host name refused when empty or longer than ``NAME_MAX`` characters.

    Examples
    --------
    >>> check_name(" Fictus A ")
    'Fictus A'
    """
    text = str(name).strip()
    if not text or len(text) > NAME_MAX:
        raise InputError(
            f"{field}: give a name of 1 to {NAME_MAX} characters on one line "
            f"(got {len(text)} characters); it becomes part of file names"
        )
    if not text.isprintable():
        bad = next(c for c in text if not c.isprintable())
        raise InputError(
            f"{field}: the name holds the control character {bad!r}; give a "
            "name of printable characters"
        )
    return text


# ------------------------------------------------------------------ resources
class ResourceError(InputError):
    """A computation would need more memory than the limit allows."""


_MEMORY_LIMIT = [None]
_BYTE_UNITS = {
    "": 1,
    "b": 1,
    "k": 1e3,
    "kb": 1e3,
    "m": 1e6,
    "mb": 1e6,
    "g": 1e9,
    "gb": 1e9,
    "t": 1e12,
    "tb": 1e12,
    "kib": 1024,
    "mib": 1024**2,
    "gib": 1024**3,
    "tib": 1024**4,
}


def parse_bytes(text, field="max-memory"):
    """A memory size such as ``"16GB"``, ``"500 MB"`` or ``"2GiB"`` in bytes.

    Examples
    --------
    >>> parse_bytes("16GB"), parse_bytes("2 GiB")
    (16000000000, 2147483648)
    """
    import re

    m = re.fullmatch(r"\s*([0-9.]+(?:e[+-]?\d+)?)\s*([a-z]*)\s*", str(text).lower())
    if m is None or m.group(2) not in _BYTE_UNITS:
        raise InputError(
            f"{field}: cannot read {text!r} as a memory size; write e.g. 16GB or 500MB"
        )
    value = float(m.group(1)) * _BYTE_UNITS[m.group(2)]
    if not np.isfinite(value) or value < 1e6:
        raise InputError(f"{field}: {text!r} is below 1 MB; write e.g. 16GB")
    return int(value)


def bytes_text(n):
    """'12.3 GB' (decimal units) for a byte count."""
    for unit, size in (("TB", 1e12), ("GB", 1e9), ("MB", 1e6)):
        if n >= size:
            return f"{n / size:.3g} {unit}"
    return f"{n / 1e3:.3g} kB"


def set_memory_limit(limit):
    """Set the memory limit (bytes, or text such as ``"16GB"``; None: the default)."""
    _MEMORY_LIMIT[0] = (
        None if limit is None else (parse_bytes(limit) if isinstance(limit, str) else int(limit))
    )


def memory_limit():
    """The memory limit in bytes: set, else ``PTACONSTRAIN_MAX_MEMORY``, else the default."""
    import os

    if _MEMORY_LIMIT[0] is not None:
        return _MEMORY_LIMIT[0]
    env = os.environ.get("PTACONSTRAIN_MAX_MEMORY")
    return parse_bytes(env, "PTACONSTRAIN_MAX_MEMORY") if env else DEFAULT_MAX_MEMORY


def check_memory(n_bytes, what, reduce):
    """Refuse a computation whose memory estimate exceeds :func:`memory_limit`.

    Parameters
    ----------
    n_bytes : float
        The estimate.
    what : str
        What needs it (e.g. "the probability map (1e+10 samples x 300 periods)").
    reduce : str
        The option that reduces it (e.g. "lower --samples").

    Raises
    ------
    ResourceError
    """
    limit = memory_limit()
    if not n_bytes <= limit:
        raise ResourceError(
            f"{what} needs about {bytes_text(n_bytes)} of memory, above the "
            f"limit of {bytes_text(limit)}: {reduce}, or raise the limit "
            "with --max-memory (e.g. --max-memory 16GB)"
        )
