"""HEALPix sky maps of strain: forecast thresholds written, published upper limits read.

File layout (both directions)
-----------------------------
A HEALPix FITS file as healpy writes it (Gorski et al. 2005, ApJ 622, 759):
the maps are columns of the binary table in HDU 1, full sky (implicit
indexing), one column per GW frequency, values dimensionless strain h0.
The header of HDU 1 must say

* ``ORDERING`` = ``'RING'`` or ``'NESTED'``;
* ``COORDSYS`` = ``'C'`` (equatorial, ICRS/J2000; ``'Q'``, ``'CELESTIAL'`` and
  ``'EQUATORIAL'`` are read the same), ``'E'`` (ecliptic, J2000) or ``'G'``
  (galactic);
* ``FREQ1``, ``FREQ2``, ... the GW frequency of each column in Hz (at least
  two columns, so that a curve can be interpolated between them);
* ``TUNITn`` absent, empty, ``'1'``, ``'strain'`` or ``'dimensionless'`` (h0 has
  no unit; anything else is refused).

Optional keywords: ``CONFLEV`` (confidence of an upper-limit map, default
0.95), ``SPAN`` (observing span in yr).  Maps written by
:func:`write_threshold_maps` carry ``MAPKIND = 'h0_threshold'`` (a forecast at
S/N ``SNR``, never an upper limit) and are refused by :func:`load_limit_map`;
a user's upper-limit map may carry ``MAPKIND = 'h0_limit'``.  Pixels without
a value are NaN or healpy's UNSEEN.

:class:`LimitMap` implements
:class:`~ptaconstrain.sensitivity.positional.PositionalSensitivity`.
"""

import numpy as np
from astropy import units as u

from .._files import check_header, first_line
from .._inputs import check_memory, positive, quantity
from ..errors import InputError
from .positional import HealpixThresholds, check_nside

__all__ = ["LimitMapError", "LimitMap", "load_limit_map", "write_threshold_maps", "FRAMES"]

#: COORDSYS letter -> astropy frame name.
FRAMES = {"C": "icrs", "E": "barycentricmeanecliptic", "G": "galactic"}
_COORD_WORDS = {
    "C": "C",
    "Q": "C",
    "CELESTIAL": "C",
    "EQUATORIAL": "C",
    "E": "E",
    "ECLIPTIC": "E",
    "G": "G",
    "GALACTIC": "G",
}
_STRAIN_UNITS = {"", "1", "STRAIN", "DIMENSIONLESS", "H0"}
_UNSEEN = -1.6375e30  # healpy.UNSEEN


class LimitMapError(InputError):
    """A sky map that cannot be used; the message names the fix.

    Parameters
    ----------
    message : str
        One line naming the problem and the fix.

    Examples
    --------
    >>> from ptaconstrain.sensitivity import LimitMap, LimitMapError
    >>> try:
    ...     LimitMap([1.0, 2.0], [[1.0, 2.0, 3.0]] * 2)   # 3 pixels is no HEALPix map
    ... except LimitMapError as err:
    ...     print(err)
    sky map: 3 pixels is not a full HEALPix map
    """


