"""Several upper limits: the tightest h0 at each frequency, and which limit it is."""

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.sensitivity.combined import tightest_limit
from ptaconstrain.sensitivity.curve import CurveError, StrainCurve


def test_tightest_is_the_pointwise_minimum_with_its_source():
    a = power_law_limit(h_ref=1e-14, slope=1.0)
    b = power_law_limit(h_ref=1e-14, slope=-1.0)  # the two cross at f_ref = 1e-8 Hz
    c = tightest_limit([a, b], ["A", "B"])
    f = np.array([3e-9, 9e-9, 1.1e-8, 1e-7]) * u.Hz
    expected = np.minimum(a.h0_threshold(f), b.h0_threshold(f))
    assert np.allclose(c.h0_threshold(f), expected, rtol=1e-12, atol=0)
    assert list(c.source_at(f)) == ["A", "A", "B", "B"]


def test_a_limit_covering_only_part_of_the_band_is_used_there_only():
    a = power_law_limit()
    b = power_law_limit(h_ref=1e-16, f_lo=5e-9, f_hi=2e-8)
    c = tightest_limit([a, b], ["wide", "narrow"])
    f = np.array([3e-9, 1e-8, 1e-7]) * u.Hz
    assert list(c.source_at(f)) == ["wide", "narrow", "wide"]
    assert c.h0_threshold(f)[0] == pytest.approx(float(a.h0_threshold(f[:1])[0]), rel=1e-12, abs=0)
    assert np.isnan(c.h0_threshold([1e-10] * u.Hz)[0])  # outside every band


def test_noise_budgets_and_mixed_confidences_are_refused():
    f = np.geomspace(2e-9, 3e-7, 10) * u.Hz
    psd = StrainCurve(f, np.full(10, 1e-10), "strain_psd")
    with pytest.raises(CurveError, match="noise budget"):
        tightest_limit([power_law_limit(), psd], ["A", "P"])
    other = StrainCurve(f, np.full(10, 1e-14), "h0_limit", {"confidence": 0.9})
    with pytest.raises(CurveError, match="different confidences"):
        tightest_limit([power_law_limit(), other], ["A", "B"])
