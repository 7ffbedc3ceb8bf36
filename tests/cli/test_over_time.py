"""``curve --years`` and ``exclude --array --years``: forecasts over time."""

import numpy as np
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import load_curve

ARRAY = str(data_file("demo_array.ecsv"))


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_curve_years_writes_one_curve_per_epoch(tmp_path):
    r = _run("curve", "--array", ARRAY, "--out", tmp_path / "c.ecsv", "--years", "10,0")
    assert r.exit_code == 0, r.output
    a, b = load_curve(tmp_path / "c_plus0yr.ecsv"), load_curve(tmp_path / "c_plus10yr.ecsv")
    assert abs(b.span.value - a.span.value - 10) < 1e-6
    # at the common frequencies the longer data set is more sensitive
    f = a.frequency[(a.frequency > b.frequency[0]) & (a.frequency > 2 * a.frequency[0])]
    assert np.all(b.h0_threshold(f) < a.h0_threshold(f))


def test_exclude_years_table_and_target(tmp_path):
    r = _run(
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
        "T",
        "--years",
        "0,10",
        "--target-q",
        "0.5",
        "--out",
        tmp_path,
    )
    assert r.exit_code == 0, r.output
    t = QTable.read(tmp_path / "T_over_time.ecsv")
    assert len(t) == 2 and t.meta["first_epoch_reaching_target"] == "+0 yr"
    assert (tmp_path / "T_over_time.png").is_file()
    assert "q = 0.5 becomes detectable after +0 yr" in r.output


def test_years_needs_an_array_and_rms_factor_needs_years(tmp_path):
    r = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        data_file("synthetic_h0_limit.ecsv"),
        "--years",
        "5",
        "--out",
        tmp_path / "o",
    )
    assert r.exit_code == 2 and "--array" in r.output and not (tmp_path / "o").exists()
    r = _run("curve", "--array", ARRAY, "--out", tmp_path / "c.ecsv", "--rms-factor", "2")
    assert r.exit_code == 2 and "--years" in r.output
    r = _run("curve", "--array", ARRAY, "--out", tmp_path / "c.ecsv", "--years", "5,-1")
    assert r.exit_code == 2 and "[0, 100]" in r.output
