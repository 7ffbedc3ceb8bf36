"""Mollweide figure of a HEALPix strain map, with pulsars and host galaxies marked.

Equatorial coordinates, right ascension increasing to the left (the sky as
seen from inside, the astronomical convention) with 0h at the right edge and
12h in the centre.  The map is drawn on matplotlib's Mollweide axes as one
image: each image pixel is mapped back to the sky with the inverse Mollweide
projection (Snyder 1987, Map Projections: A Working Manual, USGS PP 1395,
p. 252) and given its HEALPix pixel's value (``healpy.ang2pix``), which is
much cheaper to draw than a mesh of sky cells; the colours use a
logarithmic, perceptually uniform and colour-blind-safe colour map
(cividis, Nunez et al. 2018, PLoS ONE 13, e0199239); pulsars are white dots,
hosts orange stars (Okabe & Ito 2008 palette) with their names.

The figure is a plain :class:`matplotlib.figure.Figure` (no pyplot state, no
backend switch); save it with :func:`ptaconstrain.report.figures.save_figure`
or ``fig.savefig``.
"""

import numpy as np

from .style import unicode_log_ticks

__all__ = ["sky_map_figure", "threshold_label", "nhz_text"]

_HOST_COLOUR = "#E69F00"
_RASTER_WIDTH = 1024  # image pixels across the ellipse (~ its width at 150 dpi)


def threshold_label(snr):
    """Colour-bar label of an h0-threshold map (a forecast at S/N >= ``snr``)."""
    return (
        f"h0 for S/N >= {snr:g} (dimensionless strain, orientation-averaged; "
        "lower = more sensitive)"
    )


def nhz_text(frequency):
    """A frequency as text in nHz, e.g. '8.13 nHz' (for titles and summaries)."""
    from astropy import units as u

    return f"{frequency.to_value(u.nHz):.3g} nHz"


def _x(ra_deg):
    """RA [deg] -> Mollweide x [rad] with RA increasing to the left, 12h at the centre."""
    return np.radians(180.0 - np.mod(np.asarray(ra_deg, float), 360.0))


