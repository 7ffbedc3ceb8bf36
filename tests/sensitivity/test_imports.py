"""The sensitivity package imports light and names its surface (every module importing
alone is checked in tests/test_layout.py)."""

import subprocess
import sys


def test_package_import_stays_light_and_names_its_surface():
    # matplotlib, healpy and astropy.coordinates are imported only when used
    code = (
        "import sys, ptaconstrain.sensitivity as s; "
        "print(sorted(m for m in ('matplotlib', 'healpy', 'astropy.coordinates') "
        "if m in sys.modules)); "
        "print(all(hasattr(s, n) for n in s.__all__))"
    )
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=False)
    assert res.returncode == 0, res.stderr
    assert res.stdout.split() == ["[]", "True"]
