"""Ranking a Parquet or HATS catalogue on a Dask cluster, with a correct global reduction.

Needs the optional extra ``ptaconstrain[scale]`` (imported inside the functions).

How the work divides (:func:`rank_catalog_dask`): every partition is read once
and ranked once; only small arrays travel to the client.

1. **map** (one Dask task per partition: one HEALPix pixel of a HATS catalogue,
   read by lsdb, or a run of row groups of a Parquet dataset, read by pyarrow):
   the ranking kernel (:func:`~ptaconstrain.catalogue.kernel.rank_piece`) ranks
   the partition ``chunk_size`` rows at a time (for HATS the sky-dependent
   threshold is looked up once per partition when the threshold grid is no finer
   than the pixel,
   :meth:`~ptaconstrain.catalogue.thresholds.ThresholdLookup.partition_thresholds`);
   the worker sorts the partition's rows by the ranking rule
   (:func:`~ptaconstrain.catalogue.ranked_runs.ranking_order`) and writes them as
   ranking-table rows to a private work directory (Arrow IPC, uncompressed: read
   once more, by the write step).  It returns its row count,
   its rejections and notes, and per ranked row (in its local order) the 64-bit
   name hash, the two sort keys and the expected number: 32 bytes a row.
2. **reduce** (on the client): row counts give catalogue rows; rejections and
   notes are summed; repeated hashes pick out candidate duplicate names, whose
   names are read from the work files and compared exactly (all but the first
   occurrence are rejected, as in memory); the sort keys of every partition,
   already sorted, are merged into the global order (rows with equal keys in
   different partitions ordered by name), which gives every row its rank and
   the running sum of the expected number, added in rank order (the additions
   of the in-memory engine's single cumulative sum).
3. **write** (one task per partition): the client leaves each partition's ranks
   and running sums in the work directory; the worker reads its work file back,
   drops the duplicates and writes it to ``ranking.parquet/part.NNNNNN.parquet``
   with the global ``rank``, ``catalogue_row`` and ``cumulative_expected_number``
   (units and the ranking's meta in the Parquet metadata, key ``ptaconstrain``),
   and returns its best ``top_rows`` rows, from which the client takes the top
   of the ranking.  Each file holds one input partition's rows in rank order;
   the ``rank`` column orders the whole directory (:class:`ParquetRanking` reads
   it back in rank order by merging the files).

No column is shuffled between workers.  The client holds about 60 bytes per
ranked row at its peak (the merge of the sort keys).  Nothing appears in the
output directory until every step has succeeded; a failure removes the work
directory.
"""

import json
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np
from astropy import units as u

from .columnar import arrow_to_table, columnar_kind, frame_to_table, require_scale, with_masks
from .columns import CatalogError
from .kernel import rank_piece
from .names import duplicate_mask, name_bytes, name_hashes
from .ranked_runs import ranking_order, sort_keys
from .ranking import (
    check_options,
    column_map,
    no_rows_error,
    ranked_result,
    ranking_meta,
    ranking_plan,
    ranking_provenance,
    ranking_table,
)
from .relations import select_relations
from .rows import Rejections

__all__ = [
    "rank_catalog_dask",
    "ParquetRanking",
    "PARQUET_DIR",
    "DUPLICATE_REASON",
    "PARTITION_ROWS",
]

#: the ranking written by the Dask engine (a directory of Parquet files, one per partition)
PARQUET_DIR = "ranking.parquet"
#: rows per task of a Parquet input (whole row groups, or slices of a larger one); a HATS
#: partition is taken whole up to twice this, in slices of this size above
PARTITION_ROWS = 250_000
DUPLICATE_REASON = "duplicate name (the first occurrence is kept)"
_ROW_GROUP = 1 << 16
_UNITS = {"f_best": "Hz", "isco_frequency": "Hz"}


def _part_name(i):
    return f"part.{i:06d}.parquet"


def _join(arrays):
    if isinstance(arrays[0], u.Quantity):
        return np.concatenate([a.value for a in arrays]) * arrays[0].unit
    return np.concatenate(arrays)


def _arrow(table, info=None):
    """A ranking QTable as a pyarrow Table (values; units in the schema metadata)."""
    import pyarrow as pa

    units = {k: str(table[k].unit) for k in table.colnames if isinstance(table[k], u.Quantity)}
    cols = {k: np.asarray(getattr(table[k], "value", table[k])) for k in table.colnames}
    meta = {"units": units, **(info or {})}
    return pa.table(cols).replace_schema_metadata({b"ptaconstrain": json.dumps(meta).encode()})


