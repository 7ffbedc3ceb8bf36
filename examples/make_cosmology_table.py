"""Generate src/ptaconstrain/data/planck18_distance.ecsv: D_L(z) of the default cosmology.

``ptaconstrain.cosmo`` converts luminosity distance <-> redshift with a cubic
spline of ln D_L against ln z.  For astropy's default cosmology, Planck18
(Planck Collaboration 2020, A&A 641, A6, table 2 "TT,TE,EE+lowE+lensing+BAO"),
the spline nodes are shipped in this table so that the package need not import
``astropy.cosmology`` (about 2.5 s of CPU) to place a host at a distance.

The nodes are those ``cosmo.spline_nodes`` computes for any other cosmology:
3000 points evenly spaced in ln z for 1e-8 <= z <= 20, D_L from
``astropy.cosmology.Planck18.luminosity_distance``, and the slopes
d ln D_L / d ln z of the cubic spline through them (the spline is good to better
than 1e-8 relative; ``tests/test_cosmo.py`` checks it against astropy to 1e-6).
The values are written with full float64 precision.

Run ``python examples/make_cosmology_table.py`` to rewrite the file
(deterministic; the astropy version is recorded in its metadata).
"""

from pathlib import Path

import astropy
from astropy.cosmology import Planck18
from astropy.table import Table

from ptaconstrain.cosmo import spline_nodes

OUT = (
    Path(__file__).resolve().parent.parent
    / "src"
    / "ptaconstrain"
    / "data"
    / "planck18_distance.ecsv"
)


def main():
    ln_z, ln_dl, slope = spline_nodes(Planck18)
    t = Table()
    t["ln_z"] = ln_z
    t["ln_z"].info.description = "natural log of the redshift z"
    t["ln_dl_mpc"] = ln_dl
    t["ln_dl_mpc"].info.description = "natural log of the luminosity distance in Mpc"
    t["dln_dl_dln_z"] = slope
    t["dln_dl_dln_z"].info.description = "slope d ln D_L / d ln z of the cubic spline"
    t.meta["cosmology"] = "Planck18"
    t.meta["parameters"] = str(Planck18)
    t.meta["generated_by"] = "examples/make_cosmology_table.py"
    t.meta["astropy_version"] = astropy.__version__
    t.write(OUT, format="ascii.ecsv", overwrite=True)
    print(f"wrote {OUT} ({len(t)} nodes)")


if __name__ == "__main__":
    main()
