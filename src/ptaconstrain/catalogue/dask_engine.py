"""Ranking a Parquet or HATS catalogue on a Dask cluster, with a correct global reduction.

Needs the optional extra ``ptaconstrain[scale]`` (imported inside the functions).

How the work divides (:func:`rank_catalog_dask`):

1. **map**: the ranking kernel (:func:`~ptaconstrain.catalogue.kernel.rank_piece`)
   runs on every partition through the engine's own map-partitions machinery:
   ``lsdb.Catalog.map_partitions`` for a HATS catalogue (one HEALPix pixel per
   partition, so the sky-dependent threshold is looked up once per partition
   when the threshold grid is no finer than the pixel,
   :meth:`~ptaconstrain.catalogue.thresholds.ThresholdLookup.partition_thresholds`),
   ``dask.dataframe.map_partitions`` for Parquet.  Inside a partition rows are
   taken ``chunk_size`` at a time, so a worker's memory is bounded by the
   partition plus one chunk's metrics.  Every partition returns its ranked
   rows, its rejected rows (with reasons), its counted notes and its row
   count, written to Parquet in a private work directory;
2. **reduce**: the row counts give every row its catalogue row; rejections and
   notes are summed by reason; repeated names are found from 64-bit hashes
   (a distributed ``value_counts``; only colliding rows come to the client,
   where names are compared exactly) and all but the first occurrence are
   rejected, as the in-memory ranking does;
3. **sort**: the ranked rows are sorted by the rounded sort keys of
   :func:`~ptaconstrain.catalogue.ranked_runs.sort_keys` and the name (a
   distributed sort: range partitioning on sampled quantiles, then a sort of
   each range);
4. **rank**: per-partition row counts and sums of the expected number give
   each partition its first rank and its starting cumulative sum; each
   partition is then written, by a worker, as the usual ranking table
   (:func:`~ptaconstrain.catalogue.ranking.ranking_table`) into
   ``ranking.parquet/`` (``part.000000.parquet`` ...; units and the ranking's
   meta in the Parquet metadata, key ``ptaconstrain``).

Nothing appears in the output directory until every step has succeeded; a
failure removes the work directory.  The result is a streamed
:class:`~ptaconstrain.catalogue.ranking.Ranking` whose rows are read back from
``ranking.parquet`` (:class:`ParquetRanking`).
"""

import json
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
from astropy import units as u

from ..cosmo import DistanceRedshift
from .columnar import columnar_kind, frame_to_table, require_scale
from .columns import CatalogError
from .kernel import RankPlan, rank_piece
from .names import name_hashes
from .population import PopulationModel
from .ranked_runs import sort_keys
from .ranking import (
    Ranking,
    check_options,
    column_map,
    no_rows_error,
    ranking_meta,
    ranking_provenance,
    ranking_table,
    resolve_columns,
)
from .relations import select_relations
from .rows import Rejections
from .thresholds import ThresholdLookup

__all__ = ["rank_catalog_dask", "ParquetRanking", "PARQUET_DIR", "DUPLICATE_REASON"]

#: the ranking written by the Dask engine (a directory of Parquet files, in rank order)
PARQUET_DIR = "ranking.parquet"
#: rows per partition of the sorted ranking (about 100 MB in memory)
SORTED_ROWS = 500_000
DUPLICATE_REASON = "duplicate name (the first occurrence is kept)"
_RANKED, _REJECTED, _NOTE, _READ = 0, 1, 2, 3
_UNITS = {"f_best": "Hz", "isco_frequency": "Hz"}


def _part_name(i):
    return f"part.{i:06d}.parquet"


def _empty_like(values, n):
    values = np.asarray(values)
    if values.dtype.kind == "b":
        return np.zeros(n, bool)
    if values.dtype.kind in "US":
        return np.full(n, "")
    return np.full(n, np.nan)


