"""Generate the two synthetic sensitivity curves shipped in src/ptaconstrain/data/.

Both curves belong to an INVENTED scenario and describe no real array:

* ``synthetic_h0_limit.ecsv`` -- a present-day-like 95% upper limit on h0 of
  the fictional "Kestrel Timing Array" (15 yr of data).
* ``synthetic_future_psd.ecsv`` -- a future-array-like noise budget
  (strain PSD) of the fictional "Kestrel Timing Array, phase II" (20 yr).
* ``synthetic_h0_limit_map.fits`` -- the same 95% limit as a HEALPix sky map
  (nside 8, 16 frequencies), deeper where the fictional array's pulsars are.

The shape follows the usual anatomy of a pulsar-timing sensitivity, with
invented numbers: timing residuals with white noise plus a red power law
P(f) = A^2/(12 pi^2) f_yr^-3 (f/f_yr)^-gamma; residuals convert to strain
as h ~ 2 pi f r, so a white-noise-limited curve rises as f at high
frequency; the quadratic spin-down fit removes sensitivity below ~1/T, and
the astrometric fit removes it in narrow bands at 1/yr (position, proper
motion) and 2/yr (parallax).  The overall level is set by hand (``level``).

Run from the repository root:  python examples/make_curves.py [--overwrite]
"""

import sys
from pathlib import Path

import numpy as np
from astropy import units as u

from ptaconstrain.sensitivity import (
    StrainCurve,
    noise_psd_for_threshold,
    red_noise_psd,
    save_curve,
    white_noise_psd,
)
from ptaconstrain.sensitivity.timing import F_YR as _F_YR

F_YR = _F_YR.to_value(u.Hz)


def residual_psd(f, white_rms, cadence, red_amp, red_gamma):
    """One-sided residual PSD [s^2/Hz]: white plus red noise, the package's noise model."""
    white = white_noise_psd(white_rms * u.s, cadence * u.s)
    red = red_noise_psd(f * u.Hz, red_amp, red_gamma)
    return (white + red).to_value(u.s**2 / u.Hz)


def fit_loss(f, span):
    """Invented fractional signal power left after the timing-model fit.

    Low frequencies: a quadratic absorbs signals with f T << 1 as (f T)^6
    (the first term a quadratic cannot fit is cubic).  Narrow losses of
    width 1/T at 1/yr (depth 0.9) and 2/yr (depth 0.6).
    """
    ft = f * span
    low = ft**6 / (1.0 + ft**6)
    notch = 1.0
    for f0, depth in ((F_YR, 0.9), (2 * F_YR, 0.6)):
        notch = notch * (1.0 - depth * np.exp(-0.5 * ((f - f0) * span / 0.7) ** 2))
    return low * notch


def shape(f, span_yr, white_rms, cadence_d, red_amp, red_gamma):
    span = span_yr * u.yr.to(u.s)
    p = residual_psd(f, white_rms, cadence_d * 86400.0, red_amp, red_gamma)
    return 2 * np.pi * f * np.sqrt(p / span / fit_loss(f, span))


def h0_limit_curve():
    span_yr = 15.0
    f = np.geomspace(1.0 / (span_yr * u.yr).to_value(u.s), 3e-7, 480)
    h = shape(f, span_yr, white_rms=0.5e-6, cadence_d=14.0, red_amp=3e-15, red_gamma=13 / 3)
    level = 1.0e-14  # invented: h0 limit at 8 nHz
    h *= level / np.interp(8e-9, f, h)
    meta = {
        "description": "SYNTHETIC 95% upper limit on CW strain amplitude h0 of the "
        "fictional Kestrel Timing Array; invented, describes no real data",
        "synthetic": True,
        "confidence": 0.95,
        "span": f"{span_yr:g} yr",
        "sky": "averaged",
        "source": "examples/make_curves.py (h0_limit_curve)",
        "assumptions": "white rms 0.5 us at 14 d cadence, red noise A=3e-15 gamma=13/3, "
        "quadratic + astrometric fit losses, level 1e-14 at 8 nHz (all invented)",
    }
    return StrainCurve(f * u.Hz, h, "h0_limit", meta)


