"""Generate src/ptaconstrain/data/planck18_distance.ecsv: D_L(z) of the default cosmology.

``ptaconstrain.cosmo`` converts luminosity distance <-> redshift with a cubic
spline of ln D_L against ln z.  For astropy's default cosmology, Planck18
(Planck Collaboration 2020, A&A 641, A6, table 2 "TT,TE,EE+lowE+lensing+BAO"),
the spline nodes are shipped in this table so that the package need not import
``astropy.cosmology`` (about 2.5 s of CPU) to place a host at a distance.

The nodes are those ``cosmo.py`` computes for any other cosmology: 3000 points
evenly spaced in ln z for 1e-8 <= z <= 20, with D_L from
``astropy.cosmology.Planck18.luminosity_distance`` (the spline is then good to
better than 1e-8 relative; ``tests/test_cosmo.py`` checks it against astropy to
1e-6).  The values are written with full float64 precision.

Run ``python examples/make_cosmology_table.py`` to rewrite the file
(deterministic; the astropy version is recorded in its metadata).
"""

from pathlib import Path

import astropy
import numpy as np
from astropy import units as u
from astropy.cosmology import Planck18
from astropy.table import Table

OUT = (Path(__file__).resolve().parent.parent / "src" / "ptaconstrain" / "data"
       / "planck18_distance.ecsv")
# must match ptaconstrain.cosmo (_Z_MIN, Z_MAX, _N_NODES)
Z_MIN, Z_MAX, N_NODES = 1e-8, 20.0, 3000


def main():
    z = np.logspace(np.log10(Z_MIN), np.log10(Z_MAX), N_NODES)
    t = Table()
    t["ln_z"] = np.log(z)
    t["ln_z"].info.description = "natural log of the redshift z"
    t["ln_dl_mpc"] = np.log(Planck18.luminosity_distance(z).to_value(u.Mpc))
    t["ln_dl_mpc"].info.description = "natural log of the luminosity distance in Mpc"
    t.meta["cosmology"] = "Planck18"
    t.meta["parameters"] = str(Planck18)
    t.meta["generated_by"] = "examples/make_cosmology_table.py"
    t.meta["astropy_version"] = astropy.__version__
    t.write(OUT, format="ascii.ecsv", overwrite=True)
    print(f"wrote {OUT} ({len(t)} nodes)")


if __name__ == "__main__":
    main()
