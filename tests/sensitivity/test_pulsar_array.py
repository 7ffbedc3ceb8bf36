"""PulsarArray: S/N against the time-domain matched filter, curves, sky maps, the protocol."""

import healpy as hp
import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from pulsars_for_tests import (
    cw_residuals,
    matched_filter_rho2,
    projected_inverse_covariances,
    small_array,
)

from ptaconstrain.errors import PtaconstrainError
from ptaconstrain.sensitivity import PositionalSensitivity, antenna
from ptaconstrain.sensitivity import curve as curves


# ---------------------------------------------------------------- S/N
@pytest.mark.parametrize("freq", [7.3e-9, 1.9e-8, 5.3e-8])
def test_snr_agrees_with_time_domain_matched_filter(freq):
    # Ground truth (README): simulate the binary's residuals on the array's own
    # TOA epochs, fit the timing model by least squares, rho^2 = sum r^2 / sigma^2.
    # Away from 1/T (~2.4 nHz), 1/yr (31.7 nHz) and 2/yr (63.4 nHz).  Averaging
    # phi0 = 0 and pi/2 gives the phase average exactly (rho^2 is a + b cos 2 phi0
    # + c sin 2 phi0).
    arr = small_array()
    src = SkyCoord(45.0 * u.deg, -10.0 * u.deg)
    n = antenna.coord_to_vectors(src)
    h0, inc, psi = 1e-14, 0.7, 0.4
    mf = np.mean([matched_filter_rho2(arr, n, h0, freq, inc, psi, ph) for ph in (0.0, np.pi / 2)])
    ours = arr.snr_squared(h0, [freq] * u.Hz, coord=src, inclination=inc, psi=psi)[0]
    # issue requirement 5%; trapezoid integration on a 1-day grid is good to < 1e-4
    assert ours == pytest.approx(mf, rel=1e-3, abs=0)


# -------------------------------------------------------- curves and maps
def test_curve_threshold_reproduces_orientation_averaged_snr():
    # curves.detection_threshold_h0 on curve_at(coord) must give the h0 whose
    # mean rho^2 over inclination and polarisation equals snr^2; checked against
    # the matched filter averaged over psi (8 points) and cos i (Gauss-Legendre,
    # numpy.polynomial.legendre, exact for these trigonometric polynomials).
    arr = small_array()
    src = SkyCoord(150.0 * u.deg, 30.0 * u.deg)
    f = np.array([8.1e-9, 2.3e-8]) * u.Hz
    c = arr.curve_at(src, snr=5.0, frequency=f)
    assert c.kind == "strain_psd" and c.sky == "ra=150.0000deg dec=30.0000deg"
    assert c.meta["source"] == "computed from pulsar list test"
    h_thr = curves.detection_threshold_h0(c.strain_psd(f), c.span, 5.0).value
    n = antenna.coord_to_vectors(src)
    x, wt = np.polynomial.legendre.leggauss(3)
    psis = np.linspace(0, np.pi, 8, endpoint=False)
    for j, fj in enumerate(f.value):
        acc = 0.0
        for ci, wi in zip(x, wt, strict=True):
            for psi in psis:
                acc += (
                    wi
                    / 2
                    / psis.size
                    * np.mean(
                        [
                            matched_filter_rho2(arr, n, h_thr[j], fj, np.arccos(ci), psi, ph)
                            for ph in (0.0, np.pi / 2)
                        ]
                    )
                )
        assert np.sqrt(acc) == pytest.approx(5.0, rel=1e-3, abs=0)  # trapezoid error < 1e-4


def test_map_matrix_product_equals_exact_per_direction_computation():
    # Factorisation check (module docstring): the map pixel value equals the
    # orientation-averaged S/N computed per direction from the full signal,
    # projected with the dense GLS operator, including a red-noise pulsar.
    arr = small_array(red=True)
    nside = 4
    f = np.array([6.1e-9, 2.7e-8]) * u.Hz
    m = arr.h0_threshold_map(f, nside=nside, snr=5.0)
    pix = 77
    n = np.array(hp.pix2vec(nside, pix))
    gs = projected_inverse_covariances(arr)
    x, wt = np.polynomial.legendre.leggauss(3)
    psis = np.linspace(0, np.pi, 8, endpoint=False)
    h0 = 1e-14
    for j, fj in enumerate(f.value):
        acc = 0.0
        for ci_, wi in zip(x, wt, strict=True):
            for psi in psis:
                for ph in (0.0, np.pi / 2):
                    for k in range(len(arr)):
                        mjd = arr.epochs(k)
                        grid = np.arange(mjd[0], mjd[-1] + 0.5, 1.0)
                        r = np.interp(
                            mjd,
                            grid,
                            cw_residuals(grid, arr.vectors[k], n, h0, fj, np.arccos(ci_), psi, ph),
                        )
                        acc += wi / 2 / psis.size / 2 * r @ gs[k] @ r
        assert m[j, pix] == pytest.approx(5.0 * h0 / np.sqrt(acc), rel=1e-3, abs=0)