def _partition_frame(data, rejections, part, n_rows, metric):
    """One partition's kernel output as one frame: ranked, rejected, note and count rows."""
    import pandas as pd

    data = {k: (v.to_value(_UNITS[k]) if k in _UNITS else np.asarray(v)) for k, v in data.items()}
    n_ok = data["row"].size
    rej = rejections.table()
    notes = rejections.notes
    n_other = len(rej) + len(notes) + 1
    status = np.r_[
        np.full(n_ok, _RANKED), np.full(len(rej), _REJECTED), np.full(len(notes), _NOTE), _READ
    ].astype(np.int8)
    key, tie = sort_keys(metric, data[metric], data["h0_ratio"])
    cols = {
        "_status": status,
        "_part": np.full(status.size, part, np.int64),
        "_local": np.r_[
            data["row"], np.asarray(rej["row"]) - 1, np.zeros(len(notes) + 1, np.int64)
        ].astype(np.int64),
        "_key": np.r_[key, np.full(n_other, np.inf)],
        "_tie": np.r_[tie, np.full(n_other, np.inf)],
        "_hash": np.r_[name_hashes(data["name"]).view(np.int64), np.zeros(n_other, np.int64)],
        "_reason": _text(np.full(n_ok, ""), rej["reason"], list(notes), [""]),
        "_value": _text(np.full(n_ok, ""), rej["value"], np.full(len(notes) + 1, "")),
        "_count": np.r_[
            np.zeros(n_ok + len(rej), np.int64), np.array(list(notes.values()), np.int64), n_rows
        ].astype(np.int64),
    }
    for k, v in data.items():
        if k == "row":
            continue
        if k == "name":
            v = _text(v, rej["name"], np.full(len(notes) + 1, ""))
        else:
            v = np.concatenate([v, _empty_like(v, n_other)])
        cols[k] = v
    return pd.DataFrame(cols)


def _text(*parts):
    return np.concatenate([np.asarray(p, dtype=str) for p in parts]).astype(str)


def _rank_partition(frame, plan, part, chunk_size, pixel=None):
    """The kernel over one partition, ``chunk_size`` rows at a time (runs on a worker)."""
    rejections = Rejections()
    thresholds = None
    if pixel is not None:
        thresholds = plan.sensitivity.partition_thresholds(pixel.order, pixel.pixel)
    table = frame_to_table(frame)
    pieces = [
        rank_piece(table[a : a + chunk_size], plan, a, rejections, thresholds)
        for a in range(0, max(len(table), 1), chunk_size)
    ]  # a loop over chunks
    data = {k: _join([p[k] for p in pieces]) for k in pieces[0]}
    return _partition_frame(data, rejections, part, len(table), plan.metric)


def _join(arrays):
    if isinstance(arrays[0], u.Quantity):
        return np.concatenate([a.value for a in arrays]) * arrays[0].unit
    return np.concatenate(arrays)


def _hats_kernel(frame, pixel, plan, index_of, chunk_size):
    return _rank_partition(frame, plan, index_of[(pixel.order, pixel.pixel)], chunk_size, pixel)


def _parquet_kernel(frame, plan, chunk_size, partition_info=None):
    part = 0 if partition_info is None else int(partition_info["number"])
    return _rank_partition(frame, plan, part, chunk_size)


def _mapped(path, kind, plan, chunk_size):
    """The lazily mapped catalogue (a Dask DataFrame of kernel rows) and its column names."""
    import dask.dataframe as dd

    if kind == "hats":
        import lsdb

        cat = lsdb.open_catalog(path)
        pixels = cat.get_healpix_pixels()
        index_of = {(p.order, p.pixel): i for i, p in enumerate(pixels)}
        meta = _rank_partition(cat.meta, plan, 0, chunk_size)
        mapped = cat.map_partitions(
            _hats_kernel, plan, index_of, chunk_size, include_pixel=True, meta=meta
        )
        return mapped.to_dask_dataframe(divisions=False)
    ddf = dd.read_parquet(str(path))
    meta = _rank_partition(ddf._meta, plan, 0, chunk_size)
    return ddf.map_partitions(_parquet_kernel, plan, chunk_size, meta=meta, align_dataframes=False)


def _source_columns(path, kind):
    if kind == "hats":
        import lsdb

        return [str(c) for c in lsdb.open_catalog(path).columns]
    import pyarrow.dataset as ds

    return list(ds.dataset(str(path), format="parquet").schema.names)


