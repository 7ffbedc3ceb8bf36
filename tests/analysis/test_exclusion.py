import numpy as np
import pytest
from astropy import units as u
from curves_for_tests import power_law_limit
from hypothesis import given, settings
from hypothesis import strategies as st

from ptaconstrain.analysis.exclusion import (
    ABOVE_ISCO,
    CHIRPING,
    EXCLUDED,
    UNCONSTRAINED,
    exclusion_map,
)
from ptaconstrain.binary import waveform as wf
from ptaconstrain.binary.host import Host
from ptaconstrain.errors import PtaconstrainWarning
from ptaconstrain.sensitivity.curve import StrainCurve

Q = np.geomspace(1e-4, 1, 60)
P = np.geomspace(0.05, 60, 70) * u.yr


def test_map_agrees_with_cell_by_cell_strain_comparison(limit_curve):
    # reference: h0 of every cell from the Thorne (1987) formula, compared one by one
    host = Host("A", 3e9, 20)
    r = exclusion_map(host, limit_curve, Q, P)
    f = wf.gw_frequency(P)
    h = wf.strain_amplitude(host.mass, Q[:, None], f[None, :], host.distance, host.redshift)
    lim = limit_curve.h0_threshold(f)
    ok = ~np.isnan(lim) & (f < wf.isco_frequency(host.mass, host.redshift))
    expected = (h.value > lim[None, :]) & ok[None, :]
    np.testing.assert_array_equal(r.excluded, expected)


def test_max_mass_ratio_sits_on_the_limit(limit_curve):
    # at q = max_mass_ratio the binary's h0 equals the limit (closed-form eta inverse)
    host = Host("A", 2e10, 100)
    r = exclusion_map(host, limit_curve, Q, P)
    f = wf.gw_frequency(P)
    cut = np.isfinite(r.max_mass_ratio) & (r.max_mass_ratio < 1)
    assert cut.any()
    h = wf.strain_amplitude(host.mass, r.max_mass_ratio[cut], f[cut], host.distance, host.redshift)
    np.testing.assert_allclose(h.value, r.h0_threshold[cut], rtol=1e-9)


def test_regions(limit_curve):
    host = Host("A", 2e10, 100, velocity_dispersion=300)
    r = exclusion_map(host, limit_curve, Q, P)
    f = wf.gw_frequency(P)
    isco = f > wf.isco_frequency(host.mass, host.redshift)
    assert np.all(r.region[:, isco] == ABOVE_ISCO)
    band = (f.value >= 2e-9) & (f.value <= 3e-7)
    assert np.all(r.region[:, ~band & ~isco] == UNCONSTRAINED)
    assert np.all(np.isnan(r.max_mass_ratio[~band | isco]))
    chirp = wf.is_chirping(host.mass, Q[:, None], f[None, :], r.span, host.redshift)
    inside = band & ~isco
    np.testing.assert_array_equal(r.region[:, inside] == CHIRPING, chirp[:, inside])
    assert np.any(r.region == EXCLUDED)
    assert r.hardening_period.shape == Q.shape


def test_companion_mass_and_separation_in_gravitational_radii(limit_curve):
    host = Host("A", 2e10, 100)
    r = exclusion_map(host, limit_curve, Q, P)
    q = r.max_mass_ratio
    np.testing.assert_allclose(r.companion_mass.to_value(u.Msun), 2e10 * q / (1 + q))
    # r_g = G M / c^2 = 1.4766 km per solar mass (handbook value, from memory)
    rg_km = 1.4766 * 2e10
    np.testing.assert_allclose(r.separation_rg, r.separation.to_value(u.km) / rg_km, rtol=1e-4)


