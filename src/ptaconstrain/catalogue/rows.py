"""Catalogue rows: reading each field under the one input policy, and bad rows.

:func:`prepare_chunk` turns a piece of a catalogue into per-galaxy arrays,
vectorised over rows, in small steps: names, sky positions, distance and
redshift, a measured mass, masses from scaling relations.

Policy (:mod:`ptaconstrain._inputs`, the same as for single values):

* positions: numbers are degrees; text is degrees unless sexagesimal (``h``,
  ``:`` or inner spaces), where RA is hours; each column on its own, so a
  numeric RA beside a sexagesimal Dec stays in degrees.  Unreadable text,
  missing and out-of-range positions are separate reasons;
* distances: luminosity distance in 0.1 Mpc .. D_L(z = 10); a row with a
  valid distance uses it, otherwise its redshift (0 < z <= 10) gives D_L in
  the chosen cosmology (astropy's default unless given); the other of the two
  follows;
* masses: a measured total mass (``mass`` in solMass, or ``log_mass``) must
  lie in 1e3-1e13 solMass.  A column that looks like log10 masses, or a bare
  distance column that looks like kpc, gets a hint in the reason;
* otherwise the first relation (in the order given) whose predictor the row
  has; its intrinsic scatter is the mass error, with the predictor's error
  (``<predictor>_err``) added in quadrature.

A measured mass's error is ``mass_err_dex``, or ``mass_err`` (solMass) as
err / (M ln 10); a missing error is taken as 0 dex and counted in the notes.
``mass_distance`` (optional) is the distance the mass was derived at; the
mass is rescaled linearly to the adopted distance (dynamical masses scale as
D).  Rows that cannot be used are collected with a reason (:class:`Rejections`):
with ``on_bad="error"`` the first raises, with ``on_bad="skip"`` they are
dropped and counted.  Nothing is dropped silently.
"""

import numpy as np
from astropy import units as u

from .. import _inputs
from ..errors import InputError
from .columns import FIELDS, CatalogError

__all__ = ["Rejections", "column_values", "prepare_chunk"]

_SEXAGESIMAL_HINT = "give degrees or sexagesimal text such as '12h30m49s' '+12d23m28s'"


class Rejections:
    """Rows that could not be used, each with a reason, plus counted notes.

    Attributes
    ----------
    notes : dict
        reason -> count, for rows kept with an assumption (e.g. a measured
        mass without an error).

    Examples
    --------
    >>> import numpy as np
    >>> rejected = Rejections()
    >>> rejected.add(np.array([3, 7]), np.array(["Invented 4", "Invented 8"]), "mass is NaN")
    >>> rejected.total, rejected.counts
    (2, {'mass is NaN': 2})
    >>> rejected.table()["row"].tolist()      # 1-based data rows
    [4, 8]
    """

    def __init__(self):
        self._rows, self._names, self._reasons, self._values = [], [], [], []
        self.notes = {}

    def add(self, rows, names, reason, values=None):
        """Record rows (0-based indices) rejected for ``reason``.

        Parameters
        ----------
        rows : array of int
        names : array of str
        reason : str
            One phrase, the same for every row it applies to (rows are counted by it).
        values : array of str, optional
            The offending value of each row (e.g. ``"mass = 9.3 solMass"``).
        """
        rows = np.asarray(rows, dtype=np.int64)
        if rows.size:
            self._rows.append(rows)
            self._names.append(np.asarray(names, dtype=str))
            self._reasons.append(np.full(rows.size, reason, dtype=object))
            self._values.append(
                np.full(rows.size, "", dtype=object)
                if values is None
                else np.asarray(values, dtype=object)
            )

    def extend(self, other, offset=0):
        """Add every rejection and note of ``other``, its rows shifted by ``offset``.

        Parameters
        ----------
        other : Rejections
            E.g. one partition's, with rows counted from the partition's start.
        offset : int
            Catalogue row of ``other``'s row 0.
        """
        for rows, names, reasons, values in zip(
            other._rows, other._names, other._reasons, other._values, strict=True
        ):
            self._rows.append(rows + int(offset))
            self._names.append(names)
            self._reasons.append(reasons)
            self._values.append(values)
        for reason, count in other.notes.items():
            self.note(reason, count)

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
        """Raise on the first rejected row when ``on_bad == "error"``.

        Raises
        ------
        CatalogError
            One line naming the row, the galaxy, the value, the reason and the fix.
        """
        if on_bad not in ("error", "skip"):
            raise InputError(f"on_bad: must be 'error' or 'skip', got {on_bad!r}")
        if on_bad == "error" and self._rows:
            rows = np.concatenate(self._rows)
            i = int(np.argmin(rows))
            name = str(np.concatenate(self._names)[i])
            value = str(np.concatenate(self._values)[i])
            reason = np.concatenate(self._reasons)[i]
            raise CatalogError(
                f"catalogue row {rows[i] + 1} ({name!r}){', ' + value if value else ''}: "
                f"{reason}; fix it, or skip and count such rows with --on-bad skip"
            )

    def table(self):
        """Rejected rows as a Table (row: 1-based data row, name, value, reason), by row."""
        from astropy.table import Table

        if not self._rows:
            return Table(
                {
                    "row": np.zeros(0, np.int64),
                    "name": np.zeros(0, "U1"),
                    "value": np.zeros(0, "U1"),
                    "reason": np.zeros(0, "U1"),
                }
            )
        rows = np.concatenate(self._rows)
        order = np.argsort(rows, kind="stable")
        return Table(
            {
                "row": rows[order] + 1,
                "name": np.concatenate(self._names)[order],
                "value": np.concatenate(self._values)[order].astype(str),
                "reason": np.concatenate(self._reasons)[order].astype(str),
            }
        )

    def summary(self):
        """Lines 'N rows skipped: reason' and 'N rows: note' (empty when clean)."""
        lines = [f"{n} row{'s' if n != 1 else ''} skipped: {r}" for r, n in self.counts.items()]
        lines += [f"{n} row{'s' if n != 1 else ''}: {r}" for r, n in self.notes.items()]
        return lines

    def __repr__(self):
        return f"Rejections({self.total} rows rejected, {len(self.notes)} notes)"


