"""Benchmark: exclusion_map on 1000 x 1000 and 3000 x 3000 grids against a Python double loop.

The reference evaluates h0 cell by cell with ``strain_amplitude`` and compares
it with the interpolated limit, on a 100 x 100 subgrid of the 1000 x 1000 axes;
the per-cell speed ratio compares like with like.  The per-cell time of the map
at 1000^2 and 3000^2 is measured side by side (best of several runs, wall and
CPU): a ratio near 1 means the cost stays linear in the number of cells (no
temporary that leaves the cache).  Also times ``ptaconstrain --help`` in a fresh
interpreter.  Targets: 1000 x 1000 map < 0.3 s; per-cell ratio 3000^2 / 1000^2
near 1; --help < 0.5 s.

Run:  python benchmarks/bench_exclusion.py
"""

import sys

import numpy as np
from astropy import units as u
from benchtools import best_of, machine_line, process_times, timed

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import load_curve


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


def axes(n):
    return np.geomspace(1e-4, 1, n), np.geomspace(0.05, 60, n) * u.yr


def main():
    print(machine_line())
    host = Host("bench", 2e10, 100)
    curve = load_curve(data_file("synthetic_h0_limit.ecsv"))
    q, period = axes(1000)
    q3, period3 = axes(3000)
    exclusion_map(host, curve, q, period)  # warm-up
    for _ in range(2):  # interleaved, so both sizes see the same machine load
        full, w1, c1 = best_of(5, exclusion_map, host, curve, q, period)
        _, w3, c3 = best_of(3, exclusion_map, host, curve, q3, period3)
    qs, ps = q[::10], period[::10]
    ref, w_loop, c_loop = timed(loop_reference, host, curve, qs, ps)
    agree = np.array_equal(full.excluded[::10, ::10], ref)

    cell1, cell3 = w1 / 1e6, w3 / 9e6
    w_help, c_help = process_times([sys.executable, "-m", "ptaconstrain.cli", "--help"])

    print(
        f"exclusion_map 1000 x 1000 : wall {w1 * 1e3:8.1f} ms  CPU {c1 * 1e3:8.1f} ms"
        "   (target < 300 ms)"
    )
    print(f"exclusion_map 3000 x 3000 : wall {w3 * 1e3:8.1f} ms  CPU {c3 * 1e3:8.1f} ms")
    print(
        f"per cell 1000^2 / 3000^2  : wall {cell1 * 1e9:.1f} / {cell3 * 1e9:.1f} ns "
        f"(ratio {cell3 / cell1:.2f}), CPU {c1 / 1e6 * 1e9:.1f} / {c3 / 9e6 * 1e9:.1f} ns "
        f"(ratio {(c3 / 9e6) / (c1 / 1e6):.2f})   (target: ratio near 1)"
    )
    print(f"python double loop 100x100: wall {w_loop * 1e3:8.1f} ms  CPU {c_loop * 1e3:8.1f} ms")
    print(
        f"per cell: fast {cell1 * 1e9:.1f} ns, loop {w_loop / ref.size * 1e6:.1f} us, "
        f"ratio {w_loop / ref.size / cell1:,.0f} x (wall)"
    )
    print(f"subgrid results identical : {agree}")
    print(
        f"ptaconstrain --help       : wall {w_help * 1e3:8.1f} ms  CPU {c_help * 1e3:8.1f} ms"
        "   (target < 500 ms)"
    )


if __name__ == "__main__":
    main()
