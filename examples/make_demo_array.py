"""Generate src/ptaconstrain/data/demo_array.ecsv: an INVENTED pulsar timing array for the demo.

Nothing here describes real pulsars.  The names (FP-01 ... FP-40, "fictional
pulsar") and every number are made up from these stated assumptions:

* 40 pulsars.  Positions are deliberately uneven: 22 in a dense group within
  ~20 deg of (ra, dec) = (280, -35) deg, 10 in a looser group near (60, +20)
  deg, and 8 scattered over the sky.  The opposite directions are therefore
  poorly covered, so the sensitivity varies strongly across the sky.
* TOA rms log-uniform in 0.1-2 us, with the best-timed pulsars in the dense
  group (its rms drawn from 0.1-0.8 us).
* Cadence 14-28 d; timing ends between MJD 59600 and 60000 and starts 5-20 yr
  earlier.
* About a third of the pulsars have power-law red noise with A in 3e-15-3e-14
  and gamma in 2-5.
* Distances 0.5-4 kpc.

Run ``python examples/make_demo_array.py`` to rewrite the file (deterministic,
seeded).
"""

from pathlib import Path

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.table import QTable

SEED = 20240611
OUT = Path(__file__).resolve().parent.parent / "src" / "ptaconstrain" / "data" / "demo_array.ecsv"


def _group(rng, n, ra0, dec0, radius):
    """n positions scattered (Gaussian) within ~radius deg of (ra0, dec0)."""
    centre = SkyCoord(ra0 * u.deg, dec0 * u.deg)
    pa = rng.uniform(0, 360, n) * u.deg
    sep = np.abs(rng.normal(0, radius / 1.5, n)) * u.deg
    return centre.directional_offset_by(pa, sep)


def make_table(seed=SEED):
    rng = np.random.default_rng(seed)
    n_dense, n_loose, n_rand = 22, 10, 8
    dense = _group(rng, n_dense, 280.0, -35.0, 20.0)
    loose = _group(rng, n_loose, 60.0, 20.0, 25.0)
    rand = SkyCoord(
        rng.uniform(0, 360, n_rand) * u.deg,
        np.degrees(np.arcsin(rng.uniform(-1, 1, n_rand))) * u.deg,
    )
    ra = np.concatenate([dense.ra.deg, loose.ra.deg, rand.ra.deg])
    dec = np.concatenate([dense.dec.deg, loose.dec.deg, rand.dec.deg])
    n = ra.size
    log_rms = np.concatenate(
        [
            rng.uniform(np.log10(0.1), np.log10(0.8), n_dense),
            rng.uniform(np.log10(0.1), np.log10(2.0), n - n_dense),
        ]
    )
    cadence = rng.choice([14.0, 21.0, 28.0], n)
    end = rng.uniform(59600.0, 60000.0, n)
    span_yr = rng.uniform(5.0, 20.0, n)
    red = rng.uniform(0, 1, n) < 0.35
    amp = np.where(red, 10 ** rng.uniform(np.log10(3e-15), np.log10(3e-14), n), 0.0)
    gamma = np.where(red, rng.uniform(2.0, 5.0, n), np.nan)

    t = QTable()
    t["name"] = [f"FP-{i + 1:02d}" for i in range(n)]
    t["ra"] = np.round(ra, 4) * u.deg
    t["dec"] = np.round(dec, 4) * u.deg
    t["toa_rms"] = np.round(10**log_rms, 3) * u.us
    t["cadence"] = cadence * u.d
    t["start_mjd"] = np.round(end - span_yr * 365.25, 1) * u.d
    t["end_mjd"] = np.round(end, 1) * u.d
    t["red_amp"] = [float(f"{a:.3g}") for a in amp]
    t["red_gamma"] = np.round(gamma, 2)
    t["distance"] = np.round(rng.uniform(0.5, 4.0, n), 2) * u.kpc
    t.meta["name"] = "demo_array"
    t.meta["description"] = (
        "INVENTED synthetic pulsar timing array for the ptaconstrain "
        "demo: fictional pulsars, not real objects"
    )
    t.meta["synthetic"] = True
    t.meta["generator"] = "examples/make_demo_array.py (seeded; assumptions in its docstring)"
    t.meta["columns"] = (
        "toa_rms: white-noise rms per TOA; cadence: days between TOAs; "
        "start_mjd/end_mjd: first/last TOA; red_amp/red_gamma: power law "
        "P = A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma, blank gamma = no red noise"
    )
    return t


if __name__ == "__main__":
    make_table().write(OUT, format="ascii.ecsv", overwrite=True)
    print(f"wrote {OUT}")
