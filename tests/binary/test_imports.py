"""Every module of binary/ imports on its own, without sensitivity/ (its sibling)."""

import doctest
import subprocess
import sys

import pytest


@pytest.mark.parametrize("module", ["ptaconstrain.binary", "ptaconstrain.binary.waveform",
                                    "ptaconstrain.binary.host"])
def test_module_imports_alone_without_sensitivity(module):
    code = (f"import sys, {module}; "
            "bad = [m for m in sys.modules if m.startswith('ptaconstrain.sensitivity') "
            "or m in ('matplotlib', 'healpy')]; assert not bad, bad")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=120)
    assert res.returncode == 0, res.stderr


def test_host_docstring_example_runs():
    from astropy.cosmology import Planck18, default_cosmology

    from ptaconstrain.binary import host

    with default_cosmology.set(Planck18):
        result = doctest.testmod(host)
    assert result.attempted > 0 and result.failed == 0
