"""Shared fixtures: small, explicit curves so tests do not depend on demo data."""

import pytest
from curves_for_tests import power_law_limit


@pytest.fixture
def limit_curve():
    return power_law_limit()


@pytest.fixture
def curve_file(tmp_path, limit_curve):
    from ptaconstrain.sensitivity.curve import save_curve

    path = tmp_path / "limit.ecsv"
    save_curve(limit_curve, path)
    return path