def _bookkeeping(rows, offsets):
    """Rejections, notes and rows read, reduced from the per-partition bookkeeping rows."""
    rejections = Rejections()
    rej = rows[rows["_status"] == _REJECTED]
    catrow = offsets[rej["_part"].to_numpy()] + rej["_local"].to_numpy()
    for reason in dict.fromkeys(rej["_reason"].tolist()):  # a loop over reasons
        sel = (rej["_reason"] == reason).to_numpy()
        rejections.add(
            catrow[sel],
            rej["name"].to_numpy()[sel].astype(str),
            reason,
            rej["_value"].to_numpy()[sel].astype(str),
        )
    notes = rows[rows["_status"] == _NOTE]
    for reason, count in notes.groupby("_reason", sort=False)["_count"].sum().items():
        rejections.note(reason, int(count))
    return rejections


def _duplicates(ranked, offsets):
    """(partition, local row, name) of every repeated name but its first occurrence."""
    counts = ranked["_hash"].value_counts(split_out=True)
    shared = counts[counts > 1].compute()
    if not len(shared):
        return None
    cand = ranked[ranked["_hash"].isin(list(shared.index))][["_part", "_local", "name"]].compute()
    cand["_row"] = offsets[cand["_part"].to_numpy()] + cand["_local"].to_numpy()
    cand = cand.sort_values("_row", kind="stable")
    return cand[cand["name"].duplicated(keep="first")]


def _drop_rows(frame, drop):
    key = frame["_part"].to_numpy() * (1 << 40) + frame["_local"].to_numpy()
    return frame[~np.isin(key, drop)]


def _sort_frame(frame, **kwargs):
    """Order the rows of one range of keys exactly: key, tie-breaker, then name (UTF-8)."""
    from .names import name_bytes

    order = np.lexsort(
        (
            name_bytes(frame["name"].to_numpy().astype(str)),
            frame["_tie"].to_numpy(),
            frame["_key"].to_numpy(),
        )
    )
    return frame.iloc[order]


def _table_frame(frame, metric, verb, first_rank, cum_start, offsets):
    """One block of sorted rows as the ranking table's columns (values) and their units."""
    import pandas as pd

    d = {k: frame[k].to_numpy() for k in frame.columns if not k.startswith("_")}
    d["name"] = d["name"].astype(str)
    d["mass_source"] = d["mass_source"].astype(str)
    d["row"] = offsets[frame["_part"].to_numpy()] + frame["_local"].to_numpy()
    for k, unit in _UNITS.items():
        d[k] = d[k] * u.Unit(unit)
    t = ranking_table(d, metric, verb, first_rank=first_rank, cum_start=cum_start)
    units = {k: str(t[k].unit) for k in t.colnames if isinstance(t[k], u.Quantity)}
    return pd.DataFrame({k: np.asarray(getattr(t[k], "value", t[k])) for k in t.colnames}), units


def _size_and_sum(path):
    """Rows of one sorted file and the sum of their expected numbers (runs on a worker)."""
    import pyarrow.parquet as pq

    col = pq.read_table(path, columns=["expected_number"])["expected_number"].to_numpy()
    return col.size, float(np.sum(np.nan_to_num(col)))


def _write_part(source, target, first_rank, cum_start, offsets, metric, verb, meta_json):
    """Write one sorted file as ranking-table rows, by blocks (runs on a worker)."""
    import pyarrow as pa
    import pyarrow.dataset as ds
    import pyarrow.parquet as pq

    writer = None
    try:
        for batch in ds.dataset(str(source), format="parquet").to_batches(batch_size=1 << 18):
            frame = batch.to_pandas()
            if not len(frame):
                continue
            t, units = _table_frame(frame, metric, verb, first_rank, cum_start, offsets)
            table = pa.Table.from_pandas(t, preserve_index=False)
            if writer is None:
                info = json.dumps({"units": units, "meta": json.loads(meta_json)})
                schema = table.schema.with_metadata({b"ptaconstrain": info.encode()})
                writer = pq.ParquetWriter(str(target), schema)
            writer.write_table(table.replace_schema_metadata(writer.schema.metadata))
            first_rank += len(t)
            cum_start = float(t["cumulative_expected_number"].iloc[-1])
    finally:
        if writer is not None:
            writer.close()


