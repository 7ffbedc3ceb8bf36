"""Generate src/ptaconstrain/data/demo_mass_samples.ecsv: INVENTED posterior samples of a mass.

Nothing here comes from a real measurement.  The table mimics what a dynamical model
of a fictional galaxy might return, from these stated assumptions:

* 2000 samples of the luminosity distance, Gaussian around 100 Mpc with 7 Mpc rms.
* The mass scales linearly with the distance adopted (as dynamical masses do), times a
  skewed factor: log10 of it is a two-piece normal with 0.10 dex below and 0.20 dex
  above the median, so the mass is 2e10 solMass at 100 Mpc with a tail to high masses.
* Importance weights drawn uniformly in [0.5, 1.5] (the table is a weighted posterior).

Run ``python examples/make_demo_mass_samples.py`` to rewrite the file (deterministic,
seeded).
"""

from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import QTable

SEED = 20261202
N = 2000
OUT = (
    Path(__file__).resolve().parent.parent
    / "src"
    / "ptaconstrain"
    / "data"
    / "demo_mass_samples.ecsv"
)


def main():
    rng = np.random.default_rng(SEED)
    distance = rng.normal(100.0, 7.0, N)
    z = rng.standard_normal(N)
    log_factor = np.where(z < 0, 0.10 * z, 0.20 * z)
    t = QTable()
    t["mass"] = 2e10 * (distance / 100.0) * 10**log_factor * u.Msun
    t["distance"] = distance * u.Mpc
    t["weight"] = rng.uniform(0.5, 1.5, N)
    t["mass"].info.format = ".5e"
    t["distance"].info.format = ".4f"
    t["weight"].info.format = ".4f"
    t.meta["description"] = (
        "INVENTED posterior samples of the black-hole mass of a fictional "
        "galaxy (mass at each sample's distance), for the demo and examples"
    )
    t.meta["generator"] = "examples/make_demo_mass_samples.py"
    t.write(OUT, format="ascii.ecsv", overwrite=True)
    print(f"wrote {OUT} ({N} rows)")


if __name__ == "__main__":
    main()
