"""``ptaconstrain curve`` and ``ptaconstrain threshold-map``: sensitivity from a pulsar list."""

import click

from . import main
from .params import (
    ARRAY_FILE,
    FREQUENCY,
    SNR,
    YearList,
    background_option,
    max_memory_option,
)

__all__ = ["curve", "threshold_map"]

MAP_STEM = "h0_threshold_map"


def _nside(ctx, param, value):
    from ..sensitivity.positional import check_nside

    try:
        return check_nside(value)
    except ValueError as err:
        raise click.BadParameter(str(err).removeprefix("nside: "), ctx=ctx, param=param) from err


def _progress(length, label):
    from .progress import progress_bar

    return progress_bar(length, label)


# options shared by the commands of this module
_array_option = click.option(
    "--array",
    "array_file",
    type=ARRAY_FILE,
    required=True,
    help="Pulsar list: an ECSV file, or a shipped name such as demo_array "
    "('ptaconstrain data' lists them).",
)
_pulsar_term_option = click.option(
    "--pulsar-term", is_flag=True, help="Add the pulsar term incoherently (doubles S/N^2)."
)
_background_option = background_option()


@main.command()
@_array_option
@click.option(
    "--out", type=click.Path(dir_okay=False), required=True, help="Output curve file (.ecsv)."
)
@click.option(
    "--ra", default=None, help="Source RA (deg or e.g. '12h30m49s'); omit for the sky average."
)
@click.option("--dec", default=None, help="Source Dec (deg or e.g. '+12d23m28s').")
@click.option(
    "--snr",
    type=SNR,
    default=5.0,
    show_default=True,
    help="S/N threshold quoted in the summary (stored in the curve's meta).",
)
@_pulsar_term_option
@_background_option
@click.option(
    "--years",
    type=YearList(),
    default=None,
    help="Forecast over time: extend every pulsar's schedule by these years at its "
    "own cadence, one curve per epoch (OUT_plus<Y>yr.ecsv), e.g. 5,10,20.",
)
@click.option(
    "--rms-factor",
    type=click.FloatRange(min=1),
    default=1.0,
    show_default=True,
    help="With --years: divide every TOA rms by this (a better backend).",
)
@click.option("--overwrite", is_flag=True, help="Replace an existing --out file.")
@max_memory_option
def curve(array_file, out, ra, dec, snr, pulsar_term, background, years, rms_factor, overwrite):
    """Noise-budget curve (strain PSD) of a pulsar array, at a position or sky-averaged.

    \b
    Example:
      ptaconstrain curve --array demo_array --ra 284.1 --dec -37.2 --out curve.ecsv
      ptaconstrain curve --array demo_array --background 2.4e-15 --out curve_background.ecsv
      ptaconstrain curve --array demo_array --years 5,10,20 --out curve.ecsv
    """
    from pathlib import Path

    import numpy as np

    from .._files import check_new, output_set
    from .._inputs import coord_from
    from ..report.provenance import provenance, safe_name
    from ..report.skyplot import nhz_text
    from ..sensitivity.curve import save_curve
    from ..sensitivity.pulsar_list import load_array

    if years is None and rms_factor != 1.0:
        raise click.UsageError("--rms-factor applies to --years only")
    out_path = Path(out)
    outs = (
        [out_path]
        if years is None
        else [
            out_path.with_name(f"{out_path.stem}_plus{y:g}yr{out_path.suffix or '.ecsv'}")
            for y in years
        ]
    )
    check_new(outs, overwrite)
    coord = coord_from(ra=ra, dec=dec)
    base = load_array(array_file, pulsar_term=pulsar_term).with_background(background)
    arrays = [base] if years is None else [base.extended(y, rms_factor) for y in years]
    results = []
    for arr in arrays:
        freq = arr.default_frequencies()
        with _progress(len(arr), f"timing-model fits ({arr.name})") as bar:
            arr.weights(freq, callback=bar.update)
        result = arr.curve_at(coord, snr=snr, frequency=freq)
        result.meta["provenance"] = provenance(
            {
                "ra": str(ra),
                "dec": str(dec),
                "snr": f"{snr:g}",
                "pulsar_term": str(pulsar_term),
                "background": result.meta["background"],
                "array_epoch": arr.name,
            },
            files={"array": array_file},
        )
        results.append(result)
    with output_set(out_path.parent, safe_name(out_path.name), overwrite):
        for result, path in zip(results, outs, strict=True):
            save_curve(result, path, overwrite=overwrite)
    for arr, result, path in zip(arrays, results, outs, strict=True):
        h0 = result.h0_threshold(result.frequency, snr=snr)
        i = int(np.argmin(h0))
        click.echo(
            f"wrote {path}: strain-noise PSD [1/Hz] of {len(arr)} pulsars ({arr.name}, span "
            f"{arr.span.to_value('yr'):.3g} yr), sky {result.sky}, "
            f"{nhz_text(result.frequency[0])} - {nhz_text(result.frequency[-1])}; most "
            f"sensitive at {nhz_text(result.frequency[i])}: detectable (forecast) for h0 >= "
            f"{h0[i]:.3g} (dimensionless strain) at S/N >= {snr:g}, orientation-averaged; "
            f"background: {result.meta['background']}"
        )


