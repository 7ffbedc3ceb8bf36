"""Rank the galaxies of a catalogue as continuous-wave targets.

Per galaxy, against a sensitivity (upper limit: "excluded"; noise budget:
"detectable"):

* ``f_best`` -- the most sensitive frequency: the tabulated frequency that
  minimises h0_threshold(f) / f^(2/3).  Since h0 = eta S f^(2/3)
  (:func:`ptaconstrain.binary.waveform.strain_prefactor`), this is where any binary
  of the galaxy is best constrained, whatever its mass or distance; it depends
  on the galaxy only through its sky position (for sky-dependent sensitivity).
* ``h0_equal_mass`` -- h0 of an equal-mass (q = 1) binary of the median total
  mass at f_best, and ``h0_ratio`` = h0_equal_mass / h0_threshold(f_best).
* ``min_mass_ratio`` -- the smallest mass ratio excluded (detectable) at
  f_best, the closed-form inverse of eta at eta_min = h0_threshold / (S
  f^(2/3)) (:func:`ptaconstrain.binary.waveform.mass_ratio_from_eta`); NaN when
  not even q = 1 is.
* ``prob_equal_mass`` -- the probability, over the log-normal mass
  uncertainty, that the q = 1 binary at f_best is excluded (detectable).
* ``expected_number`` -- expected number of excluded (detectable) binaries
  under the population model of :mod:`ptaconstrain.catalogue.population`, marginalised
  over the mass scatter.

The strain metrics are formal at f_best even when f_best > f_ISCO (flagged
``f_best_above_isco``); the expected number respects f_ISCO.

Sky-dependent sensitivity: an object with ``curve_at(coord)`` (a pulsar array,
a HEALPix limit map) is used as follows.  If it also has a vectorised
``h0_threshold_at(coords, frequency, snr=, span=)`` returning an array of
shape (n_coords, n_frequency), that is called once per chunk.  Otherwise the
galaxies are grouped by HEALPix pixel:

* a HEALPix limit map (``maps``, ``nside``, ``frame`` as in
  :class:`ptaconstrain.sensitivity.limit_map.LimitMap`) is read at each galaxy's own
  pixel, found in the map's frame: exact, since the map is constant over a
  pixel;
* an object with ``h0_threshold_map(frequency, nside=, snr=)`` (a pulsar
  array; shape (n_frequency, 12 nside^2), RING, ICRS) gives every pixel at
  once, at ``sky_nside`` (default 64); a galaxy takes the value at its pixel
  centre, which for the demo array is within 0.7% of ``curve_at`` at the
  galaxy itself at nside 64 (3.5% at nside 16; tests/test_rank.py);
* otherwise ``curve_at`` is called once per occupied pixel centre (nside
  ``sky_nside``, default 16), at most 12 nside^2 calls in all, cached across
  chunks.

Positions are ICRS.  ``sky="averaged"`` uses ``curve_at(None)`` (the
sky-averaged curve) for every galaxy.  The band edges are the frequencies of
``curve_at(None)``.
"""

import numpy as np
from astropy import units as u

from ..binary import waveform as wf
from ..sensitivity.curve import FromCurve
from .population import PopulationModel, _sky_index, expected_number
from .reader import (
    FIELDS,
    CatalogError,
    CatalogReader,
    ColumnMap,
    DistanceRedshift,
    Rejections,
    duplicate_mask,
    load_column_map,
    prepare_chunk,
)
from .relations import select_relations

__all__ = [
    "METRICS",
    "most_sensitive_frequency",
    "galaxy_metrics",
    "ThresholdLookup",
    "Ranking",
    "rank_catalog",
]

#: metric -> (sort descending?, description with {verb})
METRICS = {
    "expected_number": (True, "expected number of {verb} binaries (population model)"),
    "h0_ratio": (True, "h0 of a q = 1 binary / h0 threshold, at f_best"),
    "prob_equal_mass": (True, "probability that a q = 1 binary at f_best is {verb}"),
    "min_mass_ratio": (False, "smallest mass ratio {verb} at f_best"),
}


