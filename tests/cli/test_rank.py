"""``ptaconstrain rank`` on the command line, and the demo part."""

import json

import numpy as np
import pytest
from astropy import units as u
from astropy.table import QTable, Table
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file
from ptaconstrain.demo import ranking_part
from ptaconstrain.sensitivity.curve import StrainCurve, load_curve, save_curve

CATALOGUE = str(data_file("demo_catalogue.ecsv"))


@pytest.fixture(scope="module")
def curve_file(tmp_path_factory):
    f = np.logspace(np.log10(2e-9), -7, 40)
    x = f / 8e-9
    c = StrainCurve(
        f * u.Hz, 5e-15 * (x**-2 + x), "h0_limit", meta={"confidence": 0.95, "span": "15 yr"}
    )
    path = tmp_path_factory.mktemp("curve") / "limit.ecsv"
    save_curve(c, path)
    return str(path)


def _run(*args):
    return CliRunner().invoke(main, list(args))


def test_rank_writes_table_and_figures(tmp_path, curve_file):
    out = tmp_path / "out"
    res = _run("rank", CATALOGUE, "--curve", curve_file, "--out", str(out), "--top", "5")
    assert res.exit_code == 0, res.output
    assert "ranked 400 of 400" in res.output and "excluded" in res.output
    names = sorted(p.name for p in out.iterdir())
    assert names == [
        "ranking.fits",
        "ranking_cumulative.png",
        "ranking_rejected.ecsv",
        "ranking_sky.png",
        "ranking_top.ecsv",
    ]
    full = QTable.read(out / "ranking.fits")
    top = QTable.read(out / "ranking_top.ecsv")
    assert len(full) == 400 and len(top) == 5
    for col in (
        "rank",
        "name",
        "mass_source",
        "f_best",
        "h0_ratio",
        "min_mass_ratio",
        "prob_equal_mass",
        "expected_number",
        "velocity_dispersion",
    ):
        assert col in full.colnames and col in top.colnames
    assert top.meta["provenance"]["files"]["curve"]["sha256"]
    assert top.meta["verb"] == "excluded"
    meta = {k.lower(): v for k, v in full.meta.items()}
    assert json.loads(meta["provenance"])["files"]["curve"]["sha256"]
    assert meta["verb"] == "excluded" and meta["rows_ranked"] == 400
    assert list(full["rank"]) == list(range(1, 401))
    assert full["f_best"].unit == top["f_best"].unit == u.Hz
    assert list(full["name"][:5]) == list(top["name"])
    # the top rows are the first rows of the full table, value for value
    for col in top.colnames:
        a, b = np.asarray(top[col]), np.asarray(full[col][:5])
        assert np.array_equal(
            a, b.astype(a.dtype) if a.dtype.kind == "U" else b, equal_nan=a.dtype.kind == "f"
        ), col
    assert np.all(np.diff(full["expected_number"]) <= 0)
    np.testing.assert_allclose(
        full["cumulative_expected_number"], np.cumsum(full["expected_number"]), rtol=1e-12
    )


def test_full_ecsv_on_request_equals_the_fits_table(tmp_path, curve_file):
    out = tmp_path / "out"
    res = _run("rank", CATALOGUE, "--curve", curve_file, "--out", str(out), "--full-ecsv")
    assert res.exit_code == 0, res.output
    full = QTable.read(out / "ranking.fits")
    text = QTable.read(out / "ranking.ecsv")
    assert text.colnames == full.colnames and len(text) == len(full) == 400
    for col in text.colnames:
        a, b = np.asarray(text[col]), np.asarray(full[col])
        assert np.array_equal(
            a, b.astype(a.dtype) if a.dtype.kind == "U" else b, equal_nan=a.dtype.kind == "f"
        ), col
    assert text.meta["provenance"]["software"]
    assert not [p for p in out.iterdir() if p.name.startswith(".")]  # runs removed


def test_help_shows_an_example():
    res = _run("rank", "--help")
    assert res.exit_code == 0
    assert "ptaconstrain rank demo_catalogue --curve synthetic_h0_limit" in res.output


def _bad_catalogue(tmp_path, **change):
    t = Table(
        {
            "name": ["A", "B", "C"],
            "ra": [1.0, 2.0, 3.0],
            "dec": [0.0, 10.0, 20.0],
            "distance": [20.0, 30.0, 40.0],
            "velocity_dispersion": [300.0, 250, 200],
        }
    )
    for k, v in change.items():
        if v is None:
            t.remove_column(k)
        else:
            t[k] = v
    path = tmp_path / "bad.ecsv"
    t.write(path)
    return str(path)


@pytest.mark.parametrize(
    "change, words",
    [
        ({"dec": None}, "no 'dec' column"),
        ({"distance": None}, "neither a 'distance' nor a 'redshift'"),
        ({"name": ["A", "A", "C"]}, "duplicate name"),
        ({"distance": [20.0, -3.0, 40.0]}, "impossible distance"),
        ({"velocity_dispersion": [300.0, np.nan, 200.0]}, "no usable mass"),
    ],
)
def test_bad_catalogue_one_line_no_output(tmp_path, curve_file, change, words):
    out = tmp_path / "out"
    res = _run("rank", _bad_catalogue(tmp_path, **change), "--curve", curve_file, "--out", str(out))
    assert res.exit_code != 0
    err = res.output.strip().splitlines()
    assert err[-1].startswith("Error:") and words in err[-1]
    assert len(err) == 1  # no stray progress-bar line before the error
    assert "Traceback" not in res.output
    assert not out.exists() or not any(out.iterdir())