def sky_map_figure(
    values,
    pulsars=None,
    hosts=(),
    title=None,
    label="h0 (dimensionless strain)",
    nest=False,
    cmap="cividis",
):
    """Draw a HEALPix map (equatorial) in Mollweide projection.

    Parameters
    ----------
    values : array (12 nside^2,)
        Pixel values (e.g. the h0 threshold), RING ordering unless ``nest``;
        NaN pixels are left blank.
    pulsars : astropy.coordinates.SkyCoord, optional
        Pulsar positions, marked as dots.
    hosts : sequence of Host (or objects with ``name`` and ``coord``)
        Marked as stars and labelled; hosts without a position are skipped.
    title : str, optional
    label : str
        Colour-bar label, with units.
    nest : bool
    cmap : str

    Returns
    -------
    matplotlib.figure.Figure
    """
    import healpy as hp
    import matplotlib.patheffects as pe
    from matplotlib.cm import ScalarMappable
    from matplotlib.colors import LogNorm
    from matplotlib.figure import Figure
    from matplotlib.image import AxesImage

    values = np.asarray(values, float)
    nside = hp.npix2nside(values.size)
    grid = np.ma.masked_invalid(_mollweide_raster(values, nside, nest))

    fig = Figure(figsize=(9.0, 5.4))
    ax = fig.add_subplot(111, projection="mollweide")
    good = values[np.isfinite(values) & (values > 0)]
    norm = LogNorm(vmin=good.min(), vmax=good.max()) if good.size else None
    # colours looked up once per image pixel (RGBA bytes; blank pixels transparent), so
    # the drawing only resamples; the colour bar is drawn from the same scalar mapping
    mesh = ScalarMappable(norm=norm, cmap=cmap)
    rgba = mesh.to_rgba(grid, bytes=True)
    # axes coordinates span the projection's bounding box; the ellipse clips the image
    image = AxesImage(
        ax,
        interpolation="nearest",
        origin="lower",
        extent=(0.0, 1.0, 0.0, 1.0),
        transform=ax.transAxes,
    )
    image.set_data(rgba)
    ax.add_image(image)
    cb = fig.colorbar(mesh, ax=ax, orientation="horizontal", pad=0.06, shrink=0.75)
    cb.set_label(label)
    if norm is not None:
        unicode_log_ticks(cb.ax.xaxis)  # plain-text powers of ten, no mathtext

    ticks = np.arange(-150, 181, 30)
    ax.set_xticks(np.radians(ticks))
    labels = ax.set_xticklabels([f"{int(np.mod(180 - t, 360) / 15)}h" for t in ticks], fontsize=8)
    for text in labels:  # readable on dark and light pixels alike
        text.set_path_effects([pe.withStroke(linewidth=2.5, foreground="white")])
    ax.tick_params(axis="y", labelsize=8)
    ax.grid(True, color="0.5", lw=0.4, alpha=0.6)

    if pulsars is not None and len(np.atleast_1d(pulsars.icrs.ra)):
        icrs = pulsars.icrs
        ax.plot(
            _x(icrs.ra.deg),
            icrs.dec.rad,
            "o",
            ms=4,
            mfc="white",
            mec="black",
            mew=0.7,
            ls="none",
            label=f"pulsars ({len(np.atleast_1d(icrs.ra))})",
        )
    placed = [h for h in hosts if getattr(h, "coord", None) is not None]
    for i, host in enumerate(placed):
        c = host.coord.icrs
        ax.plot(
            _x(c.ra.deg),
            c.dec.rad,
            "*",
            ms=13,
            mfc=_HOST_COLOUR,
            mec="black",
            mew=0.8,
            ls="none",
            label="host galaxies" if i == 0 else None,
        )
        # the RA labels run along the equator: a host just south of it is labelled below
        south = -15.0 < c.dec.deg < 0.0
        ax.annotate(
            host.name,
            (_x(c.ra.deg), c.dec.rad),
            xytext=(6, -6) if south else (6, 6),
            textcoords="offset points",
            va="top" if south else "baseline",
            fontsize=8,
            bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": "none", "alpha": 0.8},
        )
    if ax.get_legend_handles_labels()[0]:
        # lower right: the declination labels sit on the left edge of the ellipse
        ax.legend(loc="lower right", bbox_to_anchor=(1.0, -0.02), fontsize=8, framealpha=0.9)
    ax.set_title(title or "", fontsize=10, pad=14, y=1.0)  # fixed: no layout pass
    fig.text(
        0.99,
        0.01,
        "equatorial (ICRS); RA increases to the left",
        ha="right",
        fontsize=7,
        color="0.3",
    )
    return fig


def _mollweide_raster(values, nside, nest, width=_RASTER_WIDTH):
    """``values`` sampled on a ``width`` x ``width/2`` image of the Mollweide ellipse.

    Pixel centres of the image span the projection's bounding box, x in
    [-2 sqrt2, 2 sqrt2] and y in [-sqrt2, sqrt2] (unit radius); the inverse
    projection (Snyder 1987, eqs. 31-1 to 31-3 inverted) gives
    theta = arcsin(y / sqrt2), latitude = arcsin((2 theta + sin 2 theta) / pi),
    longitude = pi x / (2 sqrt2 cos theta).  Longitude is 180 deg - RA (RA
    increasing to the left).  Pixels outside the ellipse are NaN.
    """
    import healpy as hp

    height = width // 2
    r2 = np.sqrt(2.0)
    x = ((np.arange(width) + 0.5) / width * 2.0 - 1.0) * 2.0 * r2
    y = ((np.arange(height) + 0.5) / height * 2.0 - 1.0) * r2
    theta = np.arcsin(y / r2)
    lat = np.degrees(np.arcsin((2.0 * theta + np.sin(2.0 * theta)) / np.pi))
    lon = np.pi * x[None, :] / (2.0 * r2 * np.cos(theta)[:, None])
    inside = np.abs(lon) <= np.pi
    ra = np.mod(180.0 - np.degrees(np.where(inside, lon, 0.0)), 360.0)
    pix = hp.ang2pix(nside, ra, np.broadcast_to(lat[:, None], ra.shape), lonlat=True, nest=nest)
    return np.where(inside, values[pix], np.nan)
