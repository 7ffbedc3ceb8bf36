"""The scale extra: Parquet and HATS catalogues, and the Dask engine, give the same ranking.

Skipped, with the reason shown, only when the optional extra (pyarrow, lsdb, dask,
distributed) is not installed.  The engine-equality test ranks a 10^5-row invented
catalogue three ways; it takes about a minute on two idle cores (most of it the
in-memory ranking of 10^5 rows, twice, and starting the two-worker cluster).
"""

import numpy as np
import pytest

pytest.importorskip("pyarrow", reason="the optional 'scale' extra (pyarrow) is not installed")
pytest.importorskip("lsdb", reason="the optional 'scale' extra (lsdb) is not installed")
pytest.importorskip(
    "distributed", reason="the optional 'scale' extra (dask[distributed]) is not installed"
)

import healpy as hp  # noqa: E402
import pandas as pd  # noqa: E402
from astropy.table import Table  # noqa: E402
from click.testing import CliRunner  # noqa: E402

from ptaconstrain.catalogue import ThresholdLookup, rank_catalog  # noqa: E402
from ptaconstrain.catalogue.dask_engine import rank_catalog_dask  # noqa: E402
from ptaconstrain.cli import main  # noqa: E402
from ptaconstrain.data import path as data_path  # noqa: E402
from ptaconstrain.sensitivity.curve import load_curve  # noqa: E402

# lsdb 0.11 and nested-pandas 0.7 call pandas methods with inplace=True, deprecated in pandas
# 3.1, and dask.distributed may leave a socket to the garbage collector when a cluster
# stops: their warnings, not ours
pytestmark = [
    pytest.mark.filterwarnings("ignore:The inplace keyword"),
    pytest.mark.filterwarnings("ignore::ResourceWarning"),
    pytest.mark.filterwarnings("ignore::pytest.PytestUnraisableExceptionWarning"),
]

N_ROWS = 100_000
CURVE = str(data_path("synthetic_h0_limit.ecsv"))  # the shipped invented limit


def _invented_catalogue(n, seed=11):
    """Invented galaxies: measured and sigma-predicted masses, redshifts, bad rows, repeats."""
    rng = np.random.default_rng(seed)
    df = pd.DataFrame(
        {
            "name": [f"INV-{i:06d}" for i in range(n)],
            "ra": rng.uniform(0.0, 360.0, n),
            "dec": np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n))),
            "distance": rng.uniform(5.0, 400.0, n),
            "redshift": np.full(n, np.nan),
            "mass": 10.0 ** rng.uniform(8.0, 10.5, n),
            "mass_err_dex": rng.uniform(0.05, 0.3, n),
            "velocity_dispersion": rng.uniform(150.0, 380.0, n),
        }
    )
    third = rng.random(n)
    df.loc[third < 0.3, "mass"] = np.nan  # these take the velocity-dispersion relation
    zrows = (third > 0.3) & (third < 0.4)
    df.loc[zrows, "redshift"] = rng.uniform(0.002, 0.08, zrows.sum())
    df.loc[zrows, "distance"] = np.nan
    df.loc[5, "mass"] = 3.0  # implausible mass
    df.loc[17, "distance"] = -4.0  # impossible distance
    df.loc[23, "ra"] = 365.0  # position out of range (HATS holds no blank positions)
    copies = df.iloc[[40, 41, 42]].copy()  # exact repeats: the kept copy is the same row
    return pd.concat([df, copies], ignore_index=True)


@pytest.fixture(scope="module")
def catalogue(tmp_path_factory):
    import lsdb

    base = tmp_path_factory.mktemp("scale")
    df = _invented_catalogue(N_ROWS)
    df.to_parquet(base / "galaxies.parquet", row_group_size=20_000, index=False)
    lsdb.from_dataframe(
        df, lowest_order=0, highest_order=3, partition_rows=40_000, margin_threshold=None
    ).write_catalog(base / "galaxies_hats")
    return base, df


