"""Benchmark: HEALPix h0-threshold map of a 100-pulsar array at 100 frequencies, nside 64.

Prints, measured side by side in one run on the same input:

* the per-pulsar exact timing-model projection (w[p, f], done once);
* the map itself, pattern[pix, p] @ w[p, f] plus the element-wise work;
* the floor: one numpy matrix product of the same shapes (49152 x 100 @ 100 x 100);
* a brute-force reference: the orientation-averaged S/N of one pixel computed
  directly (residual signals of every pulsar at 3 inclinations x 8 polarisations
  x 2 phases, projected with each pulsar's dense GLS operator), extrapolated to
  the whole map, and its agreement with the fast map at that pixel;
* peak memory of the map step (tracemalloc) and the process (getrusage).

Targets (issue 3): the map in < 5 s on 2 cores and within 10 x of the floor.
Run: ``python benchmarks/bench_array.py``.
"""

import os
import resource
import time
import tracemalloc

import healpy as hp
import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord

from ptaconstrain.sensitivity import PulsarArray, red_noise_basis, timing_design_matrix
from ptaconstrain.sensitivity import antenna as sky

N_PSR, N_F, NSIDE = 100, 100, 64


def make_array(seed=1):
    """An invented 100-pulsar array (uniform sky, 0.1-2 us, 14-28 d, 5-20 yr, 30% red)."""
    rng = np.random.default_rng(seed)
    ra = rng.uniform(0, 360, N_PSR)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, N_PSR)))
    end = rng.uniform(59600, 60000, N_PSR)
    span = rng.uniform(5, 20, N_PSR) * 365.25
    red = rng.uniform(size=N_PSR) < 0.3
    return PulsarArray(
        [f"B{i:03d}" for i in range(N_PSR)], SkyCoord(ra * u.deg, dec * u.deg),
        10 ** rng.uniform(-1, np.log10(2), N_PSR) * u.us,
        rng.choice([14.0, 21.0, 28.0], N_PSR) * u.d, end - span, end,
        red_amp=np.where(red, 10 ** rng.uniform(-14.5, -13.5, N_PSR), 0.0),
        red_gamma=np.where(red, rng.uniform(2, 5, N_PSR), np.nan), name="bench")


def best_of(fn, n=5):
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


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
        red = red_noise_basis(t * u.s, (mjd[-1] - mjd[0]) * u.d, arr.toa_rms[k],
                              arr.cadence[k], arr.red_amp[k], arr.red_gamma[k])
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


def main():
    print(f"benchmark: {N_PSR} pulsars, {N_F} frequencies, nside {NSIDE} "
          f"({hp.nside2npix(NSIDE)} pixels); cores {os.cpu_count()}; "
          f"OPENBLAS_NUM_THREADS={os.environ.get('OPENBLAS_NUM_THREADS', 'unset')}")
    arr = make_array()
    f = np.logspace(np.log10(1.6e-9), np.log10(2.5e-7), N_F) * u.Hz
    print(f"  TOAs: {arr.n_toas.sum()} in total, {arr.n_toas.min()}-{arr.n_toas.max()} "
          f"per pulsar; {int(np.sum(arr.red_amp > 0))} with red noise")

    t0 = time.perf_counter()
    arr.weights(f)
    t_w = time.perf_counter() - t0
    print(f"  exact timing-model projection w[p, f] (once):  {t_w:8.3f} s")

    t_map = best_of(lambda: arr.threshold_table(f, nside=NSIDE))
    tracemalloc.start()
    m = arr.threshold_table(f, nside=NSIDE).values.T
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()

    rng = np.random.default_rng(0)
    a = rng.random((hp.nside2npix(NSIDE), N_PSR))
    b = rng.random((N_PSR, N_F))
    t_floor = best_of(lambda: a @ b)
    print(f"  map (pattern @ w, weights cached), best of 5:  {t_map:8.3f} s")
    print(f"  floor: one ({a.shape[0]} x {N_PSR}) @ ({N_PSR} x {N_F}) product: "
          f"{t_floor:8.4f} s")
    print(f"  map / floor = {t_map / t_floor:.1f} (target < 10); map + projection = "
          f"{t_map + t_w:.2f} s (target < 5 s)")

    pix = 12345
    t0 = time.perf_counter()
    rho2 = brute_force_pixel(arr, f, pix)
    t_brute = time.perf_counter() - t0
    h_brute = 5.0 / np.sqrt(rho2)
    dev = np.max(np.abs(h_brute / m[:, pix] - 1))
    print(f"  brute force, one pixel: {t_brute:.2f} s -> whole map ~ "
          f"{t_brute * m.shape[1] / 3600:.0f} h; (brute map) / (fast map + projection) ~ "
          f"{t_brute * m.shape[1] / (t_map + t_w):.1e}; max |h0 brute / h0 map - 1| = {dev:.1e}")
    print(f"  peak memory of the map step (tracemalloc): {peak / 2**20:.1f} MiB; output "
          f"{m.nbytes / 2**20:.1f} MiB; process max RSS "
          f"{resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MiB")


if __name__ == "__main__":
    main()
