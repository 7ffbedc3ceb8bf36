"""Sphinx configuration of the ptaconstrain documentation.

Build (warnings are errors) from the repository root::

    PYTHONPATH=src python -m sphinx -W -b html docs docs/_build/html

The gallery scripts in ``docs/gallery`` run during the build on the shipped,
invented data; their figures are matplotlib ``Figure`` objects made without
pyplot, collected by ``_ext/figure_scraper.py``.
"""

import os
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
# a checkout without an installed package: document the source next to this folder
if os.environ.get("PTACONSTRAIN_DOCS_INSTALLED") != "1":
    sys.path.insert(0, str(HERE.parent / "src"))
sys.path.insert(0, str(HERE / "_ext"))  # figure_scraper, for the gallery

import ptaconstrain  # noqa: E402

project = "ptaconstrain"
author = "the ptaconstrain maintainers"
copyright = "2026, the ptaconstrain maintainers"
release = ptaconstrain.__version__
version = ".".join(release.split(".")[:2])

extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.autosummary",
    "sphinx.ext.intersphinx",
    "sphinx.ext.mathjax",
    "numpydoc",
    "sphinx_gallery.gen_gallery",
]

exclude_patterns = ["_build", "gallery"]
templates_path = ["_templates"]
root_doc = "index"

# API pages come from each package's __all__ (see api.rst and _templates/)
autosummary_generate = True
autosummary_imported_members = True
autosummary_ignore_module_all = False  # a package's page lists its __all__
autodoc_default_options = {"members": False}
numpydoc_show_class_members = False
numpydoc_class_members_toctree = False
numpydoc_validation_checks = set()
numpydoc_xref_param_type = False

intersphinx_mapping = {}  # no network during the build

html_theme = "alabaster"
html_title = f"ptaconstrain {release}"
html_static_path = []
html_theme_options = {
    "description": "pulsar-timing-array limits -> bounds on black-hole companions",
    "fixed_sidebar": True,
}


sphinx_gallery_conf = {
    "examples_dirs": "gallery",
    "gallery_dirs": "auto_gallery",
    "filename_pattern": r"/plot_",
    "image_scrapers": ("figure_scraper",),
    "download_all_examples": False,
    "remove_config_comments": True,
    "within_subsection_order": "FileNameSortKey",
    "show_memory": False,
    "abort_on_example_error": True,
    "matplotlib_animations": False,
    "reset_modules": (),
    "plot_gallery": "True",
}
