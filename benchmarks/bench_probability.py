"""Benchmark: exclusion probability by sort-and-search against its floor and brute force.

* fast path: :func:`ptaconstrain.analysis.probability.exclusion_probability` (one
  integer sort of the per-sample ln u keys carrying each sample's index, a two-level
  binary search for every cell, exact above-ISCO counts from each sample's ISCO grid
  count laid out in rank order and one block table), samples given; it also makes the
  best-fit map and ln u, which the floor is given;
* floor, on the same input: ``np.sort`` of the N values of ln u plus the
  ``np.searchsorted`` of every cell's threshold -- the least any sort-and-search
  method does;
* brute force: for chunks of samples, broadcast ``ln u_s > threshold(q, P)`` and the
  per-sample ISCO test over every cell and count, O(N x cells), on ``--brute-samples``.

Printed: the machine line, wall and CPU time (fast path and floor: best of 15 runs,
interleaved in rounds of 3; the N/10 and paired runs best of 3, the rest one run), the ratios
fast / floor and brute / fast, whether the probabilities equal the brute force bit for
bit, the growth exponent of the fast path between N/10 and N, and peak traced memory
(tracemalloc, in separate runs).  Targets: 10^6 samples, wide-error host, fast path
within 2 x the floor; results identical to brute force.

Hosts are fictional (invented demo values).  Run:

    python benchmarks/bench_probability.py [--samples 1000000] [--brute-samples 100000]
"""

import argparse
import math
import tracemalloc

import numpy as np
from astropy import units as u
from benchtools import best_of, machine_line, timed

from ptaconstrain.analysis.exclusion import default_mass_ratios, default_periods
from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.analysis.sampling import sample_host
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import load_curve

HOSTS = {
    # invented demo galaxy (examples/demo_hosts.ecsv): ISCO matters only in the far tail
    "Velmora Central": dict(
        mass=2.1e10, distance=105, mass_err_dex=0.12, distance_err=7, mass_distance=100
    ),
    # invented, deliberately extreme: most periods above the ISCO for part of the samples
    "Tamsel BCG (wide error)": dict(
        mass=4e10, distance=210, mass_err_dex=(0.25, 0.4), distance_err=15, mass_distance=200
    ),
}


def brute_force(prob_map, chunk=128):
    """Count exclusions sample by sample over every cell, in chunks of samples."""
    det = prob_map.deterministic
    s0 = wf.strain_prefactor(det.host.mass, det.host.distance, det.host.redshift)
    log_u = prob_map.samples.log_scale(s0)
    eta = wf.symmetric_mass_ratio(det.mass_ratio)
    with np.errstate(invalid="ignore"):
        thr = np.log(det.eta_min)[None, :] - np.log(eta)[:, None]
    f = det.frequency.to_value(u.Hz)
    f_isco = prob_map.samples.isco_frequency.to_value(u.Hz)
    count = np.zeros(thr.shape, dtype=np.int64)
    exists_any = np.zeros(f.size, dtype=bool)
    for start in range(0, log_u.size, chunk):
        lu = log_u[start : start + chunk]
        exists = f[None, :] <= f_isco[start : start + chunk, None]
        exists_any |= exists.any(axis=0)
        count += ((lu[:, None, None] > thr[None]) & exists[:, None, :]).sum(axis=0)
    p = count / log_u.size
    p[:, np.isnan(det.eta_min) | ~exists_any] = np.nan
    return p


def peak_mb(fn):
    tracemalloc.start()
    tracemalloc.reset_peak()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 2**20


def thresholds(prob_map):
    det = prob_map.deterministic
    with np.errstate(invalid="ignore"):
        return (
            np.log(det.eta_min)[None, :] - np.log(wf.symmetric_mass_ratio(det.mass_ratio))[:, None]
        )


def floor(log_u, thr):
    """Sort the N values once and search every cell: the sort-and-search floor."""
    return np.searchsorted(np.sort(log_u), thr, side="right")


