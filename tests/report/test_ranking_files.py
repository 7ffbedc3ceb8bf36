"""The ranking's files: the block-wise FITS writer against astropy's own writer."""

import numpy as np
import pytest
from astropy import units as u
from astropy.io import fits
from astropy.table import QTable, Table

from ptaconstrain.report.ranking_files import write_fits_blocks


def _table(n, seed=0):
    rng = np.random.default_rng(seed)
    t = QTable()
    t["rank"] = np.arange(1, n + 1)
    t["name"] = np.array([f"Gal-{i}" + "é" * (i % 2) for i in range(n)]).astype(str)
    t["name"] = np.char.encode(t["name"], "utf-8")  # bytes, as a streamed ranking has
    t["ra"] = rng.uniform(0, 360, n) * u.deg
    t["value"] = np.where(rng.random(n) < 0.2, np.nan, rng.normal(size=n))
    t["small"] = rng.normal(size=n).astype(np.float32)
    t["count"] = rng.integers(-5, 5, n).astype(np.int32)
    t["flag"] = rng.random(n) < 0.5
    t["ra"].info.description = "right ascension"
    return t


@pytest.mark.parametrize("block", [1, 7, 100])
def test_blocks_give_the_bytes_astropy_writes(tmp_path, block):
    # reference: astropy's own FITS writer (Table.write) on the whole table at once
    t = _table(100)
    meta = {"product": "test", "nested": {"a": 1}}
    ref = tmp_path / "ref.fits"
    t.write(ref)
    out = tmp_path / "blocks.fits"
    write_fits_blocks((t[i : i + block] for i in range(0, len(t), block)), out, len(t), meta)
    with fits.open(ref) as a, fits.open(out) as b:
        assert [(c.name, c.format, c.unit) for c in a[1].columns] == [
            (c.name, c.format, c.unit) for c in b[1].columns
        ]
        assert a[1].header["NAXIS2"] == b[1].header["NAXIS2"] == len(t)
        assert a[1].data.tobytes() == b[1].data.tobytes()
    back = QTable.read(out)
    assert back.meta["PRODUCT"] == "test"
    assert np.array_equal(back["flag"], t["flag"])
    assert np.array_equal(back["value"], t["value"], equal_nan=True)
    assert back["ra"].unit == u.deg


def test_masked_and_text_columns_take_astropy_path(tmp_path):
    # reference: Table.write of the same table (astropy converts masked and str columns)
    t = Table(
        {
            "x": np.ma.array([1.0, 2.0, 3.0], mask=[False, True, False]),
            "s": np.array(["a", "bb", "ccc"]),
        }
    )
    ref, out = tmp_path / "ref.fits", tmp_path / "out.fits"
    t.write(ref)
    write_fits_blocks([t[:2], t[2:]], out, 3)
    with fits.open(ref) as a, fits.open(out) as b:
        assert a[1].data.tobytes() == b[1].data.tobytes()


def test_wider_text_in_a_later_block_is_refused(tmp_path):
    first = Table({"s": np.array([b"ab"])})
    later = Table({"s": np.array([b"abcdef"])})
    with pytest.raises(ValueError, match="row layout"):
        write_fits_blocks([first, later], tmp_path / "x.fits", 2)
    assert not (tmp_path / "x.fits").exists()
