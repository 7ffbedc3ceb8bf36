"""Shared fixtures: small, explicit curves so tests do not depend on demo data."""

import numpy as np
import pytest
from astropy import units as u

from ptaconstrain.curves import SensitivityCurve


def power_law_limit(h_ref=1e-14, f_ref=1e-8, slope=1.0, f_lo=2e-9, f_hi=3e-7, n=60):
    """An h0 upper limit h_ref (f/f_ref)^slope on a log grid (test input, not physics)."""
    f = np.geomspace(f_lo, f_hi, n)
    return SensitivityCurve(f * u.Hz, h_ref * (f / f_ref) ** slope, "h0_limit",
                            {"confidence": 0.95, "span": "15 yr"})


@pytest.fixture
def limit_curve():
    return power_law_limit()


@pytest.fixture
def curve_file(tmp_path, limit_curve):
    from ptaconstrain.curves import save_curve

    path = tmp_path / "limit.ecsv"
    save_curve(limit_curve, path)
    return path
