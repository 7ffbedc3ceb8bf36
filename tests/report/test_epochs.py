"""report/epochs.py: table and figure of a forecast over time."""

import numpy as np
from astropy import units as u
from astropy.coordinates import SkyCoord

from ptaconstrain.analysis.epochs import forecast_over_time
from ptaconstrain.binary.host import Host
from ptaconstrain.sensitivity.pulsar_array import PulsarArray


def _result():
    coord = SkyCoord([10, 100, 200] * u.deg, [-20, 30, 5] * u.deg)
    arr = PulsarArray(
        ["A", "B", "C"],
        coord,
        [0.2] * 3 * u.us,
        [14.0] * 3 * u.d,
        [55000.0] * 3,
        [55000 + 6 * 365.25] * 3,
        name="invented",
    )
    return forecast_over_time(
        Host("Invented", 1e10, 30, ra=150, dec=10),
        arr,
        [0, 10] * u.yr,
        rms_factor=2,
        mass_ratio=np.geomspace(1e-4, 1, 30),
    )


def test_table_units_and_figure_labels():
    r = _result()
    t = r.to_table(target_q=1.0)
    assert t["span"].unit == u.yr and t["companion_mass"].unit == u.Msun
    assert t.meta["rms_factor"] == "2" and "FORECAST" in t.meta["statement"]
    # m2 = M q / (1 + q) at the tightest q (the README's companion-mass convention)
    q = t["tightest_mass_ratio"]
    np.testing.assert_allclose(t["companion_mass"].to_value(u.Msun), 1e10 * q / (1 + q))
    fig = r.plot(target_q=1.0)
    ax = fig.axes[0]
    assert "not an exclusion" in ax.get_title() and "TOA rms / 2" in ax.get_title()
    assert ax.get_xlabel().startswith("observing span")
