import numpy as np
import pytest
from astropy import units as u
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain._files import sha256
from ptaconstrain.cli import main


def run(args):
    return CliRunner().invoke(main, args)


def base_args(curve_file, out):
    return [
        "exclude",
        "--mass",
        "2e10 solMass",
        "--distance",
        "100 Mpc",
        "--curve",
        str(curve_file),
        "--out",
        str(out),
        "--grid",
        "40x50",
        "--name",
        "Test Host",
    ]


def test_exclude_writes_table_and_figures(tmp_path, curve_file):
    out = tmp_path / "res"
    r = run(base_args(curve_file, out) + ["--format", "png,pdf"])
    assert r.exit_code == 0, r.output
    lines = r.output.strip().splitlines()
    assert "ruled out at P =" in lines[0] and "95% upper limit" in lines[0]
    assert {p.name for p in out.iterdir()} == {
        "Test_Host_exclusion.ecsv",
        "Test_Host_exclusion.png",
        "Test_Host_exclusion.pdf",
    }
    t = QTable.read(out / "Test_Host_exclusion.ecsv")
    assert len(t) == 50
    assert t["period"].unit == u.yr and t["f_gw"].unit == u.Hz
    assert t["companion_mass"].unit == u.Msun and t["separation"].unit == u.pc
    np.testing.assert_allclose(t["f_gw"].value, 2 / t["period"].to_value(u.s))
    assert t.meta["files"]["curve"]["sha256"] == sha256(curve_file)
    assert t.meta["software"].startswith("ptaconstrain")
    assert t.meta["inputs"]["mass"].startswith("2e+10")
    assert "EXCLUSION" in t.meta["statement"]


def test_bare_numbers_are_solar_masses_and_megaparsecs(tmp_path, curve_file):
    a = run(
        [
            "exclude",
            "--mass",
            "2e10",
            "--distance",
            "100",
            "--curve",
            str(curve_file),
            "--out",
            str(tmp_path / "a"),
            "--grid",
            "20",
            "--format",
            "png",
        ]
    )
    b = run(
        [
            "exclude",
            "--mass",
            "20000000000 solMass",
            "--distance",
            "0.1 Gpc",
            "--curve",
            str(curve_file),
            "--out",
            str(tmp_path / "b"),
            "--grid",
            "20",
            "--format",
            "png",
        ]
    )
    assert a.exit_code == b.exit_code == 0
    assert a.output.splitlines()[0] == b.output.splitlines()[0]


def test_existing_output_is_not_overwritten_without_asking(tmp_path, curve_file):
    out = tmp_path / "res"
    assert run(base_args(curve_file, out)).exit_code == 0
    before = (out / "Test_Host_exclusion.ecsv").read_bytes()
    r = run(base_args(curve_file, out))
    assert r.exit_code != 0 and "--overwrite" in r.output
    assert (out / "Test_Host_exclusion.ecsv").read_bytes() == before
    assert run(base_args(curve_file, out) + ["--overwrite"]).exit_code == 0


def _bad_curve(tmp_path, text, name="bad.ecsv"):
    p = tmp_path / name
    p.write_text(text)
    return p


ECSV_HEAD = (
    "# %ECSV 1.0\n# ---\n# datatype:\n"
    "# - {name: frequency, unit: Hz, datatype: float64}\n"
    "# - {name: h0_limit, datatype: float64}\n# schema: astropy-2.0\n"
    "frequency h0_limit\n"
)


