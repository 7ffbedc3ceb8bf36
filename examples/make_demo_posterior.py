"""Write src/ptaconstrain/data/demo_mass_posterior.ecsv: invented posterior samples of a mass.

The samples stand in for what a dynamical model of a fictional galaxy would give:
a black-hole mass near 2e10 solMass (0.12 dex, slightly skewed towards high
masses) and a luminosity distance near 100 Mpc (7 Mpc), the mass scaling with the
distance of its sample (M ~ D for a fixed angular measurement), with weights as a
weighted sampler returns them.  Nothing here describes a real galaxy.

Usage:  python examples/make_demo_posterior.py [--overwrite]
"""

import argparse
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import Table

from ptaconstrain._files import write_table

N = 4000
SEED = 20261202


def make(n=N, seed=SEED):
    """Build the invented posterior table (mass, distance, weight)."""
    rng = np.random.default_rng(seed)
    distance = rng.normal(100.0, 7.0, n)
    # log-mass at the sample's distance: 0.12 dex core plus a small high-mass tail
    log_m = np.log10(2e10) + rng.normal(0.0, 0.12, n) + 0.05 * rng.exponential(1.0, n) - 0.05
    mass = 10**log_m * distance / 100.0
    weight = rng.uniform(0.5, 1.5, n)
    table = Table([mass * u.solMass, distance * u.Mpc, weight],
                  names=("mass", "distance", "weight"))
    table.meta["description"] = ("INVENTED posterior samples of the black-hole mass of a "
                                 "fictional galaxy (demo data; not a real measurement)")
    table.meta["generator"] = "examples/make_demo_posterior.py"
    return table


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--overwrite", action="store_true")
    args = ap.parse_args()
    out = Path(__file__).resolve().parents[1] / "src" / "ptaconstrain" / "data"
    path = out / "demo_mass_posterior.ecsv"
    write_table(make(), path, overwrite=args.overwrite)
    print(f"wrote {path}")


if __name__ == "__main__":
    main()
