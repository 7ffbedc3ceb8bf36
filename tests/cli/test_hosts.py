"""``ptaconstrain exclude --hosts``: many hosts in one command, good and bad rows."""

import numpy as np
import pytest
from astropy import units as u
from astropy.table import QTable, Table
from click.testing import CliRunner
from curves_for_tests import bucket_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file
from ptaconstrain.sensitivity.curve import save_curve

HOSTS = str(data_file("example_hosts.ecsv"))


@pytest.fixture(scope="module")
def curve_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("curve") / "limit.ecsv"
    save_curve(bucket_limit(), path)
    return str(path)


def _table(tmp_path, rows, name="hosts.ecsv"):
    t = Table(rows=rows, names=("name", "ra", "dec", "distance", "mass", "mass_err_dex"))
    path = tmp_path / name
    t.write(path, format="ascii.ecsv")
    return str(path)


def _run(*args):
    return CliRunner().invoke(main, ["exclude", *args])


def test_shipped_table_gives_per_host_outputs_summary_and_overview(tmp_path, curve_file):
    out = tmp_path / "out"
    res = _run(
        "--hosts",
        HOSTS,
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--seed",
        "3",
        "--samples",
        "2000",
        "--grid",
        "40",
        "--format",
        "png",
    )
    assert res.exit_code == 0, res.output
    summary = QTable.read(out / "hosts_summary.ecsv")
    n = len(Table.read(HOSTS))
    assert len(summary) == n
    for row in summary:
        assert (out / f"{row['file']}.ecsv").is_file() and (out / f"{row['file']}.png").is_file()
    assert (out / "hosts_overview.png").is_file()
    assert summary["tightest_period"].unit == u.yr and summary["mass"].unit == u.Msun
    assert summary.meta["statement"].startswith("EXCLUSION")
    assert summary.meta["files"]["hosts"]["sha256"]
    # hosts with errors were sampled and have credible bounds; the one without has none
    assert summary["sampled"].sum() == n - 1
    brennic = summary[summary["name"] == "Brennic Dominant"][0]
    assert not brennic["sampled"] and np.isnan(brennic["tightest_q_0.95"])
    assert f"{n} hosts (95% upper limit)" in res.output


def test_batch_bound_equals_the_single_host_bound(tmp_path, curve_file):
    path = _table(tmp_path, [("Alpha", 10.0, 5.0, 50.0, 2e10, 0.0)])
    out = tmp_path / "out"
    res = _run(
        "--hosts",
        path,
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--grid",
        "60",
        "--format",
        "none",
    )
    assert res.exit_code == 0, res.output
    shown = sorted(p.name for p in out.iterdir() if not p.name.startswith("."))
    assert shown == ["Alpha_exclusion.ecsv", "hosts_summary.ecsv"]
    summary = QTable.read(out / "hosts_summary.ecsv")
    from ptaconstrain.analysis.exclusion import default_periods

    curve = bucket_limit()
    ref = exclusion_map(
        Host("Alpha", 2e10, 50), curve, np.logspace(-4, 0, 60), default_periods(curve, 60)
    )
    period, q = ref.tightest()
    assert summary["tightest_q"][0] == pytest.approx(q, rel=1e-12, abs=0)
    assert summary["tightest_period"][0].to_value(u.yr) == pytest.approx(
        period.to_value(u.yr), rel=1e-12, abs=0
    )


def test_bad_row_stops_with_one_line_and_no_output(tmp_path, curve_file):
    path = _table(
        tmp_path, [("Alpha", 10.0, 5.0, 50.0, 2e10, 0.1), ("Beta", 20.0, 95.0, 60.0, 1e10, 0.1)]
    )
    out = tmp_path / "out"
    res = _run("--hosts", path, "--curve", curve_file, "--out", str(out))
    assert res.exit_code == 1
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and "row 2 ('Beta')" in lines[0] and "--on-bad skip" in lines[0]
    assert "Traceback" not in res.output and not out.exists()


