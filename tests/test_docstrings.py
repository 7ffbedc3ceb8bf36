"""Every public function and class documents its Parameters, Returns and Examples.

"Public" is what ``ptaconstrain.__all__`` and each subpackage's ``__all__`` name (the
subpackages are found, so a new one is checked too), plus the top-level modules
``errors``, ``cosmo`` and ``demo``; the command line (``ptaconstrain.cli``) is documented
by its ``--help`` instead.  Classes need no
Returns; a dataclass may list its fields (= parameters) under Attributes.  The Examples
run as doctests (``--doctest-modules`` in pyproject.toml); this test checks that they are
there.  Numpydoc section layout: a title line, then dashes.
"""

import dataclasses
import importlib
import inspect
import pkgutil
import re
from typing import Protocol

import pytest

#: not checked: the command line (documented by --help)
EXEMPT = {"ptaconstrain.cli"}


def public_modules():
    """ptaconstrain, each subpackage (found, so a new one is not missed), errors, cosmo, demo."""
    import ptaconstrain

    packages = sorted(
        f"ptaconstrain.{m.name}" for m in pkgutil.iter_modules(ptaconstrain.__path__) if m.ispkg
    )
    return [
        name
        for name in [
            "ptaconstrain",
            *packages,
            "ptaconstrain.errors",
            "ptaconstrain.cosmo",
            "ptaconstrain.demo",
        ]
        if name not in EXEMPT
    ]


PUBLIC = public_modules()


def public_objects():
    """(qualified name, object) of every public function and class, each once."""
    seen = {}
    for package in PUBLIC:
        module = importlib.import_module(package)
        for name in module.__all__:
            obj = getattr(module, name)
            if inspect.isfunction(obj) or inspect.isclass(obj):
                seen.setdefault(f"{obj.__module__}.{obj.__qualname__}", obj)
    return sorted(seen.items())


def has_section(doc, title):
    return re.search(rf"^{title}\n-{{{len(title)}}}\s*$", doc, re.MULTILINE) is not None


def takes_arguments(obj):
    target = obj.__init__ if inspect.isclass(obj) else obj
    try:
        params = list(inspect.signature(target).parameters.values())
    except (TypeError, ValueError):
        return True
    return any(p.name not in ("self", "cls") for p in params)


def missing_sections(obj):
    """The numpydoc sections ``obj``'s docstring lacks."""
    doc = inspect.getdoc(obj) or ""
    missing = []
    is_protocol = inspect.isclass(obj) and Protocol in getattr(obj, "__mro__", ())
    # a dataclass's fields are its parameters: an Attributes section documents both
    fields_listed = dataclasses.is_dataclass(obj) and has_section(doc, "Attributes")
    if (
        takes_arguments(obj)
        and not is_protocol
        and not fields_listed
        and not has_section(doc, "Parameters")
    ):
        missing.append("Parameters")
    if not inspect.isclass(obj) and not (has_section(doc, "Returns") or has_section(doc, "Yields")):
        missing.append("Returns")
    if not has_section(doc, "Examples") or ">>> " not in doc.split("Examples\n--------")[-1]:
        missing.append("Examples")
    return missing


OBJECTS = public_objects()


def test_the_public_surface_is_found():
    # guards against a collector that finds nothing and so passes vacuously
    assert {"ptaconstrain.binary", "ptaconstrain.catalogue", "ptaconstrain.data"} <= set(PUBLIC)
    names = [name for name, _ in OBJECTS]
    assert len(names) > 90
    assert "ptaconstrain.binary.waveform.strain_amplitude" in names
    assert "ptaconstrain.analysis.exclusion.ExclusionMap" in names


@pytest.mark.parametrize("name, obj", OBJECTS, ids=[name for name, _ in OBJECTS])
def test_public_docstring_has_parameters_returns_examples(name, obj):
    missing = missing_sections(obj)
    assert not missing, f"{name}: docstring lacks {', '.join(missing)}"


def test_the_check_catches_a_missing_section():
    def documented(x):
        """Twice x.

        Parameters
        ----------
        x : float

        Returns
        -------
        float

        Examples
        --------
        >>> documented(2)
        4
        """
        return 2 * x

    def undocumented(x):
        """Twice x."""
        return 2 * x

    assert missing_sections(documented) == []
    assert missing_sections(undocumented) == ["Parameters", "Returns", "Examples"]
