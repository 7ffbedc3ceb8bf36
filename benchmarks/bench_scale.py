"""Benchmark: the Dask engine on a large invented catalogue, side by side with the in-memory one.

1. Generation (timed on its own): an invented catalogue of ``--rows`` galaxies
   (default 10^7; the generator of ``bench_rank.py``, block by block) is written
   once as Parquet (row groups of 10^6, never whole in memory) and once as a
   HATS catalogue (``lsdb.from_dataframe``, which holds the frame in memory:
   generation only).
2. In-memory engine: ``rank_catalog`` on the first ``--memory-rows`` rows
   (default 10^6) held as one table, in a fresh process.
3. Dask engine: ``rank_catalog_dask`` on the whole HATS catalogue on a local
   cluster of 1 worker, then of 2 workers (``--workers``), each in a fresh
   process.  Cluster start-up is timed apart from the ranking.

For each run: wall and CPU time (the Dask runs add the workers' CPU), rows per
second, peak RSS of the driving process and of every worker (the target: each
Dask worker under 2 GB whatever the catalogue's size), and the 1 -> 2 worker
scaling of the throughput.  The Dask ranking must list its first rows exactly as
the in-memory ranking of the same rows would -- checked on the whole catalogue
when ``--rows`` equals ``--memory-rows``.

Usage:  python benchmarks/bench_scale.py [--rows 10000000] [--memory-rows 1000000]
        [--workers 1,2] [--dir DIR] [--keep]
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


def generate(n, where):
    """Write the invented catalogue as Parquet and as HATS; returns the two paths."""
    import lsdb
    import pandas as pd
    import pyarrow as pa
    import pyarrow.parquet as pq

    parquet, hats = where / "galaxies.parquet", where / "galaxies_hats"
    writer, frames = None, []
    for start in range(0, n, BLOCK):  # a loop over blocks of 10^6 rows
        frame = _block(start, min(BLOCK, n - start))
        table = pa.Table.from_pandas(frame, preserve_index=False)
        writer = writer or pq.ParquetWriter(parquet, table.schema)
        writer.write_table(table, row_group_size=BLOCK)
        frames.append(frame)
    writer.close()
    whole = pd.concat(frames, ignore_index=True)
    del frames
    # partitions of up to 250,000 rows (few, so their fixed cost is small); no margin cache
    lsdb.from_dataframe(
        whole, lowest_order=0, highest_order=6, partition_rows=250_000, margin_threshold=None
    ).write_catalog(hats)
    return parquet, hats


def _maxrss_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _worker_usage():
    import resource as r

    u = r.getrusage(r.RUSAGE_SELF)
    return {"cpu": u.ru_utime + u.ru_stime, "rss_mb": u.ru_maxrss / 1024.0}


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


def child_dask(hats, workers, out_dir, out):
    """Fresh process: start a local cluster, rank the HATS catalogue on it."""
    from ptaconstrain.catalogue.cluster import dask_client
    from ptaconstrain.catalogue.dask_engine import rank_catalog_dask
    from ptaconstrain.data import path
    from ptaconstrain.sensitivity.curve import load_curve

    curve = load_curve(path(CURVE))
    w0 = time.perf_counter()
    with dask_client(workers) as client:
        start = time.perf_counter() - w0
        before = client.run(_worker_usage)
        r, wall, cpu = timed(
            rank_catalog_dask,
            hats,
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
    print(f"bench_scale: {a.rows:,} invented galaxies; {machine_line()}")
    (parquet, hats), wall, _ = timed(generate, a.rows, base)
    print(f"  generation (Parquet + HATS, separate from the ranking): {wall:.1f} s wall")
    m = _run_child("memory", parquet, mem_rows)
    rate_m = m["rows"] / m["wall"]
    print(
        f"  in-memory engine, {mem_rows:,} rows: {m['wall']:.1f} s wall / {m['cpu']:.1f} s "
        f"CPU, {rate_m:,.0f} rows/s, peak RSS {m['rss_mb']:,.0f} MB"
    )
    rates = {}
    for w in sizes:
        d = _run_child("dask", hats, w, base / f"out-{w}")
        rates[w] = d["rows"] / d["wall"]
        print(
            f"  dask engine, {w} worker(s), {d['rows']:,} rows: {d['wall']:.1f} s wall / "
            f"{d['cpu']:.1f} s CPU (client + workers), {rates[w]:,.0f} rows/s "
            f"({rates[w] / w:,.0f} per worker), cluster start {d['start']:.1f} s; "
            f"peak RSS client {d['rss_mb']:,.0f} MB, workers "
            + ", ".join(f"{x:,.0f}" for x in d["worker_rss_mb"])
            + " MB"
            + ("" if max(d["worker_rss_mb"]) < 2048 else "  OVER 2 GB")
        )
        if a.rows == mem_rows:
            same = d["names"] == m["names"][: len(d["names"])]
            print(f"    first {len(d['names'])} names as the in-memory engine: {same}")
    if 1 in rates and 2 in rates:
        print(
            f"  scaling 1 -> 2 workers: {rates[2] / rates[1]:.2f} x "
            f"(ideal 2 x on two idle cores); dask (2) / in-memory rows/s: "
            f"{rates[2] / rate_m:.2f} x"
        )
    if not a.keep and a.dir is None:
        import shutil

        shutil.rmtree(base, ignore_errors=True)


if __name__ == "__main__":
    main()
