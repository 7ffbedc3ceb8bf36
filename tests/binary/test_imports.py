"""The docstring example of binary/host runs (importing every module alone, and
binary/ never loading sensitivity/, is checked for the whole package in
tests/test_layout.py)."""

import doctest


def test_host_docstring_example_runs():
    from astropy.cosmology import Planck18, default_cosmology

    from ptaconstrain.binary import host

    with default_cosmology.set(Planck18):
        result = doctest.testmod(host)
    assert result.attempted > 0 and result.failed == 0
