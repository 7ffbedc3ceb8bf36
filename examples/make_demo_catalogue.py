"""Write src/ptaconstrain/data/demo_catalogue.ecsv: an invented catalogue of massive galaxies.

Every galaxy here is fictional ("Fictus-NNNN"); positions, distances and
properties are random draws.  About 10% carry a "measured" black-hole mass
with an error; the others carry a velocity dispersion, a K-band absolute
magnitude, a bulge mass and/or a core radius drawn around the shipped
scaling relations (ptaconstrain/data/relations.toml) with their scatter, so
that ranking them exercises every relation.  About 10% give a redshift
instead of a distance.

Usage:  python examples/make_demo_catalogue.py [--overwrite]
"""

import argparse
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.cosmology import Planck18
from astropy.table import MaskedColumn, Table

from ptaconstrain._files import write_table
from ptaconstrain.catalogue import shipped_relations
from ptaconstrain.cosmo import redshift_at

N = 400
SEED = 51017


def make(n=N, seed=SEED):
    """Build the invented catalogue as an astropy Table."""
    rng = np.random.default_rng(seed)
    rel = shipped_relations()
    names = np.array([f"Fictus-{i:04d}" for i in range(1, n + 1)])
    ra = rng.uniform(0.0, 360.0, n)
    dec = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n)))
    # uniform in volume between 10 and 300 Mpc
    dist = np.cbrt(rng.uniform(10.0**3, 300.0**3, n))
    log_m = np.clip(rng.normal(8.9, 0.5, n), 7.8, 10.5)

    def predictor(r, lm):
        """Invert relation r at log M lm, with its scatter (in log M)."""
        noisy = lm + rng.normal(0.0, r.scatter_dex, lm.size)
        if r.form == "power_law":
            return r.pivot * 10.0 ** ((noisy - r.alpha) / r.beta)
        return r.pivot + (noisy - r.alpha) / r.beta

    measured = rng.random(n) < 0.10
    has_sigma = ~measured & (rng.random(n) < 0.75)
    has_k = ~measured & (rng.random(n) < 0.5)
    has_bulge = ~measured & (rng.random(n) < 0.3)
    has_core = ~measured & (log_m > 9.4) & (rng.random(n) < 0.5)
    none = ~measured & ~has_sigma & ~has_k & ~has_bulge & ~has_core
    has_sigma |= none

    t = Table()
    t["name"] = names
    t["ra"] = np.round(ra, 5) * u.deg
    t["dec"] = np.round(dec, 5) * u.deg
    by_z = rng.random(n) < 0.10
    zs = redshift_at(dist * u.Mpc, Planck18)
    t["distance"] = MaskedColumn(np.round(dist, 2), mask=by_z, unit=u.Mpc)
    t["redshift"] = MaskedColumn(np.round(zs, 6), mask=~by_z)
    m_meas = 10.0 ** (log_m + rng.normal(0.0, 0.1, n))
    err_dex = rng.uniform(0.04, 0.2, n)
    t["mass"] = MaskedColumn(np.round(m_meas, -5), mask=~measured, unit=u.Msun)
    t["mass_err"] = MaskedColumn(
        np.round(m_meas * err_dex * np.log(10.0), -5), mask=~measured, unit=u.Msun
    )
    t["velocity_dispersion"] = MaskedColumn(
        np.round(predictor(rel["kh13_sigma"], log_m), 1), mask=~has_sigma, unit=u.km / u.s
    )
    t["k_abs_mag"] = MaskedColumn(
        np.round(predictor(rel["kh13_kband"], log_m), 2), mask=~has_k, unit=u.mag
    )
    t["bulge_mass"] = MaskedColumn(
        np.round(predictor(rel["kh13_bulge"], log_m), -8), mask=~has_bulge, unit=u.Msun
    )
    t["core_radius"] = MaskedColumn(
        np.round(predictor(rel["thomas16_core"], log_m), 4), mask=~has_core, unit=u.kpc
    )
    t.meta.update(
        {
            "description": "INVENTED galaxies for the ptaconstrain demo; not real objects. "
            "Masses and galaxy properties are random draws around the shipped "
            "scaling relations.",
            "invented": True,
            "generator": "examples/make_demo_catalogue.py",
            "seed": seed,
            "rows": n,
        }
    )
    return t


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    data = Path(__file__).resolve().parent.parent / "src" / "ptaconstrain" / "data"
    parser.add_argument("--out", default=str(data / "demo_catalogue.ecsv"))
    parser.add_argument("--overwrite", action="store_true")
    args = parser.parse_args()
    write_table(make(), args.out, overwrite=args.overwrite)
    print(f"wrote {args.out}")


if __name__ == "__main__":
    main()
