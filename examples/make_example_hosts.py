"""Write src/ptaconstrain/data/example_hosts.ecsv: an INVENTED table of host galaxies.

For ``ptaconstrain exclude --hosts``: a dozen fictional massive galaxies (names
invented, "Velmora"-style), written by hand to exercise every kind of row the
host table accepts: a measured mass with an error in dex, quoted at a
reference distance (``mass_distance``) and with a distance error; a mass
without an error; a redshift instead of a distance; a host with only a
velocity dispersion (its mass then comes from the shipped M-sigma relation).
Nothing here describes a real object.

Usage:  python examples/make_example_hosts.py [--overwrite]
"""

import argparse
from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.table import MaskedColumn, Table

from ptaconstrain._files import write_table

NAN = np.nan
#  name, mass [solMass], mass_err_dex, distance [Mpc], distance_err [Mpc], mass_distance
#  [Mpc], redshift, ra [deg], dec [deg], velocity_dispersion [km/s]
ROWS = [
    ("Velmora Central", 2.1e10, 0.12, 105.0, 7.0, 100.0, NAN, 150.3, 21.8, 340.0),
    ("Osric Giant", 1.5e10, 0.20, 48.0, 4.5, 50.0, NAN, 284.1, -37.2, 315.0),
    ("Tamsel BCG", 4.0e10, 0.25, 210.0, 15.0, 200.0, NAN, 37.9, -8.4, 380.0),
    ("Ilvane Elliptical", 6.0e9, 0.10, 17.0, 1.2, 16.5, NAN, 201.6, -4.1, 290.0),
    ("Corrath Major", 9.0e9, 0.15, 72.0, 6.0, 70.0, NAN, 95.4, 61.3, 300.0),
    ("Brennic Dominant", 1.2e10, NAN, 88.0, NAN, NAN, NAN, 12.7, 33.5, NAN),
    ("Halvor Cluster Core", 3.0e10, 0.18, NAN, NAN, NAN, 0.052, 233.2, 7.9, 360.0),
    ("Quessa Lenticular", 3.5e9, 0.30, 31.0, 3.0, 30.0, NAN, 318.4, -52.6, NAN),
    ("Marrowfen Pair", NAN, NAN, 64.0, 5.0, NAN, NAN, 176.0, -19.3, 285.0),
    ("Sorrel Bright", 8.0e9, 0.08, 120.0, 9.0, 118.0, NAN, 262.5, -28.0, 310.0),
    ("Dunmere Compact", 2.5e9, 0.22, 22.0, 2.0, 22.0, NAN, 45.1, 71.4, NAN),
    ("Lantrec Group", 1.8e10, 0.15, 155.0, 12.0, 150.0, NAN, 128.9, -61.0, 350.0),
]


def make():
    """The invented hosts table (blank cells are masked)."""
    cols = list(zip(*ROWS, strict=True))
    units = [None, u.Msun, u.dex, u.Mpc, u.Mpc, u.Mpc, None, u.deg, u.deg, u.km / u.s]
    names = [
        "name",
        "mass",
        "mass_err_dex",
        "distance",
        "distance_err",
        "mass_distance",
        "redshift",
        "ra",
        "dec",
        "velocity_dispersion",
    ]
    t = Table()
    for name, unit, values in zip(names, units, cols, strict=True):
        if name == "name":
            t[name] = list(values)
            continue
        data = np.array(values, dtype=float)
        col = MaskedColumn(data, mask=np.isnan(data), name=name)
        t[name] = col
        if unit is not None and unit != u.dex:
            t[name].unit = unit
    t.meta["description"] = (
        "INVENTED host galaxies for 'ptaconstrain exclude --hosts': "
        "fictional names, masses, distances and positions; not real "
        "objects"
    )
    t.meta["synthetic"] = True
    t.meta["columns"] = (
        "mass: total BH mass quoted at mass_distance; mass_err_dex: 1-sigma "
        "log-normal error; distance: luminosity distance with Gaussian "
        "distance_err; redshift: used where no distance is given; "
        "velocity_dispersion: central sigma (draws the hardening radius, "
        "and gives the mass by M-sigma where none is measured)"
    )
    return t


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--overwrite", action="store_true")
    args = parser.parse_args()
    out = Path(__file__).resolve().parents[1] / "src/ptaconstrain/data/example_hosts.ecsv"
    write_table(make(), out, overwrite=args.overwrite)
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