def write_threshold_maps(
    path, maps, frequencies, snr, span, source, overwrite=False, extra=None, nside=None
):
    """Write h0-threshold maps (one per frequency) as a HEALPix FITS file, atomically.

    The file is the one ``healpy.write_map`` writes (columns of 1024 pixels
    per table row, byte for byte; tests/sensitivity/test_limit_map.py), but
    streamed: the rows of the binary table are pixel runs, so ``maps`` may be
    an iterator of pixel blocks and only one block is held at a time (see
    :meth:`~ptaconstrain.sensitivity.PulsarArray.threshold_map_blocks` with
    ``by="pixel"``).

    Parameters
    ----------
    path : path-like
    maps : array (n_f, 12 nside^2), or iterable of arrays (n_f, n_block)
        RING ordering, equatorial (ICRS) pixels; blocks in pixel order.
    frequencies : Quantity (n_f,) [frequency]; bare numbers are Hz
    snr : float
    span : Quantity [time]; bare numbers are yr
    source : str
        What the maps were computed from (recorded as ``SOURCE``).
    overwrite : bool
    extra : dict, optional
        More header keywords (short names, string or number values).
    nside : int, optional
        Needed when ``maps`` is an iterable of blocks.

    Returns
    -------
    None
        The file is written atomically; an existing file is refused unless ``overwrite``.

    Examples
    --------
    >>> import tempfile
    >>> from pathlib import Path
    >>> import numpy as np
    >>> from astropy import units as u
    >>> maps = np.full((2, 12 * 4**2), 1e-14)          # two frequencies, nside 4
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     out = Path(tmp) / "thresholds.fits"
    ...     write_threshold_maps(out, maps, [5, 20] * u.nHz, snr=5, span=15 * u.yr,
    ...                          source="invented example")
    ...     print(out.stat().st_size % 2880)        # whole FITS blocks
    0
    """
    from .._files import atomic_write
    from .positional import check_nside

    f = np.atleast_1d(quantity(frequencies, u.Hz, "frequency").value)
    span_yr = float(positive(quantity(span, u.yr, "span"), "span").value)
    if isinstance(maps, np.ndarray | list | tuple):
        maps = np.atleast_2d(np.asarray(maps, float))
        blocks, npix = [maps], maps.shape[1]
    else:
        if nside is None:
            raise InputError("nside: give the maps' nside when they come in blocks")
        blocks, npix = maps, 12 * check_nside(nside) ** 2
    header = [
        ("MAPKIND", "h0_threshold", "forecast h0 for S/N >= SNR, not a limit"),
        ("SNR", float(snr), "S/N threshold"),
        ("SPAN", span_yr, "observing span [yr]"),
        ("SOURCE", str(source)[:68], ""),
        ("ORIENT", "mean rho^2 over incl. and polarisation", ""),
    ]
    header += [(f"FREQ{i + 1}", float(fi), "GW frequency of column [Hz]") for i, fi in enumerate(f)]
    header += [(k.upper()[:8], v, "") for k, v in (extra or {}).items()]
    names = [f"H0_{fi * 1e9:.4g}NHZ" for fi in f]
    with atomic_write(path, overwrite) as tmp, open(tmp, "wb") as fh:
        _stream_healpix_table(fh, blocks, names, npix, header)


def _healpix_table_header(names, npix, extra_header):
    """The BinTableHDU header healpy.write_map (fits_IDL=True, RING, 'C') writes."""
    import healpy as hp
    from astropy.io import fits

    per_row = 1024 if npix > 1024 else 1
    fmt = "1024D" if per_row > 1 else "D"
    cols = [fits.Column(name=n, format=fmt, unit="") for n in names]
    hdr = fits.BinTableHDU.from_columns(cols, nrows=0).header
    hdr["NAXIS2"] = npix // per_row
    hdr["PIXTYPE"] = ("HEALPIX", "HEALPIX pixelisation")
    hdr["ORDERING"] = ("RING", "Pixel ordering scheme, either RING or NESTED")
    hdr["COORDSYS"] = ("C", "Ecliptic, Galactic or Celestial (equatorial)")
    hdr["EXTNAME"] = ("xtension", "name of this binary table extension")
    hdr["NSIDE"] = (hp.npix2nside(npix), "Resolution parameter of HEALPIX")
    hdr["FIRSTPIX"] = (0, "First pixel # (0 based)")
    hdr["LASTPIX"] = (npix - 1, "Last pixel # (0 based)")
    hdr["INDXSCHM"] = ("IMPLICIT", "Indexing: IMPLICIT or EXPLICIT")
    hdr["OBJECT"] = ("FULLSKY", "Sky coverage, either FULLSKY or PARTIAL")
    for key, *rest in extra_header:
        hdr[key] = tuple(rest)
    return hdr, per_row


def _stream_healpix_table(fh, blocks, names, npix, extra_header):
    """Write primary HDU, table header, then the rows block by block (FITS 4.0, sect. 7.3)."""
    from astropy.io import fits

    hdr, per_row = _healpix_table_header(names, npix, extra_header)
    fh.write(fits.PrimaryHDU().header.tostring().encode("ascii"))
    fh.write(hdr.tostring().encode("ascii"))
    n_f, done = len(names), 0
    carry = np.empty((n_f, 0))
    for block in blocks:
        block = np.asarray(block, float).reshape(n_f, -1)
        if carry.shape[1]:
            block = np.concatenate([carry, block], axis=1)
        whole = block.shape[1] // per_row * per_row
        carry = block[:, whole:]
        if whole:
            # row r holds pixels [r per_row, (r + 1) per_row) of every column, big-endian
            rows = block[:, :whole].reshape(n_f, -1, per_row).transpose(1, 0, 2)
            fh.write(np.ascontiguousarray(rows, dtype=">f8").data)
            done += whole
    if carry.shape[1] or done != npix:
        raise LimitMapError(
            f"sky map: blocks held {done + carry.shape[1]} pixels, "
            f"the header {npix}: give whole maps of 12 nside^2 pixels"
        )
    size = npix * n_f * 8
    fh.write(b"\0" * (-size % 2880))


