"""The streamed CSV reader reads UTF-8 text: accents, non-ASCII column names, a BOM."""

import pytest

from ptaconstrain.catalogue import CatalogReader
from ptaconstrain.catalogue.columns import CatalogError
from ptaconstrain.catalogue.reader import _csv_pieces

ROWS = "name,ra,maß\nGalaxié Nord,10.5,1e9\nB,20,2e9\nCé,30,3e9\n"


@pytest.mark.parametrize(
    "data",
    [ROWS.encode("utf-8"), b"\xef\xbb\xbf" + ROWS.encode("utf-8")],
    ids=["utf-8", "utf-8 with BOM (Excel)"],
)
def test_utf8_csv_is_read_with_its_names_and_columns(tmp_path, data):
    path = tmp_path / "cat.csv"
    path.write_bytes(data)
    reader = CatalogReader(path)
    assert reader.streamed and reader.colnames == ["name", "ra", "maß"]
    assert reader.n_rows == 3
    rows = [t for _, t in reader.chunks(1000)]
    assert [str(x) for t in rows for x in t["name"]] == ["Galaxié Nord", "B", "Cé"]
    assert [float(x) for t in rows for x in t["maß"]] == [1e9, 2e9, 3e9]


def test_pieces_of_any_size_give_the_same_rows(tmp_path):
    path = tmp_path / "cat.csv"
    path.write_text("name,x\n" + "".join(f"Gé{i},{i}\n" for i in range(500)), encoding="utf-8")
    for nchars in (7, 64, 1 << 16):
        pieces = list(_csv_pieces(path, nchars))
        assert [int(x) for t in pieces for x in t["x"]] == list(range(500))
        assert all(t.colnames == ["name", "x"] for t in pieces)


def test_other_encodings_are_refused_in_one_line(tmp_path):
    utf16 = tmp_path / "u16.csv"
    utf16.write_bytes(ROWS.encode("utf-16"))
    with pytest.raises(CatalogError, match="u16.csv is UTF-16 text: save it as UTF-8"):
        CatalogReader(utf16)
    latin = tmp_path / "latin.csv"
    latin.write_bytes(ROWS.replace("maß", "mass").encode("latin-1"))
    with pytest.raises(CatalogError, match="latin.csv is not UTF-8 text"):
        CatalogReader(latin)