def _work_name(i):
    return f"rows.{i:06d}.arrow"


def _write_work(table, target):
    """A partition's sorted rows as an uncompressed Arrow IPC file (private, read once more)."""
    import pyarrow as pa

    tmp = f"{target}.{os.getpid()}.tmp"
    with pa.OSFile(tmp, "wb") as sink, pa.ipc.new_file(sink, table.schema) as writer:
        writer.write_table(table, max_chunksize=_ROW_GROUP)
    os.replace(tmp, target)


def _read_work(source, columns=None):
    import pyarrow as pa

    with pa.OSFile(str(source), "rb") as f:
        table = pa.ipc.open_file(f).read_all()
    return table if columns is None else table.select(list(columns))


def _write_parquet(table, target):
    """Write an Arrow table atomically (a re-run task rewrites the same file)."""
    import pyarrow.parquet as pq

    tmp = f"{target}.{os.getpid()}.tmp"
    pq.write_table(table, tmp, row_group_size=_ROW_GROUP)
    os.replace(tmp, target)


def _read_source(source, columns, units):
    """One partition as an astropy Table: an lsdb (pandas) frame or (file, row groups)."""
    if isinstance(source, tuple) and len(source) == 3:  # a slice of a large HATS partition
        frame, start, stop = source
        return frame_to_table(frame[columns].iloc[start:stop], units)
    if isinstance(source, tuple):
        import pyarrow.parquet as pq

        file, groups, start, stop = source
        table = pq.ParquetFile(file).read_row_groups(groups, columns=columns)
        return arrow_to_table(table.slice(start, stop - start), units)
    return frame_to_table(source[columns], units)


def _rank_partition(source, part, plan, chunk_size, columns, units, work, pixel=None):
    """Map step (runs on a worker): rank one partition, write it sorted, return small arrays."""
    table = _read_source(source, columns, units)
    rejections = Rejections()
    thresholds = None
    if pixel is not None:
        thresholds = plan.sensitivity.partition_thresholds(pixel[0], pixel[1])
    pieces = [
        rank_piece(table[a : a + chunk_size], plan, a, rejections, thresholds)
        for a in range(0, max(len(table), 1), chunk_size)
    ]  # a loop over chunks
    data = {k: _join([p[k] for p in pieces]) for k in pieces[0]}
    del pieces
    n_ok = data["row"].size
    out = {"n_rows": len(table), "rejections": rejections, "n_ranked": n_ok}
    if not n_ok:
        return out
    order = ranking_order(plan.metric, data[plan.metric], data["h0_ratio"], data["name"])
    data = {k: v[order] for k, v in data.items()}
    key, tie = sort_keys(plan.metric, data[plan.metric], data["h0_ratio"])
    sources, counts = np.unique(np.asarray(data["mass_source"]), return_counts=True)
    out.update(
        hash=name_hashes(data["name"]),
        key=key,
        tie=tie,
        expected=np.asarray(data["expected_number"], dtype=float),
        sources=dict(zip(sources.tolist(), counts.tolist(), strict=True)),
    )
    rows = ranking_table(data, plan.metric, plan.sensitivity.verb)
    _write_work(_arrow(rows), str(Path(work) / _work_name(part)))
    return out


def _write_partition(source, target, drop, globals_file, offset, meta_json, top):
    """Write step (runs on a worker): one sorted partition with its global columns.

    ``globals_file`` (written by the client) holds the partition's ranks and
    running sums, row by row, so that they travel through the work directory,
    not through the task graph.
    """
    import pyarrow as pa

    t = _read_work(source)
    if drop.size:
        keep = np.ones(t.num_rows, bool)
        keep[drop] = False
        t = t.filter(pa.array(keep))
    with np.load(globals_file) as g:
        ranks, cums = g["rank"], g["cumulative"]
    row = t["catalogue_row"].to_numpy() + np.int64(offset)
    for name, values in (
        ("rank", ranks),
        ("catalogue_row", row),
        ("cumulative_expected_number", cums),
    ):
        t = t.set_column(t.schema.get_field_index(name), name, pa.array(values))
    info = json.loads(t.schema.metadata[b"ptaconstrain"])
    info["meta"] = json.loads(meta_json)
    _write_parquet(t.replace_schema_metadata({b"ptaconstrain": json.dumps(info).encode()}), target)
    return t.slice(0, top)  # the partition's best rows: candidates for the top of the ranking