class LimitMap:
    """HEALPix maps of h0 upper limits at several frequencies.

    A :class:`~ptaconstrain.sensitivity.positional.PositionalSensitivity`:
    ``curve_at(coord)`` gives the limit at a host's pixel (used by
    :func:`ptaconstrain.analysis.exclusion.exclusion_map`), ``threshold_table``
    the whole grid.

    Parameters
    ----------
    frequency : Quantity (n_f,) [frequency]; bare numbers are Hz
    maps : array (n_f, 12 nside^2)
        RING ordering; NaN, UNSEEN and values <= 0 mean "no value".
    frame : {"C", "E", "G"}
        HEALPix COORDSYS letter: equatorial (ICRS), ecliptic or galactic.
    confidence : float
    span : Quantity [time], optional
        Observing span; bare numbers are yr.
    name : str

    Attributes
    ----------
    frequency : Quantity (n_f,) [Hz], increasing
    maps : ndarray (n_f, npix), RING ordering, NaN where the map has no value
    nside : int
    frame : {"C", "E", "G"}
    confidence : float
    span : Quantity [yr] or None
    name : str

    Examples
    --------
    >>> import numpy as np
    >>> from astropy import units as u
    >>> from astropy.coordinates import SkyCoord
    >>> maps = np.vstack([np.full(12 * 4**2, 2e-14), np.full(12 * 4**2, 1e-14)])  # nside 4
    >>> limits = LimitMap([5, 20] * u.nHz, maps, confidence=0.95, span=15)
    >>> limits.nside
    4
    >>> curve = limits.curve_at(SkyCoord(150, 20, unit="deg"))
    >>> curve.kind, curve.label()
    ('h0_limit', '95% upper limit')
    """

    def __init__(self, frequency, maps, frame="C", confidence=0.95, span=None, name="sky map"):
        import healpy as hp

        try:
            f = np.atleast_1d(quantity(frequency, u.Hz, "sky map frequency"))
            self.span = None if span is None else positive(quantity(span, u.yr, "span"), "span")
        except InputError as err:
            raise LimitMapError(str(err)) from err
        maps = np.atleast_2d(np.asarray(maps, float))
        if maps.shape[0] != f.size:
            raise LimitMapError("sky map: one map per frequency is needed")
        if f.size < 2:
            raise LimitMapError("sky map: needs maps at two or more frequencies to form a curve")
        if not hp.isnpixok(maps.shape[1]):
            raise LimitMapError(f"sky map: {maps.shape[1]} pixels is not a full HEALPix map")
        order = np.argsort(f.value)
        self.frequency = f[order]
        maps = maps[order]
        maps[(maps <= _UNSEEN * 0.9) | ~np.isfinite(maps) | (maps <= 0)] = np.nan
        self.maps = maps
        self.nside = hp.npix2nside(maps.shape[1])
        if frame not in FRAMES:
            raise LimitMapError(f"sky map frame {frame!r}: use C, E or G")
        self.frame = frame
        self.confidence = float(confidence)
        self.name = str(name)

    @property
    def frame_name(self):
        """Astropy name of the grid's frame: "icrs", "barycentricmeanecliptic" or "galactic"."""
        return FRAMES[self.frame]

    def pixel(self, coord):
        """RING pixel index of ``coord`` in the map's frame."""
        import healpy as hp
        from astropy.coordinates import SkyCoord

        if not isinstance(coord, SkyCoord) or not coord.isscalar:
            raise LimitMapError("coord: give one astropy SkyCoord position (or None)")
        c = coord.transform_to(FRAMES[self.frame])
        sph = c.spherical
        return int(hp.ang2pix(self.nside, sph.lon.deg, sph.lat.deg, lonlat=True))

    def values_at(self, coord):
        """h0 limits at ``coord`` (or the mean over the valid pixels for None), per frequency."""
        if coord is None:
            return np.nanmean(self.maps, axis=1)
        return self.maps[:, self.pixel(coord)]

    def curve_at(self, coord):
        """The upper-limit curve (kind ``h0_limit``) at ``coord``; None gives the sky mean.

        Parameters
        ----------
        coord : SkyCoord or None

        Returns
        -------
        StrainCurve

        Raises
        ------
        LimitMapError
            If the map has no value at the position.
        """
        from .curve import StrainCurve

        v = self.values_at(coord)
        if coord is None:
            sky = "averaged"
            note = "mean of the map's pixels (no host position)"
        else:
            icrs = coord.icrs
            sky = f"ra={icrs.ra.deg:.4f}deg dec={icrs.dec.deg:.4f}deg"
            note = (
                f"value of HEALPix pixel {self.pixel(coord)} (nside {self.nside}, "
                f"frame {self.frame})"
            )
        ok = np.isfinite(v)
        if ok.sum() < 2:
            raise LimitMapError(
                f"sky map {self.name} has no value at {sky} "
                "(blank pixel): use a full-sky map or drop the position"
            )
        meta = {
            "sky": sky,
            "sky_note": note,
            "confidence": self.confidence,
            "source": f"HEALPix upper-limit map {self.name}",
        }
        if self.span is not None:
            meta["span"] = f"{self.span.to_value(u.yr):.6g} yr"
        return StrainCurve(self.frequency[ok], v[ok], "h0_limit", meta=meta)

    def threshold_table(self, frequency, snr=5.0, nside=None):
        """The h0 limits of every pixel at ``frequency``, on the map's own grid and frame.

        Parameters
        ----------
        frequency : Quantity (n_f,) [frequency]; bare numbers are Hz
            Each must be one of the map's own frequencies (:attr:`frequency`);
            a limit map is not interpolated between its columns here.
        snr : float
            Ignored (an upper limit has no S/N threshold).
        nside : int, optional
            Ignored: the map answers at its own resolution (:attr:`nside`).

        Returns
        -------
        HealpixThresholds
            ``values`` (12 nside^2, n_f) in RING ordering, NaN where the map
            has no value; ``frame`` the astropy name of the map's frame.

        Raises
        ------
        LimitMapError
            For a frequency that is not a column of the map.
        """
        try:
            f = np.atleast_1d(quantity(frequency, u.Hz, "frequency")).value
        except InputError as err:
            raise LimitMapError(str(err)) from err
        own = self.frequency.value
        col = np.clip(np.searchsorted(own, f), 0, own.size - 1)
        lower = np.clip(col - 1, 0, own.size - 1)
        col = np.where(np.abs(own[lower] - f) < np.abs(own[col] - f), lower, col)
        bad = np.flatnonzero(~np.isclose(own[col], f, rtol=1e-9, atol=0.0))
        if bad.size:
            raise LimitMapError(
                f"frequency: {f[bad[0]]:.6g} Hz is not one of the {own.size} frequencies of "
                f"sky map {self.name} ({own[0]:.4g}-{own[-1]:.4g} Hz): use the map's own "
                "frequencies (its curve_at(None).frequency)"
            )
        return HealpixThresholds(
            self.nside, self.frame_name, np.ascontiguousarray(self.maps[col].T)
        )

    def sky_markers(self):
        """None: a limit map has no positions worth marking."""
        return None

    def __repr__(self):
        return (
            f"LimitMap({self.name!r}, nside={self.nside}, frame={self.frame}, "
            f"{self.frequency.size} frequencies)"
        )


