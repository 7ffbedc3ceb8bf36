"""Rank the galaxies of a catalogue as continuous-wave targets.

:func:`rank_catalog` reads a catalogue chunk by chunk
(:mod:`~ptaconstrain.catalogue.reader`), turns each chunk into per-galaxy
arrays under the one input policy (:mod:`~ptaconstrain.catalogue.rows`), looks
up the h0 thresholds at the galaxies' positions
(:mod:`~ptaconstrain.catalogue.thresholds`), computes the metrics
(:mod:`~ptaconstrain.catalogue.metrics`), drops repeated names as they arrive
(:class:`~ptaconstrain.catalogue.names.NameSet`, hashes) and sorts.  The result
is a :class:`Ranking`.

Two ways to hold the result:

* in memory (default): every ranked row in ``Ranking.table``;
* streamed (``stream_dir``): each chunk is sorted and written to disk as a run
  (:class:`~ptaconstrain.catalogue.ranked_runs.RankedRuns`) while running totals
  (rows, expected number, rejections, relations used) are kept; at the end the
  runs are merged into the global order, ``Ranking.table`` holds the best
  ``top_rows`` rows and :meth:`Ranking.blocks` yields the whole table in order
  (``ptaconstrain rank`` writes it to FITS that way).  Memory stays bounded by
  the sort keys (~30 bytes per row) plus one chunk.

Both give the same rows, values and order (``tests/catalogue/test_ranking.py``).
"""

from dataclasses import dataclass

import numpy as np
from astropy import units as u

from ..cosmo import DistanceRedshift
from ..errors import InputError
from .columns import FIELDS, CatalogError, ColumnMap, load_column_map
from .kernel import RankPlan, chunk_metrics
from .metrics import METRICS
from .names import NameSet
from .population import PopulationModel
from .ranked_runs import RankedRuns, ranking_order
from .reader import CatalogReader
from .relations import select_relations
from .rows import Rejections, prepare_chunk
from .thresholds import ThresholdLookup

__all__ = [
    "Ranking",
    "rank_catalog",
    "ranking_table",
    "ranking_meta",
    "ranking_plan",
    "ranked_result",
    "ranking_provenance",
    "check_options",
    "resolve_columns",
    "no_rows_error",
    "column_map",
]


