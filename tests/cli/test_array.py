"""``ptaconstrain curve`` / ``threshold-map`` and the array part of the demo."""

import healpy as hp
import numpy as np
import pytest
from astropy import units as u
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.sensitivity.curve import load_curve


def _write_array(path, **over):
    t = QTable()
    t["name"] = ["X1", "X2", "X3", "X4"]
    t["ra"] = [10.0, 100.0, 200.0, 300.0] * u.deg
    t["dec"] = [-20.0, 30.0, 5.0, -60.0] * u.deg
    t["toa_rms"] = [0.3, 1.0, 0.5, 2.0] * u.us
    t["cadence"] = [14.0, 28.0, 21.0, 14.0] * u.d
    t["span"] = [12.0, 8.0, 15.0, 6.0] * u.yr
    t["red_amp"] = [0.0, 1e-14, 0.0, 0.0]
    t["red_gamma"] = [np.nan, 3.5, np.nan, np.nan]
    for k, v in over.items():
        if v is None:
            del t[k]
        else:
            t[k] = v
    t.write(path, format="ascii.ecsv", overwrite=True)
    return str(path)


def _run(args):
    return CliRunner().invoke(main, args)


def _assert_one_line_error(res, words):
    assert res.exit_code != 0
    err = res.stderr.strip()
    assert err.startswith("Error:") and len(err.splitlines()) == 1, err
    assert words in err
    assert "Traceback" not in res.output


def test_curve_at_position_writes_readable_strain_psd(tmp_path):
    arr = _write_array(tmp_path / "a.ecsv")
    out = tmp_path / "c.ecsv"
    res = _run(["curve", "--array", arr, "--ra", "12h00m00s", "--dec", "-10d", "--out", str(out)])
    assert res.exit_code == 0, res.output
    c = load_curve(out)
    assert c.kind == "strain_psd" and c.sky == "ra=180.0000deg dec=-10.0000deg"
    assert c.meta["source"] == "computed from pulsar list a" and c.meta["snr"] == 5.0
    assert "[1/Hz]" in res.stdout and "dimensionless strain" in res.stdout
    again = _run(["curve", "--array", arr, "--out", str(out)])
    _assert_one_line_error(again, "already exists")
    ok = _run(["curve", "--array", arr, "--out", str(out), "--overwrite"])
    assert ok.exit_code == 0 and load_curve(out).sky == "averaged"


def test_skymap_writes_fits_and_png_per_frequency(tmp_path):
    arr = _write_array(tmp_path / "a.ecsv")
    out = tmp_path / "maps"
    res = _run(
        [
            "threshold-map",
            "--array",
            arr,
            "--frequency",
            "8 nHz",
            "--frequency",
            "2e-8",
            "--nside",
            "8",
            "--out",
            str(out),
        ]
    )
    assert res.exit_code == 0, res.output
    maps = hp.read_map(str(out / "h0_threshold_map.fits"), field=(0, 1))
    assert maps.shape == (2, hp.nside2npix(8)) and np.all(maps > 0)
    assert (out / "h0_threshold_map_8nHz.png").is_file()
    assert (out / "h0_threshold_map_20nHz.png").is_file()
    lines = res.stdout.strip().splitlines()
    assert len(lines) == 3 and "f = 8 nHz" in lines[1] and "sky-averaged" in lines[1]
    assert "dimensionless strain" in lines[1]