def column_values(table, colmap, resolved, field):
    """Field values as floats in the field's default unit, or None when absent.

    A column with a unit (in the file or the mapping) is converted under
    :func:`ptaconstrain._inputs.quantity`'s rule; blank or masked entries are NaN.

    Parameters
    ----------
    table : astropy.table.Table
    colmap : ColumnMap
    resolved : dict
        field -> column, from :meth:`ColumnMap.resolve`.
    field : str

    Returns
    -------
    ndarray (float) or None

    Raises
    ------
    CatalogError
        For a non-numeric column, or a unit of the wrong physical type.
    """
    if field not in resolved:
        return None
    col = resolved[field]
    column = table[col]
    if isinstance(column, u.Quantity):
        data = np.array(column.value, dtype=float)
    else:
        try:
            data = np.ma.filled(np.ma.asarray(column).astype(float), np.nan)
        except (TypeError, ValueError) as err:
            raise CatalogError(
                f"catalogue column {col!r} ({field}) is not numeric: map a numeric column"
            ) from err
    target = FIELDS[field][0]
    unit = colmap.unit(field, column)
    if target is None or unit is None or target == "mag" or unit == u.Unit(target):
        return data
    try:  # the one unit rule: the column's unit must be of the field's physical type
        factor = _inputs.quantity(
            f"1 {unit.to_string()}", target, f"catalogue column {col!r} ({field})"
        ).value
    except InputError as err:
        raise CatalogError(str(err)) from err
    return data * factor


class _Rows:
    """The bad-row mask of one chunk, and how rows join it (one place for reasons)."""

    def __init__(self, rows, names, rejections):
        self.rows, self.names, self.rejections = rows, names, rejections
        self.bad = np.zeros(rows.size, dtype=bool)

    def reject(self, mask, reason, shown=None):
        """Add the rows of ``mask`` not yet bad; ``shown(mask)`` gives their values as text."""
        new = mask & ~self.bad
        if new.any():
            vals = None if shown is None else shown(new)
            self.rejections.add(self.rows[new], self.names[new], reason, vals)
            self.bad |= new


def _describe(label, values, unit=""):
    """A function giving 'label = value unit' for the rows of a mask (formatted lazily)."""

    def shown(mask):
        text = np.char.mod("%.4g", np.asarray(values, dtype=float)[mask])
        return np.char.add(f"{label} = ", np.char.add(text, f" {unit}".rstrip()))

    return shown


def _names(table, resolved):
    col = np.ma.asarray(table[resolved["name"]]).astype(str)
    return np.char.strip(np.ma.filled(col, ""))


def _sky(table, resolved, state):
    ra_col, dec_col = table[resolved["ra"]], table[resolved["dec"]]
    try:
        ra, dec, unreadable = _inputs.angles_deg(ra_col, dec_col)
    except InputError as err:
        raise CatalogError(f"catalogue {err}") from err

    def shown(mask):
        ra_text = np.asarray(ra_col).astype(str)[mask]
        dec_text = np.asarray(dec_col).astype(str)[mask]
        return np.char.add(np.char.add("RA = ", ra_text), np.char.add(", Dec = ", dec_text))

    state.reject(unreadable, f"sky position unreadable: {_SEXAGESIMAL_HINT}", shown)
    state.reject(~np.isfinite(ra) | ~np.isfinite(dec), "sky position missing (blank or NaN)", shown)
    state.reject(
        _inputs.sky_out_of_range(ra, dec),
        f"sky position out of range ({_inputs.SKY_RANGE_TEXT}); numbers are degrees",
        shown,
    )
    return ra, dec


