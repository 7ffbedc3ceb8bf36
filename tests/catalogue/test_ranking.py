"""The ranking driver and its result."""

import numpy as np
import pytest
from astropy.table import Table
from curves_for_tests import bucket_limit
from scipy import stats

from ptaconstrain.catalogue import CatalogError, PopulationModel, Ranking, rank_catalog

CURVE = bucket_limit()


def _table(**cols):
    base = {"name": ["A", "B", "C"], "ra": [10.0, 200.0, 300.0], "dec": [-20.0, 5.0, 60.0],
            "distance": [30.0, 60.0, 90.0]}
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
    assert stats.kendalltau(a.table["h0_ratio"], b.table["h0_ratio"])[0] == pytest.approx(1)



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
