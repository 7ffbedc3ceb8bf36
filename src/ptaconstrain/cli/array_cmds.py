"""``ptaconstrain curve`` and ``ptaconstrain threshold-map``: sensitivity from a pulsar list.

Also :func:`demo_part`, the pulsar-array part of ``ptaconstrain demo``.
"""

import click

from . import main
from .params import FREQUENCY, POSITIVE

__all__ = ["curve", "threshold_map", "demo_part", "demo_array"]

MAP_STEM = "h0_threshold_map"
_MAP_LABEL = ("h0 for S/N >= {snr:g} (dimensionless strain, orientation-averaged; "
              "lower = more sensitive)")


def _nside(ctx, param, value):
    from ..sensitivity.pulsar_array import check_nside

    try:
        return check_nside(value)
    except ValueError as err:
        raise click.BadParameter(str(err).removeprefix("nside: "), ctx=ctx,
                                 param=param) from err


def _nhz(f):
    from astropy import units as u

    return f"{f.to_value(u.nHz):.3g} nHz"


def _progress(length, label):
    import sys

    return click.progressbar(length=length, label=label, file=sys.stderr)


# options shared by the commands of this module
_array_option = click.option(
    "--array", "array_file", type=click.Path(dir_okay=False), required=True,
    help="Pulsar list (ECSV; columns in the README).")
_pulsar_term_option = click.option(
    "--pulsar-term", is_flag=True, help="Add the pulsar term incoherently (doubles S/N^2).")


@main.command()
@_array_option
@click.option("--out", type=click.Path(dir_okay=False), required=True,
              help="Output curve file (.ecsv).")
@click.option("--ra", default=None, help="Source RA (deg or e.g. '12h30m49s'); omit for "
              "the sky average.")
@click.option("--dec", default=None, help="Source Dec (deg or e.g. '+12d23m28s').")
@click.option("--snr", type=POSITIVE, default=5.0, show_default=True,
              help="S/N threshold quoted in the summary (stored in the curve's meta).")
@_pulsar_term_option
@click.option("--overwrite", is_flag=True, help="Replace an existing --out file.")
def curve(array_file, out, ra, dec, snr, pulsar_term, overwrite):
    """Noise-budget curve (strain PSD) of a pulsar array, at a position or sky-averaged.

    \b
    Example:
      ptaconstrain curve --array src/ptaconstrain/data/demo_array.ecsv --ra 284.1 --dec -37.2 \\
          --out curve.ecsv
    """
    import numpy as np

    from .._files import check_new
    from .._inputs import coord_from
    from ..sensitivity.curve import save_curve
    from ..sensitivity.pulsar_array import load_array

    check_new([out], overwrite)
    coord = coord_from(None, ra, dec)
    arr = load_array(array_file, pulsar_term=pulsar_term)
    freq = arr.default_frequencies()
    with _progress(len(arr), "timing-model fits") as bar:
        arr.weights(freq, callback=bar.update)
    result = arr.curve_at(coord, snr=snr, frequency=freq)
    save_curve(result, out, overwrite=overwrite)
    h0 = result.h0_threshold(result.frequency, snr=snr)
    i = int(np.argmin(h0))
    click.echo(
        f"wrote {out}: strain-noise PSD [1/Hz] of {len(arr)} pulsars ({arr.name}), sky "
        f"{result.sky}, {_nhz(result.frequency[0])} - {_nhz(result.frequency[-1])}; most "
        f"sensitive at {_nhz(result.frequency[i])}: detectable (forecast) for h0 >= "
        f"{h0[i]:.3g} (dimensionless strain) at S/N >= {snr:g}, orientation-averaged")


@main.command()
@_array_option
@click.option("--frequency", "frequencies", type=FREQUENCY, multiple=True, required=True,
              help="GW frequency of a map, e.g. '8 nHz' (bare numbers are Hz); repeatable.")
