"""h0 thresholds at galaxy positions, from a curve or a positional sensitivity.

A plain :class:`~ptaconstrain.sensitivity.curve.StrainCurve` gives every galaxy
the same thresholds.  A
:class:`~ptaconstrain.sensitivity.positional.PositionalSensitivity` (a pulsar
array, a HEALPix limit map) is asked once for its thresholds on a HEALPix grid
(``threshold_table``), and each galaxy takes the value of the pixel that
contains it, found in the grid's own frame.  For a limit map this is exact (the
map is constant over a pixel); for an array it is the value at the pixel
centre, within the pixelisation error (pixels of nside 64 are 0.92 deg
across, ``healpy.nside2resol``).  With ``sky="averaged"`` the positions are
ignored and ``curve_at(None)`` serves every galaxy.  The band edges are the
frequencies of ``curve_at(None)``.

A catalogue partitioned on the sky by nested HEALPix pixels (HATS) asks
:meth:`ThresholdLookup.partition_thresholds` once per partition: when the
partition's pixel lies inside one pixel of the threshold grid (same frame,
equal or coarser grid), every galaxy of the partition shares that row, the
very row the per-galaxy lookup would find (a nested pixel's parent at a
coarser order is its index shifted right by two bits per order; Gorski et al.
2005, ApJ 622, 759, sect. 4).
"""

import numpy as np
from astropy import units as u

from ..errors import InputError
from ..sensitivity.curve import FromCurve, StrainCurve
from ..sensitivity.positional import HealpixThresholds, PositionalSensitivity

__all__ = ["ThresholdLookup", "DEFAULT_NSIDE"]

#: HEALPix resolution asked of a positional sensitivity when none is given
DEFAULT_NSIDE = 64


class ThresholdLookup(FromCurve):
    """h0 thresholds at galaxy positions, at the sensitivity's tabulated frequencies.

    Parameters
    ----------
    sensitivity : StrainCurve or PositionalSensitivity
    snr : float
        S/N threshold (noise budgets).
    span : Quantity [time], optional
        Observing span of a noise-budget curve; default the curve's.  A
        positional sensitivity carries its own.
    sky : {"auto", "averaged"}
        "averaged" ignores positions (uses ``curve_at(None)``).
    sky_nside : int, optional
        HEALPix resolution asked of a positional sensitivity (default
        :data:`DEFAULT_NSIDE`; a limit map answers on its own grid).

    Attributes
    ----------
    curve : StrainCurve
        The sky-averaged (reference) curve; its frequencies are the band edges.
    frequency : Quantity [Hz] (n_f,)
    span : Quantity [time]
    mode : str
        "curve", "averaged" or "healpix nside=N".

    Raises
    ------
    InputError
        For an object that is neither kind of sensitivity, a bad ``sky`` or
        a span given with a positional sensitivity.

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from ptaconstrain.sensitivity import StrainCurve
    >>> curve = StrainCurve([2, 10, 50] * u.nHz, [3e-14, 1e-14, 4e-14], "h0_limit")
    >>> lookup = ThresholdLookup(curve)
    >>> table, rows = lookup.thresholds(np.array([10.0, 200.0]), np.array([5.0, -40.0]))
    >>> table, rows                         # one curve for the whole sky
    (array([[3.e-14, 1.e-14, 4.e-14]]), None)
    """

    def __init__(self, sensitivity, snr=5.0, span=None, sky="auto", sky_nside=None):
        if sky not in ("auto", "averaged"):
            raise InputError(f"sky: must be 'auto' or 'averaged', got {sky!r}")
        positional = isinstance(sensitivity, PositionalSensitivity)
        if not positional and not isinstance(sensitivity, StrainCurve):
            raise InputError(
                f"sensitivity: a {type(sensitivity).__name__} is neither a StrainCurve nor a "
                "positional sensitivity (pulsar array, limit map); load one of those"
            )
        if positional and span is not None:
            raise InputError(
                "span: a pulsar array or limit map carries its own observing span; drop the span"
            )
        self.source = sensitivity
        self.snr = float(snr)
        self.curve = sensitivity.curve_at(None) if positional else sensitivity
        self.frequency = self.curve.frequency.to(u.Hz)
        self.span = self.curve.observing_span(span)
        self._table = None
        if not positional or sky == "averaged":
            self.mode = "averaged" if positional else "curve"
            self._fixed = np.asarray(
                self.curve.h0_threshold(self.frequency, snr=self.snr, span=span), dtype=float
            )
            return
        table = sensitivity.threshold_table(
            self.frequency, snr=self.snr, nside=sky_nside or DEFAULT_NSIDE
        )
        self._table = _checked(table, self.frequency.size)
        self.mode = f"healpix nside={table.nside}"

    def label(self):
        """e.g. '95% upper limit' or 'forecast, S/N >= 5'."""
        return self.curve.label(self.snr)

    def sky_markers(self):
        """Positions to mark on a sky figure (an array's pulsars), or None."""
        if isinstance(self.source, PositionalSensitivity):
            return self.source.sky_markers()
        return None

    def thresholds(self, ra, dec):
        """h0 thresholds at the band edges for galaxies at (ra, dec).

        Parameters
        ----------
        ra, dec : ndarray (n,)
            ICRS position in degrees.

        Returns
        -------
        (ndarray (G, n_f), ndarray of int (n,) or None)
            A table of thresholds and, per galaxy, its row in it (None: the
            only row).
        """
        if self._table is None:
            return self._fixed[None, :], None
        import healpy as hp

        table = self._table
        ra, dec = np.asarray(ra, dtype=float), np.asarray(dec, dtype=float)
        if table.frame == "icrs":
            lon, lat = ra, dec
        else:
            from astropy.coordinates import SkyCoord

            sph = (
                SkyCoord(ra * u.deg, dec * u.deg, frame="icrs").transform_to(table.frame).spherical
            )
            lon, lat = sph.lon.deg, sph.lat.deg
        pix = hp.ang2pix(table.nside, lon, lat, lonlat=True)
        used, index = np.unique(pix, return_inverse=True)
        return table.values[used], index

    def partition_thresholds(self, order, pixel):
        """Thresholds shared by every galaxy of one nested HEALPix pixel, or None.

        Parameters
        ----------
        order : int
            HEALPix order of the pixel (nside = 2**order), ICRS, NESTED scheme (HATS).
        pixel : int

        Returns
        -------
        ndarray (1, n_f) or None
            None when the threshold grid is finer than the pixel or in another
            frame: then look the galaxies up one by one with :meth:`thresholds`.
        """
        if self._table is None:
            return self._fixed[None, :]
        table = self._table
        level = int(table.nside).bit_length() - 1
        if table.frame != "icrs" or 1 << level != int(table.nside) or level > int(order):
            return None
        import healpy as hp

        parent = int(pixel) >> (2 * (int(order) - level))
        return table.values[[int(hp.nest2ring(int(table.nside), parent))]]

    def __repr__(self):
        return f"ThresholdLookup({self.label()}, {self.mode}, {self.frequency.size} frequencies)"


def _checked(table, n_f):
    """The sensitivity's answer, refused unless it keeps the Protocol's promise."""
    if not isinstance(table, HealpixThresholds):
        raise TypeError(f"threshold_table returned a {type(table).__name__}, not HealpixThresholds")
    shape = (12 * int(table.nside) ** 2, n_f)
    if np.shape(table.values) != shape:
        raise TypeError(
            f"threshold_table values have shape {np.shape(table.values)}, expected {shape}"
        )
    return table