def test_sky_averaged_curve_is_mean_rho2_over_map():
    # The sky average of rho^2 over equal-area HEALPix pixels (healpy) equals
    # the sky-averaged curve's (SKY_MEAN_PATTERN = 1/3 per pulsar).
    arr = small_array(red=True)
    f = np.array([5e-9, 4e-8]) * u.Hz
    m = arr.h0_threshold_map(f, nside=16, snr=5.0)
    h_map = 5.0 / np.sqrt(np.mean((5.0 / m) ** 2, axis=1))
    c = arr.sky_averaged_curve(snr=5.0, frequency=f)
    assert c.sky == "averaged"
    assert c.h0_threshold(f, snr=5.0) == pytest.approx(h_map, rel=1e-3, abs=0)


def test_pulsar_term_doubles_snr_squared():
    # Incoherent pulsar term (sky module docstring): rho^2 x 2, so h0_thr / sqrt(2).
    f = np.array([1e-8, 2e-8]) * u.Hz
    a0, a1 = small_array(), small_array(pulsar_term=True)
    src = SkyCoord(1.0 * u.rad, 0.2 * u.rad)
    assert a1.snr_squared(1e-14, f, coord=src) == pytest.approx(
        2 * a0.snr_squared(1e-14, f, coord=src), rel=1e-6, abs=0
    )
    assert a1.curve_at(src, frequency=f).meta["pulsar_term"] == "incoherent"


def test_coord_must_be_single_position():
    arr = small_array()
    with pytest.raises(PtaconstrainError, match="one astropy SkyCoord"):
        arr.curve_at(SkyCoord([1, 2] * u.deg, [0, 0] * u.deg), frequency=[1e-8, 2e-8] * u.Hz)
    with pytest.raises(PtaconstrainError, match="power of 2"):
        arr.h0_threshold_map([1e-8] * u.Hz, nside=30)


# ----------------------------------------------------------- the protocol
def test_array_is_a_positional_sensitivity_with_pulsars_as_markers():
    arr = small_array()
    assert isinstance(arr, PositionalSensitivity)
    assert arr.sky_markers().separation(arr.coord).max().value == 0.0


def test_threshold_table_pixel_equals_curve_at_the_pixel_centre():
    # The vectorised table (features @ coefficients) against the per-position route,
    # curve_at(pixel centre).h0_threshold(f), with the centre from healpy.pix2ang.
    # The array's own span is passed: the curve's meta records it to 6 digits.
    # (abs=0: pytest.approx's default 1e-12 absolute tolerance would pass any h0.)
    arr = small_array(red=True)
    f = np.array([6.1e-9, 2.7e-8]) * u.Hz
    table = arr.threshold_table(f, snr=5.0, nside=4)
    assert (table.nside, table.frame, table.values.shape) == (4, "icrs", (192, 2))
    for pix in (0, 77, 191):
        lon, lat = hp.pix2ang(4, pix, lonlat=True)
        c = arr.curve_at(SkyCoord(lon * u.deg, lat * u.deg), frequency=f)
        assert table.values[pix] == pytest.approx(
            c.h0_threshold(f, snr=5.0, span=arr.span), rel=1e-10, abs=0
        )


def test_threshold_table_reads_bare_numbers_as_hz():
    arr = small_array()
    bare = arr.threshold_table(1e-8, nside=2)
    assert bare.values == pytest.approx(
        arr.threshold_table(10 * u.nHz, nside=2).values, rel=1e-12, abs=0
    )
    with pytest.raises(PtaconstrainError, match="outside the array's band"):
        arr.threshold_table(8.0, nside=2)  # 8 Hz: a unit slip
    with pytest.raises(PtaconstrainError, match="power of 2"):
        arr.threshold_table(1e-8, nside=3)