def most_sensitive_frequency(frequency, h0_threshold):
    """Index of the frequency minimising h0_threshold / f^(2/3) (the most sensitive one).

    Parameters
    ----------
    frequency : Quantity [frequency] (nf,)
    h0_threshold : array (nf,) or (n, nf)
        NaN entries are ignored.

    Returns
    -------
    ndarray of int, shape () or (n,); -1 where every entry is NaN.
    """
    g = np.asarray(h0_threshold, dtype=float) / frequency.to_value(u.Hz) ** (2.0 / 3.0)
    empty = np.all(np.isnan(g), axis=-1)
    idx = np.argmin(np.where(np.isnan(g), np.inf, g), axis=-1)
    return np.where(empty, -1, idx)


def galaxy_metrics(log_mass, log_mass_sigma, distance, redshift, frequency, h0_threshold,
                   population=None, n_nodes=16, sky_index=None):
    """All per-galaxy metrics, vectorised over galaxies.

    Parameters
    ----------
    log_mass : array (n,)
        Median log10(M / solMass), M the total black-hole mass.
    log_mass_sigma : array (n,)
        1 sigma of log10 M (dex).
    distance : Quantity [length] (n,)
        Luminosity distance.
    redshift : array (n,)
    frequency : Quantity [frequency] (nf,)
        Tabulated frequencies of the sensitivity (band edges).
    h0_threshold : array (nf,) or (G, nf)
        Threshold strain: one curve, or G sky-dependent curves.
    population : PopulationModel, optional
    n_nodes : int
        Quadrature nodes over the mass scatter.
    sky_index : array of int (n,), optional
        Row of ``h0_threshold`` for each galaxy (default: the only row, or
        row i for galaxy i when G = n).

    Returns
    -------
    dict
        ``f_best`` (Quantity Hz), ``h0_threshold_best``, ``h0_equal_mass``,
        ``h0_ratio``, ``min_mass_ratio``, ``prob_equal_mass``,
        ``expected_number`` (ndarrays), ``isco_frequency`` (Quantity Hz),
        ``f_best_above_isco`` (bool).
    """
    from scipy.special import ndtr

    population = population or PopulationModel()
    mu = np.atleast_1d(np.asarray(log_mass, dtype=float))
    n = mu.size
    sig = np.broadcast_to(np.asarray(log_mass_sigma, dtype=float), (n,))
    dist = np.broadcast_to(u.Quantity(distance, u.Mpc), (n,), subok=True)
    z = np.broadcast_to(np.asarray(redshift, dtype=float), (n,))
    thr = np.asarray(h0_threshold, dtype=float)
    f = frequency.to(u.Hz)

    thr2 = thr[None, :] if thr.ndim == 1 else thr
    sky = _sky_index(sky_index, thr2.shape[0], n)
    idx_b = most_sensitive_frequency(f, thr2)[sky]
    ok = idx_b >= 0
    safe = np.where(ok, idx_b, 0)
    thr_best = np.where(ok, thr2[sky, safe], np.nan)
    f_best = np.where(ok, f.value[safe], np.nan) * u.Hz

    mass = 10.0**mu * u.Msun
    s_med = wf.strain_prefactor(mass, dist, z).to_value(u.Hz ** (-2.0 / 3.0))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        h0_q1 = 0.25 * s_med * f_best.value ** (2.0 / 3.0)
        ratio = h0_q1 / thr_best
        eta_min = thr_best / (s_med * f_best.value ** (2.0 / 3.0))
        q_min = np.where(eta_min <= 0.25, wf.mass_ratio_from_eta(eta_min), np.nan)
        # log S is normal with sd (5/3) sigma: P(S/4 > g_best) in closed form
        margin = np.log10(ratio)
        spread = (5.0 / 3.0) * sig
        prob = np.where(spread > 0, ndtr(margin / np.where(spread > 0, spread, 1.0)),
                        (margin > 0).astype(float))
        prob = np.where(np.isnan(margin), np.nan, prob)
    f_isco = wf.isco_frequency(mass, z)
    n_exp = expected_number(mu, sig, dist, z, f, thr2, population, n_nodes=n_nodes,
                            sky_index=sky)
    return {
        "f_best": f_best,
        "h0_threshold_best": thr_best,
        "h0_equal_mass": h0_q1,
        "h0_ratio": ratio,
        "min_mass_ratio": q_min,
        "prob_equal_mass": prob,
        "expected_number": n_exp,
        "isco_frequency": f_isco,
        "f_best_above_isco": np.asarray(f_best > f_isco),
    }


