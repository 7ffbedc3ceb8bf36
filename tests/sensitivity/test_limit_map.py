"""HEALPix maps: writing forecast thresholds, reading user upper-limit maps, the figure."""

import healpy as hp
import numpy as np
import pytest
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.io import fits

from ptaconstrain._files import OutputExistsError
from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.errors import PtaconstrainWarning
from ptaconstrain.sensitivity import PositionalSensitivity, limit_map

FREQS = [3e-9, 1e-8, 3e-8]
NSIDE = 8


def _limit_values():
    """Invented h0 limits, base(f) x (1 + 0.5 sin b), b the galactic latitude (NESTED)."""
    _, b = hp.pix2ang(NSIDE, np.arange(hp.nside2npix(NSIDE)), nest=True, lonlat=True)
    base = np.array([3e-14, 1e-14, 2e-14])
    return base[:, None] * (1.0 + 0.5 * np.sin(np.radians(b)))[None, :], base


def _write_limit_map(path, **header_changes):
    maps, _ = _limit_values()
    extra = [(f"FREQ{i + 1}", f) for i, f in enumerate(FREQS)] + [("CONFLEV", 0.9)]
    hp.write_map(
        str(path),
        list(maps),
        nest=True,
        coord="G",
        column_units="",
        extra_header=extra,
        overwrite=True,
        dtype=np.float64,
    )
    if header_changes:
        with fits.open(path, mode="update") as hdul:
            for k, v in header_changes.items():
                if v is None:
                    del hdul[1].header[k]
                else:
                    hdul[1].header[k] = v
    return path


def test_write_threshold_maps_round_trip_through_healpy(tmp_path):
    # healpy.read_map reads back what we wrote, with the HEALPix header keywords
    # (Gorski et al. 2005) set: RING ordering, equatorial frame, one FREQn per column.
    rng = np.random.default_rng(0)
    maps = rng.uniform(1e-15, 1e-14, (2, hp.nside2npix(NSIDE)))
    path = tmp_path / "m.fits"
    limit_map.write_threshold_maps(path, maps, [8e-9, 2e-8] * u.Hz, 5.0, 12.0 * u.yr, "test")
    back, hdr = hp.read_map(str(path), field=(0, 1), h=True)
    hdr = dict(hdr)
    assert np.allclose(back, maps, rtol=0, atol=0)
    assert hdr["ORDERING"] == "RING" and hdr["COORDSYS"] == "C"
    assert hdr["FREQ1"] == 8e-9 and hdr["FREQ2"] == 2e-8 and hdr["MAPKIND"] == "h0_threshold"
    with pytest.raises(OutputExistsError):
        limit_map.write_threshold_maps(path, maps, [8e-9, 2e-8] * u.Hz, 5.0, 12.0 * u.yr, "t")


def test_limit_map_value_at_host_pixel_nested_galactic(tmp_path):
    # The pixel is found independently: astropy's galactic transform and
    # healpy.ang2pix in the file's own NESTED ordering.
    path = _write_limit_map(tmp_path / "lim.fits")
    lim = limit_map.load_limit_map(path)
    assert lim.frame == "G" and lim.nside == NSIDE and lim.confidence == 0.9
    coord = SkyCoord(201.6 * u.deg, -4.1 * u.deg)
    gal = coord.galactic
    pix = hp.ang2pix(NSIDE, gal.l.deg, gal.b.deg, nest=True, lonlat=True)
    maps, _ = _limit_values()
    curve = lim.curve_at(coord)
    assert curve.kind == "h0_limit" and curve.confidence == 0.9
    assert curve.sky.startswith("ra=201.6000deg")
    assert curve.value == pytest.approx(maps[:, pix], rel=1e-12, abs=0)
    assert curve.frequency.value == pytest.approx(FREQS, rel=1e-12, abs=0)