def _distance(table, colmap, resolved, dz, state):
    n = state.rows.size
    dist = column_values(table, colmap, resolved, "distance")
    zcol = column_values(table, colmap, resolved, "redshift")
    d = np.full(n, np.nan) if dist is None else dist
    z = np.full(n, np.nan) if zcol is None else zcol
    d_max = float(dz.distance(_inputs.Z_LIMIT))
    plausible = f"outside the plausible {_inputs.distance_range_text(d_max)}"
    with np.errstate(invalid="ignore"):
        state.reject(
            ~np.isnan(d) & ~((d > 0) & (d < np.inf)),
            "impossible distance (must be positive and finite)",
            _describe("distance", d, "Mpc"),
        )
        have_d, have_z = np.isfinite(d) & (d > 0), np.isfinite(z)
        hint = ""
        if dist is not None and not colmap.declared("distance", table[resolved["distance"]]):
            hint = _inputs.distance_column_hint(d[have_d & ~state.bad])
        if hint:  # a bare column that looks like kpc: none of its values can be trusted
            state.reject(
                have_d,
                f"distance is not plausible in Mpc (bare numbers are Mpc; "
                f"plausible: {_inputs.distance_range_text(d_max)}){hint}",
                _describe("distance", d, "Mpc"),
            )
        state.reject(
            have_d & _inputs.distance_out_of_range(d, dz.cosmology),
            f"distance is {plausible}; bare numbers are Mpc",
            _describe("distance", d, "Mpc"),
        )
        state.reject(
            have_z & ((z < 0) | (z > _inputs.Z_LIMIT) | (~have_d & (z == 0))),
            f"redshift is outside the plausible 0 < z <= {_inputs.Z_LIMIT:g}",
            _describe("redshift", z),
        )
        state.reject(~have_d & ~have_z, "no distance or redshift (blank or NaN)")
        use_z = ~have_d & have_z & ~state.bad
        d = np.where(use_z, dz.distance(np.where(use_z, z, 1.0)), d)
        state.reject(
            use_z & _inputs.distance_out_of_range(d, dz.cosmology),
            f"distance from the redshift is {plausible}",
            _describe("redshift", z),
        )
        z = np.where(have_d & ~have_z & ~state.bad, dz.redshift(np.where(have_d, d, 1.0)), z)
    return d, z


def _measured_mass(table, colmap, resolved, d, state):
    """log10 M and its error (dex) from a measured mass; NaN where there is none."""
    n = state.rows.size
    m = column_values(table, colmap, resolved, "mass")
    lm = column_values(table, colmap, resolved, "log_mass")
    if m is None and lm is None:
        return None, None
    plausible = f"outside the plausible {_inputs.mass_range_text()} for a massive black hole"
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        mm = np.full(n, np.nan) if m is None else m
        state.reject(
            ~np.isnan(mm) & ~((mm > 0) & (mm < np.inf)),
            "impossible mass (must be positive and finite)",
            _describe("mass", mm, "solMass"),
        )
        state.reject(
            _inputs.mass_out_of_range(mm),
            f"mass is {plausible}; bare numbers are solMass{_inputs.mass_column_hint(mm)}",
            _describe("mass", mm, "solMass"),
        )
        meas = np.where(np.isfinite(mm) & (mm > 0), np.log10(mm), np.nan)
        if lm is not None:
            state.reject(
                np.isinf(lm), "impossible log_mass (not finite)", _describe("log_mass", lm)
            )
            use_lm = np.isnan(meas) & np.isfinite(lm)
            state.reject(
                use_lm & _inputs.mass_out_of_range(10.0**lm),
                f"log_mass gives a mass {plausible}; log_mass is log10(M/solMass)",
                _describe("log_mass", lm),
            )
            meas = np.where(np.isnan(meas), lm, meas)
        err = np.full(n, np.nan)
        edex = column_values(table, colmap, resolved, "mass_err_dex")
        elin = column_values(table, colmap, resolved, "mass_err")
        if edex is not None:
            state.reject(edex < 0, "negative mass_err_dex", _describe("mass_err_dex", edex))
            err = np.where(edex >= 0, edex, np.nan)
        if elin is not None:
            state.reject(elin < 0, "negative mass_err", _describe("mass_err", elin, "solMass"))
            frac = elin / (10.0**meas * np.log(10.0))
            err = np.where(np.isnan(err) & (elin >= 0), frac, err)
        dref = column_values(table, colmap, resolved, "mass_distance")
        if dref is not None:
            state.reject(
                ~np.isnan(dref) & ~(dref > 0),
                "impossible mass_distance (must be > 0)",
                _describe("mass_distance", dref, "Mpc"),
            )
            meas = meas + np.where(dref > 0, np.log10(d / dref), 0.0)
    return meas, err