@main.command()
@_array_option
@click.option(
    "--frequency",
    "frequencies",
    type=FREQUENCY,
    multiple=True,
    required=True,
    help="GW frequency of a map, e.g. '8 nHz' (bare numbers are Hz); repeatable.",
)
@click.option(
    "--nside",
    type=int,
    default=32,
    show_default=True,
    callback=_nside,
    help="HEALPix resolution (a power of 2).",
)
@click.option(
    "--snr", type=SNR, default=5.0, show_default=True, help="S/N threshold of the mapped h0."
)
@click.option(
    "--out",
    type=click.Path(file_okay=False),
    required=True,
    help="Output directory (FITS map + PNG figure per frequency).",
)
@_pulsar_term_option
@_background_option
@click.option("--overwrite", is_flag=True, help="Replace existing output files.")
@max_memory_option
def threshold_map(array_file, frequencies, nside, snr, out, pulsar_term, background, overwrite):
    """HEALPix map of the h0 a binary needs for S/N >= --snr (a forecast).

    \b
    Example:
      ptaconstrain threshold-map --array demo_array --frequency "8 nHz" \\
          --frequency "20 nHz" --nside 32 --out maps
    """
    from pathlib import Path

    import numpy as np
    from astropy import units as u

    from .._files import check_new, output_set
    from .._inputs import check_memory
    from ..sensitivity.pulsar_list import load_array

    freq = np.unique(u.Quantity(list(frequencies)).to_value(u.Hz)) * u.Hz
    out = Path(out)
    fits_path = out / f"{MAP_STEM}.fits"
    stems = [out / f"{MAP_STEM}_{f.to_value(u.nHz):.4g}nHz" for f in freq]
    check_new([fits_path] + [f"{s}.png" for s in stems], overwrite)
    # a whole-sky map per figure, its temporaries and the figure's raster: ~4 float64 a pixel
    check_memory(
        4 * 8.0 * 12 * nside**2,
        f"a sky map of nside {nside} ({12 * nside**2:,} pixels)",
        "lower --nside",
    )
    arr = load_array(array_file, pulsar_term=pulsar_term).with_background(background)
    arr.check_band(freq)  # before the progress bar starts
    with _progress(len(arr), "timing-model fits") as bar:
        arr.weights(freq, callback=bar.update)
    # Two passes in blocks (memory: about two blocks, never all maps): pixel runs for
    # the FITS rows, then whole-sky maps a few frequencies at a time for the figures.
    # the map and all its figures are published together; --overwrite removes every
    # figure of an earlier run (other frequencies included)
    earlier = [p.name for p in out.glob(f"{MAP_STEM}_*nHz.png")] if out.is_dir() else []
    with output_set(out, MAP_STEM, overwrite, earlier=earlier):
        lines = _write_maps(arr, freq, nside, snr, fits_path, stems, overwrite)
    for line in lines:
        click.echo(line)


def _write_maps(arr, freq, nside, snr, fits_path, stems, overwrite):
    from ..report.figures import save_figure
    from ..report.provenance import fits_cards, provenance
    from ..report.skyplot import nhz_text, sky_map_figure, threshold_label
    from ..sensitivity.limit_map import write_threshold_maps

    npix = 12 * nside**2
    with _progress(npix, "FITS file") as bar:

        def rows():
            for pix, block in arr.threshold_map_blocks(freq, nside, snr, by="pixel"):
                yield block
                bar.update(pix.stop - pix.start)

        write_threshold_maps(
            fits_path,
            rows(),
            freq,
            snr,
            arr.span,
            f"pulsar list {arr.name}",
            overwrite=overwrite,
            nside=nside,
            extra={**fits_cards(provenance()), **_background_cards(arr)},
        )
    lines = [
        f"wrote {fits_path} (HEALPix nside {nside}, RING, equatorial; "
        f"{freq.size} map(s) of h0 for S/N >= {snr:g}, forecast)"
    ]
    with _progress(freq.size, "figures") as bar:
        for fs, maps in arr.threshold_map_blocks(freq, nside, snr, by="frequency"):
            for f, m, stem in zip(freq[fs], maps, stems[fs], strict=True):
                fig = sky_map_figure(
                    m,
                    pulsars=arr.sky_markers(),
                    title=f"{arr.name}: h0 detectable at S/N >= {snr:g} (forecast), "
                    f"f = {nhz_text(f)}" + _background_title(arr),
                    label=threshold_label(snr),
                )
                save_figure(fig, stem, ("png",), overwrite)
                lines.append(_map_summary(f, m, snr, nside) + f"; figure {stem}.png")
                bar.update(1)
    return lines


def _background_cards(arr):
    bg = arr.background
    return {} if bg is None else {"BGAMP": bg.amplitude, "BGGAMMA": bg.gamma}


def _background_title(arr):
    bg = arr.background
    return "" if bg is None else f", background A = {bg.amplitude:.3g}"


def _map_summary(f, m, snr, nside):
    import healpy as hp
    import numpy as np

    from ..report.skyplot import nhz_text

    best, worst = int(np.argmin(m)), int(np.argmax(m))
    sky_avg = 1.0 / np.sqrt(np.mean(1.0 / m**2))  # mean rho^2 over the sky
    text = []
    for tag, pix in (("best", best), ("worst", worst)):
        ra, dec = hp.pix2ang(nside, pix, lonlat=True)
        text.append(f"{m[pix]:.3g} ({tag}, ra={ra:.0f}deg dec={dec:.0f}deg)")
    return (
        f"f = {nhz_text(f)}: h0 for S/N >= {snr:g} (dimensionless strain) from {text[0]} "
        f"to {text[1]}; sky-averaged {sky_avg:.3g}"
    )