@pytest.mark.slow
def test_parquet_and_hats_on_two_workers_rank_as_in_memory(catalogue, tmp_path, monkeypatch):
    import lsdb

    from ptaconstrain.catalogue import dask_engine

    base, df = catalogue
    curve = load_curve(CURVE)
    # HATS partitions above 2 x 3,000 rows are ranked in slices of 3,000 (one task each)
    monkeypatch.setattr(dask_engine, "PARTITION_ROWS", 3_000)
    memory = rank_catalog(Table.from_pandas(df), curve, on_bad="skip")
    parquet = rank_catalog(base / "galaxies.parquet", curve, on_bad="skip", chunk_size=30_000)
    hats = rank_catalog_dask(
        base / "galaxies_hats",
        curve,
        tmp_path / "out",
        workers=2,
        on_bad="skip",
        chunk_size=30_000,
        top_rows=100,
    )
    n_pixels = len(lsdb.open_catalog(base / "galaxies_hats").get_healpix_pixels())
    assert len(list((tmp_path / "out" / "ranking.parquet").glob("*.parquet"))) > n_pixels
    n = memory.n_ranked
    assert n == parquet.n_ranked == hats.n_ranked == N_ROWS - 3  # 3 bad rows; repeats dropped
    assert memory.rejections.counts == parquet.rejections.counts == hats.rejections.counts
    assert memory.rejections.notes == parquet.rejections.notes == hats.rejections.notes
    assert memory.n_read == parquet.n_read == hats.n_read == N_ROWS + 3
    # same order, every row; same metrics to floating-point rounding
    ref = memory.table
    assert list(parquet.table["name"]) == list(ref["name"])
    names = np.char.decode(np.asarray(hats.runs.column("name")), "utf-8")
    assert list(names) == list(ref["name"])
    for key in (
        "h0_ratio",
        "min_mass_ratio",
        "prob_equal_mass",
        "expected_number",
        "h0_equal_mass",
        "log_mass",
    ):
        want = np.asarray(ref[key], dtype=float)
        np.testing.assert_allclose(
            np.asarray(parquet.table[key], dtype=float),
            want,
            rtol=1e-12,
            equal_nan=True,
            err_msg=key,
        )
        np.testing.assert_allclose(
            np.asarray(hats.runs.column(key), dtype=float),
            want,
            rtol=1e-12,
            equal_nan=True,
            err_msg=key,
        )
    cum = np.asarray(hats.runs.column("cumulative_expected_number"))
    np.testing.assert_allclose(cum, np.asarray(ref["cumulative_expected_number"]), rtol=1e-9)
    assert hats.expected_total == pytest.approx(memory.expected_total, rel=1e-12, abs=0)
    assert list(hats.table["name"]) == list(ref["name"][:100])
    assert np.array_equal(np.asarray(hats.runs.column("rank")), np.arange(1, n + 1))


def test_threshold_once_per_partition_is_the_per_galaxy_lookup():
    # a galaxy's nested pixel at order k lies in its parent at every coarser order; the
    # reference for which pixel holds which galaxy is healpy (Gorski et al. 2005)
    from pulsars_for_tests import small_array

    lookup = ThresholdLookup(small_array(), sky_nside=4)
    rng = np.random.default_rng(3)
    ra, dec = rng.uniform(0, 360, 2000), np.degrees(np.arcsin(rng.uniform(-1, 1, 2000)))
    per_row, index = lookup.thresholds(ra, dec)
    for order in (2, 3, 5):
        pix = hp.ang2pix(2**order, ra, dec, nest=True, lonlat=True)
        for p in np.unique(pix)[:40]:  # a loop over a few partitions
            shared = lookup.partition_thresholds(order, int(p))
            rows = per_row[index[pix == p]]
            assert np.array_equal(np.broadcast_to(shared, rows.shape), rows)
    assert lookup.partition_thresholds(1, 0) is None  # grid finer than the partition