class ThresholdLookup(FromCurve):
    """Adaptor giving h0 thresholds at galaxy positions from a curve or a sky object.

    Parameters
    ----------
    sensitivity : StrainCurve, or an object with ``curve_at(coord)``
    snr : float
        S/N threshold (noise budgets).
    span : Quantity [time], optional
        Observing span (noise budgets); default the curve's.
    sky : {"auto", "averaged"}
        "averaged" ignores positions (uses ``curve_at(None)``).
    sky_nside : int, optional
        HEALPix nside for grouping when the object has no ``nside`` and no
        ``h0_threshold_at``; default 64 for an object with
        ``h0_threshold_map`` (one vectorised call), else 16 (one
        ``curve_at`` call per occupied pixel).

    Attributes
    ----------
    curve : StrainCurve
        The sky-averaged (reference) curve; its frequencies are the band edges.
    mode : str
        "curve", "averaged", "vectorised" or "healpix nside=N".
    """

    def __init__(self, sensitivity, snr=5.0, span=None, sky="auto", sky_nside=None):
        if sky not in ("auto", "averaged"):
            raise ValueError(f"sky: must be 'auto' or 'averaged', got {sky!r}")
        self.source = sensitivity
        self.snr = float(snr)
        positional = hasattr(sensitivity, "curve_at")
        self.curve = sensitivity.curve_at(None) if positional else sensitivity
        self.frequency = self.curve.frequency.to(u.Hz)
        self.span = self.curve.observing_span(span)
        self._span_arg = span
        self._cache = None
        if positional and span is not None:
            raise ValueError("span: a pulsar array or sky map carries its own observing span; "
                             "drop the span")
        if not positional or sky == "averaged":
            self.mode = "curve" if not positional else "averaged"
            self._fixed = self.curve.h0_threshold(self.frequency, snr=self.snr, span=span)
        elif hasattr(sensitivity, "h0_threshold_at"):
            self.mode = "vectorised"
        else:
            mapped = hasattr(sensitivity, "h0_threshold_map")
            default = sky_nside if sky_nside is not None else (64 if mapped else 16)
            self.nside = int(getattr(sensitivity, "nside", default))
            self.mode = f"healpix nside={self.nside}"
            self._frame = "icrs"
            if all(hasattr(sensitivity, a) for a in ("maps", "frame", "frequency")):
                # a HEALPix limit map: its own pixels, in its own frame
                from ..sensitivity.limit_map import FRAMES

                self._frame = FRAMES.get(sensitivity.frame, "icrs")
                src_f = u.Quantity(sensitivity.frequency, u.Hz).value
                col = np.searchsorted(src_f, self.frequency.value)
                col = np.clip(col, 0, src_f.size - 1)
                if not np.allclose(src_f[col], self.frequency.value, rtol=1e-12, atol=0):
                    raise ValueError("sky map: curve_at(None) frequencies are not the map's")
                self._cache = np.ascontiguousarray(np.asarray(sensitivity.maps, float)[col].T)
                self._done = np.ones(self._cache.shape[0], dtype=bool)
            elif mapped:
                # all pixels in one vectorised call (shape (nf, npix))
                table = sensitivity.h0_threshold_map(self.frequency, nside=self.nside,
                                                     snr=self.snr)
                self._cache = np.ascontiguousarray(np.asarray(table, dtype=float).T)
                self._done = np.ones(self._cache.shape[0], dtype=bool)

    def label(self):
        """e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        return self.curve.label(self.snr)

    def thresholds(self, ra, dec):
        """h0 thresholds at the band edges for galaxies at (ra, dec) in deg.

        Returns
        -------
        (ndarray, ndarray or None)
            A table (G, nf) of thresholds and, per galaxy, its row in it
            (None: the only row, or one row per galaxy).
        """
        if self.mode in ("curve", "averaged"):
            return self._fixed[None, :], None
        from astropy.coordinates import SkyCoord

        if self.mode == "vectorised":
            coords = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
            out = np.asarray(self.source.h0_threshold_at(
                coords, self.frequency, snr=self.snr, span=self._span_arg), dtype=float)
            if out.shape != (len(ra), self.frequency.size):
                raise ValueError(
                    "h0_threshold_at: must return shape (n_coords, n_frequency), got "
                    f"{out.shape}"
                )
            return out, None
        import healpy as hp

        npix = hp.nside2npix(self.nside)
        if self._cache is None:
            self._cache = np.full((npix, self.frequency.size), np.nan)
            self._done = np.zeros(npix, dtype=bool)
        if self._frame == "icrs":
            pix = hp.ang2pix(self.nside, ra, dec, lonlat=True)
        else:
            sph = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs").transform_to(
                self._frame).spherical
            pix = hp.ang2pix(self.nside, sph.lon.deg, sph.lat.deg, lonlat=True)
        used, index = np.unique(pix, return_inverse=True)
        new = used[~self._done[used]]
        if new.size:
            lon, lat = hp.pix2ang(self.nside, new, lonlat=True)
            centres = SkyCoord(lon * u.deg, lat * u.deg, frame="icrs")
            # one call per occupied pixel (<= 12 nside^2 overall): the
            # interface has no vectorised form
            for i, p in enumerate(new):
                curve = self.source.curve_at(centres[i])
                self._cache[p] = curve.h0_threshold(self.frequency, snr=self.snr,
                                                    span=self._span_arg)
            self._done[new] = True
        return self._cache[used], index

    def pulsar_coords(self):
        """Positions of the array's pulsars (SkyCoord) when the object exposes them."""
        from astropy.coordinates import SkyCoord

        for attr in ("pulsar_coords", "coords", "coord"):
            c = getattr(self.source, attr, None)
            c = c() if callable(c) else c
            if isinstance(c, SkyCoord):
                return c
        return None