@pytest.mark.parametrize(
    "change, message",
    [
        (["--mass", "-2e10"], "must be positive"),
        (["--mass", "nan"], "finite"),
        (["--mass", "2e10 km"], "is not a mass"),
        (["--distance", "-5"], "must be positive"),
        (["--distance", "abc"], "cannot read"),
        (["--mass-ratio-range", "0,1"], "0 < LOW < HIGH"),
        (["--mass-ratio-range", "0.1,2"], "HIGH <= 1"),
        (["--mass-ratio-range", "0.5"], "not a range"),
        (["--period-range", "10,1"], "LOW < HIGH"),
        (["--period-range", "-1,10"], "must be positive"),
        (["--grid", "1"], "--grid"),
        (["--grid", "ax3"], "--grid"),
        (["--format", "gif"], "unknown figure format"),
        (["--ra", "10"], "both RA and Dec"),
        (["--ra", "xx", "--dec", "yy"], "sky position"),
        (["--snr", "-1"], "--snr"),
        (["--span", "0"], "must be positive"),
        (["--sigma", "-200"], "must be positive"),
        (["--redshift", "-1"], "--redshift"),
        (["--curve", "does-not-exist.ecsv"], "not found"),
        (["--name", "  "], "name"),
        (["--kind", "h0"], "--kind"),
        (["--mass-distance", "0"], "must be positive"),
        (["--mass-err", "-0.2"], "--mass-err"),
        (["--mass-err", "0.1,0.2,0.3"], "--mass-err"),
        (["--mass-err", "abc%"], "not a number"),
        (["--distance-err", "-3"], "must be >= 0"),
        (["--distance-err", "3 kg"], "is not a length"),
        (["--velocity-err", "-30"], "must be positive"),
        (["--mass-err", "0.2", "--credibility", "0.5,1.5"], "in (0, 1)"),
        (["--mass-err", "0.2", "--samples", "5"], "--samples"),
        (["--mass-err", "0.2", "--seed", "-1"], "--seed"),
        (["--mass", "2e14"], "solMass"),  # outside the plausible black-hole masses
        (["--mass", "9.5"], "solMass"),  # a log10 mass given as a mass
    ],
)
def test_bad_arguments_give_one_line_and_no_output(tmp_path, curve_file, change, message):
    out = tmp_path / "res"
    args = base_args(curve_file, out)
    for i in range(0, len(change), 2):
        key = change[i]
        if key in args:
            args[args.index(key) + 1] = change[i + 1]
        else:
            args += change[i : i + 2]
    r = run(args)
    assert r.exit_code != 0
    text = r.output.strip()
    assert len(text.splitlines()) == 1, text
    assert message in text and "Traceback" not in text
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.parametrize(
    "text, message",
    [
        (ECSV_HEAD + "1e-8 1e-14\n1e-9 2e-14\n", "strictly increasing"),
        (ECSV_HEAD + "1e-9 0\n1e-8 2e-14\n", "positive"),
        (ECSV_HEAD + "1e-9 nan\n1e-8 2e-14\n", "NaN"),
        (ECSV_HEAD.replace("h0_limit", "h0"), "exactly one of the columns"),
        ("# %ECSV 1.0\n# ---\n: : bad\n", "not a readable ECSV"),
    ],
)
def test_malformed_curve_files(tmp_path, text, message):
    out = tmp_path / "res"
    r = run(base_args(_bad_curve(tmp_path, text), out))
    assert r.exit_code != 0
    assert len(r.output.strip().splitlines()) == 1 and message in r.output
    assert "Traceback" not in r.output and not out.exists()


def test_plain_text_curve_needs_kind(tmp_path):
    p = _bad_curve(tmp_path, "1e-9 1e-14\n1e-8 1e-14\n1e-7 1e-13\n", "c.txt")
    out = tmp_path / "res"
    r = run(base_args(p, out))
    assert r.exit_code != 0 and "--kind" in r.output and not out.exists()
    r = run(base_args(p, out) + ["--kind", "h0_limit"])
    assert r.exit_code == 0, r.output


def test_plain_text_with_a_word_in_it(tmp_path):
    p = _bad_curve(tmp_path, "1e-9 1e-14\n1e-8 oops\n", "c.txt")
    r = run(base_args(p, tmp_path / "res") + ["--kind", "h0_limit"])
    assert r.exit_code != 0 and "two numeric columns" in r.output


def test_out_that_is_a_file_is_refused(tmp_path, curve_file):
    target = tmp_path / "taken"
    target.write_text("user data")
    r = run(base_args(curve_file, target))
    assert r.exit_code != 0 and len(r.output.strip().splitlines()) == 1
    assert target.read_text() == "user data"


def test_missing_required_option_is_one_line(tmp_path, curve_file):
    r = run(["exclude", "--distance", "10", "--curve", str(curve_file), "--out", str(tmp_path)])
    assert r.exit_code != 0
    assert len(r.output.strip().splitlines()) == 1 and "--mass" in r.output


def test_forecast_summary_says_it_is_not_an_exclusion(tmp_path):
    from ptaconstrain.sensitivity.curve import StrainCurve, save_curve

    f = np.geomspace(2e-9, 3e-7, 40)
    path = tmp_path / "psd.ecsv"
    save_curve(
        StrainCurve(f * u.Hz, 1e-27 * (f / 1e-8) ** 2, "strain_psd", {"span": "20 yr"}), path
    )
    r = run(base_args(path, tmp_path / "res") + ["--snr", "8"])
    assert r.exit_code == 0, r.output
    assert "would be detectable" in r.output and "not an exclusion" in r.output
    t = QTable.read(tmp_path / "res" / "Test_Host_forecast.ecsv")  # named as a forecast
    assert "FORECAST" in t.meta["statement"]


def test_period_grid_outside_the_band_is_refused(tmp_path, curve_file):
    out = tmp_path / "res"
    r = run(base_args(curve_file, out) + ["--period-range", "100,200"])
    assert r.exit_code != 0 and "no period of the grid" in r.output and not out.exists()


