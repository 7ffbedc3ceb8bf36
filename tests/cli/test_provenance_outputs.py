"""Every output names the version that wrote it (issue 12): tables, curves and FITS maps."""

import json

from astropy import units as u
from astropy.io import fits
from astropy.table import QTable, Table
from click.testing import CliRunner

import ptaconstrain
from ptaconstrain.cli import main

SOFTWARE = f"ptaconstrain {ptaconstrain.__version__}"


def _write_array(path):
    t = QTable()
    t["name"] = ["X1", "X2", "X3"]
    t["ra"] = [10.0, 100.0, 200.0] * u.deg
    t["dec"] = [-20.0, 30.0, 5.0] * u.deg
    t["toa_rms"] = [0.3, 1.0, 0.5] * u.us
    t["cadence"] = [14.0, 28.0, 21.0] * u.d
    t["span"] = [12.0, 8.0, 15.0] * u.yr
    t.write(path, format="ascii.ecsv")
    return path


def _ok(*args):
    res = CliRunner().invoke(main, [str(a) for a in args])
    assert res.exit_code == 0, res.output
    return res


def test_curve_from_a_pulsar_list_records_version_and_input_checksum(tmp_path):
    arr = _write_array(tmp_path / "a.ecsv")
    _ok("curve", "--array", arr, "--out", tmp_path / "c.ecsv")
    prov = QTable.read(tmp_path / "c.ecsv").meta["provenance"]
    assert prov["software"] == SOFTWARE and prov["files"]["array"]["path"] == str(arr)


def test_threshold_map_fits_header_names_the_version(tmp_path):
    arr = _write_array(tmp_path / "a.ecsv")
    _ok(
        "threshold-map",
        "--array",
        arr,
        "--frequency",
        "10 nHz",
        "--nside",
        "4",
        "--out",
        tmp_path / "m",
    )
    with fits.open(tmp_path / "m" / "h0_threshold_map.fits") as hdul:
        assert hdul[1].header["SOFTWARE"] == SOFTWARE
        assert hdul[1].header["CREATED"].endswith("Z")


def test_ranking_fits_and_exclusion_table_record_the_version(tmp_path):
    _ok(
        "rank",
        "demo_catalogue",
        "--curve",
        "synthetic_h0_limit",
        "--out",
        tmp_path / "r",
        "--top",
        "3",
    )
    header = fits.getheader(tmp_path / "r" / "ranking.fits", 1)
    meta = Table.read(tmp_path / "r" / "ranking.fits").meta
    text = meta.get("provenance") or meta.get("PROVENANCE") or header.get("PROVENAN")
    prov = json.loads(text) if isinstance(text, str) else text
    assert prov["software"] == SOFTWARE
    assert prov["files"]["curve"]["shipped"] == "synthetic_h0_limit"