def _error_line(result):
    lines = result.output.strip().splitlines()
    assert result.exit_code == 1, result.output
    assert len(lines) == 1 and lines[0].startswith("Error: "), result.output
    assert "Traceback" not in result.output
    return lines[0]


@pytest.mark.parametrize("engine", ["memory", "dask"])
def test_missing_mapped_column_is_the_same_one_line_error(catalogue, tmp_path, engine):
    base, _ = catalogue
    curve = CURVE
    args = ["rank", "--curve", str(curve), "--column", "distance=dist_mpc"]
    ecsv = _error_line(
        CliRunner().invoke(main, [*args, "--out", str(tmp_path / "a"), _small_ecsv(base, tmp_path)])
    )
    source = base / ("galaxies_hats" if engine == "dask" else "galaxies.parquet")
    other = _error_line(
        CliRunner().invoke(
            main, [*args, "--out", str(tmp_path / "b"), "--engine", engine, str(source)]
        )
    )
    assert "'dist_mpc' (mapped to distance) is not in the catalogue" in ecsv
    assert other.split(";")[0] == ecsv.split(";")[0]
    assert not (tmp_path / "b").exists() or not any((tmp_path / "b").iterdir())


def _small_ecsv(base, tmp_path):
    path = tmp_path / "small.ecsv"
    Table.from_pandas(pd.read_parquet(base / "galaxies.parquet").iloc[:50]).write(path)
    return str(path)


def test_wrong_type_in_parquet_is_the_same_one_line_error(tmp_path):
    df = _invented_catalogue(60)
    df["mass"] = ["heavy"] * len(df)
    df.to_parquet(tmp_path / "bad.parquet", index=False)
    Table.from_pandas(df).write(tmp_path / "bad.ecsv")
    curve = CURVE
    lines = [
        _error_line(
            CliRunner().invoke(
                main,
                [
                    "rank",
                    str(tmp_path / name),
                    "--curve",
                    str(curve),
                    "--out",
                    str(tmp_path / name) + "-out",
                ],
            )
        )
        for name in ("bad.parquet", "bad.ecsv")
    ]
    assert lines[0] == lines[1]
    assert "'mass' (mass) is not numeric" in lines[0]


