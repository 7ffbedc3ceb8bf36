"""Benchmark: pulsar-array sky maps (issue 13 items 1 and 5).

Prints, measured side by side in one run on the same input, wall and CPU time:

* 100 pulsars, 100 frequencies, nside 64: the per-pulsar exact projection
  w[p, f] plus the map, this code against "today's code" of issue 13, the
  package before the speed work (``--reference-rev``, default c4fea20,
  extracted with ``git archive`` and run by the same child script, turn about,
  best of 3 in each of ``--rounds`` rounds; CPU time counts every BLAS thread).
  Target: >= 8 x faster.  Also this code with the BLAS library's own thread
  count (``blas_threads=None``), in this process.
* 1000 pulsars (same recipe), projection + map, serial and with two worker
  processes (results compared bit for bit), best of 2 each.  Target: < 10 x the
  100-pulsar time.
* the floor: one numpy product of the map's shapes (49152 x 100 @ 100 x 100);
* a brute-force reference: the orientation-averaged S/N of one pixel computed
  directly (dense GLS operator per pulsar, 3 inclinations x 8 polarisations x
  2 phases) and its agreement with the fast map at that pixel;
* memory of the blocked threshold-map pipeline (pixel blocks streamed into the
  FITS file, then whole-sky maps a few frequencies at a time), as peak RSS of a
  child process at nside 256 x 200 frequencies (nside 512 x 1000 extrapolated),
  and a small blocked == unblocked check.

Run: ``python benchmarks/bench_array.py`` (about a minute or two on 2 cores).
"""

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import tracemalloc

import healpy as hp
import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord

import ptaconstrain
from ptaconstrain.sensitivity import PulsarArray, red_noise_basis, timing_design_matrix
from ptaconstrain.sensitivity import antenna as sky

sys.path.insert(0, os.path.dirname(__file__))
from benchtools import best_of, machine_line, timed  # noqa: E402

FREQ = (1.6e-9, 2.5e-7)  # Hz, log-spaced, N_F of them

N_PSR, N_F, NSIDE = 100, 100, 64
MAP_MIB = 256  # ptaconstrain.sensitivity.MAP_BLOCK_BYTES / 2**20


def make_array(seed=1, n_psr=N_PSR):
    """An invented array (uniform sky, 0.1-2 us, 14-28 d, 5-20 yr, 30% red)."""
    rng = np.random.default_rng(seed)
    ra = rng.uniform(0, 360, n_psr)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, n_psr)))
    end = rng.uniform(59600, 60000, n_psr)
    span = rng.uniform(5, 20, n_psr) * 365.25
    red = rng.uniform(size=n_psr) < 0.3
    return PulsarArray(
        [f"B{i:03d}" for i in range(n_psr)],
        SkyCoord(ra * u.deg, dec * u.deg),
        10 ** rng.uniform(-1, np.log10(2), n_psr) * u.us,
        rng.choice([14.0, 21.0, 28.0], n_psr) * u.d,
        end - span,
        end,
        red_amp=np.where(red, 10 ** rng.uniform(-14.5, -13.5, n_psr), 0.0),
        red_gamma=np.where(red, rng.uniform(2, 5, n_psr), np.nan),
        name="bench",
    )


