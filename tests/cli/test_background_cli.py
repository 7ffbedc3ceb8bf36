"""``--background`` on ``curve``, ``threshold-map``, ``exclude --array`` and ``rank --array``."""

import json

import numpy as np
from astropy.io import fits
from astropy.table import QTable, Table
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import load_curve

ARRAY = str(data_file("demo_array.ecsv"))


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_curve_with_background_is_less_sensitive_at_low_frequency(tmp_path):
    quiet, loud = tmp_path / "quiet.ecsv", tmp_path / "loud.ecsv"
    assert _run("curve", "--array", ARRAY, "--out", quiet).exit_code == 0
    r = _run("curve", "--array", ARRAY, "--out", loud, "--background", "2.4e-15")
    assert r.exit_code == 0, r.output
    assert "A = 2.4e-15, gamma = 4.333" in r.output
    a, b = load_curve(quiet), load_curve(loud)
    assert a.meta["background"] == "none" and "A = 2.4e-15" in b.meta["background"]
    ratio = b.value / a.value  # S_n with / without: the red process rises as f^-13/3
    assert ratio[0] > 10 and ratio[-1] < 1.01 and np.all(ratio >= 1 - 1e-9)


def test_threshold_map_records_the_background(tmp_path):
    r = _run(
        "threshold-map",
        "--array",
        ARRAY,
        "--frequency",
        "8 nHz",
        "--nside",
        4,
        "--out",
        tmp_path,
        "--background",
        "2e-15,3.5",
    )
    assert r.exit_code == 0, r.output
    header = fits.getheader(tmp_path / "h0_threshold_map.fits", 1)
    assert header["BGAMP"] == 2e-15 and header["BGGAMMA"] == 3.5


def test_exclude_array_with_background(tmp_path):
    base = [
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--ra",
        "284.1",
        "--dec",
        "-37.2",
        "--array",
        ARRAY,
        "--grid",
        "30x40",
        "--format",
        "png",
        "--name",
        "B",
    ]
    assert _run(*base, "--out", tmp_path / "q").exit_code == 0
    r = _run(*base, "--out", tmp_path / "b", "--background", "2.4e-15")
    assert r.exit_code == 0, r.output
    tq = QTable.read(tmp_path / "q" / "B_forecast.ecsv")
    tb = QTable.read(tmp_path / "b" / "B_forecast.ecsv")
    assert "A = 2.4e-15" in tb.meta["inputs"]["background"]
    assert tq.meta["inputs"]["background"] == "none"
    both = np.isfinite(tq["max_mass_ratio"]) & np.isfinite(tb["max_mass_ratio"])
    # a noisier array never detects a lighter companion
    assert np.all(tb["max_mass_ratio"][both] >= tq["max_mass_ratio"][both] * (1 - 1e-12))


def test_background_needs_an_array(tmp_path):
    r = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        data_file("synthetic_h0_limit.ecsv"),
        "--out",
        tmp_path / "o",
        "--background",
        "2.4e-15",
    )
    assert r.exit_code == 2 and "--array" in r.output and not (tmp_path / "o").exists()
    r = _run("curve", "--array", ARRAY, "--out", tmp_path / "c.ecsv", "--background", "-15")
    assert r.exit_code == 2 and "log10" in r.output and "Traceback" not in r.output


def test_rank_array_with_background_records_it(tmp_path):
    res = _run(
        "rank",
        data_file("demo_catalogue.ecsv"),
        "--array",
        ARRAY,
        "--out",
        tmp_path,
        "--metric",
        "h0_ratio",
        "--background",
        "2.4e-15",
    )
    assert res.exit_code == 0, res.output
    t = Table.read(tmp_path / "ranking_top.ecsv")
    text = json.dumps(dict(t.meta), default=str)
    assert "A = 2.4e-15" in text