def future_psd_curve():
    span_yr, snr = 20.0, 5.0
    f = np.geomspace(1.0 / (span_yr * u.yr).to_value(u.s), 3e-7, 480)
    h = shape(f, span_yr, white_rms=0.1e-6, cadence_d=7.0, red_amp=1e-15, red_gamma=13 / 3)
    level = 1.0e-15  # invented: h0 reaching S/N = 5 at 10 nHz
    h *= level / np.interp(1e-8, f, h)
    psd = noise_psd_for_threshold(h, span_yr * u.yr, snr)
    meta = {
        "description": "SYNTHETIC strain-noise PSD (sky-averaged, one-sided) of the fictional "
        "Kestrel Timing Array phase II; invented, a forecast, not a limit",
        "synthetic": True,
        "span": f"{span_yr:g} yr",
        "sky": "averaged",
        "source": "examples/make_curves.py (future_psd_curve)",
        "assumptions": "white rms 0.1 us at 7 d cadence, red noise A=1e-15 gamma=13/3, "
        "quadratic + astrometric fit losses, h0(S/N=5) = 1e-15 at 10 nHz (all invented)",
    }
    return StrainCurve(f * u.Hz, psd, "strain_psd", meta)


def h0_limit_sky_map(curve, path, overwrite=False, nside=8, n_freq=16):
    """A synthetic HEALPix map of 95% h0 upper limits (layout: README).

    Invented: the sky-averaged limit ``curve`` times a smooth pattern, 0.55 x in the
    direction of the fictional array's densest pulsars (RA 280 deg, Dec -35 deg) rising to
    about 1.6 x opposite, normalised to a sky mean of 1.
    """
    import healpy as hp

    from ptaconstrain._files import atomic_write

    f = np.geomspace(curve.frequency[0].value, curve.frequency[-1].value, n_freq)
    h = curve.interpolate(f * u.Hz)
    vec = np.array(hp.pix2vec(nside, np.arange(hp.nside2npix(nside))))
    ra, dec = np.radians(280.0), np.radians(-35.0)
    best = np.array([np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)])
    pattern = 0.55 + 1.05 * (1.0 - best @ vec) / 2.0
    pattern /= pattern.mean()
    maps = [hi * pattern for hi in h]
    extra = [(f"FREQ{i + 1}", float(fi)) for i, fi in enumerate(f)]
    extra += [
        ("MAPKIND", "h0_limit"),
        ("CONFLEV", 0.95),
        ("SPAN", 15.0),
        ("COMMENT", "SYNTHETIC h0 upper-limit map of the fictional Kestrel Timing Array"),
        ("COMMENT", "invented by examples/make_curves.py; describes no real data"),
    ]
    with atomic_write(path, overwrite) as tmp:
        hp.write_map(
            str(tmp),
            maps,
            coord="C",
            column_units="",
            extra_header=extra,
            dtype=np.float64,
            overwrite=True,
        )


def main(argv):
    out = Path(__file__).resolve().parent.parent / "src" / "ptaconstrain" / "data"
    overwrite = "--overwrite" in argv
    limit = h0_limit_curve()
    save_curve(limit, out / "synthetic_h0_limit.ecsv", overwrite=overwrite)
    save_curve(future_psd_curve(), out / "synthetic_future_psd.ecsv", overwrite=overwrite)
    h0_limit_sky_map(limit, out / "synthetic_h0_limit_map.fits", overwrite=overwrite)
    print(
        f"wrote {out}/synthetic_h0_limit.ecsv, synthetic_future_psd.ecsv and "
        "synthetic_h0_limit_map.fits"
    )


if __name__ == "__main__":
    main(sys.argv[1:])