def test_bad_rows_are_skipped_counted_and_listed(tmp_path, curve_file):
    path = _table(
        tmp_path,
        [
            ("Alpha", 10.0, 5.0, 50.0, 2e10, 0.1),
            ("Beta", 20.0, 95.0, 60.0, 1e10, 0.1),
            ("Gamma", 30.0, 5.0, 60.0, 9.3, 0.1),
            ("Alpha", 40.0, 5.0, 70.0, 1e10, 0.1),
        ],
    )
    out = tmp_path / "out"
    res = _run(
        "--hosts",
        path,
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--on-bad",
        "skip",
        "--format",
        "none",
        "--samples",
        "1000",
        "--grid",
        "30",
    )
    assert res.exit_code == 0, res.output
    assert "skipped: sky position out of range" in res.output
    rejected = Table.read(out / "hosts_rejected.ecsv")
    assert list(rejected["row"]) == [2, 3, 4]
    assert "duplicate name" in rejected["reason"][2]
    assert list(QTable.read(out / "hosts_summary.ecsv")["name"]) == ["Alpha"]


@pytest.mark.parametrize("option", [("--mass", "2e10"), ("--distance", "50"), ("--ra", "10")])
def test_single_host_options_are_refused_with_hosts(tmp_path, curve_file, option):
    res = _run("--hosts", HOSTS, "--curve", curve_file, "--out", str(tmp_path / "o"), *option)
    assert res.exit_code == 2 and option[0] in res.output and "drop" in res.output


def test_hosts_options_are_refused_without_hosts(tmp_path, curve_file):
    res = _run(
        "--mass",
        "2e10",
        "--distance",
        "50",
        "--curve",
        curve_file,
        "--on-bad",
        "skip",
        "--out",
        str(tmp_path / "o"),
    )
    assert res.exit_code == 2 and "--on-bad applies to --hosts only" in res.output


def test_existing_outputs_are_not_overwritten(tmp_path, curve_file):
    path = _table(tmp_path, [("Alpha", 10.0, 5.0, 50.0, 2e10, 0.0)])
    out = tmp_path / "out"
    out.mkdir()
    (out / "hosts_summary.ecsv").write_text("mine")
    res = _run("--hosts", path, "--curve", curve_file, "--out", str(out), "--format", "none")
    assert res.exit_code == 1 and "--overwrite" in res.output
    assert (out / "hosts_summary.ecsv").read_text() == "mine"
    assert sorted(p.name for p in out.iterdir() if not p.name.startswith(".")) == [
        "hosts_summary.ecsv"
    ]


def test_column_mapping_as_for_rank(tmp_path, curve_file):
    t = Table({"galaxy": ["Alpha"], "RA": [10.0], "DEC": [5.0], "D_Mpc": [50.0], "M_bh": [2e10]})
    path = tmp_path / "h.csv"
    t.write(path, format="ascii.csv")
    out = tmp_path / "out"
    res = _run(
        "--hosts",
        str(path),
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--column",
        "name=galaxy",
        "--column",
        "distance=D_Mpc",
        "--column",
        "mass=M_bh",
        "--format",
        "none",
    )
    assert res.exit_code == 0, res.output
    assert (out / "Alpha_exclusion.ecsv").is_file()


def test_a_failure_midway_leaves_no_output(tmp_path, curve_file, monkeypatch):
    # the third host fails while the first two are already written: nothing is published
    import ptaconstrain.analysis.batch as batch

    real = batch.exclusion_map
    calls = []

    def failing(host, *args, **kwargs):
        calls.append(host.name)
        if len(calls) == 3:
            raise OSError(28, "No space left on device", "disk")
        return real(host, *args, **kwargs)

    monkeypatch.setattr(batch, "exclusion_map", failing)
    path = _table(
        tmp_path,
        [(n, 10.0 * i, 5.0, 50.0, 2e10, 0.0) for i, n in enumerate(("A", "B", "C", "D"), 1)],
    )
    out = tmp_path / "out"
    res = _run(
        "--hosts",
        path,
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--grid",
        "30",
        "--format",
        "none",
    )
    assert res.exit_code == 1 and "no space left" in res.output.lower()
    assert not out.exists() or not [p for p in out.iterdir() if not p.name.startswith(".")]
