"""exclude with position-dependent sensitivity: a pulsar list or a HEALPix limit map."""

import healpy as hp
import numpy as np
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file

NSIDE = 8


def _north_south_limit_map(path):
    """h0 limits 10 x deeper in the north (Dec > 0) than in the south, at 3 frequencies."""
    theta, _ = hp.pix2ang(NSIDE, np.arange(hp.nside2npix(NSIDE)))
    north = theta < np.pi / 2  # healpy colatitude
    freqs = [3e-9, 1e-8, 1e-7]
    maps = [np.where(north, 1e-15, 1e-14) * (f / 1e-8) for f in freqs]
    extra = [(f"FREQ{i + 1}", f) for i, f in enumerate(freqs)] + [("MAPKIND", "h0_limit")]
    hp.write_map(str(path), maps, coord="C", column_units="", extra_header=extra, dtype=np.float64)
    return path


def _run(args):
    return CliRunner().invoke(main, args)


def test_skymap_limit_is_taken_at_the_host_pixel(tmp_path):
    # the same host placed in the deep (north) and shallow (south) halves of the map:
    # h0 ~ eta, so a 10 x lower limit lowers eta_min 10 x (Thorne 1987 eq. 46)
    path = _north_south_limit_map(tmp_path / "lim.fits")
    bounds = {}
    for name, dec in (("north", "40"), ("south", "-40")):
        r = _run(
            [
                "exclude",
                "--mass",
                "2e10",
                "--distance",
                "100",
                "--ra",
                "150",
                "--dec",
                dec,
                "--limit-map",
                str(path),
                "--out",
                str(tmp_path / name),
                "--name",
                name,
                "--grid",
                "60",
                "--format",
                "png",
            ]
        )
        assert r.exit_code == 0, r.output
        assert "at the host's position" in r.output and "ruled out" in r.output
        notes = [line for line in r.output.splitlines() if line.startswith("Note:")]
        # a position was given: no sky assumed (the map states no span: that is noted)
        assert all("span" in n and "sky" not in n for n in notes)
        t = QTable.read(tmp_path / name / f"{name}_exclusion.ecsv")
        assert "limit-map" in t.meta["files"]
        bounds[name] = np.asarray(t["max_mass_ratio"])
    ok = np.isfinite(bounds["north"]) & (bounds["south"] < 1)
    assert ok.any() and np.all(bounds["north"][ok] < bounds["south"][ok])


def test_array_without_position_says_sky_averaged(tmp_path):
    r = _run(
        [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--array",
            str(data_file("demo_array.ecsv")),
            "--out",
            str(tmp_path / "o"),
            "--grid",
            "30",
            "--format",
            "png",
        ]
    )
    assert r.exit_code == 0, r.output
    assert "sky-averaged" in r.output and "would be detectable" in r.output
    # the assumption is a note on stderr, once
    notes = [ln for ln in r.stderr.splitlines() if ln.startswith("Note:")]
    assert notes[0] == (
        "Note: no sky position for 'host' (give its RA/Dec): the sky-averaged sensitivity is used"
    )
    t = QTable.read(tmp_path / "o" / "host_forecast.ecsv")
    assert t.meta["sky"] == "averaged" and "FORECAST" in t.meta["statement"]


def test_exactly_one_sensitivity_source(tmp_path):
    for extra in ([], ["--curve", "synthetic_h0_limit", "--array", "demo_array"]):
        r = _run(
            ["exclude", "--mass", "2e10", "--distance", "100", "--out", str(tmp_path / "o")] + extra
        )
        assert r.exit_code != 0 and "exactly one of --curve, --array or --limit-map" in r.output
        assert len(r.output.strip().splitlines()) == 1
    assert not (tmp_path / "o").exists()


def test_threshold_map_is_refused_as_a_limit_map(tmp_path):
    from astropy import units as u

    from ptaconstrain.sensitivity.limit_map import write_threshold_maps

    path = tmp_path / "forecast.fits"
    write_threshold_maps(
        path, np.full((2, hp.nside2npix(NSIDE)), 1e-15), [1e-8, 2e-8] * u.Hz, 5.0, 10 * u.yr, "test"
    )
    r = _run(
        [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--limit-map",
            str(path),
            "--out",
            str(tmp_path / "o"),
        ]
    )
    assert r.exit_code != 0 and len(r.output.strip().splitlines()) == 1
    assert "Traceback" not in r.output and not (tmp_path / "o").exists()


def test_span_is_refused_with_an_array(tmp_path):
    r = _run(
        [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--span",
            "5",
            "--array",
            str(data_file("demo_array.ecsv")),
            "--out",
            str(tmp_path / "o"),
        ]
    )
    assert r.exit_code != 0 and "--span" in r.output and not (tmp_path / "o").exists()


def test_outputs_are_readable_by_collaborators(tmp_path):
    # mkstemp creates 0600 files; outputs follow the umask like any other file
    import os
    import stat

    from ptaconstrain._files import atomic_write

    old = os.umask(0o022)
    try:
        with atomic_write(tmp_path / "x.txt") as tmp:
            tmp.write_text("ok")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "x.txt").stat().st_mode) == 0o644


def test_shipped_limit_map_is_deeper_towards_its_pulsars():
    # the synthetic map's pattern is 0.55 x the mean at RA 280, Dec -35 and ~1.6 x opposite
    from astropy import units as u
    from astropy.coordinates import SkyCoord

    from ptaconstrain.data import path as data_file
    from ptaconstrain.sensitivity.limit_map import load_limit_map

    lim = load_limit_map(data_file("synthetic_h0_limit_map.fits"))
    good = lim.curve_at(SkyCoord(280 * u.deg, -35 * u.deg))
    poor = lim.curve_at(SkyCoord(100 * u.deg, 35 * u.deg))
    assert good.is_limit and good.confidence == 0.95
    ratio = good.value / poor.value
    assert np.all(ratio < 0.4) and np.all(ratio > 0.3)
