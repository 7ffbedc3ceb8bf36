"""Benchmark: the eccentric exclusion map and the background-aware array weights.

1. ``exclusion_map`` on a 300 x 300 grid at e = 0.7 (37 harmonics, each a curve
   look-up per period) beside the circular map on the same grid, best of several
   interleaved runs, wall and CPU; with a cell-by-cell check of the eccentric map
   (harmonic by harmonic, a Python loop over harmonics) on a 30 x 30 subgrid.
2. ``PulsarArray.weights`` of 100 invented pulsars (100 frequencies), with the
   background as common red noise beside the same array without it: the background
   adds Fourier modes to every pulsar's fit (ratio of wall and CPU time), and the
   mode count is printed.

Run:  python benchmarks/bench_eccentric.py
"""

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord
from benchtools import best_of, machine_line, timed

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary import eccentric as ecc
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.background import Background
from ptaconstrain.sensitivity.curve import load_curve
from ptaconstrain.sensitivity.pulsar_array import PulsarArray
from ptaconstrain.sensitivity.timing import red_noise_basis


def cell_reference(host, curve, q, period, e):
    """Per cell: every harmonic's amplitude against the limit at its frequency."""
    n = ecc.harmonic_numbers(e)
    ratio = ecc.harmonic_amplitude_ratio(n, e)
    f_peri = ecc.pericentre_isco_frequency(host.mass, e, host.redshift)
    out = np.zeros((q.size, period.size), dtype=bool)
    for j, p in enumerate(period):
        f = wf.gw_frequency(p)
        lim = curve.h0_threshold(n / 2 * f)
        for i, qi in enumerate(q):
            h0 = wf.strain_amplitude(host.mass, qi, f, host.distance, host.redshift).value
            out[i, j] = bool(f < f_peri and np.any(ratio * h0 > np.nan_to_num(lim, nan=np.inf)))
    return out


def invented_array(n=100, seed=1):
    """n invented pulsars: random sky, 0.1-1 us, 7-28 d cadence, 8-18 yr."""
    rng = np.random.default_rng(seed)
    coord = SkyCoord(
        rng.uniform(0, 360, n) * u.deg, np.degrees(np.arcsin(rng.uniform(-1, 1, n))) * u.deg
    )
    span = rng.uniform(8, 18, n) * 365.25
    return PulsarArray(
        [f"B{i:03d}" for i in range(n)],
        coord,
        rng.uniform(0.1, 1.0, n) * u.us,
        rng.choice([7.0, 14.0, 28.0], n) * u.d,
        60000 - span,
        np.full(n, 60000.0),
        name="bench (invented)",
    )


def main():
    print(machine_line())
    host = Host("bench", 2e10, 100)
    curve = load_curve(data_file("synthetic_h0_limit.ecsv"))
    q = np.geomspace(1e-4, 1, 300)
    period = np.geomspace(0.05, 60, 300) * u.yr
    exclusion_map(host, curve, q, period, eccentricity=0.7)  # warm-up
    for _ in range(2):  # interleaved, so both see the same machine load
        circ, wc, cc = best_of(5, exclusion_map, host, curve, q, period)
        em, we, ce = best_of(5, exclusion_map, host, curve, q, period, eccentricity=0.7)
    ref, wl, cl = timed(cell_reference, host, curve, q[::10], period[::10], 0.7)
    near = np.isclose(wf.symmetric_mass_ratio(q[::10])[:, None], em.eta_min[None, ::10], rtol=1e-9)
    agree = np.array_equal(em.excluded[::10, ::10][~near], ref[~near])
    print(f"circular map 300 x 300     : wall {wc * 1e3:7.2f} ms  CPU {cc * 1e3:7.2f} ms")
    print(
        f"e = 0.7 map 300 x 300      : wall {we * 1e3:7.2f} ms  CPU {ce * 1e3:7.2f} ms  "
        f"({em.harmonics.size} harmonics)"
    )
    print(f"ratio eccentric / circular : wall {we / wc:.2f} x  CPU {ce / cc:.2f} x")
    print(
        f"cell-by-cell 30 x 30 (loop): wall {wl * 1e3:7.1f} ms; per cell "
        f"{wl / ref.size / (we / em.excluded.size):,.0f} x the map's; agree: {agree}"
    )

    arr = invented_array()
    bg = Background(2.4e-15)
    freq = arr.default_frequencies(100)
    arr.weights(freq[:2])  # warm-up (imports, BLAS)
    rows = []
    for _ in range(2):
        quiet = arr.with_background(None)
        loud = arr.with_background(bg)
        w0, wq, cq = timed(quiet.weights, freq)
        w1, wb, cb = timed(loud.weights, freq)
        rows.append((wq, cq, wb, cb))
    wq, cq, wb, cb = (min(r[i] for r in rows) for i in range(4))
    modes = []
    for i in range(len(arr)):
        t = (arr.epochs(i) - arr.epochs(i).mean()) * 86400 * u.s
        basis = red_noise_basis(
            t, arr.pulsar_spans[i], arr.toa_rms[i], arr.cadence[i], 0.0, np.nan, bg
        )
        modes.append(0 if basis is None else basis[0].shape[1] // 2)
    w0v, w1v = w0.value, w1.value
    ok = w0v > 0  # above a pulsar's own Nyquist frequency its weight is 0
    loss = np.nanmedian(np.where(ok, w1v / np.where(ok, w0v, 1.0), np.nan), axis=0)
    print(f"weights, 100 pulsars x 100 f, no background  : wall {wq:6.2f} s  CPU {cq:6.2f} s")
    print(
        f"weights, 100 pulsars x 100 f, background A = 2.4e-15: wall {wb:6.2f} s  "
        f"CPU {cb:6.2f} s  (Fourier modes per pulsar {min(modes)}-{max(modes)}, "
        f"median {int(np.median(modes))})"
    )
    print(f"ratio background / none    : wall {wb / wq:.2f} x  CPU {cb / cq:.2f} x")
    print(
        f"median weight ratio (with / without) at {freq[0].to_value(u.nHz):.3g}, "
        f"{freq[25].to_value(u.nHz):.3g}, {freq[-1].to_value(u.nHz):.3g} nHz: "
        f"{loss[0]:.3g}, {loss[25]:.3g}, {loss[-1]:.3g}"
    )


if __name__ == "__main__":
    main()
