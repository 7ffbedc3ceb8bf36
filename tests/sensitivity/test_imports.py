"""Every module of ptaconstrain.sensitivity imports alone, in a fresh interpreter (no cycles)."""

import subprocess
import sys

import pytest

MODULES = ["", ".curve", ".antenna", ".timing", ".positional", ".pulsar_array",
           ".pulsar_list", ".limit_map"]


@pytest.mark.parametrize("module", MODULES)
def test_module_imports_alone(module):
    name = f"ptaconstrain.sensitivity{module}"
    res = subprocess.run([sys.executable, "-c", f"import {name}"], capture_output=True,
                         text=True, check=False)
    assert res.returncode == 0, res.stderr


def test_package_import_stays_light_and_names_its_surface():
    # matplotlib, healpy and astropy.coordinates are imported only when used
    code = ("import sys, ptaconstrain.sensitivity as s; "
            "print(sorted(m for m in ('matplotlib', 'healpy', 'astropy.coordinates') "
            "if m in sys.modules)); "
            "print(all(hasattr(s, n) for n in s.__all__))")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=False)
    assert res.returncode == 0, res.stderr
    assert res.stdout.split() == ["[]", "True"]
