"""The ranking driver and its result."""

import numpy as np
import pytest
from astropy.table import Table
from curves_for_tests import bucket_limit
from scipy import stats

from ptaconstrain.catalogue import CatalogError, PopulationModel, Ranking, rank_catalog

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


def test_ranking_is_sorted_and_cumulative():
    t = _table(velocity_dispersion=[350.0, 250.0, 400.0])
    r = rank_catalog(t, CURVE)
    n = np.asarray(r.table["expected_number"])
    assert np.all(np.diff(n) <= 0)
    np.testing.assert_allclose(r.table["cumulative_expected_number"], np.cumsum(n))
    assert r.table.meta["verb"] == "excluded"


def test_missing_columns_raise():
    t = _table(velocity_dispersion=[300.0, 250.0, 200.0])
    t.remove_column("dec")
    with pytest.raises(CatalogError, match="'dec'"):
        rank_catalog(t, CURVE)
    t = _table()
    with pytest.raises(CatalogError, match="no mass column"):
        rank_catalog(t, CURVE)
    t = _table(velocity_dispersion=[300.0, 250.0, 200.0])
    t.remove_column("distance")
    with pytest.raises(CatalogError, match="distance"):
        rank_catalog(t, CURVE)


def test_population_options_change_numbers_not_order():
    t = _table(velocity_dispersion=[350.0, 250.0, 400.0])
    a = rank_catalog(t, CURVE, population=PopulationModel(1e-10))
    b = rank_catalog(t, CURVE, population=PopulationModel(2e-10))
    assert list(a.table["name"]) == list(b.table["name"])
    np.testing.assert_allclose(b.table["expected_number"], 2 * a.table["expected_number"])
    assert stats.kendalltau(a.table["h0_ratio"], b.table["h0_ratio"])[0] == pytest.approx(
        1, rel=1e-6, abs=0
    )


def test_result_is_frozen_with_a_short_repr_a_table_and_a_plot():
    from dataclasses import FrozenInstanceError

    from matplotlib.figure import Figure

    r = rank_catalog(_table(velocity_dispersion=[350.0, 250.0, 400.0]), CURVE)
    assert isinstance(r, Ranking)
    with pytest.raises(FrozenInstanceError):
        r.metric = "h0_ratio"
    text = repr(r)
    assert len(text.splitlines()) <= 4 and "3 of 3" in text and "excluded" in text
    t = r.to_table()
    assert list(t["name"]) == list(r.table["name"]) and t.meta["provenance"]["software"]
    fig = r.plot()
    assert isinstance(fig, Figure) and fig.axes[0].name == "mollweide"
    ax = Figure().add_subplot(projection="mollweide")
    assert r.plot(ax=ax) is ax.figure


def _synthetic(n, seed=5):
    rng = np.random.default_rng(seed)
    log_m = rng.normal(8.6, 0.6, n)
    t = Table(
        {
            "name": np.char.add("S-", np.arange(n).astype(str)),
            "ra": rng.uniform(0, 360, n),
            "dec": rng.uniform(-80, 80, n),
            "distance": np.cbrt(rng.uniform(10.0**3, 300.0**3, n)),
            "velocity_dispersion": 200.0 * 10 ** ((log_m - 8.49) / 4.38),
        }
    )
    t["velocity_dispersion"][::50] = t["velocity_dispersion"][0]  # ties in the metric
    t["distance"][::50] = t["distance"][0]
    t["name"][7] = t["name"][3]  # a repeat across chunks is rejected once
    return t


@pytest.mark.parametrize("metric", ["expected_number", "h0_ratio"])
def test_streamed_ranking_equals_the_in_memory_one(tmp_path, metric):
    # reference: the whole table sorted in memory (one lexsort); the streamed
    # ranking merges sorted runs from disk and must give the same rows, order and values
    from astropy.table import vstack

    t = _synthetic(12_000)
    mem = rank_catalog(t, CURVE, metric=metric, chunk_size=1000, on_bad="skip")
    st = rank_catalog(
        t, CURVE, metric=metric, chunk_size=1000, on_bad="skip", stream_dir=tmp_path, top_rows=30
    )
    try:
        full = vstack(list(st.blocks(size=2500)), metadata_conflicts="silent")
        assert st.n_ranked == len(mem.table) == len(full) == 11_999
        assert st.rejections.counts == mem.rejections.counts
        assert st.expected_total == pytest.approx(
            float(np.sum(mem.table["expected_number"])), rel=1e-12, abs=0
        )
        for col in mem.table.colnames:
            a, b = np.asarray(mem.table[col]), np.asarray(full[col])
            if b.dtype.kind == "S":
                b = np.char.decode(b, "utf-8")
            assert np.array_equal(a, b, equal_nan=a.dtype.kind == "f"), col
        assert list(st.table["name"]) == list(mem.table["name"][:30])
        assert st.meta["relations_used"] == mem.meta["relations_used"]
        np.testing.assert_array_equal(st.column("expected_number"), mem.table["expected_number"])
    finally:
        st.close()
    assert not any(tmp_path.iterdir())  # the runs are removed


def test_order_does_not_depend_on_chunk_size(tmp_path):
    # keys are rounded to 12 significant digits: last-bit differences between
    # chunkings cannot reorder galaxies (ties are broken by name)
    t = _synthetic(12_000, seed=9)
    a = rank_catalog(t, CURVE, chunk_size=1000, on_bad="skip", stream_dir=tmp_path)
    b = rank_catalog(t, CURVE, chunk_size=7919, on_bad="skip", stream_dir=tmp_path)
    try:
        na, nb = a.column("name"), b.column("name")
        assert np.array_equal(na, nb)
        np.testing.assert_allclose(
            a.column("expected_number"), b.column("expected_number"), rtol=1e-13, atol=0
        )
    finally:
        a.close()
        b.close()
