"""The package version: one place, set from git tags by setuptools_scm.

Building or installing the package (``pip install .``, ``python -m build``) runs
setuptools_scm (configured in ``pyproject.toml``), which writes the generated
``_scm_version.py`` beside this file: ``X.Y.Z`` on a commit tagged ``vX.Y.Z``, and
``X.Y+1.0.devN+g<commit>`` after it.  A source tree that was never built has no such
file and reads as ``0+unknown``; every output's provenance then still names the exact
git revision (:func:`ptaconstrain.report.provenance.source_revision`).  Nothing here
runs git, so importing the package stays cheap.
"""

try:
    from ._scm_version import __version__
except ImportError:  # a checkout used in place without a build (e.g. PYTHONPATH=src)
    __version__ = "0+unknown"

__all__ = ["__version__"]