@pytest.mark.parametrize("grid", ["3x", "x5", "3x4x5", "1e3"])
def test_malformed_grid_is_refused(tmp_path, curve_file, grid):
    r = run(base_args(curve_file, tmp_path / "res") + ["--grid", grid])
    assert r.exit_code != 0 and "--grid" in r.output


def test_help_shows_an_example():
    r = run(["exclude", "--help"])
    assert r.exit_code == 0 and "Example" in r.output and "solMass" in r.output


def test_uncertainties_add_credible_columns_contours_and_seed(tmp_path, curve_file):
    out = tmp_path / "res"
    args = base_args(curve_file, out) + [
        "--mass-err",
        "0.2",
        "--distance-err",
        "10%",
        "--mass-distance",
        "100",
        "--samples",
        "20000",
        "--seed",
        "7",
        "--credibility",
        "0.9,0.95",
        "--format",
        "png",
    ]
    r = run(args)
    assert r.exit_code == 0, r.output
    assert "with probability >= 0.95" in r.output and "seed 7" in r.output
    t = QTable.read(out / "Test_Host_exclusion.ecsv")
    assert {"max_mass_ratio_0.9", "max_mass_ratio_0.95"} <= set(t.colnames)
    assert t.meta["probability_seed"] == "7" and t.meta["probability_samples"] == "20000"
    # a 95% credible bound is never tighter than the 90% one (same samples)
    a, b = t["max_mass_ratio_0.9"], t["max_mass_ratio_0.95"]
    ok = np.isfinite(a) & np.isfinite(b)
    assert np.all(b[ok] >= a[ok])
    # same seed, same table
    r2 = run(
        args[: args.index("--out") + 1]
        + [str(tmp_path / "again")]
        + args[args.index("--out") + 2 :]
    )
    assert r2.exit_code == 0
    t2 = QTable.read(tmp_path / "again" / "Test_Host_exclusion.ecsv")
    np.testing.assert_array_equal(t2["max_mass_ratio_0.95"], b)


def test_a_dotted_host_name_keeps_its_whole_name_in_every_file(tmp_path, curve_file):
    # catalogue designations often hold decimal points; the table must not lose the part
    # after the first dot (two such hosts would collide)
    out = tmp_path / "o"
    for name in ("Fictus J1234.5+6789", "Fictus J1234.7+1111"):
        args = base_args(curve_file, out)
        args[args.index("Test Host")] = name
        assert run(args + ["--format", "png"]).exit_code == 0
    names = sorted(p.name for p in out.iterdir())
    # '+' cannot stay in a file name: a stable suffix from the original name is added
    # (6 hex digits of hashlib.blake2s(name, digest_size=3))
    assert names == [
        "Fictus_J1234.5_6789_04703a_exclusion.ecsv",
        "Fictus_J1234.5_6789_04703a_exclusion.png",
        "Fictus_J1234.7_1111_1034ef_exclusion.ecsv",
        "Fictus_J1234.7_1111_1034ef_exclusion.png",
    ]


def test_names_differing_only_in_unsafe_characters_keep_distinct_files(tmp_path, curve_file):
    # J1234.5+6789 and J1234.5/6789 would both sanitise to J1234.5_6789
    out = tmp_path / "o"
    for name in ("Fictus J1234.5+6789", "Fictus J1234.5/6789"):
        args = base_args(curve_file, out)
        args[args.index("Test Host")] = name
        r = run(args + ["--format", "png"])
        assert r.exit_code == 0, r.output
    assert len(list(out.glob("*_exclusion.ecsv"))) == 2


def test_one_host_runs_with_the_cycle_collector_paused_and_restored(tmp_path, monkeypatch):
    # bounded commands pause Python's cyclic collector (cli.no_cycle_collection) and
    # switch it back on; a run over many hosts keeps it
    import gc

    import ptaconstrain.cli.batch as batch
    import ptaconstrain.cli.exclude as exclude

    seen = []

    def record(name):
        def fake(*args, **kwargs):
            seen.append((name, gc.isenabled()))
            return []

        return fake

    monkeypatch.setattr(exclude, "run_exclusion", record("one"))
    monkeypatch.setattr(batch, "run_batch", record("many"))
    assert gc.isenabled()
    one = ["exclude", "--mass", "2e10", "--distance", "100", "--curve", "synthetic_h0_limit"]
    assert CliRunner().invoke(main, [*one, "--out", str(tmp_path / "a")]).exit_code == 0
    many = ["exclude", "--hosts", "example_hosts", "--curve", "synthetic_h0_limit"]
    assert CliRunner().invoke(main, [*many, "--out", str(tmp_path / "b")]).exit_code == 0
    assert seen == [("one", False), ("many", True)] and gc.isenabled()
