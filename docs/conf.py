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
if release == "0+unknown":  # a source tree never built: ask git through setuptools_scm
    try:
        from setuptools_scm import get_version

        release = get_version(root=str(HERE.parent))
    except Exception:  # no setuptools_scm, or not a git checkout: keep "0+unknown"
        pass
version = ".".join(release.split(".")[:2])

extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.autosummary",
    "sphinx.ext.intersphinx",
    "sphinx.ext.mathjax",
    "numpydoc",
    "sphinx_gallery.gen_gallery",
]

exclude_patterns = ["_build", "gallery", "_generated"]
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


def write_cli_help(app):
    """Write every command's ``--help`` into _generated/cli_help.rst (included by cli.rst).

    The text is click's own, so the page cannot drift from the commands.
    """
    import click

    from ptaconstrain.cli import main

    out = HERE / "_generated"
    out.mkdir(exist_ok=True)
    width = {"terminal_width": 88, "max_content_width": 88}
    root = click.Context(main, info_name="ptaconstrain", **width, **main.context_settings)
    parts = ["``ptaconstrain``", "-" * 16, "", ".. code-block:: text", ""]
    parts += ["   " + line if line else "" for line in main.get_help(root).splitlines()]
    for name in sorted(main.list_commands(root)):
        command = main.get_command(root, name)
        ctx = click.Context(
            command, info_name=name, parent=root, **width, **command.context_settings
        )
        title = f"``ptaconstrain {name}``"
        parts += ["", title, "-" * len(title), "", ".. code-block:: text", ""]
        parts += ["   " + line if line else "" for line in command.get_help(ctx).splitlines()]
    text = "\n".join(parts) + "\n"
    target = out / "cli_help.rst"
    if not target.exists() or target.read_text() != text:
        target.write_text(text)


def setup(app):
    app.connect("builder-inited", write_cli_help)