def _tasks(path, kind, columns):
    """(source, pixel) of every partition, in catalogue order (the in-memory readers' order)."""
    if kind == "hats":
        import lsdb

        cat = lsdb.open_catalog(path, columns=columns)
        pixels = [(int(p.order), int(p.pixel)) for p in cat.get_healpix_pixels()]
        rows = _pixel_rows(cat)
        out = []
        for part, pixel in zip(cat.to_delayed(), pixels, strict=True):  # a loop over pixels
            n = rows.get(pixel, 0)
            if n <= 2 * PARTITION_ROWS:
                out.append((part, pixel))
                continue
            starts = list(range(0, n, PARTITION_ROWS))  # a large pixel: slices of it
            ends = [*starts[1:], None]  # the last slice takes whatever is left
            out += [((part, a, b), pixel) for a, b in zip(starts, ends, strict=True)]
        return out
    import pyarrow.dataset as ds

    out = []
    for frag in ds.dataset(str(path), format="parquet").get_fragments():
        group, n = [], 0
        for i, rg in enumerate(frag.row_groups):  # a loop over row groups
            if rg.num_rows > PARTITION_ROWS:  # a large row group: slices of it, one per task
                if group:
                    out.append(((frag.path, group, 0, n), None))
                    group, n = [], 0
                out += [
                    ((frag.path, [i], a, min(a + PARTITION_ROWS, rg.num_rows)), None)
                    for a in range(0, rg.num_rows, PARTITION_ROWS)
                ]
                continue
            group.append(i)
            n += rg.num_rows
            if n >= PARTITION_ROWS:
                out.append(((frag.path, group, 0, n), None))
                group, n = [], 0
        if group:
            out.append(((frag.path, group, 0, n), None))
    return out


def _pixel_rows(cat):
    """(order, pixel) -> rows of a HATS catalogue's partitions, from its metadata ({} if none)."""
    import warnings

    try:
        with warnings.catch_warnings():
            # hats sets a pandas option that pandas 3 deprecates: its internals, not the user's
            warnings.simplefilter("ignore", DeprecationWarning)
            stats = cat.hc_structure.per_pixel_statistics(include_stats=["row_count"])
    except Exception:  # no _metadata file, or another hats version: partitions taken whole
        return {}
    counts = stats.iloc[:, 0].to_numpy()
    return {(int(p.order), int(p.pixel)): int(n) for p, n in zip(stats.index, counts, strict=True)}


def _source_columns(path, kind):
    """The catalogue's column names and the units astropy stored in its Parquet metadata."""
    from .columnar import parquet_units

    if kind == "hats":
        import lsdb

        cat = lsdb.open_catalog(path)
        schema = getattr(cat.hc_structure, "schema", None)
        return [str(c) for c in cat.columns], parquet_units(schema)
    import pyarrow.dataset as ds

    schema = ds.dataset(str(path), format="parquet").schema
    return list(schema.names), parquet_units(schema)


def _read_rows(work, part, positions, columns):
    """Columns of a few rows (local positions) of one partition's work file."""

    t = _read_work(Path(work) / _work_name(part), columns)
    return {k: t[k].to_numpy(zero_copy_only=False)[positions] for k in columns}


def _gather(work, parts, positions, columns):
    """Columns of rows given by (partition, local position), in the order given."""
    out = {k: np.empty(parts.size, dtype=object) for k in columns}
    for p in np.unique(parts):  # a loop over partitions
        sel = np.flatnonzero(parts == p)
        got = _read_rows(work, int(p), positions[sel], columns)
        for k in columns:
            out[k][sel] = got[k]
    return out


def _locate(index, starts):
    part = np.searchsorted(starts, index, "right") - 1
    return part, index - starts[part]


