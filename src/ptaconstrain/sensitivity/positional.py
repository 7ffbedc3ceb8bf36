"""The positional-sensitivity contract: a sensitivity that depends on sky position.

Two kinds of object answer "how sensitive is the array towards this galaxy?":
a :class:`~ptaconstrain.sensitivity.PulsarArray` (a noise budget: antenna
patterns times post-fit weights) and a :class:`~ptaconstrain.sensitivity.LimitMap`
(published upper limits per HEALPix pixel).  Everything that needs a sky-dependent
sensitivity (exclusion at a host's position, catalogue ranking, sky figures)
talks to them only through :class:`PositionalSensitivity`, never by probing
attributes.
"""

from dataclasses import dataclass
from typing import Protocol, runtime_checkable

import numpy as np

from ..errors import InputError

__all__ = ["PositionalSensitivity", "HealpixThresholds", "check_nside"]


@dataclass(frozen=True)
class HealpixThresholds:
    """h0 thresholds on a full-sky HEALPix grid (RING ordering).

    Attributes
    ----------
    nside : int
        HEALPix resolution.
    frame : str
        astropy frame name of the pixel grid ("icrs", "galactic",
        "barycentricmeanecliptic").
    values : ndarray (12 nside^2, n_f)
        Dimensionless h0 threshold per pixel and frequency; NaN where the
        sensitivity says nothing (an unobserved pixel of a limit map).

    Examples
    --------
    >>> import numpy as np
    >>> HealpixThresholds(4, "icrs", np.full((12 * 4**2, 3), 1e-14))
    HealpixThresholds(nside=4, frame='icrs', values: 192 pixels x 3 frequencies)
    """

    nside: int
    frame: str
    values: np.ndarray

    def __repr__(self):
        return (
            f"HealpixThresholds(nside={self.nside}, frame={self.frame!r}, "
            f"values: {self.values.shape[0]} pixels x {self.values.shape[1]} frequencies)"
        )


@runtime_checkable
class PositionalSensitivity(Protocol):
    """Anything whose CW sensitivity depends on the source's sky position.

    Implemented by :class:`~ptaconstrain.sensitivity.PulsarArray` and
    :class:`~ptaconstrain.sensitivity.LimitMap`.

    Examples
    --------
    >>> from ptaconstrain import load_array
    >>> from ptaconstrain.data import path
    >>> isinstance(load_array(path("demo_array.ecsv")), PositionalSensitivity)
    True
    """

    def curve_at(self, coord):
        """The sensitivity curve towards ``coord``.

        Parameters
        ----------
        coord : astropy.coordinates.SkyCoord or None
            None: the sky average (for an array, the orientation- and
            sky-averaged forecast; for a limit map, the mean over observed
            pixels).

        Returns
        -------
        StrainCurve
        """

    def threshold_table(self, frequency, snr=5.0, nside=None):
        """h0 thresholds for every pixel of a HEALPix grid at ``frequency``.

        Parameters
        ----------
        frequency : Quantity (n_f,) [frequency]
            GW frequencies, within the sensitivity's band.
        snr : float
            S/N threshold (ignored by an upper-limit map).
        nside : int, optional
            Requested resolution; a limit map always answers on its own grid.

        Returns
        -------
        HealpixThresholds
        """

    def sky_markers(self):
        """Positions worth marking on a sky figure (an array's pulsars), or None.

        Returns
        -------
        astropy.coordinates.SkyCoord or None
        """


def check_nside(nside):
    """``nside`` as an int if it is a HEALPix resolution (a power of 2, 1..8192).

    Parameters
    ----------
    nside : int

    Returns
    -------
    int

    Raises
    ------
    InputError
        Naming the value and the fix.

    Examples
    --------
    >>> check_nside(64)
    64
    """
    try:
        n = int(nside)
    except (TypeError, ValueError):
        n = -1
    if n != nside or n < 1 or n > 8192 or n & (n - 1):
        raise InputError(f"nside: {nside!r} is not a power of 2: use 8, 16, 32, 64, ...")
    return n
