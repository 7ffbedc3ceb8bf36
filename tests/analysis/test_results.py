"""The result objects: frozen dataclasses with a short repr, a table and a figure;
the soft assumptions made on the way are warnings."""

import dataclasses
import warnings

import numpy as np
import pytest
from astropy import units as u

from ptaconstrain.analysis import (
    ExclusionMap,
    HostSamples,
    ProbabilityMap,
    exclusion_map,
    exclusion_probability,
    sample_host,
)
from ptaconstrain.binary import Host
from ptaconstrain.errors import InputError, PtaconstrainWarning
from ptaconstrain.sensitivity.curve import StrainCurve

Q = np.geomspace(1e-3, 1, 20)
P = np.geomspace(0.1, 30, 25) * u.yr


def noise_curve():
    """A strain-noise PSD power law (test input, not physics), sky-averaged, 20 yr."""
    f = np.geomspace(2e-9, 3e-7, 40)
    return StrainCurve(f * u.Hz, 1e-26 * (f / 1e-8) ** 2, "strain_psd", {"span": "20 yr"})


@pytest.fixture
def host():
    return Host("A", 2e10, 50, mass_err_dex=0.2, distance_err_frac=0.1)


@pytest.fixture
def results(host, limit_curve):
    det = exclusion_map(host, limit_curve, Q, P)
    prob = exclusion_probability(host, limit_curve, Q, P, samples=500, seed=3)
    return det, prob, prob.samples


def test_results_are_frozen(results):
    det, prob, samples = results
    assert isinstance(det, ExclusionMap) and isinstance(prob, ProbabilityMap)
    assert isinstance(samples, HostSamples)
    for obj, field in ((det, "max_mass_ratio"), (prob, "probability"), (samples, "mass")):
        assert dataclasses.is_dataclass(obj)
        with pytest.raises(dataclasses.FrozenInstanceError):
            setattr(obj, field, None)


def test_repr_is_short_and_names_host_kind_grid_and_bound(results):
    det, prob, samples = results
    for obj in (det, prob):
        text = repr(obj)
        assert 1 <= len(text.splitlines()) <= 3
        assert "'A'" in text and "upper limit" in text and "20 q x 25 P" in text
        assert "q >" in text and "[" not in text  # a bound, not an array
    best = det.tightest()
    assert f"q > {best[1]:.3g}" in repr(det)
    assert len(repr(samples).splitlines()) <= 3 and "seed=3" in repr(samples)


def test_to_table_has_the_documented_columns_with_units(results):
    det, prob, _ = results
    t = det.to_table()
    assert t.colnames == [
        "period",
        "f_gw",
        "h0_threshold",
        "max_mass_ratio",
        "companion_mass",
        "separation",
        "separation_rg",
        "chirp_mass_ratio",
        "angular_separation",
        "merger_time",
        "constrained",
    ]
    assert t["period"].unit == u.yr and t["f_gw"].unit == u.Hz
    assert t["companion_mass"].unit == u.Msun and t["separation"].unit == u.pc
    np.testing.assert_array_equal(t["max_mass_ratio"], det.max_mass_ratio)
    tp = prob.to_table()
    assert set(t.colnames) < set(tp.colnames)
    assert any(name.startswith("max_mass_ratio_") for name in tp.colnames)


def test_samples_table_has_units(results):
    _, _, samples = results
    t = samples.to_table()
    assert len(t) == samples.n and t["mass"].unit == u.Msun and t["distance"].unit == u.Mpc
    assert t.meta["seed"] == 3


def test_plot_returns_a_figure_and_draws_into_a_given_axes(results):
    pytest.importorskip("matplotlib")
    import matplotlib.pyplot as plt
    from matplotlib.figure import Figure

    det, prob, _ = results
    figs = [det.plot(), prob.plot()]
    try:
        assert all(isinstance(f, Figure) for f in figs)
        fig = Figure()
        ax = fig.add_subplot()
        assert det.plot(ax=ax) is fig and ax.get_xscale() == "log"
    finally:
        for f in figs:
            plt.close(f)


# ---------------------------------------------------------------- soft assumptions
def test_host_without_errors_warns_that_they_are_taken_as_zero(limit_curve):
    bare = Host("B", 1e10, 50)
    with pytest.warns(PtaconstrainWarning, match="no mass error.*no distance error"):
        exclusion_probability(bare, limit_curve, Q, P, samples=50, seed=1)
    with warnings.catch_warnings():
        warnings.simplefilter("error", PtaconstrainWarning)
        sample_host(Host("C", 1e10, 50, mass_err_dex=0.1, distance_err=5), 50, seed=1)


def test_noise_budget_map_warns_that_the_orientation_is_averaged():
    with pytest.warns(PtaconstrainWarning, match="orientation-averaged"):
        exclusion_map(Host("A", 1e10, 50), noise_curve(), Q, P)


def test_sampled_orientation_does_not_claim_an_average(host):
    with warnings.catch_warnings():
        warnings.simplefilter("error", PtaconstrainWarning)
        r = exclusion_probability(host, noise_curve(), Q, P, samples=50, seed=1)
    assert r.orientation
    with pytest.warns(PtaconstrainWarning, match="orientation-averaged"):
        exclusion_probability(host, noise_curve(), Q, P, samples=50, seed=1, orientation=False)


def test_positional_sensitivity_without_a_position_warns_sky_average(limit_curve):
    class Positional:
        def curve_at(self, coord):
            assert coord is None
            return limit_curve

        def threshold_table(self, frequency, snr=5.0, nside=None):  # the Protocol's
            raise AssertionError("exclusion_map asks for curve_at only")

        def sky_markers(self):
            return None

    with pytest.warns(PtaconstrainWarning, match="sky-averaged"):
        exclusion_map(Host("A", 1e10, 50), Positional(), Q, P)


def test_bad_grid_and_sample_inputs_are_input_errors(host, limit_curve):
    with pytest.raises(InputError, match="mass_ratio: 0 "):
        exclusion_map(host, limit_curve, [0.0, 0.5], P)
    with pytest.raises(InputError, match="period"):
        exclusion_map(host, limit_curve, Q, "3 kg")
    with pytest.raises(InputError, match="seed"):
        sample_host(host, 10, seed=-1)