def test_limit_map_sky_average_and_exclusion_uses_host_position(tmp_path):
    lim = limit_map.load_limit_map(_write_limit_map(tmp_path / "lim.fits"))
    maps, _ = _limit_values()
    avg = lim.curve_at(None)
    assert avg.sky == "averaged" and "mean" in avg.meta["sky_note"]
    assert avg.value == pytest.approx(maps.mean(axis=1), rel=1e-12, abs=0)
    host = Host("Invented", 2e10, 100.0, ra=201.6, dec=-4.1)
    res = exclusion_map(host, lim)
    assert res.curve.sky.startswith("ra=201.6000deg") and res.is_limit
    with pytest.warns(PtaconstrainWarning, match="no sky position"):
        nopos = exclusion_map(Host("Nowhere", 2e10, 100.0), lim)
    assert nopos.curve.sky == "averaged"


@pytest.mark.parametrize(
    "change, words",
    [
        ({"ORDERING": None}, "ORDERING is missing"),
        ({"COORDSYS": "X"}, "COORDSYS is X"),
        ({"TUNIT1": "K"}, "has unit 'K'"),
        ({"FREQ2": None}, "add the header keyword FREQ2"),
        ({"CONFLEV": 95.0}, "CONFLEV"),
        ({"MAPKIND": "h0_threshold"}, "forecast"),
    ],
)
def test_bad_limit_maps_name_keyword_and_fix(tmp_path, change, words):
    path = _write_limit_map(tmp_path / "bad.fits", **change)
    with pytest.raises(limit_map.LimitMapError) as err:
        limit_map.load_limit_map(path)
    assert words in str(err.value) and "\n" not in str(err.value)


def test_single_frequency_map_is_refused(tmp_path):
    path = tmp_path / "one.fits"
    hp.write_map(
        str(path),
        np.ones(hp.nside2npix(4)),
        coord="C",
        extra_header=[("FREQ1", 1e-8)],
        dtype=np.float64,
    )
    with pytest.raises(limit_map.LimitMapError, match="two or more frequencies"):
        limit_map.load_limit_map(path)


def test_sky_map_figure_writes_png(tmp_path):
    # Pulsars and hosts are drawn; the PNG has the PNG signature (ISO/IEC 15948).
    from ptaconstrain.report.figures import save_figure
    from ptaconstrain.report.skyplot import sky_map_figure

    m = np.linspace(1e-15, 5e-15, hp.nside2npix(NSIDE))
    psr = SkyCoord([10.0, 280.0] * u.deg, [0.0, -30.0] * u.deg)
    hosts = [Host("Invented A", 1e10, 50.0, ra=150.0, dec=20.0), Host("No pos", 1e10, 50.0)]
    fig = sky_map_figure(m, pulsars=psr, hosts=hosts, title="test")
    labels = [t.get_text() for t in fig.axes[0].texts]
    assert labels == ["Invented A"]
    assert "dimensionless" in fig.axes[1].get_xlabel()
    (path,) = save_figure(fig, tmp_path / "map", ("png",))
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# ----------------------------------------------------------- the protocol
def test_limit_map_is_a_positional_sensitivity_without_markers(tmp_path):
    lim = limit_map.load_limit_map(_write_limit_map(tmp_path / "lim.fits"))
    assert isinstance(lim, PositionalSensitivity)
    assert lim.sky_markers() is None


def test_threshold_table_is_the_map_on_its_own_grid_and_frame(tmp_path):
    # Pixel values against curve_at(pixel centre), the centre taken with
    # healpy.pix2ang in the map's galactic frame and turned into a SkyCoord by astropy.
    lim = limit_map.load_limit_map(_write_limit_map(tmp_path / "lim.fits"))
    f = np.array([FREQS[2], FREQS[0]]) * u.Hz
    table = lim.threshold_table(f, nside=64)  # a map answers at its own nside
    assert (table.nside, table.frame) == (NSIDE, "galactic")
    assert table.values.shape == (hp.nside2npix(NSIDE), 2)
    for pix in (0, 300, 767):
        lon, lat = hp.pix2ang(NSIDE, pix, lonlat=True)
        centre = SkyCoord(l=lon * u.deg, b=lat * u.deg, frame="galactic")
        assert table.values[pix] == pytest.approx(
            lim.curve_at(centre).h0_threshold(f), rel=1e-12, abs=0
        )