def _write_ranked(sorted_dir, out_dir, metric, verb, offsets, meta):
    """Write the sorted partitions as ranking tables, ranks and running sums continued.

    Two distributed steps: the rows and expected-number sum of every sorted file
    (a small reduction placing each file: its first rank, its starting running
    sum), then each file written as ranking rows by a worker.  Returns the sum of
    the expected number over every row.
    """
    import dask

    files = sorted(Path(sorted_dir).glob("*.parquet"), key=lambda p: int(p.stem.split(".")[1]))
    placed = dask.compute(*[dask.delayed(_size_and_sum)(str(f)) for f in files])
    sizes = np.array([n for n, _ in placed], dtype=np.int64)
    sums = np.array([x for _, x in placed], dtype=float)
    first = np.r_[1, 1 + np.cumsum(sizes)[:-1]].astype(np.int64)
    start = np.r_[0.0, np.cumsum(sums)[:-1]]
    Path(out_dir).mkdir()
    meta_json = json.dumps(meta, default=str)
    keep = [i for i in range(len(files)) if sizes[i]]
    dask.compute(
        *[
            dask.delayed(_write_part)(
                str(files[i]),
                str(Path(out_dir) / _part_name(k)),
                int(first[i]),
                float(start[i]),
                offsets,
                metric,
                verb,
                meta_json,
            )
            for k, i in enumerate(keep)
        ]
    )
    return float(np.sum(sums))


class ParquetRanking:
    """A ranking written as a directory of Parquet files in rank order, read back by blocks.

    Plays the part of :class:`~ptaconstrain.catalogue.ranked_runs.RankedRuns` for a
    :class:`~ptaconstrain.catalogue.ranking.Ranking` made by the Dask engine.

    Parameters
    ----------
    directory : path-like
        ``ranking.parquet`` as written by :func:`rank_catalog_dask`.
    """

    def __init__(self, directory):
        import pyarrow.dataset as ds

        self.directory = Path(directory)
        files = sorted(self.directory.glob("part.*.parquet"))
        self._dataset = ds.dataset([str(f) for f in files], format="parquet")
        self.n_rows = int(self._dataset.count_rows())
        info = json.loads((self._dataset.schema.metadata or {}).get(b"ptaconstrain", b"{}"))
        self.units = info.get("units", {})

    def blocks(self, size=1 << 18, columns=None):
        """Yield the rows in rank order as dicts of arrays / Quantities (kernel-row form)."""
        skip = {"rank", "catalogue_row", "mass", "cumulative_expected_number"}
        names = (
            None
            if columns is None
            else list(dict.fromkeys(["catalogue_row" if c == "row" else c for c in columns]))
        )
        for batch in self._batches(int(size), names):
            out = {}
            for name, col in zip(batch.schema.names, batch.columns, strict=True):
                v = col.to_numpy(zero_copy_only=False)
                if name == "catalogue_row":
                    out["row"] = v - 1
                    continue
                if name in skip and (columns is None or name not in columns):
                    continue
                if v.dtype == object:
                    v = np.char.encode(v.astype(str), "utf-8")
                unit = self.units.get(name)
                out[name] = v * u.Unit(unit) if unit and name in _UNITS else v
            if out:
                yield out

    def _batches(self, size, names):
        """Record batches of exactly ``size`` rows (the last one shorter), across files."""
        import pyarrow as pa

        held, n_held = [], 0
        for batch in self._dataset.to_batches(columns=names, batch_size=size):
            held.append(batch)
            n_held += batch.num_rows
            while n_held >= size:
                table = pa.Table.from_batches(held)
                yield table.slice(0, size).combine_chunks().to_batches()[0]
                rest = table.slice(size)
                held, n_held = rest.to_batches(), rest.num_rows
        if n_held:
            yield pa.Table.from_batches(held).combine_chunks().to_batches()[0]

    def column(self, key):
        """One column of every row, in rank order."""
        parts = [b[key] for b in self.blocks(columns=[key])]
        if isinstance(parts[0], u.Quantity):
            return np.concatenate([p.value for p in parts]) * parts[0].unit
        return np.concatenate(parts)

    def take(self, rows, columns):
        """The given 0-based rank positions of ``columns`` as an astropy Table (a sample)."""
        from astropy.table import Table

        return Table(
            self._dataset.take(np.asarray(rows, dtype=np.int64), columns=list(columns)).to_pydict()
        )

    def close(self):
        """Nothing to remove: the Parquet ranking is an output, not a scratch file."""

    def __repr__(self):
        return f"ParquetRanking({self.n_rows} rows in {self.directory})"