def load_limit_map(path):
    """Read a HEALPix FITS map of h0 upper limits (layout in the module docstring).

    Parameters
    ----------
    path : path-like

    Returns
    -------
    LimitMap

    Raises
    ------
    LimitMapError
        One line naming the missing or wrong keyword and the fix.

    Examples
    --------
    >>> from ptaconstrain.data import path
    >>> limits = load_limit_map(path("synthetic_h0_limit_map.fits"))
    >>> limits.frame, limits.confidence
    ('C', 0.95)
    """
    from pathlib import Path

    import healpy as hp
    from astropy.io import fits

    path = Path(path)
    if not path.is_file():
        raise LimitMapError(f"sky map {path} not found: check the path")
    name = path.name
    check_header(path, "HEALPix map", LimitMapError, "fits")
    try:
        with fits.open(path) as hdul:
            if len(hdul) < 2 or not isinstance(hdul[1], fits.BinTableHDU):
                raise LimitMapError(
                    f"{name}: HDU 1 is not a binary table: write the map with healpy.write_map"
                )
            hdr = hdul[1].header
            ncol = len(hdul[1].columns)
    except OSError as err:
        raise LimitMapError(
            f"{name} is not a readable FITS file: give a HEALPix map written "
            "by healpy.write_map (layout in the README)"
        ) from err

    order = str(hdr.get("ORDERING", "")).strip().upper()
    if order not in ("RING", "NESTED", "NEST"):
        raise LimitMapError(
            f"{name}: header keyword ORDERING is {order or 'missing'}: set it to 'RING' or 'NESTED'"
        )
    if str(hdr.get("INDXSCHM", "IMPLICIT")).strip().upper() != "IMPLICIT":
        raise LimitMapError(
            f"{name}: partial-sky (explicit-index) maps are not supported: "
            "write a full-sky map with UNSEEN pixels"
        )
    csys = str(hdr.get("COORDSYS", "")).strip().upper()
    if csys not in _COORD_WORDS:
        raise LimitMapError(
            f"{name}: header keyword COORDSYS is {csys or 'missing'}: set it "
            "to 'C' (equatorial), 'E' (ecliptic) or 'G' (galactic)"
        )
    kind = str(hdr.get("MAPKIND", "h0_limit")).strip().lower()
    if kind != "h0_limit":
        raise LimitMapError(
            f"{name} holds {kind} (a forecast), not h0 upper limits: for a "
            "forecast pass the pulsar list itself with --array, or give an "
            "upper-limit map"
        )
    freqs = []
    for i in range(1, ncol + 1):
        unit = str(hdr.get(f"TUNIT{i}", "")).strip().upper()
        if unit not in _STRAIN_UNITS:
            raise LimitMapError(
                f"{name}: column {i} has unit {hdr[f'TUNIT{i}']!r}: a map of "
                "h0 is dimensionless strain (TUNIT empty or 'strain')"
            )
        if f"FREQ{i}" not in hdr:
            raise LimitMapError(
                f"{name}: column {i} has no frequency: add the header keyword "
                f"FREQ{i} = <GW frequency in Hz>"
            )
        try:
            freqs.append(float(hdr[f"FREQ{i}"]))
        except (TypeError, ValueError) as err:
            raise LimitMapError(f"{name}: FREQ{i} is not a number in Hz") from err
    freqs = np.array(freqs)
    if not np.all(np.isfinite(freqs) & (freqs > 0)) or np.unique(freqs).size != freqs.size:
        raise LimitMapError(f"{name}: FREQn must be distinct positive frequencies in Hz")
    try:
        conf = float(hdr.get("CONFLEV", 0.95))
    except (TypeError, ValueError) as err:
        raise LimitMapError(f"{name}: CONFLEV is not a number (e.g. 0.95)") from err
    if not 0 < conf < 1:
        raise LimitMapError(f"{name}: CONFLEV = {conf} must be a fraction in (0, 1), e.g. 0.95")
    span = hdr.get("SPAN")
    try:  # before healpy reads (or prints) anything
        nside = check_nside(hdr.get("NSIDE"))
    except InputError as err:
        raise LimitMapError(
            f"{name}: header keyword NSIDE = {hdr.get('NSIDE')!r} is not a "
            "HEALPix resolution (a power of 2 up to 8192)"
        ) from err
    # the maps as read, and healpy's copy of them: two float64 per pixel and column
    check_memory(
        2 * 8.0 * 12 * nside**2 * ncol,
        f"{name} ({ncol} map(s) of nside {nside})",
        "give a map of lower nside",
    )
    try:
        maps = hp.read_map(str(path), field=tuple(range(ncol)), nest=False, dtype=np.float64)
    except (ValueError, TypeError, OSError, KeyError, IndexError) as err:
        raise LimitMapError(
            f"{name}: the map data cannot be read ({first_line(err)}); the "
            "file may be truncated: write it again with healpy.write_map"
        ) from err
    maps = np.atleast_2d(maps)
    try:
        span = None if span is None else positive(quantity(span, u.yr, "SPAN"), "SPAN")
    except InputError as err:
        raise LimitMapError(f"{name}: header keyword {err}; give the span in yr") from err
    return LimitMap(
        freqs * u.Hz, maps, frame=_COORD_WORDS[csys], confidence=conf, span=span, name=name
    )