@dataclass(frozen=True)
class Ranking:
    """A catalogue ranked as continuous-wave targets (from :func:`rank_catalog`).

    Attributes
    ----------
    table : astropy.table.QTable
        One row per ranked galaxy, best first: rank, name, catalogue_row,
        ra, dec [deg], distance [Mpc], redshift, mass_source, mass [solMass],
        log_mass, log_mass_sigma [dex], f_best [Hz], h0_threshold_best,
        h0_equal_mass, h0_ratio, min_mass_ratio, prob_equal_mass,
        expected_number, cumulative_expected_number, isco_frequency [Hz],
        f_best_above_isco, and the input fields used.  ``table.meta`` holds
        :attr:`meta` and the provenance.
    rejections : Rejections
        Rows not ranked, with reasons, and counted notes.
    metric : str
        What the table is sorted by (a key of ``METRICS``).
    verb : str
        "excluded" (upper limit) or "detectable" (noise budget).
    label : str
        The sensitivity, e.g. "95% upper limit".
    meta : dict
        How the ranking was made (sensitivity, sky handling, relations, population).
    n_read : int
        Data rows read from the catalogue.
    sky_markers : astropy.coordinates.SkyCoord or None
        Positions to mark on sky figures (an array's pulsars).
    sensitivity : ThresholdLookup
        The thresholds used.
    n_ranked : int
        Rows ranked (``len(table)`` unless streamed).
    expected_total : float
        Sum of the expected numbers over every ranked row.
    runs : RankedRuns or None
        The whole ranking on disk when streamed (``table`` then holds the top
        rows); call :meth:`close` when done.

    Examples
    --------
    >>> from astropy.table import Table
    >>> from ptaconstrain import load_curve, rank_catalog
    >>> from ptaconstrain.data import path
    >>> galaxies = Table({"name": ["Invented A", "Invented B", "Invented C"],
    ...                   "ra": [10.0, 150.0, 280.0], "dec": [-5.0, 20.0, -35.0],
    ...                   "distance": [20.0, 40.0, 80.0], "mass": [3e9, 5e9, 2e10]})
    >>> ranking = rank_catalog(galaxies, load_curve(path("synthetic_h0_limit.ecsv")))
    >>> ranking.metric, ranking.verb, ranking.n_ranked
    ('expected_number', 'excluded', 3)
    >>> ranking.table["rank"].tolist()
    [1, 2, 3]
    """

    table: object
    rejections: Rejections
    metric: str
    verb: str
    label: str
    meta: dict
    n_read: int
    sky_markers: object = None
    sensitivity: ThresholdLookup = None
    n_ranked: int = 0
    expected_total: float = 0.0
    runs: RankedRuns = None

    @property
    def is_limit(self):
        """True for an exclusion ranking (upper limit), False for a forecast."""
        return self.verb == "excluded"

    def __repr__(self):
        t = self.table
        best = ", ".join(str(n) for n in t["name"][:3]) if len(t) else "none"
        return (
            f"Ranking of {self.n_ranked} of {self.n_read} galaxies by {self.metric}\n"
            f"  sensitivity: {self.label} ({self.verb}), sky: {self.meta.get('sky')}\n"
            f"  rejected rows: {self.rejections.total}; best: {best}"
        )

    @property
    def streamed(self):
        """True when the full ranking is on disk and ``table`` holds the top rows only."""
        return self.runs is not None

    def to_table(self):
        """The ranking as an astropy QTable (a copy, with units and provenance in meta).

        Every row in memory; for a streamed ranking the best rows only (use
        :meth:`blocks` for all of them).
        """
        return self.table.copy()

    def blocks(self, size=1 << 18):
        """Yield the whole ranking as QTables of consecutive ranks (``size`` rows each).

        Text columns of a streamed ranking are UTF-8 bytes of one width.
        """
        if not self.streamed:
            for b0 in range(0, len(self.table), int(size)):
                yield self.table[b0 : b0 + int(size)]
            return
        rank, cum = 1, 0.0
        for d in self.runs.blocks(size):
            t = ranking_table(d, self.metric, self.verb, first_rank=rank, cum_start=cum)
            rank += len(t)
            cum = float(t["cumulative_expected_number"][-1])
            yield t

    def column(self, key):
        """One column over every ranked row, in rank order (from disk when streamed)."""
        if not self.streamed:
            return self.table[key]
        if key == "rank":
            return np.arange(1, self.n_ranked + 1)
        if key == "cumulative_expected_number":
            return np.cumsum(np.nan_to_num(np.asarray(self.runs.column("expected_number"))))
        return self.runs.column(key)

    def close(self):
        """Remove a streamed ranking's runs from disk (nothing to do in memory)."""
        if self.runs is not None:
            self.runs.close()

    def plot(self, ax=None, top=20):
        """Sky map of the ranked galaxies coloured by the ranking metric.

        Parameters
        ----------
        ax : matplotlib Axes with a "mollweide" projection, optional
            Drawn into; a new Figure otherwise.
        top : int
            The best ``top`` galaxies (at most 20) are labelled with their rank.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from astropy.table import Table

        from ..report.rankplots import sky_figure

        data = self.table
        if self.streamed:  # every galaxy on the map, in rank order, from disk
            data = Table(
                {k: self.column(k) for k in dict.fromkeys(["rank", "ra", "dec", self.metric])},
                copy=False,
            )
        return sky_figure(
            data,
            self.metric,
            self.verb,
            self.label,
            markers=self.sky_markers,
            top=top,
            rate=self.meta.get("merger_rate_per_galaxy"),
            ax=ax,
        )

    def summary_lines(self, top=5):
        """A few lines: counts, the sensitivity, and the best ``top`` targets."""
        t = self.table
        lines = [
            f"ranked {self.n_ranked} of {self.n_read} galaxies by {self.metric} "
            f"({self.label}, {self.verb})",
        ]
        lines += ["  " + s for s in self.rejections.summary()]
        total = self.expected_total
        lines.append(
            f"  expected number of {self.verb} binaries in all: {total:.3g} "
            f"(merger rate {self.meta['merger_rate_per_galaxy']} per galaxy)"
        )
        ref = "limit" if self.is_limit else "threshold"
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


def check_options(metric, on_bad):
    """Refuse an unknown ranking metric or bad-row policy (one line, InputError)."""
    if metric not in METRICS:
        raise InputError(f"metric: {metric!r} is unknown; use one of {', '.join(METRICS)}")
    if on_bad not in ("error", "skip"):
        raise InputError(f"on_bad: must be 'error' or 'skip', got {on_bad!r}")


def resolve_columns(colmap, colnames, rels, name):
    """field -> column of a catalogue, refusing one without any way to a mass.

    Raises
    ------
    CatalogError
        A mapped column is missing, a required field is absent, or there is
        neither a mass column nor a predictor of the chosen relations.
    """
    resolved = colmap.resolve(colnames)
    mass_fields = {"mass", "log_mass"} | {r.predictor for r in rels}
    if not mass_fields & set(resolved):
        raise CatalogError(
            f"{name} has no mass column and no predictor for the chosen relations: "
            f"add one of {', '.join(sorted(mass_fields))} (or map it with --columns)"
        )
    return resolved


def no_rows_error(name, rejections):
    """The CatalogError for a catalogue none of whose rows could be ranked."""
    counts = rejections.counts
    top = max(counts, key=counts.get) if counts else "no rows"
    more = f" and {len(counts) - 1} other reason(s)" if len(counts) > 1 else ""
    return CatalogError(
        f"{name}: no usable rows ({rejections.total} rejected; "
        f"{counts.get(top, 0)} for: {top}{more}): fix the catalogue "
        "or its column mapping"
    )


def column_map(columns):
    """A ColumnMap from a ColumnMap, a dict (field -> column), a TOML path or None."""
    if isinstance(columns, ColumnMap):
        return columns
    if isinstance(columns, dict):
        return ColumnMap(columns)
    return ColumnMap() if columns is None else load_column_map(columns)


def rank_catalog(
    catalog,
    sensitivity,
    *,
    columns=None,
    relations=None,
    population=None,
    metric="expected_number",
    snr=5.0,
    span=None,
    on_bad="error",
    chunk_size=100_000,
    n_nodes=16,
    cosmology=None,
    sky="auto",
    sky_nside=None,
    format=None,
    progress=None,
    files=None,
    inputs=None,
    stream_dir=None,
    top_rows=50,
):
    """Read a galaxy catalogue and rank it as continuous-wave targets.

    Parameters
    ----------
    catalog : str, path-like, astropy.table.Table or CatalogReader
        See :mod:`ptaconstrain.catalogue.columns` and :mod:`ptaconstrain.catalogue.rows`.
    sensitivity : StrainCurve or PositionalSensitivity
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
        Observing span for a noise-budget curve.
    on_bad : {"error", "skip"}
        Raise on the first bad row, or drop bad rows and count them.
    chunk_size : int
        Rows read and computed at a time.
    n_nodes : int
        Quadrature nodes over the mass scatter.
    cosmology : astropy.cosmology.Cosmology, optional
        For distance <-> redshift (default: astropy's default cosmology).
    sky : {"auto", "averaged"}
    sky_nside : int, optional
        See :class:`ThresholdLookup`.
    format : str, optional
        astropy table format of the file (default from its suffix).
    progress : callable, optional
        Called with the number of rows done after each chunk.
    files : dict, optional
        Role -> path of other input files, recorded with checksums in the provenance.
    inputs : dict, optional
        Settings recorded in the provenance.
    stream_dir : path-like, optional
        Stream the ranked rows to sorted runs in a temporary directory made
        here, keeping memory bounded (see the module notes); ``table`` then
        holds the best ``top_rows`` rows.  Call ``Ranking.close()`` when done.
    top_rows : int
        Rows kept in ``table`` when streamed.

    Returns
    -------
    Ranking

    Raises
    ------
    CatalogError
        For a catalogue that cannot be used (or, with on_bad="error", a bad row).

    Examples
    --------
    >>> from astropy.table import Table
    >>> from ptaconstrain.data import path
    >>> from ptaconstrain.sensitivity.curve import load_curve
    >>> t = Table({"name": ["A", "B"], "ra": [10.0, "12h30m00s"], "dec": ["-5", "12:00:00"],
    ...            "distance": [20.0, 40.0], "mass": [3e9, 5e9]})
    >>> r = rank_catalog(t, load_curve(path("synthetic_h0_limit.ecsv")))
    >>> sorted(round(float(x), 9) for x in r.table["ra"].value)
    [10.0, 187.5]
    """
    check_options(metric, on_bad)
    colmap = column_map(columns)
    rels = select_relations(relations)
    reader = catalog if isinstance(catalog, CatalogReader) else CatalogReader(catalog, format)
    plan = ranking_plan(
        colmap,
        rels,
        reader.colnames,
        reader.name,
        sensitivity,
        population=population,
        metric=metric,
        snr=snr,
        span=span,
        n_nodes=n_nodes,
        cosmology=cosmology,
        sky=sky,
        sky_nside=sky_nside,
    )
    rejections = Rejections()
    seen = NameSet()
    runs = None if stream_dir is None else RankedRuns(metric, stream_dir)
    parts, n_read, n_ranked, total, sources = [], 0, 0, 0.0, {}
    try:
        for start, piece in reader.chunks(chunk_size):
            n_read += len(piece)
            gal = prepare_chunk(piece, colmap, plan.resolved, rels, start, plan.dz, rejections)
            rejections.check(on_bad)
            if gal["row"].size:
                data = chunk_metrics(
                    gal, plan.sensitivity, plan.population, plan.n_nodes, rejections
                )
                dup = seen.add(data["name"])
                if dup.any():
                    rejections.add(
                        data["row"][dup],
                        data["name"][dup],
                        "duplicate name (the first occurrence is kept)",
                    )
                    rejections.check(on_bad)
                    data = {k: v[~dup] for k, v in data.items()}
                if data["row"].size:  # running totals
                    n_ranked += data["row"].size
                    total += float(np.nansum(data["expected_number"]))
                    names, counts = np.unique(data["mass_source"], return_counts=True)
                    for name, c in zip(names.tolist(), counts.tolist(), strict=True):
                        sources[name] = sources.get(name, 0) + c
                    if runs is None:
                        parts.append(data)
                    else:
                        runs.add(data)
            if progress is not None:
                progress(len(piece))
        if not n_ranked:
            rejections.check(on_bad)
            raise no_rows_error(reader.name, rejections)
        if runs is None:
            data = {k: _concat([p[k] for p in parts]) for k in parts[0]}
            del parts
            order = ranking_order(metric, data[metric], data["h0_ratio"], data["name"])
            table = ranking_table(
                {k: v[order] for k, v in data.items()}, metric, plan.sensitivity.verb
            )
        else:
            runs.finish()
            table = ranking_table(
                next(runs.blocks(max(int(top_rows), 1))), metric, plan.sensitivity.verb
            )
            table["name"] = np.char.decode(np.asarray(table["name"]), "utf-8")
            table["mass_source"] = np.char.decode(np.asarray(table["mass_source"]), "utf-8")
    except BaseException:
        if runs is not None:
            runs.close()
        raise
    meta = ranking_meta(reader.name, plan, on_bad, rejections, n_ranked, sources, n_read)
    provenance = ranking_provenance(reader.path, files, inputs)
    return ranked_result(table, plan, meta, provenance, rejections, n_read, n_ranked, total, runs)


def _concat(arrays):
    if isinstance(arrays[0], u.Quantity):
        return np.concatenate([a.value for a in arrays]) * arrays[0].unit
    return np.concatenate(arrays)


def ranking_table(d, metric, verb, first_rank=1, cum_start=0.0):
    """The ranking table of rows already in rank order (ranks from ``first_rank``).

    Parameters
    ----------
    d : dict of ndarray / Quantity
        Kernel rows (:func:`~ptaconstrain.catalogue.kernel.rank_piece`), in rank order.
    metric, verb : str
    first_rank : int
        Rank of the first row.
    cum_start : float
        Cumulative expected number before the first row.

    Returns
    -------
    astropy.table.QTable
        With units and column descriptions.
    """
    from astropy.table import QTable

    t = QTable()
    t["rank"] = np.arange(first_rank, first_rank + d["row"].size)
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
    for key in (
        "h0_equal_mass",
        "h0_ratio",
        "min_mass_ratio",
        "prob_equal_mass",
        "expected_number",
    ):
        t[key] = d[key]
    # one running sum continued across blocks: the same additions as a single cumsum
    t["cumulative_expected_number"] = np.cumsum(
        np.r_[cum_start, np.nan_to_num(d["expected_number"])]
    )[1:]
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
            t[key].info.description = (
                "input: " + FIELDS[key][1] + (" [mag]" if unit == "mag" else "")
            )
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
        "prob_equal_mass": f"probability over the mass uncertainty that q = 1 is {verb} at f_best",
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


def _relations_used(rels, used):
    out = {}
    if "measured" in used:
        out["measured"] = f"{used['measured']} galaxies: measured mass and error"
    for r in rels:
        if r.name in used:
            out[r.name] = f"{used[r.name]} galaxies: {r.describe()}"
    return out


def ranking_plan(
    colmap,
    rels,
    colnames,
    catalogue,
    sensitivity,
    *,
    population,
    metric,
    snr,
    span,
    n_nodes,
    cosmology,
    sky,
    sky_nside,
):
    """The settings of one ranking as a :class:`~ptaconstrain.catalogue.kernel.RankPlan`.

    Shared by both engines: the catalogue's columns resolved (``colnames`` of
    the catalogue named ``catalogue``), the threshold lookup, the population
    (default :class:`PopulationModel`) and the distance-redshift relation.
    """
    resolved = resolve_columns(colmap, colnames, rels, catalogue)
    sens = ThresholdLookup(sensitivity, snr=snr, span=span, sky=sky, sky_nside=sky_nside)
    return RankPlan(
        colmap,
        resolved,
        rels,
        sens,
        population or PopulationModel(),
        int(n_nodes),
        DistanceRedshift(cosmology),
        metric,
    )


def ranked_result(table, plan, meta, provenance, rejections, n_read, n_ranked, total, runs):
    """The :class:`Ranking` of either engine: ``table`` (its meta completed) and the totals."""
    sens = plan.sensitivity
    table.meta.update(meta)
    table.meta["provenance"] = provenance
    return Ranking(
        table=table,
        rejections=rejections,
        metric=plan.metric,
        verb=sens.verb,
        label=sens.label(),
        meta=meta,
        n_read=n_read,
        sky_markers=sens.sky_markers(),
        sensitivity=sens,
        n_ranked=n_ranked,
        expected_total=total,
        runs=runs,
    )


def ranking_provenance(catalogue_path, files, inputs):
    """The package's one provenance record, with the catalogue (a path or None) among the files."""
    from ..report.provenance import provenance

    all_files = {} if catalogue_path is None else {"catalogue": catalogue_path}
    all_files.update(files or {})
    return provenance(inputs, files=all_files)


