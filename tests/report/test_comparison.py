"""report/comparison.py: two exclusion maps side by side."""

import numpy as np
from curves_for_tests import bucket_limit

from ptaconstrain.analysis.exclusion import exclusion_map
from ptaconstrain.binary.host import Host
from ptaconstrain.report.comparison import comparison_figure


def test_two_panels_state_their_orbits():
    host = Host("Figure host", 2e10, 80)
    q = np.geomspace(1e-4, 1, 30)
    a = exclusion_map(host, bucket_limit(), q)
    b = exclusion_map(host, bucket_limit(), q, eccentricity=0.5)
    fig = comparison_figure(a, b, "left circular, right eccentric")
    titles = [ax.get_title() for ax in fig.axes if ax.get_title()]
    assert any("circular orbit" in t for t in titles)
    assert any("eccentricity e = 0.5 (15 harmonics)" in t for t in titles)
    assert fig.get_suptitle() == "left circular, right eccentric"
