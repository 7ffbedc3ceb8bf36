"""Data shipped with ptaconstrain: the invented demo inputs and the scaling relations.

Every file here is invented and describes no real object or instrument, except
``relations.toml`` (published scaling relations, cited inside) and
``planck18_distance.ecsv`` (computed with astropy's Planck18 cosmology).  Each has a
short name (its file name without the suffix) that every command-line option taking
a file accepts in place of a path, e.g. ``--curve synthetic_h0_limit``; they are read
with :mod:`importlib.resources`, so the names work in a checkout and after
``pip install``.  ``ptaconstrain data`` lists them (:func:`shipped`).

==========================  =============  ==========================================
name                        kind           what it is
==========================  =============  ==========================================
``synthetic_h0_limit``      curve          invented 95% CW strain upper limit
``synthetic_future_psd``    curve          invented noise budget of a future array
``synthetic_h0_limit_map``  limit map      invented HEALPix map of h0 upper limits
``demo_array``              pulsar list    invented pulsar list (a fictional array)
``demo_hosts``              hosts          invented host galaxies for the demo
``example_hosts``           hosts          invented hosts table for ``exclude --hosts``
``demo_catalogue``          catalogue      invented catalogue of 400 massive galaxies
``demo_mass_samples``       mass samples   invented posterior samples of a black-hole mass
``relations``               relations      black-hole mass scaling relations (published)
``planck18_distance``       cosmology      D_L(z) of Planck18 from astropy (spline
                                           nodes; ``examples/make_cosmology_table.py``)
==========================  =============  ==========================================
"""

from dataclasses import dataclass
from importlib import resources
from pathlib import Path

__all__ = ["ShippedFile", "KINDS", "shipped", "names", "path", "resolve", "shipped_name"]

#: kind of a shipped file -> what a user calls it
KINDS = {
    "curve": "sensitivity curve",
    "pulsar list": "pulsar list",
    "limit map": "HEALPix limit map",
    "catalogue": "galaxy catalogue",
    "hosts": "hosts table",
    "mass samples": "posterior samples of a black-hole mass",
    "relations": "scaling relations",
    "cosmology": "cosmology table",
}


@dataclass(frozen=True)
class ShippedFile:
    """One file shipped in :mod:`ptaconstrain.data`.

    Attributes
    ----------
    name : str
        Short name, accepted wherever a file is asked for (the file name without suffix).
    filename : str
        File name inside the package.
    kind : str
        A key of :data:`KINDS`.
    description : str
        One line: what the file holds, and whether it is invented.

    Examples
    --------
    >>> from ptaconstrain import data
    >>> entry = data.shipped()[0]
    >>> entry.name, entry.kind, entry.path.name
    ('synthetic_h0_limit', 'curve', 'synthetic_h0_limit.ecsv')
    """

    name: str
    filename: str
    kind: str
    description: str

    @property
    def path(self):
        """Filesystem path (pathlib.Path) of the file."""
        return Path(str(resources.files(__name__).joinpath(self.filename)))


_SHIPPED = (
    ShippedFile(
        "synthetic_h0_limit",
        "synthetic_h0_limit.ecsv",
        "curve",
        "INVENTED 95% upper limit on CW strain h0 of a fictional array, 15 yr "
        "(an upper limit: gives exclusions)",
    ),
    ShippedFile(
        "synthetic_future_psd",
        "synthetic_future_psd.ecsv",
        "curve",
        "INVENTED strain-noise PSD of a fictional future array, 20 yr "
        "(a noise budget: gives forecasts)",
    ),
    ShippedFile(
        "synthetic_h0_limit_map",
        "synthetic_h0_limit_map.fits",
        "limit map",
        "INVENTED HEALPix map of h0 upper limits, deeper towards RA 280, Dec -35 deg",
    ),
    ShippedFile(
        "demo_array",
        "demo_array.ecsv",
        "pulsar list",
        "INVENTED pulsar list of a fictional timing array (fictional pulsars)",
    ),
    ShippedFile(
        "demo_hosts",
        "demo_hosts.ecsv",
        "hosts",
        "INVENTED host galaxies of the demo (fictional names, masses, positions)",
    ),
    ShippedFile(
        "example_hosts",
        "example_hosts.ecsv",
        "hosts",
        "INVENTED table of 12 fictional hosts for 'exclude --hosts' (every kind of "
        "row: errors, redshift only, mass from M-sigma)",
    ),
    ShippedFile(
        "demo_catalogue",
        "demo_catalogue.ecsv",
        "catalogue",
        "INVENTED catalogue of 400 fictional massive galaxies",
    ),
    ShippedFile(
        "demo_mass_samples",
        "demo_mass_samples.ecsv",
        "mass samples",
        "INVENTED weighted posterior samples of a black-hole mass and distance "
        "(2e10 solMass at 100 Mpc, skewed)",
    ),
    ShippedFile(
        "relations",
        "relations.toml",
        "relations",
        "published black-hole mass scaling relations, each cited (not invented)",
    ),
    ShippedFile(
        "planck18_distance",
        "planck18_distance.ecsv",
        "cosmology",
        "luminosity distance of astropy's Planck18 cosmology (not invented)",
    ),
)
_BY_NAME = {f.name: f for f in _SHIPPED} | {f.filename: f for f in _SHIPPED}


