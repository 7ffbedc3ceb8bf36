"""``exclude --eccentricity``: the eccentric map from the command line."""

import numpy as np
import pytest
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain import Host, exclusion_map, load_curve
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
        "E",
        *extra,
    ]


def test_eccentricity_reaches_table_figure_and_summary(tmp_path, curve_file):
    r = CliRunner().invoke(main, _args(curve_file, tmp_path / "o", "--eccentricity", "0.5"))
    assert r.exit_code == 0, r.output
    assert "eccentricity e = 0.5 (15 harmonics)" in r.output.splitlines()[0]
    t = QTable.read(tmp_path / "o" / "E_exclusion.ecsv")
    assert t.meta["eccentricity"] == "0.5" and t.meta["inputs"]["eccentricity"] == "0.5"
    # the table holds the library's numbers (same grid, same host)
    res = exclusion_map(
        Host("E", 2e10, 100),
        load_curve(curve_file),
        np.geomspace(1e-4, 1, 30),
        t["period"],
        eccentricity=0.5,
    )
    np.testing.assert_allclose(t["max_mass_ratio"], res.max_mass_ratio, rtol=1e-12)


def test_zero_eccentricity_writes_the_circular_table(tmp_path, curve_file):
    a = CliRunner().invoke(main, _args(curve_file, tmp_path / "a"))
    b = CliRunner().invoke(main, _args(curve_file, tmp_path / "b", "--eccentricity", "0"))
    assert a.exit_code == b.exit_code == 0
    ta = QTable.read(tmp_path / "a" / "E_exclusion.ecsv")
    tb = QTable.read(tmp_path / "b" / "E_exclusion.ecsv")
    for name in ta.colnames:
        np.testing.assert_array_equal(ta[name], tb[name])


@pytest.mark.parametrize("bad", ["1.2", "-0.1", "abc"])
def test_bad_eccentricity_is_one_line(tmp_path, curve_file, bad):
    r = CliRunner().invoke(main, _args(curve_file, tmp_path / "o", "--eccentricity", bad))
    assert r.exit_code == 1
    assert r.output.count("\n") == 1 and "eccentricity" in r.output
    assert "Traceback" not in r.output and not (tmp_path / "o").exists()
