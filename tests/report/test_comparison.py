"""report/comparison.py: one exclusion map with a variant's bound drawn over it."""

import numpy as np
from curves_for_tests import bucket_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.report.comparison import comparison_figure


def test_the_figure_states_both_orbits():
    host = Host("Figure host", 2e10, 80)
    q = np.geomspace(1e-4, 1, 30)
    circular = exclusion_map(host, bucket_limit(), q)
    eccentric = exclusion_map(host, bucket_limit(), q, eccentricity=0.5)
    fig = comparison_figure(eccentric, circular, "e = 0", "e = 0.5 against e = 0 (dashed)")
    ax = fig.axes[0]
    # the panel's own title states the map's orbit; the legend names the reference's
    assert "eccentricity e = 0.5 (15 harmonics)" in ax.get_title()
    assert "e = 0: max allowed q" in [t.get_text() for t in ax.get_legend().texts]
    assert fig.get_suptitle() == "e = 0.5 against e = 0 (dashed)"
    # the dashed line is the reference's bound itself, period by period, where it is
    # a continuous-wave bound
    (line,) = [ln for ln in ax.lines if ln.get_label() == "e = 0: max allowed q"]
    cw = circular.bound_is_monochromatic
    np.testing.assert_array_equal(line.get_ydata()[cw], circular.max_mass_ratio[cw])
    assert np.isnan(line.get_ydata()[~cw]).all()
