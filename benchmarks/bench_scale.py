"""Benchmark: the Dask engine on a large invented catalogue, side by side with the in-memory one.

1. Generation (timed on its own, never whole in memory): an invented catalogue of ``--rows``
   galaxies (default 10^7; the generator of ``bench_rank.py``, block by block) is written once
   as Parquet (``ParquetWriter``, a row group per block of 10^6) and once as a HATS catalogue:
   each block's rows go to HEALPix pixels of one fixed order (the hats library's spatial index),
   appended to one Parquet file per pixel; each pixel file is then sorted by the index and the
   catalogue's metadata written with the hats library.  The catalogue is read back with lsdb
   and the spatial index of a sample of partitions checked against healpy.
2. In-memory engine: ``rank_catalog`` on the first ``--memory-rows`` rows (default 10^6) held
   as one table, in a fresh process.
3. Dask engine: ``rank_catalog_dask`` on the whole catalogue (``--inputs``: HATS, Parquet or
   both) on a local cluster of 1 worker, then of 2 workers (``--workers``), each in a fresh
   process, workers limited to 2 GB each (the default), no dashboard, no profiler (checked).
   Cluster start-up is timed apart from the ranking.

For each run: wall and CPU time (the Dask runs add the workers' CPU), rows per second and
per CPU second, peak RSS (VmHWM) of the driving process (client and, for a local cluster,
scheduler) and of every worker, and the 1 -> 2 worker scaling of the throughput.  The Dask
ranking must list its first rows exactly as the in-memory ranking of the same rows would --
checked when ``--rows`` equals ``--memory-rows`` (the row-for-row equality of the engines is
tests/catalogue/test_scale.py).

Usage:  python benchmarks/bench_scale.py [--rows 10000000] [--memory-rows 1000000]
        [--workers 1,2] [--inputs hats,parquet] [--dir DIR] [--keep]
"""

import argparse
import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from benchtools import machine_line, timed

CURVE = "synthetic_h0_limit.ecsv"
BLOCK = 1_000_000


