"""Locate the data files shipped with the project (demo inputs, synthetic curves).

In a source checkout they sit in the top-level ``sensitivity_curves/`` and
``examples/`` folders; an installed package carries copies of both as
``ptaconstrain/shipped_curves`` and ``ptaconstrain/shipped_examples``
(see ``[tool.setuptools.package-dir]`` in pyproject.toml).
"""

from pathlib import Path

__all__ = ["shipped_file", "CURVES", "EXAMPLES"]

CURVES = "sensitivity_curves"
EXAMPLES = "examples"
_INSTALLED = {CURVES: "shipped_curves", EXAMPLES: "shipped_examples"}


def shipped_file(folder, name):
    """Path of a shipped file, e.g. ``shipped_file(CURVES, "synthetic_h0_limit.ecsv")``.

    Parameters
    ----------
    folder : {"sensitivity_curves", "examples"}
    name : str

    Returns
    -------
    pathlib.Path

    Raises
    ------
    FileNotFoundError
        If the file is in neither place (a broken installation).
    """
    here = Path(__file__).resolve().parent
    for base in (here.parent / folder, here / _INSTALLED[folder]):
        path = base / name
        if path.is_file():
            return path
    raise FileNotFoundError(f"shipped file {folder}/{name} is missing: reinstall ptaconstrain")