def rank_catalog_dask(
    catalog,
    sensitivity,
    out_dir,
    *,
    workers=2,
    scheduler=None,
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
    files=None,
    inputs=None,
    top_rows=50,
    memory_limit=None,
    timeout=None,
    progress=None,
    overwrite=False,
    parquet_path=None,
    work_dir=None,
):
    """Rank a Parquet or HATS catalogue on a Dask cluster; write ``out_dir/ranking.parquet``.

    Parameters
    ----------
    catalog : path-like
        A Parquet file, a directory of Parquet files, or a HATS catalogue.
    sensitivity : StrainCurve or PositionalSensitivity
    out_dir : path-like
        ``ranking.parquet/`` is made here; it must not exist.
    workers : int
        Local cluster size (ignored with ``scheduler``).
    scheduler : str, optional
        Address of an existing Dask scheduler.
    memory_limit : str, optional
        Per local worker (default :data:`~ptaconstrain.catalogue.cluster.DEFAULT_MEMORY_LIMIT`).
    timeout : float, optional
        Seconds to wait for ``scheduler``.
    progress : callable, optional
        Called with a short text as each stage starts.
    overwrite : bool
        Replace an existing ``ranking.parquet`` (only once the new one is complete).
    parquet_path : path-like, optional
        Where the Parquet ranking goes instead of ``out_dir/ranking.parquet``
        (e.g. a staged path of an output set); must not exist.
    work_dir : path-like, optional
        Where the private work directory is made (default ``out_dir``); on a
        real cluster it must be a file system every worker sees.
    columns, relations, population, metric, snr, span, on_bad, chunk_size, n_nodes, \
cosmology, sky, sky_nside, files, inputs, top_rows
        As for :func:`~ptaconstrain.catalogue.rank_catalog` (``chunk_size``: rows
        computed at a time inside a partition).

    Returns
    -------
    Ranking
        Streamed: ``table`` holds the best ``top_rows`` rows, ``runs`` is a
        :class:`ParquetRanking` of the whole ranking.

    Raises
    ------
    CatalogError
        For a catalogue that is neither Parquet nor HATS, or cannot be used.
    ClusterError
        When the scheduler cannot be reached.
    """
    from .cluster import CONNECT_TIMEOUT, DEFAULT_MEMORY_LIMIT, dask_client

    check_options(metric, on_bad)
    path = Path(catalog)
    kind = columnar_kind(path) if path.exists() else None
    if kind is None:
        raise CatalogError(
            f"{path.name}: the Dask engine reads Parquet files, directories of "
            "Parquet or HATS catalogues; convert the catalogue or use "
            "--engine memory"
            if path.exists()
            else f"catalogue {path} not found: check the path"
        )
    require_scale(
        "the Dask engine",
        ("pyarrow", "dask", "distributed") + (("lsdb",) if kind == "hats" else ()),
    )
    population = population or PopulationModel()
    colmap = column_map(columns)
    rels = select_relations(relations)
    resolved = resolve_columns(colmap, _source_columns(path, kind), rels, path.name)
    sens = ThresholdLookup(sensitivity, snr=snr, span=span, sky=sky, sky_nside=sky_nside)
    dz = DistanceRedshift(cosmology)
    plan = RankPlan(colmap, resolved, rels, sens, population, int(n_nodes), dz, metric)
    out_dir = Path(out_dir)
    final = Path(parquet_path) if parquet_path is not None else out_dir / PARQUET_DIR
    if final.exists() and not overwrite:
        raise FileExistsError(f"{final} already exists: choose another --out or pass --overwrite")
    work_dir = Path(work_dir) if work_dir is not None else out_dir
    work_dir.mkdir(parents=True, exist_ok=True)
    work = Path(tempfile.mkdtemp(prefix=".ranking-dask-", dir=work_dir))
    say = progress or (lambda text: None)
    try:
        with dask_client(
            workers,
            scheduler,
            memory_limit or DEFAULT_MEMORY_LIMIT,
            CONNECT_TIMEOUT if timeout is None else timeout,
        ):
            result = _run(path, kind, plan, int(chunk_size), on_bad, work, say)
            rejections, offsets, n_read, sources, n_ranked = result
            meta = ranking_meta(
                _Named(path.name),
                colmap,
                rels,
                population,
                sens,
                metric,
                on_bad,
                n_nodes,
                dz.cosmology,
                rejections,
                n_ranked,
                sources,
                n_read,
            )
            where = f"scheduler {scheduler}" if scheduler else f"{workers} local workers"
            meta["engine"] = f"dask ({where}); {kind} input"
            say("writing the ranking")
            total = _write_ranked(
                work / "sorted", work / PARQUET_DIR, metric, sens.verb, offsets, dict(meta)
            )
        if final.exists():  # overwrite: the old ranking goes only now
            os.rename(final, work / "replaced")
        os.rename(work / PARQUET_DIR, final)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    runs = ParquetRanking(final)
    table = ranking_table(next(runs.blocks(max(int(top_rows), 1))), metric, sens.verb)
    for key in ("name", "mass_source"):
        table[key] = np.char.decode(np.asarray(table[key]), "utf-8")
    table.meta.update(meta)
    table.meta["provenance"] = ranking_provenance(_Named(path.name, path), files, inputs)
    return Ranking(
        table=table,
        rejections=rejections,
        metric=metric,
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


class _Named:
    """What the meta and provenance helpers need of a reader: its name and path."""

    def __init__(self, name, path=None):
        self.name, self.path = name, path


def _run(path, kind, plan, chunk_size, on_bad, work, say):
    """Map, reduce and sort on the cluster; the sorted rows land in ``work/sorted``."""
    import dask.dataframe as dd

    say("ranking every partition")
    _mapped(path, kind, plan, chunk_size).to_parquet(
        str(work / "rows"), write_index=False, name_function=_part_name
    )
    rows = dd.read_parquet(str(work / "rows"))
    book = rows[rows["_status"] != _RANKED][
        ["_status", "_part", "_local", "name", "_reason", "_value", "_count"]
    ].compute()
    read = book[book["_status"] == _READ].groupby("_part")["_count"].sum()
    n_parts = int(read.index.max()) + 1 if len(read) else 0
    sizes = np.zeros(n_parts, np.int64)
    sizes[read.index.to_numpy()] = read.to_numpy()
    offsets = np.r_[0, np.cumsum(sizes)[:-1]].astype(np.int64)
    n_read = int(sizes.sum())
    rejections = _bookkeeping(book, offsets)
    rejections.check(on_bad)
    ranked = rows[rows["_status"] == _RANKED]
    say("finding repeated names")
    dup = _duplicates(ranked, offsets)
    if dup is not None and len(dup):
        rejections.add(
            offsets[dup["_part"].to_numpy()] + dup["_local"].to_numpy(),
            dup["name"].to_numpy().astype(str),
            DUPLICATE_REASON,
        )
        rejections.check(on_bad)
        drop = dup["_part"].to_numpy() * (1 << 40) + dup["_local"].to_numpy()
        ranked = ranked.map_partitions(_drop_rows, drop)
    sources = ranked["mass_source"].value_counts().compute()
    sources = {str(k): int(v) for k, v in sources.items()}
    n_ranked = int(sum(sources.values()))
    if not n_ranked:
        raise no_rows_error(path.name, rejections)
    say("sorting")
    ranked.sort_values(
        ["_key", "_tie"], npartitions=-(-n_ranked // SORTED_ROWS), sort_function=_sort_frame
    ).to_parquet(str(work / "sorted"), write_index=False, name_function=_part_name)
    return rejections, offsets, n_read, sources, n_ranked
