"""Reading catalogues: formats, streamed CSV, column mappings."""

import numpy as np
import pytest
from astropy import units as u
from astropy.table import Table
from curves_for_tests import bucket_limit

from ptaconstrain.catalogue import CatalogError, CatalogReader, load_column_map, rank_catalog

CURVE = bucket_limit()


def _table(**cols):
    base = {
        "name": ["A", "B", "C"],
        "ra": [10.0, 200.0, 300.0],
        "dec": [-20.0, 5.0, 60.0],
        "distance": [30.0, 60.0, 90.0],
    }
    base.update(cols)
    return Table(base)


def test_formats_and_column_mapping(tmp_path):
    t = Table(
        {
            "gal": ["A", "B", "C"],
            "RAdeg": [10.0, 200.0, 300.0],
            "DEdeg": [-20.0, 5.0, 60.0],
            "dist_kpc": [3e4, 6e4, 9e4],
            "sig": [300.0, 250.0, 400.0],
        }
    )
    cols = tmp_path / "cols.toml"
    cols.write_text(
        '[columns]\nname = "gal"\nra = "RAdeg"\ndec = "DEdeg"\n'
        'distance = "dist_kpc"\nvelocity_dispersion = "sig"\n'
        '[units]\ndistance = "kpc"\n'
    )
    results = []
    for suffix in (".csv", ".fits", ".vot", ".ecsv"):
        path = tmp_path / f"cat{suffix}"
        fmt = {".csv": "ascii.csv", ".fits": "fits", ".vot": "votable", ".ecsv": "ascii.ecsv"}[
            suffix
        ]
        t.write(path, format=fmt)
        r = rank_catalog(path, CURVE, columns=cols, chunk_size=2)
        results.append(np.asarray(r.table["expected_number"]))
        np.testing.assert_allclose(
            r.table["distance"].to_value(u.Mpc)[np.argsort(r.table["name"])],
            [30.0, 60.0, 90.0],
            rtol=1e-12,
        )
    for res in results[1:]:
        np.testing.assert_allclose(res, results[0], rtol=1e-12)


def test_mapping_to_absent_column_names_it():
    t = _table(velocity_dispersion=[300.0, 250.0, 200.0])
    with pytest.raises(CatalogError, match="'Dist'"):
        rank_catalog(t, CURVE, columns={"distance": "Dist"})


@pytest.mark.parametrize(
    "text",
    [
        "name,ra,dec,distance,mass\nA,1,2,20,3e9\nB,3,4,30,4e9",
        "name,ra,dec,distance,mass\nA,1,2,20,3e9\nB,3,4,30,4e9\n",
        "name,ra,dec,distance,mass\r\nA,1,2,20,3e9\r\nB,3,4,30,4e9\r\n\n",
    ],
)
def test_csv_row_count_with_or_without_final_newline(tmp_path, text):
    path = tmp_path / "two.csv"
    path.write_bytes(text.encode())
    assert CatalogReader(path).n_rows == 2
    r = rank_catalog(path, CURVE)
    assert r.summary_lines()[0].startswith("ranked 2 of 2 ")


def test_unreadable_files_are_one_line_errors(tmp_path):
    with pytest.raises(CatalogError, match="not found"):
        CatalogReader(tmp_path / "none.csv")
    bad = tmp_path / "bad.fits"
    bad.write_text("not a fits file")
    with pytest.raises(CatalogError, match="not a readable table") as err:
        CatalogReader(bad)
    assert "\n" not in str(err.value)


@pytest.mark.parametrize(
    "text, words",
    [
        ("[columns\nname = 'x'\n", "not valid TOML"),
        ("[colums]\nname = 'x'\n", "unknown tables colums"),
        ("[columns]\nnom = 'x'\n", "unknown field 'nom'"),
        ("[units]\ndistance = 'parsecs'\n", "unit 'parsecs' of distance is unknown"),
        ("[columns]\nname = 3\n", "must be a string"),
    ],
)
def test_column_mapping_file_errors(tmp_path, text, words):
    path = tmp_path / "cols.toml"
    path.write_text(text)
    with pytest.raises(CatalogError, match=words) as err:
        load_column_map(path)
    assert "\n" not in str(err.value)