def _relation_masses(table, colmap, resolved, relations, log_m, sig, source, inputs, state):
    """Fill rows without a mass from the first relation whose predictor they have."""
    noted = set()
    for rel in relations:  # a loop over the few relations, vectorised over rows
        x = column_values(table, colmap, resolved, rel.predictor)
        if x is None:
            continue
        inputs[rel.predictor] = x
        free = np.isnan(log_m) & ~state.bad
        est = rel.log_mass(x)
        if rel.form == "power_law" and rel.predictor not in noted:
            noted.add(rel.predictor)
            with np.errstate(invalid="ignore"):
                state.rejections.note(
                    f"{rel.predictor} <= 0 treated as missing", np.count_nonzero(free & (x <= 0))
                )
        use = free & np.isfinite(est)
        s = np.full(log_m.size, rel.scatter_dex)
        xerr = column_values(table, colmap, resolved, rel.predictor + "_err")
        if xerr is not None:
            inputs[rel.predictor + "_err"] = xerr
            with np.errstate(invalid="ignore"):
                state.reject(
                    use & (xerr < 0),
                    f"negative {rel.predictor}_err",
                    _describe(rel.predictor + "_err", xerr),
                )
                ok = xerr >= 0
            prop = np.where(ok, rel.log_mass_error(x, np.where(ok, xerr, 0)), 0)
            s = np.hypot(s, np.nan_to_num(prop))
            use &= ~state.bad
        log_m[use] = est[use]
        sig[use] = s[use]
        source[use] = rel.name


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
    dz : ptaconstrain.cosmo.DistanceRedshift
    rejections : Rejections
        Bad rows are added here (and dropped from the result).

    Returns
    -------
    dict of ndarray
        ``row`` (0-based), ``name``, ``ra``, ``dec`` (deg), ``distance`` (Mpc),
        ``redshift``, ``log_mass``, ``log_mass_sigma`` (dex), ``mass_source``,
        and every numeric input field present (in its default unit).

    Examples
    --------
    >>> from astropy.table import Table
    >>> from ptaconstrain.catalogue import ColumnMap, select_relations
    >>> from ptaconstrain.cosmo import DistanceRedshift
    >>> table = Table({"name": ["Invented 1", "Invented 2"], "ra": [10.0, 20.0],
    ...                "dec": [5.0, -5.0], "distance": [100.0, -3.0], "mass": [2e10, 1e10]})
    >>> colmap, rejected = ColumnMap(), Rejections()
    >>> rows = prepare_chunk(table, colmap, colmap.resolve(table.colnames),
    ...                      select_relations(), 0, DistanceRedshift(), rejected)
    >>> rows["name"].tolist(), rejected.total     # the negative distance is rejected
    (['Invented 1'], 1)
    """
    n = len(table)
    names = _names(table, resolved)
    state = _Rows(start_row + np.arange(n), names, rejections)
    state.reject(names == "", "name is missing")
    ra, dec = _sky(table, resolved, state)
    d, z = _distance(table, colmap, resolved, dz, state)

    log_m, sig = np.full(n, np.nan), np.full(n, np.nan)
    source = np.full(n, "", dtype=object)
    inputs = {}
    meas, err = _measured_mass(table, colmap, resolved, d, state)
    if meas is not None:
        have_m = np.isfinite(meas) & ~state.bad
        rejections.note(
            "measured mass without an error: 0 dex assumed",
            np.count_nonzero(have_m & np.isnan(err)),
        )
        log_m[have_m] = meas[have_m]
        sig[have_m] = np.nan_to_num(err[have_m], nan=0.0)
        source[have_m] = "measured"
        with np.errstate(over="ignore"):
            inputs["mass_measured"] = np.where(np.isfinite(meas), 10.0**meas, np.nan)
        inputs["mass_err_dex"] = err
    _relation_masses(table, colmap, resolved, relations, log_m, sig, source, inputs, state)
    state.reject(
        np.isnan(log_m),
        "no usable mass (no measured mass and no predictor for the chosen relations)",
    )

    keep = ~state.bad
    out = {
        "row": state.rows[keep],
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