def line(label, wall, cpu, extra=""):
    print(f"  {label:<34s}: wall {wall * 1e3:9.1f} ms  CPU {cpu * 1e3:9.1f} ms  {extra}")


def run(name, params, curve, n, n_brute, grid):
    host = Host(name, params.pop("mass"), params.pop("distance"), **params)
    q = default_mass_ratios(grid)
    period = default_periods(curve, grid)
    draws = sample_host(host, n, seed=2024)
    tenth = sample_host(host, max(1, n // 10), seed=2024)

    def fast(d=draws):
        return exclusion_probability(host, curve, q, period, samples=d)

    res = fast()  # warm-up (imports)
    s0 = wf.strain_prefactor(host.mass, host.distance, host.redshift)
    log_u, thr = draws.log_scale(s0), thresholds(res)
    w_fast = c_fast = w_floor = c_floor = math.inf
    for _ in range(5):  # interleaved, so that both see the same machine load; best of 15
        _, w, c = best_of(3, fast)
        w_fast, c_fast = min(w_fast, w), min(c_fast, c)
        _, w, c = best_of(3, floor, log_u, thr)
        w_floor, c_floor = min(w_floor, w), min(c_floor, c)
    _, w_tenth, c_tenth = best_of(3, fast, tenth)
    _, w_sampling, c_sampling = timed(
        exclusion_probability, host, curve, q, period, samples=n, seed=2024
    )

    small = sample_host(host, n_brute, seed=2024)
    fast_small, w_fs, c_fs = best_of(3, fast, small)
    slow, w_brute, c_brute = timed(brute_force, fast_small)
    identical = np.array_equal(fast_small.probability, slow, equal_nan=True)
    diff = np.nanmax(np.abs(fast_small.probability - slow))
    mem_fast = peak_mb(fast)
    partial = int(np.sum((res.above_isco_fraction > 0) & (res.above_isco_fraction < 1)))

    print(
        f"\n{name}: {n} samples, {q.size} x {period.size} grid, "
        f"{partial} periods partly above the ISCO"
    )
    line("fast path (samples given)", w_fast, c_fast)
    line("floor: sort N + search cells", w_floor, c_floor)
    print(
        f"  {'ratio fast / floor':<34s}: wall {w_fast / w_floor:6.2f} x   "
        f"CPU {c_fast / c_floor:6.2f} x   (target <= 2 x)"
    )
    line("fast path incl. sampling", w_sampling, c_sampling)
    line(
        f"fast path at {tenth.n} samples",
        w_tenth,
        c_tenth,
        f"growth N^{math.log(w_fast / w_tenth) / math.log(n / tenth.n):.2f} (wall), "
        f"N^{math.log(c_fast / c_tenth) / math.log(n / tenth.n):.2f} (CPU)",
    )
    line(f"fast path at {n_brute} (paired run)", w_fs, c_fs)
    line(
        f"brute force at {n_brute} samples",
        w_brute,
        c_brute,
        f"ratio {w_brute / w_fs:.0f} x (wall), {c_brute / c_fs:.0f} x (CPU)",
    )
    print(
        f"  probabilities equal brute force bit for bit: {identical} (max |difference| {diff:.3g})"
    )
    print(f"  peak traced memory, fast path   : {mem_fast:7.1f} MB")
    c95 = res.tightest(0.95)
    best = res.deterministic.tightest()
    if best and c95:
        print(
            f"  tightest bound: best-fit q > {best[1]:.3g} {res.verb} at P = {best[0]:.3g}; "
            f"95% credible q > {c95[1]:.3g} at P = {c95[0]:.3g}"
        )


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=1_000_000)
    ap.add_argument("--brute-samples", type=int, default=100_000)
    ap.add_argument("--grid", type=int, default=300)
    args = ap.parse_args()
    print(machine_line())
    curve = load_curve(data_file("synthetic_h0_limit.ecsv"))
    for name, params in HOSTS.items():
        run(name, dict(params), curve, args.samples, args.brute_samples, args.grid)


if __name__ == "__main__":
    main()
