"""The one-line summaries say what the strain comparison shows."""

import re

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from curves_for_tests import power_law_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.errors import PtaconstrainWarning
from ptaconstrain.report.tables import summary_lines

H_REF, F_REF = 6e-14, 1e-8  # the test limit: h0 < H_REF (f / F_REF)


def _factor(line):
    return float(re.search(r"by up to a factor ([0-9.e+-]+)", line).group(1))


def test_every_constrained_period_chirping_is_said_so():
    # M = 5.4e10 solMass at 100 Mpc, P around 1.05 yr, 7 yr span: q = 1 is far above the
    # limit, but at these periods every q above ~0.01 chirps within the span
    host = Host("Chirper", 5.4e10, 100)
    period = np.geomspace(1.0, 1.1, 7) * u.yr
    result = exclusion_map(
        host,
        power_law_limit(h_ref=H_REF, f_ref=F_REF),
        mass_ratio=np.geomspace(0.1, 1, 30),
        period=period,
        span=7 * u.yr,
    )
    f = 2 / period
    # premise, from waveform directly: the bound sits inside the chirping region
    q_bound = result.max_mass_ratio
    assert np.all(wf.is_chirping(host.mass, q_bound, f, 7 * u.yr, host.redshift))
    assert result.tightest() is None
    # expected ratio: h0 of q = 1 (waveform.strain_amplitude) over the limit H_REF f/F_REF
    h0 = wf.strain_amplitude(host.mass, 1.0, f, host.distance, host.redshift)
    expected = np.max(
        h0.to_value(u.dimensionless_unscaled)
        / (H_REF * (f / (F_REF * u.Hz)).to_value(u.dimensionless_unscaled))
    )
    assert expected > 3  # several times above the limit
    first, second = summary_lines(result)
    assert "no companion ruled out" in first
    assert "stays below" not in second
    assert "exceeds the limit by up to a factor" in second
    assert _factor(second) == pytest.approx(expected, rel=5e-3, abs=0)  # printed to 3 digits
    assert "chirps within the 7 yr span" in second and "no CW bound is quoted" in second


def test_every_period_above_isco_is_said_so():
    host = Host("Tight", 5.4e10, 100)
    period = np.geomspace(1e-4, 2e-4, 5) * u.yr
    result = exclusion_map(
        host,
        power_law_limit(h_ref=H_REF, f_ref=F_REF, f_hi=1e-3),
        mass_ratio=np.geomspace(0.1, 1, 10),
        period=period,
    )
    # test-mass Schwarzschild ISCO: f_ISCO = c^3 / (6^(3/2) pi G M (1+z)), P = 2 / f
    f_isco = const.c**3 / (6**1.5 * np.pi * const.G * host.mass * (1 + host.redshift))
    p_isco = (2 / f_isco).to_value(u.yr)
    assert period.to_value(u.yr).max() < p_isco
    first, second = summary_lines(result)
    assert "no companion ruled out" in first
    assert "stays below" not in second and "exceeds" not in second
    assert "no circular binary of this mass has these periods" in second
    shown = float(re.search(r"P < ([0-9.e+-]+) yr", second).group(1))
    assert shown == pytest.approx(p_isco, rel=5e-3, abs=0)


def test_a_binary_below_the_limit_stays_below():
    host = Host("Faint", 1e8, 1000)
    period = np.geomspace(0.5, 10, 20) * u.yr
    result = exclusion_map(host, power_law_limit(h_ref=H_REF, f_ref=F_REF), period=period)
    f = 2 / period
    h0 = wf.strain_amplitude(host.mass, 1.0, f, host.distance, host.redshift)
    expected = np.max(
        h0.to_value(u.dimensionless_unscaled)
        / (H_REF * (f / (F_REF * u.Hz)).to_value(u.dimensionless_unscaled))
    )
    assert expected < 1
    second = summary_lines(result)[1]
    assert "stays below the limit" in second
    shown = float(re.search(r"at most ([0-9.e+-]+) of it", second).group(1))
    assert shown == pytest.approx(expected, rel=5e-3, abs=0)


def test_a_forecast_names_the_detection_threshold():
    from ptaconstrain.sensitivity.curve import StrainCurve

    f = np.geomspace(2e-9, 3e-7, 40)
    psd = StrainCurve(f * u.Hz, 1e-20 * (f / 1e-8) ** 2, "strain_psd", {"span": "20 yr"})
    with pytest.warns(PtaconstrainWarning, match="orientation-averaged S/N"):
        result = exclusion_map(Host("Faint", 1e8, 1000), psd)
    first, second = summary_lines(result)
    assert "would be detectable" in first and "not an exclusion" in first
    assert "the detection threshold" in second