def ranking_meta(catalogue, plan, on_bad, rejections, n_ranked, sources, n_read):
    """How a ranking was made (``plan``, a RankPlan) of the catalogue named ``catalogue``."""
    sens, cosmology = plan.sensitivity, plan.dz.cosmology
    meta = {
        "product": "continuous-wave target ranking",
        "sensitivity": sens.label(),
        "sensitivity_kind": sens.curve.kind,
        "verb": sens.verb,
        "sky": sens.mode,
        "snr": sens.snr,
        "span": f"{sens.span.to_value(u.yr):.6g} yr",
        "metric": plan.metric,
        "catalogue": catalogue,
        "rows_read": int(n_read),
        "rows_ranked": int(n_ranked),
        "on_bad": on_bad,
        "rejected": {k: int(v) for k, v in rejections.counts.items()},
        "notes": {k: int(v) for k, v in rejections.notes.items()},
        "column_mapping": plan.colmap.describe(),
        "relations_in_order": [r.name for r in plan.relations],
        "relations_used": _relations_used(plan.relations, sources),
        "scatter_quadrature": f"Gauss-Legendre, {plan.n_nodes} nodes in Phi(log10 M)",
        "cosmology": getattr(cosmology, "name", None) or str(cosmology),
        "most_sensitive_frequency": "argmin over the tabulated frequencies of "
        "h0_threshold / f^(2/3)",
        "population_model": "steady merger rate R per galaxy; Peters (1964) residence time "
        "per band between tabulated frequencies, capped at f_ISCO; a band "
        "counts when h0 beats the threshold at both edges",
    }
    meta.update(plan.population.describe())
    return meta