@pytest.mark.slow
def test_unreachable_scheduler_is_one_line_and_leaves_nothing(catalogue, tmp_path):
    base, _ = catalogue
    curve = CURVE
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main,
        [
            "rank",
            str(base / "galaxies_hats"),
            "--engine",
            "dask",
            "--scheduler",
            "tcp://127.0.0.1:9",
            "--curve",
            str(curve),
            "--out",
            str(out),
        ],
    )
    line = _error_line(result)
    assert "tcp://127.0.0.1:9 cannot be reached" in line
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.slow
def test_dask_on_parquet_partitions_merges_orders_and_names_as_in_memory(tmp_path, monkeypatch):
    # many small partitions: repeated names and exactly equal sort keys fall in different
    # partitions, so the client's merge (key, tie-breaker, then name) and its duplicate search
    # (hash, then exact name, first catalogue row kept) are what decide; the reference is the
    # in-memory engine on the same rows
    from ptaconstrain.catalogue import dask_engine

    df = _invented_catalogue(3000, seed=5)
    twins = df.iloc[[100, 100]].copy()  # one galaxy's data under two new names: equal keys
    twins["name"] = ["Twin-b", "Twin-a"]
    later = df.iloc[[7, 1200]].copy()  # repeats of early names, far later in the file
    later["distance"] = [33.0, 44.0]  # the repeat differs: only the first occurrence counts
    df = pd.concat([df.iloc[:1500], twins.iloc[[0]], df.iloc[1500:], twins.iloc[[1]], later])
    df = df.reset_index(drop=True)
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.Table.from_pandas(df, preserve_index=False)
    with pq.ParquetWriter(tmp_path / "cat.parquet", table.schema) as writer:
        writer.write_table(table.slice(0, 1500), row_group_size=250)  # tasks of whole groups
        writer.write_table(table.slice(1500), row_group_size=900)  # tasks of slices of groups
    monkeypatch.setattr(dask_engine, "PARTITION_ROWS", 500)
    curve = load_curve(CURVE)
    memory = rank_catalog(Table.from_pandas(df), curve, on_bad="skip")
    dask = rank_catalog_dask(
        tmp_path / "cat.parquet", curve, tmp_path / "out", workers=2, on_bad="skip", top_rows=40
    )
    assert len(list((tmp_path / "out" / "ranking.parquet").glob("*.parquet"))) >= 6
    assert dask.n_ranked == memory.n_ranked and dask.n_read == memory.n_read == len(df)
    for key in ("row", "name", "value", "reason"):
        assert list(dask.rejections.table()[key]) == list(memory.rejections.table()[key]), key
    assert memory.rejections.counts["duplicate name (the first occurrence is kept)"] == 5
    ref = memory.table
    names = np.char.decode(np.asarray(dask.runs.column("name")), "utf-8")
    assert list(names) == list(ref["name"])
    assert list(ref["name"]).index("Twin-a") + 1 == list(ref["name"]).index("Twin-b")
    assert np.array_equal(dask.runs.column("catalogue_row") + 1, np.asarray(ref["catalogue_row"]))
    got = np.asarray(dask.runs.column("cumulative_expected_number"))
    np.testing.assert_array_equal(got, np.asarray(ref["cumulative_expected_number"]))
    assert list(dask.table["name"]) == list(ref["name"][:40])
    sample = dask.runs.take([5, 0, 999], ["rank", "name"])
    assert list(sample["rank"]) == [6, 1, 1000]
    assert list(sample["name"]) == [ref["name"][5], ref["name"][0], ref["name"][999]]
    blocks = [np.char.decode(b["name"], "utf-8") for b in dask.runs.blocks(700)]
    assert [len(b) for b in blocks[:-1]] == [700] * (len(blocks) - 1)
    assert list(np.concatenate(blocks)) == list(ref["name"])
    # on_bad="error": the same first bad row named in the same one line
    with pytest.raises(Exception) as mem_err:
        rank_catalog(Table.from_pandas(df), curve)
    with pytest.raises(Exception) as dask_err:
        rank_catalog_dask(tmp_path / "cat.parquet", curve, tmp_path / "out2", workers=1)
    assert str(dask_err.value) == str(mem_err.value)
    assert not (tmp_path / "out2" / "ranking.parquet").exists()


def _with_units(df, distance_unit, sigma_unit, scale_d, scale_s):
    import astropy.units as u

    t = Table.from_pandas(df.iloc[:200].reset_index(drop=True))
    t["distance"] = t["distance"] * scale_d
    t["distance"].unit = u.Unit(distance_unit)
    t["velocity_dispersion"] = t["velocity_dispersion"] * scale_s
    t["velocity_dispersion"].unit = u.Unit(sigma_unit)
    return t