@click.option("--nside", type=int, default=32, show_default=True, callback=_nside,
              help="HEALPix resolution (a power of 2).")
@click.option("--snr", type=POSITIVE, default=5.0, show_default=True,
              help="S/N threshold of the mapped h0.")
@click.option("--out", type=click.Path(file_okay=False), required=True,
              help="Output directory (FITS map + PNG figure per frequency).")
@_pulsar_term_option
@click.option("--overwrite", is_flag=True, help="Replace existing output files.")
def threshold_map(array_file, frequencies, nside, snr, out, pulsar_term, overwrite):
    """HEALPix map of the h0 a binary needs for S/N >= --snr (a forecast).

    \b
    Example:
      ptaconstrain threshold-map --array src/ptaconstrain/data/demo_array.ecsv \\
          --frequency "8 nHz" \\
          --frequency "20 nHz" --nside 32 --out maps
    """
    from pathlib import Path

    import numpy as np
    from astropy import units as u

    from .._files import check_new
    from ..report.figures import save_figure
    from ..report.skyplot import sky_map_figure
    from ..sensitivity.limit_map import write_threshold_maps
    from ..sensitivity.pulsar_array import load_array

    freq = np.unique(u.Quantity(list(frequencies)).to_value(u.Hz)) * u.Hz
    out = Path(out)
    fits_path = out / f"{MAP_STEM}.fits"
    stems = [out / f"{MAP_STEM}_{f.to_value(u.nHz):.4g}nHz" for f in freq]
    check_new([fits_path] + [f"{s}.png" for s in stems], overwrite)
    arr = load_array(array_file, pulsar_term=pulsar_term)
    arr.check_band(freq)  # before the progress bar starts
    n_chunks = -(-12 * nside**2 // 65536)
    with _progress(len(arr) + n_chunks, "sky map") as bar:
        maps = arr.h0_threshold_map(freq, nside=nside, snr=snr, callback=bar.update)
    write_threshold_maps(fits_path, maps, freq, snr, arr.span,
                         f"pulsar list {arr.name}", overwrite=overwrite)
    lines = [f"wrote {fits_path} (HEALPix nside {nside}, RING, equatorial; "
             f"{freq.size} map(s) of h0 for S/N >= {snr:g}, forecast)"]
    for f, m, stem in zip(freq, maps, stems, strict=True):
        fig = sky_map_figure(
            m, pulsars=arr.coord,
            title=f"{arr.name}: h0 detectable at S/N >= {snr:g} (forecast), "
                  f"f = {_nhz(f)}",
            label=_MAP_LABEL.format(snr=snr))
        save_figure(fig, stem, ("png",), overwrite)
        lines.append(_map_summary(f, m, snr, nside) + f"; figure {stem}.png")
    for line in lines:
        click.echo(line)


def _map_summary(f, m, snr, nside):
    import healpy as hp
    import numpy as np

    best, worst = int(np.argmin(m)), int(np.argmax(m))
    sky_avg = 1.0 / np.sqrt(np.mean(1.0 / m**2))  # mean rho^2 over the sky
    text = []
    for tag, pix in (("best", best), ("worst", worst)):
        ra, dec = hp.pix2ang(nside, pix, lonlat=True)
        text.append(f"{m[pix]:.3g} ({tag}, ra={ra:.0f}deg dec={dec:.0f}deg)")
    return (f"f = {_nhz(f)}: h0 for S/N >= {snr:g} (dimensionless strain) from {text[0]} to "
            f"{text[1]}; sky-averaged {sky_avg:.3g}")


_DEMO = {}


def demo_array():
    """The shipped, invented demo array, loaded once per process (its fits are cached).

    Returns
    -------
    ptaconstrain.sensitivity.pulsar_array.PulsarArray
    """
    if "array" not in _DEMO:
        from ..data import path as data_file
        from ..sensitivity.pulsar_array import load_array

        _DEMO["array"] = load_array(data_file("demo_array.ecsv"))
    return _DEMO["array"]


def demo_part(out_dir, hosts, overwrite=False):
    """Pulsar-array part of ``ptaconstrain demo``: sky map, figure and per-host curves.

    Loads the shipped, invented demo array, maps the h0 threshold (S/N >= 5) at
    its most sensitive sky-averaged frequency, marks ``hosts`` on the figure,
    writes each host's curve (and the sky-averaged one) and returns summary lines.

    Parameters
    ----------
    out_dir : path-like
    hosts : list of ptaconstrain.binary.host.Host
    overwrite : bool

    Returns
    -------
    list of str
    """
    from pathlib import Path

    import numpy as np

    from .._files import check_new
    from ..report.figures import save_figure
    from ..report.provenance import safe_name
    from ..report.skyplot import sky_map_figure
    from ..sensitivity.curve import save_curve
    from ..sensitivity.limit_map import write_threshold_maps

    snr, nside = 5.0, 32
    out = Path(out_dir)
    fits_path = out / "demo_array_h0_map.fits"
    png_stem = out / "demo_array_h0_map"
    curve_paths = {h.name: out / f"demo_array_curve_{safe_name(h.name)}.ecsv" for h in hosts}
    sky_path = out / "demo_array_curve_sky_averaged.ecsv"
    check_new([fits_path, f"{png_stem}.png", sky_path, *curve_paths.values()], overwrite)

    arr = demo_array()
    freq = arr.default_frequencies()
    with _progress(len(arr), "demo pulsar array") as bar:
        arr.weights(freq, callback=bar.update)
    sky = arr.sky_averaged_curve(snr=snr, frequency=freq)
    sky.meta["demo"] = "INVENTED pulsar array (src/ptaconstrain/data/demo_array.ecsv)"
    h_sky = sky.h0_threshold(freq, snr=snr)
    # the frequency where a given binary (h0 ~ f^(2/3)) is easiest to detect
    i = int(np.argmin(h_sky / freq.to_value("Hz") ** (2 / 3)))
    f_best = freq[i : i + 1]
    m = arr.h0_threshold_map(f_best, nside=nside, snr=snr)
    write_threshold_maps(fits_path, m, f_best, snr, arr.span,
                         "pulsar list demo_array (INVENTED)", overwrite=overwrite)
    fig = sky_map_figure(
        m[0], pulsars=arr.coord, hosts=hosts,
        title=f"INVENTED demo array: h0 detectable at S/N >= {snr:g} (forecast), "
              f"f = {_nhz(f_best[0])}",
        label=_MAP_LABEL.format(snr=snr))
    save_figure(fig, png_stem, ("png",), overwrite)
    save_curve(sky, sky_path, overwrite)

    lines = [f"pulsar array: {len(arr)} INVENTED pulsars, span {arr.span.value:.3g} yr; sky "
             f"map {fits_path.name} + {png_stem.name}.png at f = {_nhz(f_best[0])}: sky-"
             f"averaged h0 >= {h_sky[i]:.3g} for S/N >= {snr:g} (forecast)"]
    for host in hosts:
        c = arr.curve_at(host.coord, snr=snr, frequency=freq)
        c.meta["demo"] = "INVENTED pulsar array and host"
        save_curve(c, curve_paths[host.name], overwrite)
        h = float(c.h0_threshold(f_best, snr=snr)[0])
        if host.coord is None:
            where = "no position: sky-averaged"
        else:
            ratio = h / h_sky[i]
            cover = ("a well-covered direction" if ratio < 0.9 else
                     "a poorly covered direction" if ratio > 1.1 else "near the sky average")
            where = f"{ratio:.2f} x the sky average ({cover})"
        lines.append(f"  {host.name}: h0 >= {h:.3g} at {_nhz(f_best[0])} for S/N >= {snr:g}, "
                     f"{where}; curve {curve_paths[host.name].name}")
    return lines
