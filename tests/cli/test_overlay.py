"""``ptaconstrain overlay`` and the new exclude options: --inclination, --merger-lines."""

from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file

LIMIT = str(data_file("synthetic_h0_limit.ecsv"))
PSD = str(data_file("synthetic_future_psd.ecsv"))


def _run(*args):
    return CliRunner().invoke(main, list(args))


def test_overlay_draws_limits_and_forecasts(tmp_path):
    res = _run("overlay", LIMIT, PSD, "--out", str(tmp_path / "curves"), "--format", "png,pdf")
    assert res.exit_code == 0, res.output
    assert "1 upper limits, 1 noise budgets" in res.output
    assert (tmp_path / "curves.png").is_file() and (tmp_path / "curves.pdf").is_file()


def test_overlay_refuses_to_overwrite(tmp_path):
    (tmp_path / "curves.png").write_text("mine")
    res = _run("overlay", LIMIT, "--out", str(tmp_path / "curves"))
    assert res.exit_code == 1 and "--overwrite" in res.output
    assert (tmp_path / "curves.png").read_text() == "mine"


def test_inclination_sets_the_forecast_and_is_recorded(tmp_path):
    args = [
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        PSD,
        "--grid",
        "40",
        "--format",
        "none",
    ]
    face_on = _run(*args, "--inclination", "0", "--out", str(tmp_path / "a"))
    averaged = _run(*args, "--out", str(tmp_path / "b"))
    assert face_on.exit_code == 0 and averaged.exit_code == 0
    t0 = QTable.read(tmp_path / "a" / "host_forecast.ecsv")
    t1 = QTable.read(tmp_path / "b" / "host_forecast.ecsv")
    assert t0.meta["inclination"].startswith("0 deg")
    # face-on: S/N^2 is 2.5 x the average, so h0 thresholds are 1/sqrt(2.5) as large
    ratio = t0["h0_threshold"][20] / t1["h0_threshold"][20]
    assert abs(ratio - 2.5**-0.5) < 1e-9
    assert "orientation-averaged S/N" not in face_on.output
    assert "orientation-averaged S/N" in averaged.output


def test_inclination_with_an_upper_limit_is_noted_as_ignored(tmp_path):
    res = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        LIMIT,
        "--grid",
        "40",
        "--format",
        "none",
        "--inclination",
        "30",
        "--out",
        str(tmp_path / "o"),
    )
    assert res.exit_code == 0 and "Note: --inclination is ignored" in res.output


def test_tables_carry_angular_separation_and_merger_time(tmp_path):
    res = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        LIMIT,
        "--grid",
        "40",
        "--merger-lines",
        "--format",
        "png",
        "--out",
        str(tmp_path / "o"),
    )
    assert res.exit_code == 0, res.output
    t = QTable.read(tmp_path / "o" / "host_exclusion.ecsv")
    assert str(t["angular_separation"].unit) == "uas" and str(t["merger_time"].unit) == "yr"


def test_repeated_curve_records_the_source_of_each_period(tmp_path):
    import numpy as np
    from astropy import units as u

    from ptaconstrain.sensitivity.curve import StrainCurve, save_curve

    f = np.geomspace(4e-9, 1e-7, 40)
    deep = StrainCurve(
        f * u.Hz, 1e-15 * (f / 1e-8) ** 2, "h0_limit", {"confidence": 0.95, "span": "12 yr"}
    )  # invented, deep near 10 nHz
    save_curve(deep, tmp_path / "deep.ecsv")
    res = _run(
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        LIMIT,
        "--curve",
        str(tmp_path / "deep.ecsv"),
        "--grid",
        "60",
        "--format",
        "none",
        "--out",
        str(tmp_path / "o"),
    )
    assert res.exit_code == 0, res.output
    t = QTable.read(tmp_path / "o" / "host_exclusion.ecsv")
    sources = set(t["curve_source"][t["constrained"]])
    assert sources == {"synthetic_h0_limit.ecsv", "deep.ecsv"}
    assert "curve_1" in t.meta["files"] and "curve_2" in t.meta["files"]
