"""Small explicit curves for tests (test input, not physics); importable as a module
because pytest puts tests/ on sys.path (pyproject: pythonpath)."""

import numpy as np
from astropy import units as u

from ptaconstrain.sensitivity.curve import StrainCurve


def power_law_limit(h_ref=1e-14, f_ref=1e-8, slope=1.0, f_lo=2e-9, f_hi=3e-7, n=60):
    """An h0 upper limit h_ref (f/f_ref)^slope on a log grid (test input, not physics)."""
    f = np.geomspace(f_lo, f_hi, n)
    return StrainCurve(
        f * u.Hz, h_ref * (f / f_ref) ** slope, "h0_limit", {"confidence": 0.95, "span": "15 yr"}
    )


def bucket_limit(scale=1.0, f_ref=8e-9, n=50):
    """A PTA-like bucket h0 limit 5e-15 scale (x^-2 + x), x = f/f_ref (test input only)."""
    f = np.logspace(np.log10(2e-9), -7, n)
    x = f / f_ref
    return StrainCurve(
        f * u.Hz, scale * 5e-15 * (x**-2 + x), "h0_limit", {"confidence": 0.95, "span": "15 yr"}
    )