# ------------------------------------------------------- speed and memory paths
@pytest.mark.parametrize(
    "by, kwargs",
    [
        ("pixel", {"pixels": 1000}),
        ("pixel", {"pixels": 7}),
        ("frequency", {"block_bytes": 1}),
        ("frequency", {"block_bytes": 8 * 3072 * 2, "pixels": 333}),
    ],
)
def test_map_blocks_equal_whole_map_bit_for_bit(by, kwargs):
    # Reference: h0_threshold_map, itself checked above against the per-direction
    # brute force; blocking must change no bit (one frequency per block included).
    # 40 pulsars and 37 frequencies: matrices past the BLAS's smallest kernels
    base = small_array(red=True)
    rng = np.random.default_rng(3)
    n = 40
    arr = type(base)(
        [f"P{i}" for i in range(n)],
        SkyCoord(rng.uniform(0, 360, n) * u.deg, rng.uniform(-80, 80, n) * u.deg),
        np.full(n, 1.0) * u.us,
        np.full(n, 30.0) * u.d,
        np.full(n, 55000.0),
        np.full(n, 58000.0),
    )
    f = np.geomspace(5e-9, 1e-7, 37) * u.Hz
    whole = arr.h0_threshold_map(f, nside=16)
    got = np.full_like(whole, np.nan)
    for part, block in arr.threshold_map_blocks(f, 16, by=by, **kwargs):
        if by == "pixel":
            got[:, part] = block
        else:
            got[part] = block
    assert np.array_equal(got, whole)
    # the pixel-major table (tiles transposed as stored) holds the same bits
    assert np.array_equal(arr.threshold_table(f, nside=16).values, whole.T)


def test_feature_map_equals_the_direct_pattern_product():
    # Reference: the straightforward map, pattern[pix, p] from the closed form
    # (1 + n.p)^2 / 4 (antenna.pattern_power_grid) times the orientation-averaged
    # rho^2 per pulsar (antenna.orientation_averaged_snr_squared), one direction
    # at a time; the map takes it through ten quadratic features instead.  Exact
    # algebra: equal to rounding, including a pulsar-term map and a red pulsar.
    base = small_array(red=True)
    rng = np.random.default_rng(8)
    n = 25
    arr = type(base)(
        [f"P{i}" for i in range(n)],
        SkyCoord(rng.uniform(0, 360, n) * u.deg, rng.uniform(-80, 80, n) * u.deg),
        rng.uniform(0.2, 2.0, n) * u.us,
        rng.choice([14.0, 28.0], n) * u.d,
        np.full(n, 55000.0),
        np.full(n, 58000.0),
        red_amp=np.where(np.arange(n) % 3 == 0, 1e-14, 0.0),
        red_gamma=np.full(n, 4.0),
    )
    f = np.geomspace(5e-9, 1e-7, 9) * u.Hz
    nside = 8
    pix = np.stack(hp.pix2vec(nside, np.arange(hp.nside2npix(nside))), axis=1)
    for term in (False, True):
        got = arr.h0_threshold_map(f, nside=nside, snr=5.0, pulsar_term=term)
        pattern = antenna.pattern_power_grid(arr.vectors, pix)
        rho2 = antenna.orientation_averaged_snr_squared(1.0, f, arr.weights(f), pattern, term)
        assert got.T == pytest.approx(5.0 / np.sqrt(rho2), rel=1e-12, abs=0)


def test_weights_same_in_worker_processes_and_with_library_blas_threads():
    # Reference: the serial loop with one BLAS thread.  Worker processes run the
    # same arithmetic (bit for bit); the library's own thread count may only
    # reorder sums (rounding level).
    f = np.array([5e-9, 1e-8, 4e-8]) * u.Hz
    serial = small_array(red=True).weights(f, workers=1).value
    assert np.array_equal(small_array(red=True).weights(f, workers=2).value, serial)
    threads = small_array(red=True).weights(f, workers=1, blas_threads=None).value
    assert threads == pytest.approx(serial, rel=1e-10, abs=0)
    with pytest.raises(PtaconstrainError, match="workers"):
        small_array().weights(f, workers=0)