def _block(start, n, seed=7):
    """Rows start .. start+n of the invented catalogue, as a pandas DataFrame."""
    from bench_rank import synthetic_catalogue

    t = synthetic_catalogue(n, seed=seed + start // BLOCK)
    t["name"] = np.char.add("Synth-", np.arange(start, start + n).astype(str))
    return t.to_pandas()


def _hats_order(n, rows_per_pixel=250_000):
    """The fixed HEALPix order of the partitions: the smallest giving about
    ``rows_per_pixel`` rows per pixel for an isotropic sky (the invented one is)."""
    order = 0
    while 12 * 4**order * rows_per_pixel < n and order < 7:
        order += 1
    return order


def generate(n, where):
    """Write the invented catalogue as Parquet and as HATS, block by block; returns the paths.

    Neither is ever whole in memory: Parquet through one ``ParquetWriter`` (a row
    group per block); HATS by assigning each block's rows to HEALPix pixels of a
    fixed order (the hats library's ``compute_spatial_index``, nested, order 29)
    and appending them to one Parquet file per pixel, then sorting each pixel
    file by its spatial index (one pixel in memory at a time) and writing the
    catalogue's metadata with the hats library (``_metadata``, ``partition_info.csv``,
    ``hats.properties``).
    """
    import hats
    import pyarrow as pa
    import pyarrow.parquet as pq
    from hats.catalog import CatalogType, PartitionInfo, TableProperties
    from hats.pixel_math import HealpixPixel
    from hats.pixel_math.spatial_index import SPATIAL_INDEX_COLUMN, compute_spatial_index

    parquet, hats_dir = where / "galaxies.parquet", where / "galaxies_hats"
    order = _hats_order(n)
    shift = 2 * (29 - order)
    writer, pixel_writers = None, {}
    for start in range(0, n, BLOCK):  # a loop over blocks of 10^6 rows
        frame = _block(start, min(BLOCK, n - start))
        table = pa.Table.from_pandas(frame, preserve_index=False)
        writer = writer or pq.ParquetWriter(parquet, table.schema)
        writer.write_table(table, row_group_size=BLOCK)
        index = compute_spatial_index(frame["ra"].to_numpy(), frame["dec"].to_numpy())
        table = table.append_column(SPATIAL_INDEX_COLUMN, pa.array(index))
        pixel = index >> shift
        by_pixel = np.argsort(pixel, kind="stable")
        pixels, first = np.unique(pixel[by_pixel], return_index=True)
        for p, a, b in zip(pixels, first, np.r_[first[1:], pixel.size], strict=True):
            if p not in pixel_writers:  # a loop over pixels
                path = hats.io.pixel_catalog_file(hats_dir, HealpixPixel(order, int(p)))
                Path(path).parent.mkdir(parents=True, exist_ok=True)
                pixel_writers[p] = (path, pq.ParquetWriter(path, table.schema))
            pixel_writers[p][1].write_table(table.take(by_pixel[a:b]))
    writer.close()
    for path, w in pixel_writers.values():
        w.close()
        part = pq.read_table(path)  # one pixel: the invented sky gives ~n / 12 / 4^order rows
        part = part.take(np.argsort(part[SPATIAL_INDEX_COLUMN].to_numpy(), kind="stable"))
        pq.write_table(part, path, row_group_size=BLOCK)
    pixels = [HealpixPixel(order, int(p)) for p in sorted(pixel_writers)]
    total = hats.io.write_parquet_metadata(hats_dir)
    PartitionInfo.from_healpix(pixels).write_to_file(hats_dir / "partition_info.csv")
    TableProperties(
        catalog_name="invented_galaxies",
        catalog_type=CatalogType.OBJECT,
        total_rows=int(total),
        ra_column="ra",
        dec_column="dec",
        healpix_column=SPATIAL_INDEX_COLUMN,
        healpix_order=29,
        hats_order=order,
    ).to_properties_file(hats_dir)
    return parquet, hats_dir


def check_hats(hats_dir, n):
    """The HATS catalogue as lsdb reads it: every row, and the spatial index of a sample.

    The reference for the index is healpy (nested, nside 2^29; Gorski et al. 2005):
    the hats library's index must be healpy's pixel or, for a galaxy on a pixel
    edge (rounding at 0.4 milliarcsecond pixels), one of its neighbours; every
    sampled row must lie in its partition's pixel.  Returns (partitions, rows
    checked, rows whose index differs from healpy's by a neighbour).
    """
    import healpy as hp
    import lsdb

    cat = lsdb.open_catalog(hats_dir)
    pixels = cat.get_healpix_pixels()
    assert int(cat.hc_structure.catalog_info.total_rows) == n, "HATS row count"
    checked = edge = 0
    for pixel, part in list(zip(pixels, cat.to_delayed(), strict=True))[
        :: max(len(pixels) // 4, 1)
    ]:
        frame = part.compute(scheduler="synchronous")
        index = frame.index.to_numpy().astype(np.int64)
        ra, dec = frame["ra"].to_numpy(float), frame["dec"].to_numpy(float)
        ipix = hp.ang2pix(2**29, ra, dec, nest=True, lonlat=True)
        off = np.flatnonzero(index != ipix)
        if off.size:
            near = hp.get_all_neighbours(2**29, ipix[off], nest=True)
            assert np.all(np.any(near == index[off], axis=0)), "spatial index (healpy)"
        assert np.all(index >> (2 * (29 - pixel.order)) == pixel.pixel), "row outside its pixel"
        assert np.all(np.diff(index) >= 0), "pixel not sorted by index"
        checked, edge = checked + index.size, edge + off.size
    return len(pixels), checked, edge


def _maxrss_mb():
    """Peak RSS of this process image in MB: VmHWM (getrusage's ru_maxrss survives exec,
    so a child would report its parent's peak at the fork)."""
    with open("/proc/self/status") as fh:
        for line in fh:
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024.0
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _worker_usage():
    import resource as r

    u = r.getrusage(r.RUSAGE_SELF)
    return {"cpu": u.ru_utime + u.ru_stime, "rss_mb": _maxrss_mb()}


def child_memory(parquet, rows, out):
    """Fresh process: rank the first ``rows`` rows held in memory."""
    import pyarrow.dataset as ds
    from astropy.table import Table

    from ptaconstrain.catalogue import rank_catalog
    from ptaconstrain.data import path
    from ptaconstrain.sensitivity.curve import load_curve

    frame = ds.dataset(str(parquet)).head(rows).to_pandas()
    table = Table.from_pandas(frame)
    del frame
    curve = load_curve(path(CURVE))
    r, wall, cpu = timed(rank_catalog, table, curve, on_bad="skip")
    names = [str(x) for x in r.table["name"][:1000]]
    json.dump(
        {"wall": wall, "cpu": cpu, "rows": rows, "rss_mb": _maxrss_mb(), "names": names},
        open(out, "w"),
    )


def _worker_profiler():
    import dask

    return bool(dask.config.get("distributed.worker.profile.enabled"))


def child_dask(catalogue, workers, out_dir, out):
    """Fresh process: start a local cluster, rank the catalogue (HATS or Parquet) on it."""
    from ptaconstrain.catalogue.cluster import dask_client
    from ptaconstrain.catalogue.dask_engine import rank_catalog_dask
    from ptaconstrain.data import path
    from ptaconstrain.sensitivity.curve import load_curve

    curve = load_curve(path(CURVE))
    w0 = time.perf_counter()
    with dask_client(workers) as client:
        start = time.perf_counter() - w0
        before = client.run(_worker_usage)
        profiler = any(client.run(_worker_profiler).values())
        # the bokeh dashboard is imported only when the scheduler serves it
        dashboard = "distributed.dashboard.scheduler" in sys.modules
        r, wall, cpu = timed(
            rank_catalog_dask,
            catalogue,
            curve,
            out_dir,
            on_bad="skip",
            scheduler=client.scheduler.address,
        )
        after = client.run(_worker_usage)
    worker_cpu = sum(after[k]["cpu"] - before[k]["cpu"] for k in after)
    json.dump(
        {
            "wall": wall,
            "cpu": cpu + worker_cpu,
            "start": start,
            "profiler": profiler,
            "dashboard": dashboard,
            "rows": r.n_read,
            "rss_mb": _maxrss_mb(),
            "worker_rss_mb": [v["rss_mb"] for v in after.values()],
            "names": [str(x) for x in r.table["name"][:50]],
        },
        open(out, "w"),
    )


def _run_child(*args):
    with tempfile.NamedTemporaryFile(suffix=".json", delete=False) as fh:
        out = fh.name
    cmd = [sys.executable, __file__, "--child", *map(str, args), out]
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    data = json.load(open(out))
    Path(out).unlink()
    return data


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=10_000_000)
    ap.add_argument("--memory-rows", type=int, default=1_000_000)
    ap.add_argument("--workers", default="1,2", help="comma-separated cluster sizes")
    ap.add_argument("--inputs", default="hats", help="hats, parquet or hats,parquet")
    ap.add_argument("--dir", default=None, help="where to write the catalogues (default tmp)")
    ap.add_argument("--keep", action="store_true", help="keep the generated catalogues")
    ap.add_argument("--child", nargs="+", help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.child:
        kind, *rest = a.child
        if kind == "memory":
            child_memory(rest[0], int(rest[1]), rest[2])
        else:
            child_dask(rest[0], int(rest[1]), rest[2], rest[3])
        return
    mem_rows = min(a.memory_rows, a.rows)
    sizes = [int(w) for w in a.workers.split(",")]
    base = Path(a.dir or tempfile.mkdtemp(prefix="bench-scale-"))
    base.mkdir(parents=True, exist_ok=True)
    print(f"bench_scale: {a.rows:,} invented galaxies; {machine_line()}", flush=True)
    (parquet, hats), wall, cpu = timed(generate, a.rows, base)
    n_pix, checked, edge = check_hats(hats, a.rows)
    print(
        f"  generation (Parquet + HATS, block by block; not part of the ranking): "
        f"{wall:.1f} s wall / {cpu:.1f} s CPU, peak RSS so far {_maxrss_mb():,.0f} MB; "
        f"HATS: {n_pix} partitions of order {_hats_order(a.rows)}, read back by lsdb, "
        f"spatial index = healpy's pixel for {checked - edge:,} of {checked:,} rows checked "
        f"(the other {edge}: a neighbour, on a pixel edge)",
        flush=True,
    )
    m = _run_child("memory", parquet, mem_rows)
    rate_m = m["rows"] / m["wall"]
    print(
        f"  in-memory engine, {mem_rows:,} rows: {m['wall']:.1f} s wall / {m['cpu']:.1f} s "
        f"CPU, {rate_m:,.0f} rows/s ({m['rows'] / m['cpu']:,.0f} per CPU second), "
        f"peak RSS {m['rss_mb']:,.0f} MB; {machine_line()}",
        flush=True,
    )
    for source in a.inputs.split(","):
        rates, cpu_rates = {}, {}
        for w in sizes:
            where = hats if source == "hats" else parquet
            d = _run_child("dask", where, w, base / f"out-{source}-{w}")
            rates[w] = d["rows"] / d["wall"]
            cpu_rates[w] = d["rows"] / d["cpu"]
            print(
                f"  dask engine, {source}, {w} worker(s), {d['rows']:,} rows: {d['wall']:.1f} s "
                f"wall / {d['cpu']:.1f} s CPU (client + workers), {rates[w]:,.0f} rows/s "
                f"({rates[w] / w:,.0f} per worker; {cpu_rates[w]:,.0f} per CPU second), "
                f"cluster start {d['start']:.1f} s; peak RSS client {d['rss_mb']:,.0f} MB, "
                "workers "
                + ", ".join(f"{x:,.0f}" for x in d["worker_rss_mb"])
                + " MB (limit 2 GB each)"
                + ("" if max(d["worker_rss_mb"]) < 2000 else "  OVER 2 GB")
                + f"; worker profiler {'on' if d['profiler'] else 'off'}, dashboard "
                + ("on" if d["dashboard"] else "off")
                + f"; {machine_line()}",
                flush=True,
            )
            if a.rows == mem_rows:
                same = d["names"] == m["names"][: len(d["names"])]
                print(f"    first {len(d['names'])} names as the in-memory engine: {same}")
        print(
            f"  {source}: dask per CPU second / in-memory per CPU second: "
            + ", ".join(
                f"{w} worker(s) {cpu_rates[w] / (m['rows'] / m['cpu']):.2f} x" for w in sizes
            )
            + f"; dask ({sizes[0]}) / in-memory rows/s: {rates[sizes[0]] / rate_m:.2f} x",
            flush=True,
        )
        if 1 in rates and 2 in rates:
            print(
                f"  {source}: scaling 1 -> 2 workers: {rates[2] / rates[1]:.2f} x wall "
                f"(ideal 2 x on two idle cores)",
                flush=True,
            )
    if not a.keep and a.dir is None:
        import shutil

        shutil.rmtree(base, ignore_errors=True)


if __name__ == "__main__":
    main()