def test_skip_counts_and_records_the_bad_rows(tmp_path, curve_file):
    out = tmp_path / "out"
    res = _run(
        "rank",
        _bad_catalogue(tmp_path, name=["A", "A", "C"]),
        "--curve",
        curve_file,
        "--out",
        str(out),
        "--on-bad",
        "skip",
    )
    assert res.exit_code == 0, res.output
    assert "1 row skipped: duplicate name" in res.output
    rej = Table.read(out / "ranking_rejected.ecsv")
    assert list(rej["row"]) == [2] and "duplicate" in rej["reason"][0]


@pytest.mark.slow
def test_refuses_to_overwrite(tmp_path, curve_file):
    out = tmp_path / "out"
    args = ("rank", CATALOGUE, "--curve", curve_file, "--out", str(out))
    assert _run(*args).exit_code == 0
    res = _run(*args)
    assert res.exit_code != 0 and "already exists" in res.output
    assert _run(*args, "--overwrite").exit_code == 0


@pytest.mark.parametrize(
    "extra, words",
    [
        (("--array", "demo_array"), "exactly one of"),
        (("--column", "distance"), "FIELD=COLUMN"),
        (("--relation", "no_such"), "unknown"),
        (("--rate", "1 km"), "--rate"),
        (("--rate", "-1"), "positive"),
        (("--top", "0"), "--top"),
    ],
)
def test_usage_errors(tmp_path, curve_file, extra, words):
    res = _run("rank", CATALOGUE, "--curve", curve_file, "--out", str(tmp_path / "o"), *extra)
    assert res.exit_code != 0 and words in res.output and "Traceback" not in res.output


@pytest.mark.slow
def test_array_option_sky_dependent(tmp_path):
    out = tmp_path / "out"
    res = _run(
        "rank",
        CATALOGUE,
        "--array",
        str(data_file("demo_array.ecsv")),
        "--out",
        str(out),
        "--metric",
        "h0_ratio",
    )
    assert res.exit_code == 0, res.output
    t = Table.read(out / "ranking_top.ecsv")
    assert t.meta["sky"].startswith("healpix") and t.meta["verb"] == "detectable"


def test_demo_ranking_part(tmp_path):
    curve = load_curve(data_file("synthetic_h0_limit.ecsv"))
    lines = ranking_part(tmp_path, curve)
    assert any("INVENTED" in line for line in lines)
    assert (tmp_path / "ranking.ecsv").is_file() and (tmp_path / "ranking_sky.png").is_file()
    assert len(Table.read(tmp_path / "ranking.ecsv")) == 400  # the demo asks for full ECSV
    with pytest.raises(FileExistsError):
        ranking_part(tmp_path, curve)


@pytest.mark.slow
def test_exclusion_figures_of_the_top_targets(tmp_path, curve_file):
    # named per galaxy and kind, exactly as ``exclude`` names its figure
    from ptaconstrain.report.provenance import safe_name

    out = tmp_path / "out"
    res = _run(
        "rank", CATALOGUE, "--curve", curve_file, "--out", str(out), "--exclusion-figures", "2"
    )
    assert res.exit_code == 0, res.output
    names = list(Table.read(out / "ranking_top.ecsv")["name"][:3])
    assert (out / f"{safe_name(names[0])}_exclusion.png").is_file()
    assert (out / f"{safe_name(names[1])}_exclusion.png").is_file()
    assert not (out / f"{safe_name(names[2])}_exclusion.png").exists()
    assert not list(out.glob("*_forecast.*"))


def test_forecast_figures_are_named_forecast(tmp_path):
    from ptaconstrain.report.provenance import safe_name

    f = np.logspace(np.log10(2e-9), -7, 40)
    psd = StrainCurve(
        f * u.Hz, 1e-26 * (f / 1e-8) ** -2 + 1e-28, "strain_psd", meta={"span": "15 yr"}
    )
    path = tmp_path / "psd.ecsv"
    save_curve(psd, path)
    out = tmp_path / "out"
    res = _run(
        "rank", CATALOGUE, "--curve", str(path), "--out", str(out), "--exclusion-figures", "1"
    )
    assert res.exit_code == 0, res.output
    first = Table.read(out / "ranking_top.ecsv")["name"][0]
    assert (out / f"{safe_name(first)}_forecast.png").is_file()


def test_plausibility_errors_reach_the_user_as_one_line(tmp_path, curve_file):
    t = Table(
        {
            "name": ["A", "B"],
            "ra": ["187.7", "12h30m00s"],
            "dec": ["12.4", "-05:00:00"],
            "distance": [20.0, 30.0],
            "mass": [9.3, 9.5],
        }
    )
    path = tmp_path / "logmass.csv"
    t.write(path, format="ascii.csv")
    out = tmp_path / "out"
    res = _run("rank", str(path), "--curve", curve_file, "--out", str(out))
    assert res.exit_code != 0 and "Traceback" not in res.output
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and "log10(M/solMass)" in lines[0] and "row 1 ('A')" in lines[0]
    assert not out.exists() or not any(out.iterdir())


def test_cumulative_plot_starts_at_zero():
    # a cumulative total read against rank needs a zero baseline, or the share of the
    # first targets is misread (common practice for cumulative plots)
    from ptaconstrain.report.rankplots import cumulative_figure

    t = Table({"rank": [1, 2, 3], "expected_number": [5.0, 1.0, 0.5]})
    fig = cumulative_figure(t, "excluded", top=2)
    assert fig.axes[0].get_ylim()[0] == 0.0