def test_parquet_written_by_astropy_keeps_its_units_under_the_ecsv_rule(tmp_path):
    # astropy stores the column units of Table.write(format="parquet") in the schema metadata
    # (astropy docs, "Parquet" in Unified File Read/Write); 1 Mpc = 1000 kpc and
    # 1 km/s = 1000 m/s by definition
    df = _invented_catalogue(300, seed=2)
    curve = load_curve(CURVE)
    bare = rank_catalog(
        Table.from_pandas(df.iloc[:200].reset_index(drop=True)), curve, on_bad="skip"
    )
    t = _with_units(df, "kpc", "m / s", 1000.0, 1000.0)
    t.write(tmp_path / "kpc.parquet")
    t.write(tmp_path / "kpc.ecsv")
    for name in ("kpc.parquet", "kpc.ecsv"):
        r = rank_catalog(tmp_path / name, curve, on_bad="skip")
        assert list(r.table["name"]) == list(bare.table["name"]), name
        np.testing.assert_allclose(
            r.table["distance"].value, bare.table["distance"].value, rtol=1e-13, err_msg=name
        )
        np.testing.assert_allclose(
            r.table["expected_number"], bare.table["expected_number"], rtol=1e-11, err_msg=name
        )
    dask = rank_catalog_dask(
        tmp_path / "kpc.parquet", curve, tmp_path / "out", workers=1, on_bad="skip"
    )
    np.testing.assert_allclose(
        np.asarray(dask.runs.column("distance")), bare.table["distance"].value, rtol=1e-13
    )
    # a unit of the wrong kind: the same one line for both formats
    wrong = _with_units(df, "kg", "km / s", 1.0, 1.0)
    wrong.write(tmp_path / "kg.parquet")
    wrong.write(tmp_path / "kg.ecsv")
    lines = [
        _error_line(
            CliRunner().invoke(
                main,
                ["rank", str(tmp_path / n), "--curve", CURVE, "--out", str(tmp_path / f"o-{n}")],
            )
        )
        for n in ("kg.parquet", "kg.ecsv")
    ]
    assert lines[0] == lines[1] and "distance" in lines[0] and "kg" in lines[0], lines


def test_masked_columns_written_by_astropy_are_missing_values_not_zeros(tmp_path):
    # astropy writes a masked column X to Parquet as X plus a boolean X.mask, the masked
    # entries holding 0 (astropy docs, "Parquet" in Unified File Read/Write; seen in
    # pyarrow's schema of such a file); read as 0 they were "impossible masses".
    # Reference: the same table as ECSV (masked entries written as blanks), ranked alike
    from astropy.table import MaskedColumn

    df = _invented_catalogue(300, seed=4).iloc[:200].reset_index(drop=True)
    t = Table.from_pandas(df)
    for name in ("mass", "distance", "redshift"):
        values = np.asarray(t[name], dtype=float)
        t[name] = MaskedColumn(np.nan_to_num(values), mask=np.isnan(values))
    t.write(tmp_path / "masked.parquet")
    t.write(tmp_path / "masked.ecsv")
    import pyarrow.parquet as pq

    assert "mass.mask" in pq.read_schema(tmp_path / "masked.parquet").names  # the layout
    curve = load_curve(CURVE)
    ecsv = rank_catalog(tmp_path / "masked.ecsv", curve, on_bad="skip")
    parquet = rank_catalog(tmp_path / "masked.parquet", curve, on_bad="skip")
    assert list(parquet.table["name"]) == list(ecsv.table["name"])
    assert parquet.rejections.summary() == ecsv.rejections.summary()
    np.testing.assert_allclose(
        parquet.table["expected_number"], ecsv.table["expected_number"], rtol=1e-13
    )
    assert "mass.mask" not in parquet.table.colnames
    dask = rank_catalog_dask(
        tmp_path / "masked.parquet", curve, tmp_path / "out", workers=1, on_bad="skip"
    )
    assert np.asarray(dask.runs.column("name")).astype(str).tolist() == list(ecsv.table["name"])


@pytest.mark.slow
def test_a_local_cluster_starts_beside_anything_on_port_8787():
    # a notebook's Dask dashboard (or a second ptaconstrain run) holds port 8787: the local
    # cluster must neither fail nor warn (warnings are errors here)
    import socket

    from ptaconstrain.catalogue.cluster import dask_client

    holder = socket.socket()
    try:
        holder.bind(("0.0.0.0", 8787))
        holder.listen(1)
    except OSError:
        holder.close()
        pytest.skip("port 8787 is taken on this machine already")
    try:
        with dask_client(workers=1) as client:
            assert client.submit(sum, [1, 2, 3]).result() == 6
    finally:
        holder.close()
