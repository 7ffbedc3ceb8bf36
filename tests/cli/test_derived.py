"""What was derived is echoed: D_L, z, the cosmology and a rescaled mass (console + meta)."""

import pytest
from astropy.table import QTable
from click.testing import CliRunner

from ptaconstrain.cli import main
from ptaconstrain.data import path as data_file

CURVE = str(data_file("synthetic_h0_limit.ecsv"))


def _run(tmp_path, *extra):
    out = tmp_path / "out"
    res = CliRunner().invoke(
        main,
        [
            "exclude",
            "--mass",
            "2e10",
            "--curve",
            CURVE,
            "--format",
            "none",
            "--grid",
            "40",
            "--out",
            str(out),
            *extra,
        ],
    )
    assert res.exit_code == 0, res.output
    return res.output.splitlines()[2], QTable.read(out / "host_exclusion.ecsv").meta


@pytest.mark.parametrize("name", ["WMAP9", "Planck15"])
def test_redshift_distance_in_the_chosen_cosmology_matches_astropy(tmp_path, name):
    from astropy import cosmology

    d_ref = getattr(cosmology, name).luminosity_distance(0.05).to_value("Mpc")  # astropy
    line, meta = _run(tmp_path, "--redshift", "0.05", "--cosmology", name)
    assert meta["cosmology"] == name
    # the meta keeps 6 significant figures; the spline itself is good to 1e-8
    assert float(meta["luminosity_distance"].split()[0]) == pytest.approx(d_ref, rel=5e-6, abs=0)
    assert f"D_L = {d_ref:.4g} Mpc from z = 0.05 ({name})" in line


def test_default_is_planck18_and_is_echoed(tmp_path):
    line, meta = _run(tmp_path, "--distance", "100")
    assert meta["cosmology"] == "Planck18" and "(Planck18)" in line
    assert "D_L = 100 Mpc, z = 0.022" in line


def test_rescaled_mass_is_echoed(tmp_path):
    line, meta = _run(tmp_path, "--distance", "100", "--mass-distance", "80")
    # M D / D_ref: 2e10 x 100/80 (dynamical masses scale linearly with distance)
    assert "M = 2.5e+10 solMass (rescaled from 2e+10 solMass at 80 Mpc)" in line
    assert meta["mass_rescaled"].startswith("2e+10 solMass at 80 Mpc -> 2.5e+10 solMass")


def test_unknown_cosmology_is_one_line(tmp_path):
    res = CliRunner().invoke(
        main,
        [
            "exclude",
            "--mass",
            "2e10",
            "--redshift",
            "0.05",
            "--cosmology",
            "Flat42",
            "--curve",
            CURVE,
            "--out",
            str(tmp_path / "o"),
        ],
    )
    assert res.exit_code == 1 and "WMAP9" in res.output and not (tmp_path / "o").exists()
