"""Shipped data by name (ptaconstrain.data): the one rule that turns a name into a file."""

import hashlib
from pathlib import Path

import pytest
from astropy.table import Table

from ptaconstrain import data
from ptaconstrain.errors import InputError


def test_every_shipped_entry_is_a_file_in_the_package_and_every_file_is_listed():
    entries = data.shipped()
    assert sorted(f.filename for f in entries) == data.names()
    assert len({f.name for f in entries}) == len(entries)
    for f in entries:
        assert f.path.is_file() and f.kind in data.KINDS
        assert f.name == Path(f.filename).stem


def test_invented_files_say_so_in_the_listing_and_in_their_own_metadata():
    # DESIGN.md: demo data are invented and say so, in the file as well as in the listing
    for f in data.shipped():
        if f.kind in ("relations", "cosmology"):
            assert "not invented" in f.description
            continue
        assert "INVENTED" in f.description
        if f.filename.endswith(".ecsv"):
            meta = " ".join(str(v) for v in Table.read(f.path).meta.values())
            assert "INVENTED" in meta or "SYNTHETIC" in meta, f.name


def test_a_short_name_and_a_file_name_give_the_same_file():
    assert data.path("synthetic_h0_limit") == data.path("synthetic_h0_limit.ecsv")
    assert data.resolve("synthetic_h0_limit", "curve") == data.path("synthetic_h0_limit")
    assert data.resolve("demo_catalogue.ecsv", ["catalogue", "hosts"]).name == "demo_catalogue.ecsv"


def test_an_existing_path_wins_over_a_shipped_name(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    Path("synthetic_h0_limit").write_text("1e-9 1e-14\n")
    assert data.resolve("synthetic_h0_limit", "curve") == Path("synthetic_h0_limit")
    assert data.resolve(str(tmp_path / "synthetic_h0_limit"), "curve").parent == tmp_path


@pytest.mark.parametrize(
    "text, kinds, words",
    [
        ("demo_array", "curve", "is a pulsar list, not a sensitivity curve"),
        ("nothing_here.ecsv", "curve", "file not found, and no shipped sensitivity curve"),
        ("nothing_here.ecsv", "pulsar list", "shipped: demo_array"),
    ],
)
def test_unknown_or_mismatched_names_give_one_line_naming_what_fits(text, kinds, words):
    with pytest.raises(InputError) as err:
        data.resolve(text, kinds)
    assert words in str(err.value) and "\n" not in str(err.value)


def test_a_directory_is_not_a_file(tmp_path):
    with pytest.raises(InputError, match="is a directory"):
        data.resolve(tmp_path, "curve")


def test_shipped_name_recognises_shipped_files_only(tmp_path):
    assert data.shipped_name(data.path("demo_array.ecsv")) == "demo_array"
    copy = tmp_path / "demo_array.ecsv"
    copy.write_bytes(data.path("demo_array.ecsv").read_bytes())
    assert data.shipped_name(copy) is None


def test_path_reads_the_same_bytes_as_importlib_resources():
    # importlib.resources is the reference reader of package data (Python stdlib)
    from importlib import resources

    for f in data.shipped():
        expected = resources.files("ptaconstrain.data").joinpath(f.filename).read_bytes()
        assert hashlib.sha256(f.path.read_bytes()).digest() == hashlib.sha256(expected).digest()