class Ranking:
    """Result of :func:`rank_catalog`.

    Attributes
    ----------
    table : astropy.table.QTable
        One row per ranked galaxy, best first (see :func:`rank_catalog`).
    rejections : Rejections
        Skipped rows with reasons, and notes.
    metric : str
    verb : str
        'excluded' or 'detectable'.
    label : str
    meta : dict
        Provenance (also in ``table.meta``).
    pulsars : SkyCoord or None
    n_read : int
        Rows read from the catalogue.
    """

    def __init__(self, **fields):
        self.__dict__.update(fields)

    def summary_lines(self, top=5):
        """A few lines: counts, the sensitivity, and the best ``top`` targets."""
        t = self.table
        lines = [
            f"ranked {len(t)} of {self.n_read} galaxies by {self.metric} "
            f"({self.label}, {self.verb})",
        ]
        lines += ["  " + s for s in self.rejections.summary()]
        total = float(np.nansum(t["expected_number"])) if len(t) else 0.0
        lines.append(f"  expected number of {self.verb} binaries in all: {total:.3g} "
                     f"(merger rate {self.meta['merger_rate_per_galaxy']} per galaxy)")
        ref = "limit" if self.verb == "excluded" else "threshold"
        for row in t[:top]:
            q = row["min_mass_ratio"]
            qtxt = f"q >= {q:.3g}" if np.isfinite(q) else "no q"
            lines.append(
                f"  {row['rank']:>3d}. {row['name']}: {row['distance'].to_value(u.Mpc):.4g} Mpc, "
                f"M = {row['mass'].to_value(u.Msun):.3g} Msun ({row['mass_source']}), "
                f"h0/{ref} = {row['h0_ratio']:.3g}, {qtxt} {self.verb}, "
                f"N = {row['expected_number']:.3g}"
            )
        return lines