def _duplicates(results, starts, offsets, work):
    """Indices (into the concatenated ranked rows) of repeated names but their first occurrence.

    Returns (indices, catalogue rows, names, mass sources) of the rows to drop.
    """
    hashes = np.concatenate([r.pop("hash", np.zeros(0, np.uint64)) for r in results])
    s = np.sort(hashes)
    repeated = np.unique(s[1:][s[1:] == s[:-1]])
    del s
    if not repeated.size:
        return np.zeros(0, np.int64), None, None, None
    if not repeated.size:
        return np.zeros(0, np.int64), None, None, None
    cand = np.flatnonzero(np.isin(hashes, repeated))
    part, pos = _locate(cand, starts)
    got = _gather(work, part, pos, ("name", "catalogue_row", "mass_source"))
    rows = offsets[part] + got["catalogue_row"].astype(np.int64) - 1
    first = np.argsort(rows, kind="stable")  # the first occurrence is the earliest row
    dup = np.zeros(cand.size, bool)
    dup[first] = duplicate_mask(got["name"][first].astype(str))
    return cand[dup], rows[dup], got["name"][dup].astype(str), got["mass_source"][dup].astype(str)


def _global_order(key, tie, index, starts, work):
    """Merge the partitions' sorted keys: key, tie-breaker, then name (as in memory).

    ``index`` maps each row to its place among all ranked rows (for reading names;
    None: the same place, no row was dropped).
    """
    order = np.lexsort((tie, key))  # stable: each partition's own (name) order is kept
    ks, ts = key[order], tie[order]
    eq = (ks[1:] == ks[:-1]) & (ts[1:] == ts[:-1])
    del ks, ts
    if eq.any():  # equal keys in different partitions: order those rows by name
        mark = np.zeros(order.size, dtype=bool)
        mark[1:] |= eq
        mark[:-1] |= eq
        group = np.cumsum(np.r_[True, ~eq])[mark]
        sub = order[mark]
        part, pos = _locate(sub if index is None else index[sub], starts)
        names = name_bytes(_gather(work, part, pos, ("name",))["name"].astype(str))
        order[mark] = sub[np.lexsort((names, group))]
    return order


def _reduce(results, work, on_bad, name):
    """Client step: rejections, duplicates, global ranks and running sums per partition."""
    sizes = np.array([r["n_rows"] for r in results], dtype=np.int64)
    offsets = np.r_[0, np.cumsum(sizes)[:-1]].astype(np.int64)
    rejections = Rejections()
    for r, off in zip(results, offsets, strict=True):
        rejections.extend(r["rejections"], off)
    rejections.check(on_bad)
    n_ok = np.array([r["n_ranked"] for r in results], dtype=np.int64)
    starts = np.r_[0, np.cumsum(n_ok)].astype(np.int64)
    drop, drop_rows, drop_names, drop_sources = _duplicates(results, starts, offsets, work)
    sources = {}
    for r in results:
        for k, v in r.get("sources", {}).items():
            sources[k] = sources.get(k, 0) + int(v)
    if drop.size:
        rejections.add(drop_rows, drop_names, DUPLICATE_REASON)
        rejections.check(on_bad)
        for k in drop_sources:
            sources[k] -= 1
    sources = {k: v for k, v in sources.items() if v}
    n_ranked = int(starts[-1] - drop.size)
    if not n_ranked:
        raise no_rows_error(name, rejections)

    def column(k):  # each partition's array is dropped once concatenated
        col = np.concatenate([r.pop(k) for r in results if r["n_ranked"]])
        return col if not drop.size else np.delete(col, drop)

    index = np.delete(np.arange(starts[-1]), drop) if drop.size else None
    order = _global_order(column("key"), column("tie"), index, starts, work)
    rank = np.empty(n_ranked, np.int64)
    rank[order] = np.arange(1, n_ranked + 1)
    cum_sorted = np.cumsum(np.nan_to_num(column("expected")[order]))
    del order
    total = float(cum_sorted[-1])
    # kept rows of each partition: its slice of ``index``
    bounds = starts if index is None else np.searchsorted(index, starts)
    dropped = [
        drop[(drop >= a) & (drop < b)] - a for a, b in zip(starts[:-1], starts[1:], strict=True)
    ]
    plan = [
        (p, dropped[p], rank[bounds[p] : bounds[p + 1]], offsets[p])
        for p in range(len(results))
        if results[p]["n_ranked"]
    ]
    return rejections, plan, cum_sorted, int(sizes.sum()), sources, n_ranked, total