def shipped():
    """The shipped files, in the order ``ptaconstrain data`` lists them.

    Returns
    -------
    tuple of ShippedFile

    Examples
    --------
    >>> from ptaconstrain import data
    >>> [f.name for f in data.shipped() if f.kind == "curve"]
    ['synthetic_h0_limit', 'synthetic_future_psd']
    """
    return _SHIPPED


def names():
    """File names of the shipped data files.

    Returns
    -------
    list of str

    Examples
    --------
    >>> from ptaconstrain import data
    >>> "synthetic_h0_limit.ecsv" in data.names()
    True
    """
    root = resources.files(__name__)
    return sorted(
        p.name
        for p in root.iterdir()
        if p.is_file() and not p.name.endswith(".py") and not p.name.startswith(".")
    )


def path(name):
    """Filesystem path of a shipped data file.

    Parameters
    ----------
    name : str
        A short name from :func:`shipped` (``"synthetic_h0_limit"``) or a file name
        from :func:`names` (``"synthetic_h0_limit.ecsv"``).

    Returns
    -------
    pathlib.Path

    Raises
    ------
    FileNotFoundError
        If no such file is shipped (the message lists those that are).

    Examples
    --------
    >>> from ptaconstrain import data
    >>> data.path("demo_hosts.ecsv").name
    'demo_hosts.ecsv'
    >>> data.path("synthetic_h0_limit").name
    'synthetic_h0_limit.ecsv'
    """
    entry = _BY_NAME.get(str(name))
    target = resources.files(__name__).joinpath(entry.filename if entry else str(name))
    if not target.is_file():
        raise FileNotFoundError(f"no shipped data file {name!r}; shipped: {', '.join(names())}")
    return Path(str(target))


def resolve(text, kinds):
    """A file the user named: an existing path, else the shipped file of that name.

    The one rule for every option that takes an input file: a path that exists is
    used as it is; otherwise a short name (or file name) of a shipped file of one of
    ``kinds`` stands for that file.

    Parameters
    ----------
    text : str or path-like
        What the user wrote.
    kinds : str or sequence of str
        Keys of :data:`KINDS` the option accepts, e.g. ``"curve"``.

    Returns
    -------
    pathlib.Path

    Raises
    ------
    ptaconstrain.errors.InputError
        Neither an existing file nor a shipped file of an accepted kind; the one-line
        message names the shipped files that would fit.

    Examples
    --------
    >>> from ptaconstrain import data
    >>> data.resolve("synthetic_h0_limit", "curve").name
    'synthetic_h0_limit.ecsv'
    """
    from ..errors import InputError

    kinds = (kinds,) if isinstance(kinds, str) else tuple(kinds)
    given = Path(text)
    if given.is_file():
        return given
    fits = [f.name for f in _SHIPPED if f.kind in kinds]
    what = " or ".join(KINDS[k] for k in kinds)
    entry = _BY_NAME.get(str(text))
    if entry is not None and entry.kind in kinds:
        return entry.path
    if entry is not None:
        raise InputError(
            f"{text}: the shipped {entry.name!r} is a {KINDS[entry.kind]}, "
            f"not a {what}; shipped: {', '.join(fits) or 'none'}"
        )
    problem = "is a directory, not a file" if given.is_dir() else "file not found"
    raise InputError(
        f"{text}: {problem}, and no shipped {what} has that name "
        f"(shipped: {', '.join(fits) or 'none'}; 'ptaconstrain data' lists all)"
    )


def shipped_name(file):
    """The short name of ``file`` if it is one of the shipped files, else None.

    Parameters
    ----------
    file : str or path-like

    Returns
    -------
    str or None

    Examples
    --------
    >>> from ptaconstrain import data
    >>> data.shipped_name(data.path("demo_array")), data.shipped_name("my_array.ecsv")
    ('demo_array', None)
    """
    try:
        target = Path(file).resolve()
    except (OSError, TypeError, ValueError):
        return None
    for entry in _SHIPPED:
        if entry.path.resolve() == target:
            return entry.name
    return None
