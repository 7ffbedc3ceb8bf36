"""Benchmark: exclusion_map on a 1000 x 1000 grid against a plain Python double loop.

The reference evaluates h0 cell by cell with ``strain_amplitude`` and compares
it with the interpolated limit, on a 100 x 100 subgrid of the same axes; the
per-cell speed ratio compares like with like.  Also times ``ptaconstrain
--help`` in a fresh interpreter.  Targets: full map < 0.3 s; --help < 0.5 s.

Run:  python benchmarks/bench_exclusion.py
"""

import subprocess
import sys
import time

import numpy as np
from astropy import units as u

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import load_curve


def best_of(fn, repeat=5):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def loop_reference(host, curve, q, period):
    """Plain double loop: one strain_amplitude call and one comparison per cell."""
    out = np.zeros((q.size, period.size), dtype=bool)
    f_isco = wf.isco_frequency(host.mass, host.redshift)
    for j, p in enumerate(period):
        f = wf.gw_frequency(p)
        lim = curve.h0_threshold(f)
        for i, qi in enumerate(q):
            h = wf.strain_amplitude(host.mass, qi, f, host.distance, host.redshift)
            out[i, j] = bool(np.isfinite(lim) and f < f_isco and h.value > lim)
    return out


def main():
    host = Host("bench", 2e10, 100)
    curve = load_curve(data_file("synthetic_h0_limit.ecsv"))
    q = np.geomspace(1e-4, 1, 1000)
    period = np.geomspace(0.05, 60, 1000) * u.yr
    t_fast, full = best_of(lambda: exclusion_map(host, curve, q, period))
    qs, ps = q[::10], period[::10]
    t0 = time.perf_counter()
    ref = loop_reference(host, curve, qs, ps)
    t_loop = time.perf_counter() - t0
    agree = np.array_equal(full.excluded[::10, ::10], ref)

    per_cell_fast = t_fast / full.excluded.size
    per_cell_loop = t_loop / ref.size
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "ptaconstrain.cli", "--help"], check=True,
                   capture_output=True)
    t_help = time.perf_counter() - t0

    print(f"exclusion_map 1000 x 1000 : {t_fast * 1e3:8.1f} ms   (target < 300 ms)")
    print(f"python double loop 100x100: {t_loop * 1e3:8.1f} ms")
    print(f"per cell: fast {per_cell_fast * 1e9:.1f} ns, loop {per_cell_loop * 1e6:.1f} us, "
          f"ratio {per_cell_loop / per_cell_fast:,.0f} x")
    print(f"subgrid results identical : {agree}")
    print(f"ptaconstrain --help       : {t_help * 1e3:8.1f} ms   (target < 500 ms)")


if __name__ == "__main__":
    main()