def _gather_as_completed(jobs):
    """Compute delayed jobs on the current client, fetching each result as it completes.

    A result leaves the worker's memory as soon as it is fetched, so the workers
    never hold the small arrays of every partition at once.
    """
    from distributed import as_completed, get_client

    client = get_client()
    futures = client.compute(jobs)
    where = {f.key: i for i, f in enumerate(futures)}
    results = [None] * len(futures)
    for future in as_completed(futures):  # a loop over partitions
        results[where[future.key]] = future.result()
        future.release()
    return results


def _run(path, kind, plan, colnames, units, chunk_size, on_bad, work, meta_of, say, top):
    """Map, reduce and write on the cluster; the ranking lands in ``work/ranking.parquet``.

    Returns the rejections, the meta, rows read, rows ranked, the expected total and
    the best ``top`` rows (an Arrow table in rank order).
    """
    import dask

    columns = with_masks(list(dict.fromkeys(plan.resolved.values())), colnames)
    tasks = _tasks(path, kind, columns)
    say(f"ranking {len(tasks)} partitions")
    rank_part = dask.delayed(_rank_partition, pure=False)
    results = _gather_as_completed(
        [
            rank_part(source, i, plan, chunk_size, columns, units, str(work), pixel)
            for i, (source, pixel) in enumerate(tasks)
        ]
    )
    say("merging the partitions' orders")
    reduced = _reduce(results, work, on_bad, path.name)
    rejections, parts, cum_sorted, n_read, sources, n_ranked, total = reduced
    del results
    meta = meta_of(rejections, n_ranked, sources, n_read)
    meta_json = json.dumps(meta, default=str)
    say("writing the ranking")
    out_dir = work / PARQUET_DIR
    out_dir.mkdir()
    write = dask.delayed(_write_partition, pure=False)
    jobs = []
    for p, drop, ranks, offset in parts:  # a loop over partitions
        if not ranks.size:
            continue
        globals_file = work / f"globals.{p:06d}.npz"
        np.savez(globals_file, rank=ranks, cumulative=cum_sorted[ranks - 1])
        jobs.append(
            write(
                str(work / _work_name(p)),
                str(out_dir / _part_name(p)),
                drop,
                str(globals_file),
                int(offset),
                meta_json,
                int(top),
            )
        )
    del parts, cum_sorted
    import pyarrow as pa
    import pyarrow.compute as pc

    best = pa.concat_tables(_gather_as_completed(jobs))
    best = best.take(pc.sort_indices(best["rank"])[: int(top)])
    return rejections, meta, n_read, n_ranked, total, best