def _sort_order(metric, values, h0_ratio, names):
    descending = METRICS[metric][0]
    key = -values if descending else values
    key = np.where(np.isnan(key), np.inf, key)
    tie = np.where(np.isnan(h0_ratio), np.inf, -h0_ratio)
    return np.lexsort((names, tie, key))


def rank_catalog(catalog, sensitivity, *, columns=None, relations=None, population=None,
                 metric="expected_number", snr=5.0, span=None, on_bad="error",
                 chunk_size=100_000, n_nodes=16, cosmology=None, sky="auto", sky_nside=None,
                 format=None, progress=None):
    """Read a galaxy catalogue and rank it as continuous-wave targets.

    Parameters
    ----------
    catalog : str, path-like, astropy.table.Table or CatalogReader
        See :mod:`ptaconstrain.catalogue.reader` for the columns.
    sensitivity : StrainCurve or object with ``curve_at(coord)``
    columns : ColumnMap, dict or path to a TOML file, optional
        Column mapping (dict: field -> column name).
    relations : list, optional
        Relation names, TOML paths or Relation objects, in order of
        preference (default: all shipped, in order).
    population : PopulationModel, optional
    metric : {"expected_number", "h0_ratio", "prob_equal_mass", "min_mass_ratio"}
        What the ranking sorts by (ties: h0_ratio, then name).
    snr : float
        S/N threshold for noise budgets.
    span : Quantity [time], optional
        Observing span for noise budgets.
    on_bad : {"error", "skip"}
        Raise on the first bad row, or drop bad rows and count them.
    chunk_size : int
        Rows read and computed at a time.
    n_nodes : int
        quadrature nodes over the mass scatter.
    cosmology : astropy.cosmology.Cosmology, optional
        For distance <-> redshift (default Planck18).
    sky : {"auto", "averaged"}
    sky_nside : int, optional
        See :class:`ThresholdLookup`.
    format : str, optional
        astropy table format of the file (default from its suffix).
    progress : callable, optional
        Called with the number of rows done after each chunk.

    Returns
    -------
    Ranking

    Raises
    ------
    CatalogError
        For a catalogue that cannot be used (or, with on_bad="error", a bad row).
    """
    if metric not in METRICS:
        raise ValueError(f"metric: {metric!r} is unknown; use one of {', '.join(METRICS)}")
    if on_bad not in ("error", "skip"):
        raise ValueError(f"on_bad: must be 'error' or 'skip', got {on_bad!r}")
    population = population or PopulationModel()
    if isinstance(columns, ColumnMap):
        colmap = columns
    elif isinstance(columns, dict):
        colmap = ColumnMap(columns)
    elif columns is not None:
        colmap = load_column_map(columns)
    else:
        colmap = ColumnMap()
    rels = select_relations(relations)
    reader = catalog if isinstance(catalog, CatalogReader) else CatalogReader(catalog, format)
    resolved = colmap.resolve(reader.colnames)
    mass_fields = {"mass", "log_mass"} | {r.predictor for r in rels}
    if not mass_fields & set(resolved):
        raise CatalogError(
            f"{reader.name} has no mass column and no predictor for the chosen relations: "
            f"add one of {', '.join(sorted(mass_fields))} (or map it with --columns)"
        )
    sens = ThresholdLookup(sensitivity, snr=snr, span=span, sky=sky, sky_nside=sky_nside)
    dz = DistanceRedshift(cosmology)
    rejections = Rejections()
    parts = []
    if sens.mode == "vectorised":  # one threshold row per galaxy: smaller chunks
        chunk_size = min(int(chunk_size), max(1000, 20_000_000 // sens.frequency.size))
    for start, piece in reader.chunks(chunk_size):
        gal = prepare_chunk(piece, colmap, resolved, rels, start, dz, rejections)
        rejections.check(on_bad)
        if gal["row"].size:
            thr, sky_index = sens.thresholds(gal["ra"], gal["dec"])
            met = galaxy_metrics(gal["log_mass"], gal["log_mass_sigma"],
                                 gal["distance"] * u.Mpc, gal["redshift"], sens.frequency,
                                 thr, population, n_nodes=n_nodes, sky_index=sky_index)
            rejections.note("no sensitivity at the galaxy's position (e.g. a blank map "
                            "pixel): metrics NaN, expected number 0",
                            np.count_nonzero(np.isnan(met["f_best"].value)))
            gal.update(met)
            parts.append(gal)
        if progress is not None:
            progress(len(piece))
    if not parts:
        rejections.check(on_bad)
        raise CatalogError(f"{reader.name}: no usable rows ({rejections.total} rejected)")
    data = {k: _concat([p[k] for p in parts]) for k in parts[0]}
    dup = duplicate_mask(data["name"])
    if dup.any():
        rejections.add(data["row"][dup], data["name"][dup],
                       "duplicate name (the first occurrence is kept)")
        rejections.check(on_bad)
        data = {k: v[~dup] for k, v in data.items()}
    table = _build_table(data, metric, sens)
    meta = _provenance(reader, colmap, rels, population, sens, metric, on_bad, n_nodes,
                       dz.cosmology, rejections, table)
    table.meta.update(meta)
    return Ranking(table=table, rejections=rejections, metric=metric, verb=sens.verb,
                   label=sens.label(), meta=meta, pulsars=sens.pulsar_coords(),
                   n_read=reader.n_rows, sensitivity=sens)


def _concat(arrays):
    if isinstance(arrays[0], u.Quantity):
        return np.concatenate([a.value for a in arrays]) * arrays[0].unit
    return np.concatenate(arrays)


def _build_table(data, metric, sens):
    from astropy.table import QTable

    order = _sort_order(metric, np.asarray(data[metric], dtype=float), data["h0_ratio"],
                        data["name"])
    d = {k: v[order] for k, v in data.items()}
    verb = sens.verb
    t = QTable()
    t["rank"] = np.arange(1, order.size + 1)
    t["name"] = d["name"]
    t["catalogue_row"] = d["row"] + 1
    t["ra"] = d["ra"] * u.deg
    t["dec"] = d["dec"] * u.deg
    t["distance"] = d["distance"] * u.Mpc
    t["redshift"] = d["redshift"]
    t["mass_source"] = d["mass_source"]
    t["mass"] = 10.0 ** d["log_mass"] * u.Msun
    t["log_mass"] = d["log_mass"]
    t["log_mass_sigma"] = d["log_mass_sigma"]
    t["f_best"] = d["f_best"]
    t["h0_threshold_best"] = d["h0_threshold_best"]
    for key in ("h0_equal_mass", "h0_ratio", "min_mass_ratio", "prob_equal_mass",
                "expected_number"):
        t[key] = d[key]
    t["cumulative_expected_number"] = np.cumsum(np.nan_to_num(d["expected_number"]))
    t["isco_frequency"] = d["isco_frequency"]
    t["f_best_above_isco"] = d["f_best_above_isco"]
    for key in FIELDS:
        if key in d:
            unit = FIELDS[key][0]
            t[key] = d[key] * u.Unit(unit) if unit not in (None, "mag") else d[key]
    for key in ("mass_measured",):
        if key in d:
            t[key] = d[key] * u.Msun
    for key in FIELDS:
        if key in t.colnames and key not in ("name", "ra", "dec", "distance", "redshift"):
            unit = FIELDS[key][0]
            t[key].info.description = "input: " + FIELDS[key][1] + (
                " [mag]" if unit == "mag" else "")
    desc = {
        "rank": f"rank by {metric}",
        "catalogue_row": "1-based data row in the input catalogue",
        "mass_source": "'measured' or the scaling relation used",
        "mass": "median total black-hole mass at the adopted distance",
        "log_mass": "median log10(M / solMass)",
        "log_mass_sigma": "1 sigma of log10 M (dex): measurement error or relation scatter",
        "f_best": "most sensitive frequency: argmin of h0_threshold / f^(2/3)",
        "h0_threshold_best": f"h0 above which a binary is {verb}, at f_best",
        "h0_equal_mass": "h0 of a q = 1 binary of the median mass at f_best",
        "h0_ratio": "h0_equal_mass / h0_threshold_best",
        "min_mass_ratio": f"smallest mass ratio {verb} at f_best (NaN: none)",
        "prob_equal_mass": f"probability over the mass uncertainty that q = 1 is {verb} "
                           "at f_best",
        "expected_number": f"expected number of {verb} binaries (population model)",
        "cumulative_expected_number": "sum of expected_number down to this rank",
        "isco_frequency": "GW frequency at the ISCO of the median mass",
        "f_best_above_isco": "f_best > f_ISCO: the strain metrics are formal",
        "mass_measured": "measured mass used (at the adopted distance)",
    }
    for key, text in desc.items():
        if key in t.colnames:
            t[key].info.description = text
    return t


def _relations_used(rels, table):
    names, counts = np.unique(np.asarray(table["mass_source"]), return_counts=True)
    used = dict(zip(names.tolist(), counts.tolist(), strict=True))
    out = {}
    if "measured" in used:
        out["measured"] = f"{used['measured']} galaxies: measured mass and error"
    for r in rels:
        if r.name in used:
            out[r.name] = f"{used[r.name]} galaxies: {r.describe()}"
    return out


def _provenance(reader, colmap, rels, population, sens, metric, on_bad, n_nodes, cosmology,
                rejections, table):
    from .. import __version__
    from .._files import sha256

    meta = {
        "ptaconstrain_version": __version__,
        "product": "continuous-wave target ranking",
        "sensitivity": sens.label(),
        "sensitivity_kind": sens.curve.kind,
        "verb": sens.verb,
        "sky": sens.mode,
        "snr": sens.snr,
        "span": f"{sens.span.to_value(u.yr):.6g} yr",
        "metric": metric,
        "catalogue": reader.name,
        "rows_read": int(reader.n_rows),
        "rows_ranked": len(table),
        "on_bad": on_bad,
        "rejected": {k: int(v) for k, v in rejections.counts.items()},
        "notes": {k: int(v) for k, v in rejections.notes.items()},
        "column_mapping": colmap.describe(),
        "relations_in_order": [r.name for r in rels],
        "relations_used": _relations_used(rels, table),
        "scatter_quadrature": f"Gauss-Legendre, {int(n_nodes)} nodes in Phi(log10 M)",
        "cosmology": getattr(cosmology, "name", None) or str(cosmology),
        "most_sensitive_frequency": "argmin over the tabulated frequencies of "
                                    "h0_threshold / f^(2/3)",
        "population_model": "steady merger rate R per galaxy; Peters (1964) residence time "
                            "per band between tabulated frequencies, capped at f_ISCO; a band "
                            "counts when h0 beats the threshold at both edges",
    }
    meta.update(population.describe())
    if reader.path is not None:
        meta["catalogue_sha256"] = sha256(reader.path)
    return meta