def brute_force_pixel(arr, f, pix):
    """Orientation-averaged rho^2 per unit h0^2 at one pixel, without the factorisation."""
    n = np.array(hp.pix2vec(NSIDE, pix))
    ci, wi = np.polynomial.legendre.leggauss(3)
    psis = np.linspace(0, np.pi, 8, endpoint=False)
    total = np.zeros(f.size)
    for k in range(len(arr)):
        mjd = arr.epochs(k)
        t = (mjd - mjd.mean()) * 86400.0
        sig = arr.toa_rms[k].to_value(u.s)
        cov = sig**2 * np.eye(mjd.size)
        red = red_noise_basis(
            t * u.s,
            (mjd[-1] - mjd[0]) * u.d,
            arr.toa_rms[k],
            arr.cadence[k],
            arr.red_amp[k],
            arr.red_gamma[k],
        )
        if red is not None:
            cov += red[0] @ np.diag(red[1].to_value(u.s**2)) @ red[0].T
        cinv = np.linalg.inv(cov)
        md = timing_design_matrix(mjd)
        g = cinv - cinv @ md @ np.linalg.solve(md.T @ cinv @ md, md.T @ cinv)
        fp, fx = sky.antenna_pattern(arr.vectors[k], n)
        ph = 2 * np.pi * np.outer(t, f.value)
        amp = 1.0 / (2 * np.pi * f.value)
        for c, w in zip(ci, wi, strict=True):
            for psi in psis:
                c2, s2 = np.cos(2 * psi), np.sin(2 * psi)
                # h+ = h0 (1 + cos^2 i) cos, hx = 2 h0 cos i sin (PTA h0; README)
                x = (fp * c2 + fx * s2) * (1 + c**2)
                y = (-fp * s2 + fx * c2) * 2 * c
                for phi0 in (0.0, np.pi / 2):
                    r = amp * (x * np.sin(ph + phi0) - y * np.cos(ph + phi0))
                    total += w / 2 / psis.size / 2 * np.einsum("ij,ij->j", r, g @ r)
    return total


def projection_and_map(n_psr, blas_threads=1, workers=1):
    """A fresh array's exact weights and nside-64 map; returns (weights, map)."""
    arr = make_array(n_psr=n_psr)
    f = np.geomspace(*FREQ, N_F) * u.Hz
    w = arr.weights(f, blas_threads=blas_threads, workers=workers)
    return w.value, arr.h0_threshold_map(f, nside=NSIDE)