def test_threshold_table_refuses_frequencies_between_columns(tmp_path):
    lim = limit_map.load_limit_map(_write_limit_map(tmp_path / "lim.fits"))
    with pytest.raises(limit_map.LimitMapError) as err:
        lim.threshold_table([1e-8, 2e-8] * u.Hz)
    msg = str(err.value)
    assert "2e-08 Hz is not one of the 3 frequencies" in msg and "\n" not in msg
    assert lim.threshold_table(1e-8).values.shape == (hp.nside2npix(NSIDE), 1)  # bare Hz


def test_limit_map_span_is_a_quantity_or_bare_years():
    maps = np.full((2, hp.nside2npix(1)), 1e-14)
    lim = limit_map.LimitMap([1e-8, 2e-8] * u.Hz, maps, span=15 * u.yr)
    assert lim.curve_at(None).span.to_value(u.yr) == pytest.approx(15.0, rel=1e-6, abs=0)
    lim_d = limit_map.LimitMap([1e-8, 2e-8] * u.Hz, maps, span=365.25 * u.d)
    # IAU Julian year
    assert lim_d.curve_at(None).span.to_value(u.yr) == pytest.approx(1.0, rel=1e-12, abs=0)
    assert limit_map.LimitMap([1e-8, 2e-8], maps, span=12).span == 12 * u.yr
    with pytest.raises(limit_map.LimitMapError, match="span"):
        limit_map.LimitMap([1e-8, 2e-8] * u.Hz, maps, span=15 * u.m)


@pytest.mark.parametrize("nside, step", [(4, 50), (16, 1000), (16, 3072)])
def test_streamed_threshold_file_is_byte_for_byte_healpy_write_map(tmp_path, nside, step):
    # Reference: healpy.write_map with the same columns and header keywords; the
    # streamed writer (whole array, or pixel blocks that do not align with the
    # 1024-pixel table rows) must produce the identical file.
    npix = hp.nside2npix(nside)
    maps = np.random.default_rng(1).uniform(1e-15, 1e-14, (3, npix))
    f = [8e-9, 2e-8, 3e-8] * u.Hz
    limit_map.write_threshold_maps(tmp_path / "a.fits", maps, f, 5.0, 12.0 * u.yr, "t")
    blocks = (maps[:, lo : lo + step] for lo in range(0, npix, step))
    limit_map.write_threshold_maps(
        tmp_path / "b.fits", blocks, f, 5.0, 12.0 * u.yr, "t", nside=nside
    )
    header = [
        ("MAPKIND", "h0_threshold", "forecast h0 for S/N >= SNR, not a limit"),
        ("SNR", 5.0, "S/N threshold"),
        ("SPAN", 12.0, "observing span [yr]"),
        ("SOURCE", "t", ""),
        ("ORIENT", "mean rho^2 over incl. and polarisation", ""),
    ]
    header += [(f"FREQ{i + 1}", fi, "GW frequency of column [Hz]") for i, fi in enumerate(f.value)]
    hp.write_map(
        str(tmp_path / "h.fits"),
        list(maps),
        nest=False,
        coord="C",
        column_names=[f"H0_{fi * 1e9:.4g}NHZ" for fi in f.value],
        column_units="",
        extra_header=header,
        dtype=np.float64,
    )
    ref = (tmp_path / "h.fits").read_bytes()
    assert (tmp_path / "a.fits").read_bytes() == ref
    assert (tmp_path / "b.fits").read_bytes() == ref


def test_streamed_threshold_file_refuses_short_blocks(tmp_path):
    maps = np.ones((2, hp.nside2npix(NSIDE)))
    with pytest.raises(limit_map.LimitMapError, match="12 nside"):
        limit_map.write_threshold_maps(
            tmp_path / "s.fits",
            iter([maps[:, :-5]]),
            [8e-9, 2e-8] * u.Hz,
            5.0,
            12.0 * u.yr,
            "t",
            nside=NSIDE,
        )
    assert not list(tmp_path.iterdir())