@pytest.mark.parametrize(
    "over, words",
    [
        ({"toa_rms": None}, "column 'toa_rms' is missing"),
        ({"toa_rms": [np.nan, 1.0, 0.5, 2.0] * u.us}, "row 1 (X1): toa_rms is NaN"),
        ({"cadence": [14.0, -28.0, 21.0, 14.0] * u.d}, "row 2 (X2): cadence"),
    ],
)
@pytest.mark.parametrize("command", ["curve", "threshold-map"])
def test_bad_pulsar_list_one_line_error_no_output(tmp_path, over, words, command):
    arr = _write_array(tmp_path / "bad.ecsv", **over)
    out = tmp_path / ("c.ecsv" if command == "curve" else "maps")
    args = [command, "--array", arr, "--out", str(out)]
    if command == "threshold-map":
        args += ["--frequency", "8 nHz"]
    res = _run(args)
    _assert_one_line_error(res, words)
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.parametrize(
    "args, words",
    [
        (["--frequency", "8 parsec"], "frequency"),
        (["--frequency", "abc"], "cannot read 'abc'"),
        (["--frequency", "-3 nHz"], "must be positive"),
        (["--frequency", "8 nHz", "--nside", "30"], "30 is not a power of 2"),
        (["--frequency", "8 nHz", "--nside", "0"], "not a power of 2"),
        (["--frequency", "8"], "outside the array's band"),  # 8 Hz: a unit slip
        (["--frequency", "0.1 nHz"], "outside the array's band"),  # below 1/T
    ],
)
def test_skymap_bad_options(tmp_path, args, words):
    arr = _write_array(tmp_path / "a.ecsv")
    out = tmp_path / "maps"
    res = _run(["threshold-map", "--array", arr, "--out", str(out), *args])
    _assert_one_line_error(res, words)
    assert not out.exists()


def test_missing_array_file(tmp_path):
    res = _run(["curve", "--array", str(tmp_path / "none.ecsv"), "--out", str(tmp_path / "c.ecsv")])
    _assert_one_line_error(res, "not found")


def test_help_shows_example():
    for cmd in ("curve", "threshold-map"):
        res = _run([cmd, "--help"])
        assert res.exit_code == 0 and "Example:" in res.output and "--array" in res.output


def test_demo_array_part_covers_well_and_poorly_covered_hosts(tmp_path):
    # The shipped demo array is clustered near (280, -35) deg: a host there must
    # need a smaller h0 than the sky average, one on the far side a larger one.
    from ptaconstrain.binary.host import Host
    from ptaconstrain.demo import array_part

    hosts = [
        Host("Near cluster", 1e10, 50.0, ra=284.1, dec=-37.2),
        Host("Far side", 1e10, 50.0, ra=150.3, dec=21.8),
        Host("No position", 1e10, 50.0),
    ]
    lines = array_part(tmp_path, hosts)
    text = "\n".join(lines)
    assert "INVENTED" in lines[0]
    near = next(x for x in lines if "Near cluster" in x)
    far = next(x for x in lines if "Far side" in x)
    ratio = [float(x.split(", ")[1].split(" x ")[0]) for x in (near, far)]
    assert ratio[0] < 0.8 and ratio[1] > 1.5
    assert "sky-averaged" in next(x for x in lines if "No position" in x)
    for name in (
        "demo_array_h0_map.fits",
        "demo_array_h0_map.png",
        "demo_array_curve_Near_cluster.ecsv",
        "demo_array_curve_sky_averaged.ecsv",
    ):
        assert (tmp_path / name).is_file(), text
    with pytest.raises(FileExistsError):
        array_part(tmp_path, hosts)


def test_curve_position_follows_the_one_sky_rule(tmp_path):
    # "187.7" is degrees and "12:30:48" hours (astropy Angle: 12:30:48 h = 187.7 deg);
    # both give the same position, and a U+2212 minus is a minus.
    from astropy.coordinates import Angle

    arr = _write_array(tmp_path / "a.ecsv")
    skies = []
    for ra in ("187.7", "12:30:48"):
        out = tmp_path / f"c{len(skies)}.ecsv"
        res = _run(["curve", "--array", arr, "--ra", ra, "--dec", "\u22125.5", "--out", str(out)])
        assert res.exit_code == 0, res.output
        skies.append(load_curve(out).sky)
    assert Angle("12:30:48", unit=u.hourangle).deg == pytest.approx(187.7, rel=1e-6, abs=0)
    assert skies == ["ra=187.7000deg dec=-5.5000deg"] * 2


@pytest.mark.parametrize(
    "ra, dec, words",
    [
        ("400", "0", "out of range"),
        ("abc", "0", "cannot read"),
        ("10", None, "give both RA and Dec"),
    ],
)
def test_curve_bad_position_one_line_error_no_output(tmp_path, ra, dec, words):
    arr = _write_array(tmp_path / "a.ecsv")
    out = tmp_path / "c.ecsv"
    args = ["curve", "--array", arr, "--ra", ra, "--out", str(out)]
    if dec is not None:
        args += ["--dec", dec]
    res = _run(args)
    _assert_one_line_error(res, words)
    assert not out.exists()