def test_noise_budget_reads_detectable():
    f = np.geomspace(2e-9, 3e-7, 40)
    c = StrainCurve(f * u.Hz, 1e-26 * (f / 1e-8) ** 2, "strain_psd", {"span": "20 yr"})
    with pytest.warns(PtaconstrainWarning, match="orientation-averaged S/N"):
        r = exclusion_map(Host("A", 1e10, 50), c, Q, P, snr=5)
    assert r.verb == "detectable" and not r.is_limit and "S/N >= 5" in r.label


def test_sky_dependent_sensitivity_is_asked_at_the_host_position(limit_curve):
    class Probe:
        seen = []

        def curve_at(self, coord):
            self.seen.append(coord)
            return limit_curve

        def threshold_table(self, frequency, snr=5.0, nside=None):  # the Protocol's
            raise AssertionError("exclusion_map asks for curve_at only")

        def sky_markers(self):
            return None

    host = Host("A", 1e10, 50, ra=10.0, dec=-20.0)
    exclusion_map(host, Probe(), Q, P)
    assert Probe.seen[0].separation(host.coord).to_value(u.deg) == 0


def _qmax(mass, distance, level):
    r = exclusion_map(Host("A", mass, distance), power_law_limit(h_ref=level), Q, P)
    return np.nan_to_num(r.max_mass_ratio, nan=2.0)


masses = st.floats(min_value=1e8, max_value=5e10)
dists = st.floats(min_value=5, max_value=500)
levels = st.floats(min_value=1e-16, max_value=1e-12)
factor = st.floats(min_value=1.01, max_value=10)


@settings(max_examples=30, deadline=None)
@given(masses, dists, levels, factor)
def test_max_mass_ratio_never_rises_with_mass(m, d, lev, k):
    hi = _qmax(m * k, d, lev)
    lo = _qmax(m, d, lev)
    both = (hi <= 1) & (lo <= 1)  # ISCO moves with mass: compare where both exist
    assert np.all(hi[both] <= lo[both] * (1 + 1e-12))


@settings(max_examples=30, deadline=None)
@given(masses, dists, levels, factor)
def test_max_mass_ratio_never_rises_as_distance_falls(m, d, lev, k):
    assert np.all(_qmax(m, d / k, lev) <= _qmax(m, d, lev) * (1 + 1e-12))


@settings(max_examples=30, deadline=None)
@given(masses, dists, levels, factor)
def test_max_mass_ratio_never_rises_as_limit_falls(m, d, lev, k):
    assert np.all(_qmax(m, d, lev / k) <= _qmax(m, d, lev) * (1 + 1e-12))


@settings(max_examples=30, deadline=None)
@given(masses, dists, levels)
def test_excluded_set_grows_with_mass_ratio(m, d, lev):
    r = exclusion_map(Host("A", m, d), power_law_limit(h_ref=lev), Q, P)
    # once excluded at q, excluded at every larger q (same period)
    assert np.all(np.diff(r.excluded.astype(int), axis=0) >= 0)


def test_bad_grids_are_rejected(limit_curve):
    host = Host("A", 1e10, 50)
    with pytest.raises(ValueError, match="mass_ratio"):
        exclusion_map(host, limit_curve, [0.0, 0.5], P)
    with pytest.raises(ValueError, match="period"):
        exclusion_map(host, limit_curve, Q, [-1, 2] * u.yr)


def test_tightest_bound_skips_periods_where_the_bound_chirps():
    # a flat limit puts the raw minimum at short periods, deep in the chirping region
    curve = power_law_limit(h_ref=1e-14, slope=0.0)
    r = exclusion_map(Host("A", 3e10, 50), curve, Q, P)
    raw = int(np.nanargmin(r.max_mass_ratio))
    assert not r.bound_is_monochromatic[raw]
    period, q = r.tightest()
    j = int(np.argmin(np.abs(r.period - period)))
    assert r.bound_is_monochromatic[j] and q == r.max_mass_ratio[j]
    # every valid bound is at least as loose as the reported tightest one
    assert np.all(r.max_mass_ratio[r.bound_is_monochromatic & np.isfinite(r.max_mass_ratio)] >= q)
