"""``exclude --mass-samples``."""

import numpy as np
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main


def _args(curve_file, out, *extra):
    return [
        "exclude",
        "--mass",
        "2e10",
        "--distance",
        "100",
        "--curve",
        str(curve_file),
        "--out",
        str(out),
        "--grid",
        "30x40",
        "--format",
        "png",
        "--name",
        "P",
        "--samples",
        "5000",
        "--seed",
        "7",
        *extra,
    ]


def _posterior(path, with_distance=False):
    rng = np.random.default_rng(0)
    t = QTable()
    t["mass"] = 10 ** rng.normal(np.log10(2e10), 0.2, 3000)
    if with_distance:
        t["distance"] = rng.normal(100, 5, 3000)
    t.write(path, format="ascii.ecsv")
    return path


def test_mass_samples_turn_on_probability_columns(tmp_path, curve_file):
    post = _posterior(tmp_path / "post.ecsv")
    r = CliRunner().invoke(main, _args(curve_file, tmp_path / "o", "--mass-samples", post))
    assert r.exit_code == 0, r.output
    t = QTable.read(tmp_path / "o" / "P_exclusion.ecsv")
    assert "max_mass_ratio_0.95" in t.colnames
    assert t.meta["inputs"]["mass_samples_rows"] == "3000"
    assert "sha256" in t.meta["files"]["mass_samples"]
    # the same seed gives the same table
    r2 = CliRunner().invoke(main, _args(curve_file, tmp_path / "o2", "--mass-samples", post))
    t2 = QTable.read(tmp_path / "o2" / "P_exclusion.ecsv")
    np.testing.assert_array_equal(t["max_mass_ratio_0.95"], t2["max_mass_ratio_0.95"])
    assert r2.exit_code == 0


def test_conflicting_errors_are_refused(tmp_path, curve_file):
    post = _posterior(tmp_path / "post.ecsv", with_distance=True)
    r = CliRunner().invoke(
        main, _args(curve_file, tmp_path / "o", "--mass-samples", post, "--mass-err", "0.2")
    )
    assert r.exit_code == 2 and "--mass-err" in r.output
    r = CliRunner().invoke(
        main, _args(curve_file, tmp_path / "o", "--mass-samples", post, "--distance-err", "5")
    )
    assert r.exit_code == 2 and "distance" in r.output and not (tmp_path / "o").exists()


def test_bad_sample_file_is_one_line(tmp_path, curve_file):
    bad = tmp_path / "bad.csv"
    bad.write_text("m\n1\n2\n")
    r = CliRunner().invoke(main, _args(curve_file, tmp_path / "o", "--mass-samples", bad))
    assert r.exit_code == 1 and "no 'mass' column" in r.output
    assert "Traceback" not in r.output and not (tmp_path / "o").exists()
