"""Eccentric exclusion maps (analysis/exclusion.py with ``eccentricity``)."""

import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import bucket_limit

from ptaconstrain.analysis.exclusion import ABOVE_ISCO, CHIRPING, exclusion_map
from ptaconstrain.analysis.probability import exclusion_probability
from ptaconstrain.binary import eccentric as ecc
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.sensitivity.curve import StrainCurve

Q = np.geomspace(1e-4, 1, 40)
P = np.geomspace(0.05, 60, 50) * u.yr
HOST = Host("A", 2e10, 60)


def _psd_curve():
    f = np.geomspace(2e-9, 3e-7, 40)
    return StrainCurve(
        f * u.Hz,
        1e-26 * (f / 1e-8) ** 2 + 1e-28 * (f / 1e-8) ** -3,
        "strain_psd",
        {"span": "20 yr"},
    )


@pytest.mark.parametrize("curve", [bucket_limit(), _psd_curve()], ids=["limit", "psd"])
def test_zero_eccentricity_reproduces_the_circular_map_exactly(curve):
    # the circular map is the reference: Thorne (1987) h0 against the curve at f = 2/P,
    # chirping by Peters (1964) df/dt, f_ISCO of Maggiore (2008) eq. 4.39 -- bit for bit
    circ = exclusion_map(HOST, curve, Q, P, warn=False)
    e0 = exclusion_map(HOST, curve, Q, P, eccentricity=0.0, warn=False)
    for name in (
        "excluded",
        "region",
        "h0_threshold",
        "eta_min",
        "max_mass_ratio",
        "chirp_mass_ratio",
        "separation_rg",
    ):
        np.testing.assert_array_equal(getattr(e0, name), getattr(circ, name), err_msg=name)
    f = wf.gw_frequency(P)
    h_unit = wf.strain_amplitude(HOST.mass, 1.0, f, HOST.distance, HOST.redshift).value / 0.25
    np.testing.assert_array_equal(e0.eta_min, curve.h0_threshold(f, snr=5.0) / h_unit)
    assert e0.isco_frequency == wf.isco_frequency(HOST.mass, HOST.redshift)
    assert e0.harmonics.tolist() == [2] and e0.orbit == "circular orbit"


def _cell_by_cell(curve, e, snr=5.0):
    """Reference: every cell's harmonic amplitudes h_n = (2/n) sqrt(g) h0 (Peters &
    Mathews 1963, via harmonic_amplitude_ratio) compared one by one with the curve."""
    n = ecc.harmonic_numbers(e)
    f = wf.gw_frequency(P)
    h0 = wf.strain_amplitude(HOST.mass, Q[:, None], f[None, :], HOST.distance, HOST.redshift).value
    out = np.zeros(h0.shape, bool)
    for k in n:  # a plain loop over harmonics: the reference, not the fast path
        h_k = ecc.harmonic_amplitude_ratio(k, e) * h0
        thr = curve.h0_threshold(k / 2 * f, snr=snr)
        if curve.is_limit:
            out |= h_k > np.nan_to_num(thr, nan=np.inf)[None, :]
        else:
            out = out.astype(float) + np.nan_to_num((h_k / thr[None, :]) ** 2)
    if not curve.is_limit:
        out = out >= 1.0
    return out & (f < ecc.pericentre_isco_frequency(HOST.mass, e, HOST.redshift))[None, :]


@pytest.mark.parametrize("e", [0.3, 0.7])
@pytest.mark.parametrize("curve", [bucket_limit(), _psd_curve()], ids=["limit", "psd"])
def test_eccentric_map_agrees_with_harmonic_by_harmonic_comparison(curve, e):
    r = exclusion_map(HOST, curve, Q, P, eccentricity=e, warn=False)
    ref = _cell_by_cell(curve, e)
    # cells within 1e-9 of the boundary may round either way
    near = np.isclose(wf.symmetric_mass_ratio(Q)[:, None], r.eta_min[None, :], rtol=1e-9, atol=0)
    assert np.array_equal(r.excluded[~near], ref[~near])
    assert r.eccentricity == e and r.harmonics.max() == ecc.harmonic_numbers(e).max()


def test_eccentric_chirp_and_pericentre_regions():
    # the highest harmonic kept drifts (n_max/2) F(e) times the circular df/dt
    # (Peters 1964 for df/dt; Peters & Mathews 1963 for F); the pericentre rule
    # a (1 - e) > 6 G M / c^2 bounds the period from below
    e = 0.5
    r = exclusion_map(HOST, bucket_limit(), Q, P, eccentricity=e)
    f = wf.gw_frequency(P)
    above = f > ecc.pericentre_isco_frequency(HOST.mass, e, HOST.redshift)
    assert np.all(r.region[:, above] == ABOVE_ISCO)
    # some periods where a circular binary would exist are now excluded by the rule
    assert np.any(above & (f < wf.isco_frequency(HOST.mass, HOST.redshift)))
    n_max = ecc.harmonic_numbers(e).max()
    fdot = wf.frequency_derivative(HOST.mass, Q[:, None], f[None, :], HOST.redshift)
    drift = (fdot * n_max / 2 * ecc.enhancement_factor(e) * r.span**2).decompose().value
    ok = ~above & ~np.isnan(r.eta_min)
    np.testing.assert_array_equal((r.region == CHIRPING)[:, ok], (drift > 1)[:, ok])


def test_probability_map_uses_each_samples_pericentre_isco():
    # a sample has no binary at f > f_ISCO,s (1 - e)^(3/2) (pericentre rule), so the
    # fraction above it is counted from the samples themselves
    h = Host("A", 2e10, 60, mass_err_dex=0.3, distance_err=5)
    pm = exclusion_probability(h, bucket_limit(), Q, P, samples=2000, seed=3, eccentricity=0.5)
    assert pm.deterministic.eccentricity == 0.5
    f_isco = pm.samples.isco_frequency.to_value(u.Hz) * (1 - 0.5) ** 1.5
    expected = np.mean(pm.frequency.to_value(u.Hz)[None, :] > f_isco[:, None], axis=0)
    np.testing.assert_allclose(pm.above_isco_fraction, expected, rtol=0, atol=1e-12)
    assert np.any((expected > 0) & (expected < 1))  # a partial column is exercised
