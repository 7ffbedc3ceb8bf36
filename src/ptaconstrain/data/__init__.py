"""Data shipped with ptaconstrain: the invented demo inputs and the scaling relations.

Every file here is invented and describes no real object or instrument, except
``relations.toml`` (published scaling relations, cited inside) and
``planck18_distance.ecsv`` (computed with astropy's Planck18 cosmology).  Read them by name
with :func:`ptaconstrain.data.path`, which works in a checkout and after ``pip install``.

===============================  ===================================================
file                             what it is
===============================  ===================================================
``synthetic_h0_limit.ecsv``      invented 95% CW strain upper limit (``h0_limit``)
``synthetic_future_psd.ecsv``    invented noise budget of a future array (``strain_psd``)
``synthetic_h0_limit_map.fits``  invented HEALPix map of h0 upper limits
``demo_array.ecsv``              invented pulsar list (the demo's fictional array)
``demo_hosts.ecsv``              invented host galaxies for the demo
``example_hosts.ecsv``           invented hosts table for ``exclude --hosts``
``demo_catalogue.ecsv``          invented catalogue of 400 massive galaxies
``relations.toml``               black-hole mass scaling relations (published)
``planck18_distance.ecsv``       D_L(z) of Planck18 from astropy (spline nodes; see
                                 ``examples/make_cosmology_table.py``)
===============================  ===================================================
"""

from importlib import resources
from pathlib import Path

__all__ = ["path", "names"]


def names():
    """Names of the shipped data files.

    Returns
    -------
    list of str
    """
    root = resources.files(__name__)
    return sorted(p.name for p in root.iterdir() if p.is_file() and not p.name.endswith(".py"))


def path(name):
    """Filesystem path of a shipped data file.

    Parameters
    ----------
    name : str
        A file name from :func:`names`, e.g. ``"synthetic_h0_limit.ecsv"``.

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
    """
    target = resources.files(__name__).joinpath(name)
    if not target.is_file():
        raise FileNotFoundError(
            f"no shipped data file {name!r}; shipped: {', '.join(names())}")
    return Path(str(target))
