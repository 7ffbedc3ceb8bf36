"""Reading and writing files: one format map, one-line errors, astropy's warnings kept."""

import warnings

import pytest
from astropy.table import Table

from ptaconstrain._files import read_table, table_format, write_table
from ptaconstrain.errors import InputError, PtaconstrainWarning


def test_suffixes_map_to_astropy_formats():
    # astropy's registered reader names (astropy.io.registry): ascii.ecsv, fits, votable
    assert table_format("a.ecsv") == "ascii.ecsv"
    assert table_format("a.FITS.gz") == "fits"
    assert table_format("a.xml") == "votable"
    assert table_format("a.parquet") is None


def test_unit_warning_of_a_catalogue_reaches_the_user_as_one_line(tmp_path):
    # a FITS column whose TUNIT astropy cannot parse: astropy.io.fits warns
    # (UnitsWarning, "did not parse as fits unit"); the warning must not be
    # silenced but re-issued once, naming the file
    import numpy as np
    from astropy.io import fits

    path = tmp_path / "cat.fits"
    col = fits.Column(name="distance", format="D", unit="megaparsecs", array=np.array([95.0]))
    fits.BinTableHDU.from_columns([col]).writeto(path)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        t = read_table(path, "catalogue")
    ours = [w for w in caught if issubclass(w.category, PtaconstrainWarning)]
    assert len(t) == 1 and len(ours) == 1, [str(w.message) for w in caught]
    assert str(ours[0].message).startswith("cat.fits: ") and "megaparsecs" in str(ours[0].message)
    assert "\n" not in str(ours[0].message)


def test_unreadable_and_missing_tables_are_one_line_input_errors(tmp_path):
    bad = tmp_path / "bad.fits"
    bad.write_text("not a FITS file")
    with pytest.raises(InputError) as err:
        read_table(bad, "catalogue", hint="use ECSV")
    assert "bad.fits is not a readable catalogue" in str(err.value)
    assert str(err.value).endswith(": use ECSV") and "\n" not in str(err.value)
    with pytest.raises(InputError, match="not found"):
        read_table(tmp_path / "missing.ecsv", "catalogue")


def test_written_table_reads_back_in_the_format_its_suffix_names(tmp_path):
    t = Table({"a": [1.0, 2.0]})
    for name in ("t.ecsv", "t.csv", "t.fits"):
        write_table(t, tmp_path / name)
        assert list(read_table(tmp_path / name, "table")["a"]) == [1.0, 2.0]


def test_a_file_that_appears_while_writing_is_never_replaced(tmp_path):
    from ptaconstrain._files import OutputExistsError, atomic_write

    target = tmp_path / "t.ecsv"
    with pytest.raises(OutputExistsError, match="appeared while writing"):
        with atomic_write(target) as tmp:
            tmp.write_text("ours")
            target.write_text("theirs")  # another run published first
    assert target.read_text() == "theirs"
    assert [p.name for p in tmp_path.iterdir()] == ["t.ecsv"]  # no temporary left


def test_a_dangling_link_named_like_an_output_is_not_replaced_unasked(tmp_path):
    from ptaconstrain._files import OutputExistsError, check_new

    link = tmp_path / "t.ecsv"
    link.symlink_to(tmp_path / "missing")
    with pytest.raises(OutputExistsError):
        check_new([link])
    check_new([link], overwrite=True)
