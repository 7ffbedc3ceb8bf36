"""Benchmark: ``exclude --hosts`` for 100 hosts against the single-host floor.

The floor is the time of one host bounded in-process by the single-host path
(``ptaconstrain.cli.exclude.run_exclusion``: the map, the probability map from the
host's errors, the table and, for the PNG case, the figure), with the start-up of
the process and the loading of the curve already paid.  Against it, in the same
run:

- ``exclude --hosts`` on a table of N invented hosts (default 100, each with a
  mass and a distance error, so each gets a probability map), tables only
  (``--format none``) and with PNG figures; the time per host should be close
  to the floor (target <= 1.2 x), since nothing is paid twice;
- one whole ``ptaconstrain exclude`` process for one host (start-up included),
  which is what a shell loop over the table pays per host.

Run from the repository root:  python benchmarks/bench_hosts.py [--hosts N] [--repeat R]
"""

import argparse
import os
import sys
import tempfile
from pathlib import Path

import numpy as np
from benchtools import best_of, machine_line, process_times, timed

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "src"))

CURVE = str(ROOT / "src" / "ptaconstrain" / "data" / "synthetic_h0_limit.ecsv")
SEED = 90210


def host_table(n, path):
    """N INVENTED hosts ('Bench-NNN'): random positions, masses, distances and errors."""
    from astropy.table import Table

    rng = np.random.default_rng(SEED)
    d = np.cbrt(rng.uniform(20.0**3, 200.0**3, n))
    t = Table(
        {
            "name": [f"Bench-{i:03d}" for i in range(n)],
            "ra": rng.uniform(0, 360, n),
            "dec": np.degrees(np.arcsin(rng.uniform(-1, 1, n))),
            "distance": d,
            "distance_err": 0.08 * d,
            "mass_distance": d,
            "mass": 10 ** rng.uniform(9.3, 10.5, n),
            "mass_err_dex": rng.uniform(0.1, 0.3, n),
        }
    )
    t.write(path, format="ascii.ecsv", overwrite=True)
    return t


def run_cli(args):
    from ptaconstrain.cli import main

    return main(args, standalone_mode=False)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--hosts", type=int, default=100)
    parser.add_argument("--repeat", type=int, default=3, help="runs of the single-host floor")
    args = parser.parse_args()
    from ptaconstrain.cli.exclude import run_exclusion

    print(
        f"bench_hosts: {machine_line()}; {args.hosts} hosts, default grid 300 x 300, "
        "1e5 samples per host"
    )
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        table = host_table(args.hosts, tmp / "hosts.ecsv")
        h = table[0]
        single = dict(
            mass=h["mass"],
            distance=h["distance"],
            redshift=None,
            mass_distance=h["mass_distance"],
            name=h["name"],
            ra=h["ra"],
            dec=h["dec"],
            velocity_dispersion=None,
            mass_err={"mass_err_dex": h["mass_err_dex"]},
            distance_err={"distance_err": h["distance_err"]},
            velocity_err=None,
            samples=100_000,
            seed=1,
            credibility=(0.5, 0.9, 0.95),
            curve_path=CURVE,
            array_path=None,
            limit_map_path=None,
            kind=None,
            snr=5.0,
            span=None,
            mass_ratio_range=(1e-4, 1.0),
            period_range=None,
            grid="300",
            out=str(tmp / "single"),
            overwrite=True,
        )
        rows = []
        for label, formats in (("tables only", "none"), ("with PNG", "png")):
            fmt = () if formats == "none" else ("png",)
            run_exclusion(**{**single, "formats": fmt})  # warm: imports, first figure
            _, w1, c1 = best_of(args.repeat, run_exclusion, **{**single, "formats": fmt})
            _, wb, cb = timed(
                run_cli,
                [
                    "exclude",
                    "--hosts",
                    str(tmp / "hosts.ecsv"),
                    "--curve",
                    CURVE,
                    "--seed",
                    "1",
                    "--format",
                    formats,
                    "--out",
                    str(tmp / f"batch_{formats}"),
                ],
            )
            rows.append((label, w1, c1, wb, cb))
        py = sys.executable
        env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
        wp, cp = process_times(
            [
                py,
                "-m",
                "ptaconstrain",
                "exclude",
                "--mass",
                "2e10",
                "--mass-err",
                "0.2",
                "--distance",
                "100",
                "--distance-err",
                "8",
                "--seed",
                "1",
                "--curve",
                CURVE,
                "--format",
                "png",
                "--out",
                str(tmp / "proc"),
                "--overwrite",
            ],
            repeat=1,
            env=env,
        )
    n = args.hosts
    print(
        f"{'case':<12} {'floor: one host in-process':>28} {'--hosts, per host':>22} "
        f"{'ratio (wall / CPU)':>20}"
    )
    for label, w1, c1, wb, cb in rows:
        print(
            f"{label:<12} {w1:9.3f} s wall {c1:7.3f} s CPU {wb / n:7.3f} / {cb / n:6.3f} s"
            f"     {wb / n / w1:6.2f} x / {cb / n / c1:5.2f} x"
        )
    print(
        f"one whole 'exclude' process with one PNG (a shell loop pays this per host): "
        f"{wp:.2f} s wall, {cp:.2f} s CPU = {cp / (rows[1][4] / n):.1f} x the batch's CPU "
        "per host with PNG"
    )


if __name__ == "__main__":
    main()