def extended_weight(arr, k, freq):
    """Pulsar ``k``'s weight at ``freq`` (Hz) in 80-bit extended precision (numpy longdouble).

    An independent reference for the weights far below the white-noise level,
    where float64 sums cancel: the dense covariance C = sigma^2 I + F Phi F^T,
    its Cholesky factor, the whitened timing model and sinusoid, and the
    squared residual of their least-squares fit, w = |r|^2 / 2 (the GLS form of
    timing.post_fit_weights), all in long double with the documented formulas.
    """
    ld = np.longdouble
    mjd = arr.epochs(k).astype(ld)
    t = (mjd - (mjd[0] + mjd[-1]) / 2) * ld(86400)
    sig = ld(arr.toa_rms[k].to_value(u.s))
    span = (mjd[-1] - mjd[0]) * 86400
    pw = 2 * sig**2 * span / (mjd.size - 1)
    cov = sig**2 * np.eye(mjd.size, dtype=ld)
    if arr.red_amp[k] > 0:
        fk = np.arange(1, min(100, mjd.size // 4) + 1, dtype=ld) / span
        f_yr = ld(1) / (ld(365.25) * 86400)
        pr = ld(arr.red_amp[k]) ** 2 / (12 * ld(np.pi) ** 2) * f_yr**-3
        pr = pr * (fk / f_yr) ** (-ld(arr.red_gamma[k]))
        n_k = np.flatnonzero(pr >= ld(1e-4) * pw)[-1] + 1
        arg = 2 * ld(np.pi) * np.outer(t, fk[:n_k])
        basis = np.concatenate([np.cos(arg), np.sin(arg)], axis=1)
        cov += (basis * np.tile(pr[:n_k] / span, 2)) @ basis.T
    x = (mjd - (mjd[0] + mjd[-1]) / 2) / (mjd[-1] - mjd[0])
    a = 2 * ld(np.pi) * (mjd - ld(51544.5)) / ld(365.256363004)
    ca, sa = np.cos(a), np.sin(a)
    m = np.stack(
        [np.ones_like(x), x, x**2, ca, sa, x * ca, x * sa, np.cos(2 * a), np.sin(2 * a)], 1
    )
    ph = 2 * ld(np.pi) * ld(freq) * t
    both = np.concatenate([m, np.stack([np.cos(ph), np.sin(ph)], axis=1)], axis=1)
    white = _lower_solve(_cholesky(cov), both)  # C^-1/2 [M | c | s]
    mw, qw = white[:, :9], white[:, 9:]
    chol_m = _cholesky(mw.T @ mw)
    beta = _lower_solve(chol_m.T[::-1, ::-1], _lower_solve(chol_m, mw.T @ qw)[::-1])[::-1]
    return float(np.sum((qw - mw @ beta) ** 2) / 2)


def _cholesky(a):
    low = np.zeros_like(a)
    for j in range(a.shape[0]):
        low[j, j] = np.sqrt(a[j, j] - low[j, :j] @ low[j, :j])
        low[j + 1 :, j] = (a[j + 1 :, j] - low[j + 1 :, :j] @ low[j, :j]) / low[j, j]
    return low


def _lower_solve(low, b):
    x = np.zeros_like(b)
    for j in range(low.shape[0]):
        x[j] = (b[j] - low[j, :j] @ x[:j]) / low[j, j]
    return x


CHILD = """
import sys, time
import numpy as np
from astropy import units as u
sys.path.insert(0, {bench!r})
from bench_array import FREQ, N_F, N_PSR, NSIDE, make_array
import ptaconstrain
assert ptaconstrain.__file__.startswith({src!r}), ptaconstrain.__file__

def run():  # the same calls in every version of the package
    arr = make_array(n_psr=N_PSR)
    f = np.geomspace(*FREQ, N_F) * u.Hz
    return arr.weights(f).value, arr.h0_threshold_map(f, nside=NSIDE)

run()  # first call: lazy imports, the BLAS controller
best_w = best_c = float("inf")
for _ in range(3):
    c0, w0 = time.process_time(), time.perf_counter()
    w, m = run()
    best_w, best_c = min(best_w, time.perf_counter() - w0), min(best_c, time.process_time() - c0)
np.savez({out!r}, w=w, m=m)
print(best_w, best_c)
"""


def reference_source(rev, where):
    """The package at commit ``rev`` extracted from git into ``where``; its src path."""
    arch = subprocess.run(["git", "archive", rev, "src"], check=True, capture_output=True)
    subprocess.run(["tar", "-x", "-C", where], input=arch.stdout, check=True)
    return os.path.join(where, "src")


def run_child(src, out):
    """Best-of-3 (wall, CPU) seconds of projection + map with the package in ``src``."""
    code = CHILD.format(bench=os.path.dirname(os.path.abspath(__file__)), src=src, out=out)
    env = {**os.environ, "PYTHONPATH": src}
    res = subprocess.run(
        [sys.executable, "-c", code], check=True, capture_output=True, text=True, env=env
    )
    wall, cpu = res.stdout.split()[-2:]
    return float(wall), float(cpu)


MEMORY_CHILD = """
import resource, sys, numpy as np
from astropy import units as u
sys.path.insert(0, {bench!r})
from bench_array import make_array
from ptaconstrain.sensitivity import write_threshold_maps
nside, n_f, out = {nside}, {n_f}, {out!r}
arr = make_array()
f = np.logspace(np.log10(1.6e-9), np.log10(2.5e-7), n_f) * u.Hz
arr.weights(f)
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
rows = (b for _, b in arr.threshold_map_blocks(f, nside, by="pixel"))
write_threshold_maps(out, rows, f, 5.0, arr.span, "bench", nside=nside, overwrite=True)
total = 0.0
for fs, maps in arr.threshold_map_blocks(f, nside, by="frequency"):
    total += float(np.sum(1.0 / maps**2))   # stands in for the figures and summaries
print(base, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)
"""


def blocked_memory(nside, n_f):
    """Peak RSS (MiB) of the blocked pipeline in a child process, and its baseline."""
    with tempfile.TemporaryDirectory() as tmp:
        code = MEMORY_CHILD.format(
            bench=os.path.dirname(os.path.abspath(__file__)),
            nside=nside,
            n_f=n_f,
            out=os.path.join(tmp, "m.fits"),
        )
        (base, peak), wall, _ = timed(
            lambda: subprocess.run(
                [sys.executable, "-c", code], check=True, capture_output=True, text=True
            ).stdout.split()
        )
    return int(base) / 1024, int(peak) / 1024, wall


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reference-rev", default="c4fea20")
    ap.add_argument("--rounds", type=int, default=2)
    args = ap.parse_args()
    print(
        f"benchmark: pulsar-array sky maps; {machine_line()}; "
        f"OPENBLAS_NUM_THREADS={os.environ.get('OPENBLAS_NUM_THREADS', 'unset')}"
    )
    arr = make_array()
    f = np.geomspace(*FREQ, N_F) * u.Hz
    print(
        f"  {N_PSR} pulsars, {N_F} frequencies, nside {NSIDE} ({hp.nside2npix(NSIDE)} "
        f"pixels); TOAs {arr.n_toas.sum()} in total, {arr.n_toas.min()}-"
        f"{arr.n_toas.max()} per pulsar; {int(np.sum(arr.red_amp > 0))} with red noise"
    )

    # item 1: this code against the code before the speed work, each in a child process
    with tempfile.TemporaryDirectory() as tmp:
        ref_src = reference_source(args.reference_rev, tmp)
        here = os.path.dirname(os.path.dirname(os.path.abspath(ptaconstrain.__file__)))
        runs = {"ref": [], "new": []}
        for _ in range(args.rounds):  # turn about, so both see the same load
            for key, src in (("ref", ref_src), ("new", here)):
                runs[key].append(run_child(src, os.path.join(tmp, f"{key}.npz")))
        old = np.load(os.path.join(tmp, "ref.npz"))
        new = np.load(os.path.join(tmp, "new.npz"))
        w_old, m_old, w_new, m = old["w"], old["m"], new["w"], new["m"]
    w_t, c_t = (min(r[i] for r in runs["ref"]) for i in (0, 1))
    w_n, c_n = (min(r[i] for r in runs["new"]) for i in (0, 1))
    print(
        f"  projection + map, {args.reference_rev} (before the speed work): {w_t:7.3f} s wall "
        f"{c_t:7.3f} s CPU (best of {3 * args.rounds}, child process)"
    )
    print(
        f"  projection + map, this code:                       {w_n:7.3f} s wall "
        f"{c_n:7.3f} s CPU (same)"
    )
    rel = np.abs(w_old / w_new - 1)
    worst = np.unravel_index(np.argmax(rel), rel.shape)
    flat = arr.n_toas[worst[0]] / (2 * arr.toa_rms[worst[0]].to_value(u.s) ** 2)
    print(
        f"  -> {w_t / w_n:.1f} x faster in wall time, {c_t / c_n:.1f} x in CPU (target >= 8 x);"
        f" max |w_old / w - 1| = {rel.max():.1e} (at a weight {w_new[worst] / flat:.1e} of the "
        f"white-noise level: a cancellation), maps {np.max(np.abs(m_old / m - 1)):.1e}"
    )
    worst3 = np.argsort(rel, axis=None)[::-1][:3]
    errs = []
    for k, j in zip(*np.unravel_index(worst3, rel.shape), strict=True):
        exact = extended_weight(arr, k, f[j].to_value(u.Hz))
        errs.append(f"{abs(w_old[k, j] / exact - 1):.1e} / {abs(w_new[k, j] / exact - 1):.1e}")
    print(
        "  the 3 least-agreeing weights against an 80-bit extended-precision GLS, "
        f"|w / w_exact - 1| {args.reference_rev} / this code: " + ", ".join(errs)
    )
    (w_thr, _), w_l, c_l = best_of(3, projection_and_map, N_PSR, None)
    print(
        f"  this code with the library's BLAS threads (in process): {w_l:.3f} s wall "
        f"{c_l:.3f} s CPU; max |w / w_one_thread - 1| = {np.max(np.abs(w_thr / w_new - 1)):.1e}"
    )
    _, w_map, c_map = best_of(5, arr.threshold_table, f, nside=NSIDE)
    rng = np.random.default_rng(0)
    a = rng.random((hp.nside2npix(NSIDE), N_PSR))
    b = rng.random((N_PSR, N_F))
    _, w_floor, c_floor = best_of(5, lambda: a @ b)
    print(
        f"  map alone (weights cached), best of 5: {w_map:.3f} s wall {c_map:.3f} s CPU; "
        f"floor one ({a.shape[0]} x {N_PSR}) @ ({N_PSR} x {N_F}) product {w_floor:.4f} s "
        f"wall {c_floor:.4f} s CPU; map / floor = {w_map / w_floor:.1f}"
    )

    # 1000 pulsars: serial and two processes
    (w1k, m1k), w_1k, c_1k = best_of(2, projection_and_map, 10 * N_PSR, 1, 1)
    (w1k2, m1k2), w_1k2, c_1k2 = best_of(2, projection_and_map, 10 * N_PSR, 1, 2)
    same = np.array_equal(w1k, w1k2) and np.array_equal(m1k, m1k2)
    print(
        f"  1000 pulsars, projection + map: serial {w_1k:.2f} s wall {c_1k:.2f} s CPU; "
        f"2 processes {w_1k2:.2f} s wall {c_1k2:.2f} s CPU (parent only); identical: {same}"
    )
    _, w_h, c_h = best_of(3, projection_and_map, N_PSR, 1, 1)
    print(
        f"  -> 1000 / 100 pulsars (both serial, in this process; 100: {w_h:.3f} s wall "
        f"{c_h:.3f} s CPU) = {w_1k / w_h:.1f} x wall, {c_1k / c_h:.1f} x CPU (target < 10 x);"
        f" two processes pay {w_1k / w_1k2:.2f} x in wall time"
    )

    pix = 12345
    rho2, t_brute, c_brute = timed(brute_force_pixel, arr, f, pix)
    h_brute = 5.0 / np.sqrt(rho2)
    dev = np.max(np.abs(h_brute / m[:, pix] - 1))
    print(
        f"  brute force, one pixel: {t_brute:.2f} s wall {c_brute:.2f} s CPU -> whole map ~ "
        f"{t_brute * m.shape[1] / 3600:.0f} h; max |h0 brute / h0 map - 1| = {dev:.1e}"
    )

    # item 5: blocks
    whole = arr.h0_threshold_map(f[:7], nside=16)
    got = np.empty_like(whole)
    for part, block in arr.threshold_map_blocks(f[:7], 16, by="frequency", block_bytes=1):
        got[part] = block
    tracemalloc.start()
    arr.threshold_table(f, nside=NSIDE)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(
        f"  blocked == whole map (nside 16, 7 frequencies, one per block): "
        f"{np.array_equal(got, whole)}; whole-map step at nside {NSIDE} x {N_F} peaks at "
        f"{peak / 2**20:.0f} MiB (tracemalloc)"
    )
    nside, n_f = 256, 200
    base, rss, wall = blocked_memory(nside, n_f)
    whole_gib = 12 * nside**2 * n_f * 8 / 2**30
    big_gib = 12 * 512**2 * 1000 * 8 / 2**30
    print(
        f"  blocked threshold-map pipeline, nside {nside} x {n_f} frequencies (FITS "
        f"{whole_gib:.2f} GiB written): peak RSS {rss:.0f} MiB (after imports and weights "
        f"{base:.0f} MiB), {wall:.0f} s wall; the maps whole would be {whole_gib:.2f} GiB"
    )
    print(
        f"  nside 512 x 1000 frequencies: whole {big_gib:.0f} GiB; in blocks the memory "
        f"is set by the block size ({MAP_MIB} MiB per block, independent of nside and "
        f"frequencies) -> about {rss:.0f} MiB, within 4 GB"
    )
    print(f"  process max RSS {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MiB")


if __name__ == "__main__":
    main()