class ParquetRanking:
    """A ranking written as a directory of Parquet files, read back in rank order.

    Each file holds one partition's rows in rank order; the ``rank`` column
    places them in the whole ranking.  Plays the part of
    :class:`~ptaconstrain.catalogue.ranked_runs.RankedRuns` for a
    :class:`~ptaconstrain.catalogue.ranking.Ranking` made by the Dask engine.

    Parameters
    ----------
    directory : path-like
        ``ranking.parquet`` as written by :func:`rank_catalog_dask`.

    Examples
    --------
    >>> import tempfile, pyarrow as pa, pyarrow.parquet as pq
    >>> from pathlib import Path
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     d = Path(tmp) / "ranking.parquet"
    ...     d.mkdir()
    ...     for i, (ranks, names) in enumerate([([1, 4], ["A", "D"]), ([2, 3], ["B", "C"])]):
    ...         part = pa.table({"rank": ranks, "name": names})
    ...         pq.write_table(part, d / f"part.{i:06d}.parquet")
    ...     [b.tolist() for b in (blk["name"] for blk in ParquetRanking(d).blocks(3))]
    [[b'A', b'B', b'C'], [b'D']]
    """

    def __init__(self, directory):
        import pyarrow.dataset as ds

        self.directory = Path(directory)
        self._files = [str(f) for f in sorted(self.directory.glob("part.*.parquet"))]
        self._dataset = ds.dataset(self._files, format="parquet")
        self.n_rows = int(self._dataset.count_rows())
        info = json.loads((self._dataset.schema.metadata or {}).get(b"ptaconstrain", b"{}"))
        self.units = info.get("units", {})

    def _names(self, columns):
        if columns is None:
            return None
        names = ["catalogue_row" if c == "row" else c for c in columns]
        return list(dict.fromkeys([*names, "rank"]))

    def rows(self, table, columns=None):
        """Arrow rows of the ranking as a dict of arrays / Quantities (kernel-row form).

        Text columns become UTF-8 bytes; ``catalogue_row`` becomes the 0-based ``row``.

        Parameters
        ----------
        table : pyarrow.Table
            Rows of the ranking's files.
        columns : list of str, optional
            Keep ``rank``, ``mass`` and ``cumulative_expected_number`` only when named here.

        Returns
        -------
        dict
        """
        skip = {"rank", "catalogue_row", "mass", "cumulative_expected_number"}
        out = {}
        for name in table.column_names:
            v = table[name].to_numpy()
            if name == "catalogue_row":
                out["row"] = v - 1
                continue
            if name in skip and (columns is None or name not in columns):
                continue
            if v.dtype == object:
                v = np.char.encode(v.astype(str), "utf-8")
            unit = self.units.get(name)
            out[name] = v * u.Unit(unit) if unit and name in _UNITS else v
        return out

    def blocks(self, size=1 << 18, columns=None):
        """Yield the rows in rank order as dicts of arrays / Quantities (kernel-row form).

        A merge of the files: each is read sequentially, a batch at a time.
        """
        import pyarrow as pa
        import pyarrow.compute as pc
        import pyarrow.parquet as pq

        size = int(size)
        names = self._names(columns)
        readers = [
            pq.ParquetFile(f).iter_batches(batch_size=min(size, _ROW_GROUP), columns=names)
            for f in self._files
        ]
        held = [None] * len(readers)
        for last in range(size, self.n_rows + size, size):  # ranks up to ``last``
            pieces = []
            for i, reader in enumerate(readers):  # a loop over files
                while reader is not None and (
                    held[i] is None or held[i].num_rows == 0 or held[i]["rank"][-1].as_py() <= last
                ):
                    batch = next(reader, None)
                    if batch is None:
                        readers[i] = reader = None
                    else:
                        new = pa.Table.from_batches([batch])
                        held[i] = new if held[i] is None else pa.concat_tables([held[i], new])
                if held[i] is not None and held[i].num_rows:
                    k = int(np.searchsorted(held[i]["rank"].to_numpy(), last, "right"))
                    pieces.append(held[i].slice(0, k))
                    held[i] = held[i].slice(k)
            table = pa.concat_tables(pieces).combine_chunks()
            yield self.rows(table.take(pc.sort_indices(table["rank"])), columns)

    def column(self, key):
        """One column of every row, in rank order."""
        t = self._dataset.to_table(columns=self._names([key]))
        order = np.argsort(t["rank"].to_numpy())
        return self.rows(t.take(order), [key])["row" if key == "catalogue_row" else key]

    def take(self, rows, columns):
        """The given 0-based rank positions of ``columns`` as an astropy Table (a sample)."""
        import pyarrow.compute as pc
        from astropy.table import Table

        ranks = np.asarray(rows, dtype=np.int64) + 1
        t = self._dataset.to_table(
            columns=self._names(columns), filter=pc.field("rank").isin(np.unique(ranks))
        )
        got = t["rank"].to_numpy()
        order = np.argsort(got)
        where = order[np.searchsorted(got[order], ranks)]
        return Table({k: t[k].to_numpy(zero_copy_only=False)[where] for k in columns})

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
    colmap = column_map(columns)
    rels = select_relations(relations)
    colnames, units = _source_columns(path, kind)
    plan = ranking_plan(
        colmap,
        rels,
        colnames,
        path.name,
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
            where = f"scheduler {scheduler}" if scheduler else f"{workers} local workers"

            def meta_of(rejections, n_ranked, sources, n_read):
                meta = ranking_meta(path.name, plan, on_bad, rejections, n_ranked, sources, n_read)
                meta["engine"] = f"dask ({where}); {kind} input"
                return meta

            top = max(int(top_rows), 1)
            rejections, meta, n_read, n_ranked, total, best = _run(
                path, kind, plan, colnames, units, int(chunk_size), on_bad, work, meta_of, say, top
            )
        if final.exists():  # overwrite: the old ranking goes only now
            os.rename(final, work / "replaced")
        os.rename(work / PARQUET_DIR, final)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    runs = ParquetRanking(final)
    table = ranking_table(runs.rows(best), metric, plan.sensitivity.verb)
    for key in ("name", "mass_source"):
        table[key] = np.char.decode(np.asarray(table[key]), "utf-8")
    provenance = ranking_provenance(path, files, inputs)
    return ranked_result(table, plan, meta, provenance, rejections, n_read, n_ranked, total, runs)
