"""``ptaconstrain exclude``: the companions one host cannot have."""

import click

from . import main, no_cycle_collection
from .notes import explicit_options, note_assumed_span, note_ignored_options
from .params import (
    ARRAY_FILE,
    CATALOGUE_FILE,
    CURVE_FILE,
    DISTANCE,
    LIMIT_MAP_FILE,
    MASS,
    MASS_SAMPLES_FILE,
    SNR,
    SPEED,
    TIME,
    DistanceError,
    FormatList,
    LevelList,
    MassError,
    QuantityType,
    RangeType,
    YearList,
    background_option,
    column_options,
    max_memory_option,
)

__all__ = ["exclude", "run_exclusion"]


def _grid(text):
    import re

    match = re.fullmatch(r"\s*(\d+)\s*(?:[x,]\s*(\d+)\s*)?", str(text).lower())
    sizes = [int(g) for g in match.groups() if g is not None] if match else []
    if len(sizes) == 1:
        sizes *= 2
    if len(sizes) != 2 or min(sizes) < 2 or max(sizes) > 5000:
        raise click.BadParameter(
            f"{text!r}: give N or NQxNP with 2 <= N <= 5000, e.g. 300 or 200x400",
            param_hint="'--grid'",
        )
    return sizes


@main.command()
@click.option(
    "--mass",
    type=MASS,
    default=None,
    help="Total black-hole mass M = m1 + m2; bare numbers are solMass (required unless --hosts).",
)
@click.option(
    "--hosts",
    type=CATALOGUE_FILE,
    default=None,
    help="A table of hosts (any table astropy reads, or a shipped name such as "
    "example_hosts; columns as for 'rank'): "
    "bound every host, write a summary table and an overview figure.",
)
@column_options("With --hosts: ")
@click.option(
    "--distance", type=DISTANCE, default=None, help="Luminosity distance; bare numbers are Mpc."
)
@click.option(
    "--redshift",
    type=click.FloatRange(min=0),
    default=None,
    help="Redshift (instead of, or as well as, --distance; see --cosmology).",
)
@click.option(
    "--cosmology",
    default="Planck18",
    show_default=True,
    help="Cosmology for redshift <-> distance: one of astropy's realizations "
    "(Planck18, Planck15, Planck13, WMAP9, WMAP7, WMAP5, WMAP3, WMAP1).",
)
@click.option(
    "--mass-distance",
    type=DISTANCE,
    default=None,
    help="Distance the mass was measured at; it is rescaled linearly.",
)
@click.option("--name", default="host", show_default=True, help="Host name for labels and files.")
@click.option("--ra", default=None, help="Right ascension, e.g. 187.7 (deg) or '12h30m49s'.")
@click.option("--dec", default=None, help="Declination, e.g. 12.4 (deg) or '+12d23m28s'.")
@click.option(
    "--sigma",
    "velocity_dispersion",
    type=SPEED,
    default=None,
    help="Central velocity dispersion (km/s): draws the hardening radius.",
)
@click.option(
    "--mass-err",
    type=MassError(),
    default=None,
    help="Mass error: dex ('0.2'), lower,upper dex ('0.15,0.25') or '30%'. "
    "Turns on probability maps.",
)
@click.option(
    "--distance-err",
    type=DistanceError(),
    default=None,
    help="Distance error: Gaussian sigma ('5', Mpc) or '10%'.",
)
@click.option(
    "--velocity-err",
    type=SPEED,
    default=None,
    help="Peculiar-velocity error of a redshift distance (km/s).",
)
@click.option(
    "--mass-samples",
    "mass_samples_path",
    type=MASS_SAMPLES_FILE,
    default=None,
    help="Posterior samples of the mass: a table with a 'mass' column (solMass), "
    "optionally 'distance' (Mpc) and 'weight', or a shipped name such as "
    "demo_mass_samples; replaces --mass-err (and --distance-err if it has "
    "distances). Turns on probability maps.",
)
@click.option(
    "--samples",
    type=click.IntRange(min=100),
    default=100_000,
    show_default=True,
    help="Monte-Carlo samples of the host for probability maps.",
)
@click.option(
    "--seed",
    type=click.IntRange(min=0),
    default=None,
    help="Random seed (recorded in the table; drawn afresh if omitted).",
)
@click.option(
    "--credibility",
    type=LevelList(),
    default="0.5,0.9,0.95",
    show_default=True,
    help="Credibility levels of the probabilistic bounds.",
)
@click.option(
    "--curve",
    "curve_path",
    type=CURVE_FILE,
    multiple=True,
    help="Sensitivity curve: ECSV, two-column text with --kind, or a shipped "
    "name (e.g. synthetic_h0_limit; 'ptaconstrain data' lists them). Repeat "
    "for several upper limits: the tightest h0 at each frequency is used.",
)
@click.option(
    "--array",
    "array_path",
    type=ARRAY_FILE,
    default=None,
    help="Pulsar list (ECSV, or a shipped name such as demo_array) instead of "
    "--curve: a forecast at the host's position.",
)
@background_option("With --array only.")
@click.option(
    "--years",
    type=YearList(),
    default=None,
    help="With --array: also the forecast over time, each pulsar's schedule "
    "extended by these years (e.g. 0,5,10,20): OUT/<name>_over_time.ecsv/.png.",
)
@click.option(
    "--rms-factor",
    type=click.FloatRange(min=1),
    default=1.0,
    show_default=True,
    help="With --years: divide every TOA rms by this (a better backend).",
)
@click.option(
    "--target-q",
    type=click.FloatRange(0, 1, min_open=True),
    default=None,
    help="With --years: report the first epoch at which this q becomes detectable.",
)
@click.option(
    "--limit-map",
    "limit_map_path",
    type=LIMIT_MAP_FILE,
    default=None,
    help="HEALPix FITS map of h0 upper limits (or a shipped name such as "
    "synthetic_h0_limit_map) instead of --curve: the limit at the host's pixel.",
)
@click.option(
    "--kind",
    type=click.Choice(["h0_limit", "strain_psd", "characteristic_strain"]),
    default=None,
    help="What a plain-text curve holds.",
)
@click.option(
    "--confidence",
    type=click.FloatRange(0, 1, min_open=True, max_open=True),
    default=None,
    help="Confidence of a --curve upper limit that states none "
    "(plain text); default 0.95, with a note.",
)
@click.option(
    "--snr", type=SNR, default=5.0, show_default=True, help="S/N threshold for noise-budget curves."
)
@click.option(
    "--inclination",
    type=QuantityType("deg", allow_zero=True),
    default=None,
    help="Known inclination of the binary (deg; 0 face-on) for forecasts: replaces "
    "the orientation average by that inclination, averaged over polarisation.",
)
@click.option(
    "--merger-lines",
    is_flag=True,
    help="Draw lines of equal merger time (1 Myr, 100 Myr, Hubble time) on figures.",
)
@click.option(
    "--span",
    type=TIME,
    default=None,
    help="Observing span (default: the curve's; bare numbers are yr).",
)
@click.option(
    "--eccentricity",
    default="0",
    show_default=True,
    help="Orbital eccentricity e in [0, 0.95] of every companion orbit; e > 0 "
    "sums the Peters & Mathews harmonics.",
)
@click.option(
    "--mass-ratio-range",
    type=RangeType(upper=1.0),
    default="1e-4,1",
    show_default=True,
    help="Mass-ratio range LOW,HIGH within (0, 1].",
)
@click.option(
    "--period-range",
    type=RangeType("yr"),
    default=None,
    help="Orbital period range LOW,HIGH (yr); default: the curve's band.",
)
@click.option("--grid", default="300", show_default=True, help="Grid size N (N x N) or NQxNP.")
@click.option(
    "--format",
    "formats",
    type=FormatList(allow_none=True),
    default="png,pdf",
    show_default=True,
    help="Figure formats, comma-separated; 'none': tables only.",
)
@click.option(
    "--style",
    type=click.Choice(["column", "page", "slide"]),
    default="page",
    show_default=True,
    help="Figure size: a journal column (3.5 in), a page "
    "(7.1 in) or a slide (10 in), text sized to match.",
)
@click.option(
    "--table-format",
    "table_formats",
    type=FormatList(("ecsv", "latex")),
    default="ecsv",
    show_default=True,
    help="Summary table formats: ecsv, and latex (AASTeX) for --hosts.",
)
@click.option(
    "--out",
    type=click.Path(file_okay=False),
    required=True,
    help="Output directory (created if needed).",
)
@click.option("--overwrite", is_flag=True, help="Replace existing output files.")
@max_memory_option
def exclude(**opts):
    """Rule out companions of one host black hole.

    Writes OUT/<name>_exclusion.ecsv (one row per period) and the figure
    OUT/<name>_exclusion.png/.pdf, and prints a two-line summary; a noise
    budget or a pulsar list gives a forecast, written as OUT/<name>_forecast.*.  With
    --mass-err, --distance-err, --velocity-err or --mass-samples the host's
    uncertainties are sampled: the figure gains probability contours, the
    table one max_mass_ratio_<credibility> column per level.  --eccentricity
    gives every companion orbit that eccentricity; --years (with --array) adds
    OUT/<name>_over_time.* (the bound against the observing epoch).

    \b
    Example:
      ptaconstrain exclude --mass 2e10 --distance 100 \\
          --curve synthetic_h0_limit --out results
      ptaconstrain exclude --mass 2e10 --distance 100 --ra 284.1 --dec -37.2 \\
          --array demo_array --out results
      ptaconstrain exclude --mass 2e10 --mass-err 0.2 --distance 100 \\
          --distance-err 10% --mass-distance 100 --seed 1 \\
          --curve synthetic_h0_limit --out results
      ptaconstrain exclude --mass 2e10 --distance 100 --eccentricity 0.5 \\
          --curve synthetic_h0_limit --out results
      ptaconstrain exclude --mass 2e10 --distance 100 --mass-samples demo_mass_samples \\
          --seed 1 --curve synthetic_h0_limit --out results
      ptaconstrain exclude --mass 2e10 --distance 100 --ra 284.1 --dec -37.2 \\
          --array demo_array --background 2.4e-15 --years 0,5,10,20 \\
          --target-q 0.01 --out results

    The shipped (invented) curves, pulsar list and limit map are named as
    'ptaconstrain data' lists them; any other value is a file path.
      ptaconstrain exclude --hosts example_hosts --curve synthetic_h0_limit \\
          --out results

    With --hosts TABLE every host of the table is bounded in one run:
    OUT/<name>_exclusion.* per host, OUT/hosts_summary.ecsv (one row per host)
    and OUT/hosts_overview.png/.pdf.
    """
    paths = opts["curve_path"]
    opts["curve_path"] = None if not paths else paths[0] if len(paths) == 1 else tuple(paths)
    if opts["hosts"] is not None:
        from .batch import run_batch

        lines = run_batch({**opts, "grid": _grid(opts["grid"])}, explicit_options())
    else:
        if opts["mass"] is None:
            raise click.UsageError("give --mass (one host) or --hosts TABLE (many hosts)")
        for key, option in (
            ("hosts", "--hosts"),
            ("columns_file", "--columns"),
            ("column_pairs", "--column"),
            ("on_bad", "--on-bad"),
        ):
            if opts.pop(key) not in (None, (), "error"):
                raise click.UsageError(f"{option} applies to --hosts only")
        if "latex" in opts.pop("table_formats"):
            raise click.UsageError(
                "--table-format latex writes the summary table of "
                "--hosts; a single host's table is ECSV"
            )
        with no_cycle_collection():
            lines = run_exclusion(**opts, explicit=explicit_options())
    for line in lines:
        click.echo(line)


def run_exclusion(
    mass,
    distance,
    redshift,
    mass_distance,
    name,
    ra,
    dec,
    velocity_dispersion,
    mass_err,
    distance_err,
    velocity_err,
    samples,
    seed,
    credibility,
    curve_path,
    array_path,
    limit_map_path,
    kind,
    snr,
    span,
    mass_ratio_range,
    period_range,
    grid,
    formats,
    out,
    overwrite,
    eccentricity="0",
    background=None,
    years=None,
    rms_factor=1.0,
    target_q=None,
    mass_samples_path=None,
    confidence=None,
    cosmology="Planck18",
    style="page",
    inclination=None,
    merger_lines=False,
    explicit=frozenset(),
):
    """Library calls behind ``exclude``; returns the summary lines."""
    from pathlib import Path

    import numpy as np
    from astropy import units as u

    from .._files import check_new, output_set, write_table
    from .._inputs import check_eccentricity, check_field, check_memory, check_name
    from ..analysis.exclusion import band_periods, exclusion_map
    from ..binary.host import Host
    from ..binary.waveform import orbital_period
    from ..report.figures import exclusion_figure, save_figure
    from ..report.provenance import provenance, safe_name
    from ..report.tables import credible_summary_lines, exclusion_table, summary_lines
    from .sources import chosen_source, load_curves, open_source, provenance_files

    nq, n_p = _grid(grid)
    from ..cosmo import cosmology_by_name
    from ..report.statements import host_line

    name = check_name(name, "--name")  # before any work: it becomes part of file names
    if period_range is not None:
        check_field(u.Quantity(period_range), "period", "--period-range")
    if span is not None:
        check_field(span, "span", "--span")
    # the grid's arrays (about 8 float64 per cell) before they are made
    check_memory(64.0 * nq * n_p, f"the {nq} x {n_p} grid", "lower --grid")
    ecc = check_eccentricity(eccentricity, "--eccentricity")
    host = Host(
        name,
        mass,
        distance,
        redshift=redshift,
        mass_distance=mass_distance,
        ra=ra,
        dec=dec,
        velocity_dispersion=velocity_dispersion,
        velocity_err=velocity_err,
        cosmology=cosmology_by_name(cosmology),
        **(mass_err or {}),
        **(distance_err or {}),
    )
    option, source_path = chosen_source(curve_path, array_path, limit_map_path, kind, background)
    posterior = _mass_samples(mass_samples_path, mass_err, distance_err, velocity_err)
    if years is None and (rms_factor != 1.0 or target_q is not None):
        raise click.UsageError("--rms-factor and --target-q apply to --years only")
    if years is not None and array_path is None:
        raise click.UsageError(
            "--years: a forecast over time extends a pulsar list's schedules; give --array"
        )
    if array_path is not None and span is not None:
        raise click.UsageError(
            "--span: an --array forecast uses the pulsars' own spans; drop --span"
        )
    curve = (
        load_curves(source_path, kind=kind, confidence=confidence) if option == "--curve" else None
    )
    # an upper limit gives an exclusion, a noise budget (or a pulsar list) a forecast
    forecast = array_path is not None or (curve is not None and not curve.is_limit)
    sampled = bool(
        mass_err or distance_err or velocity_err is not None or mass_samples_path is not None
    )
    note_ignored_options(explicit, forecast, sampled, option)
    stem = Path(out) / f"{safe_name(name)}_{'forecast' if forecast else 'exclusion'}"
    targets = [Path(f"{stem}.ecsv")] + [Path(f"{stem}.{f}") for f in formats]
    time_stem = Path(out) / f"{safe_name(name)}_over_time"
    if years is not None:
        targets += [Path(f"{time_stem}.ecsv"), Path(f"{time_stem}.png")]
    check_new(targets, overwrite)  # before the slow part, so a refusal costs nothing
    sky_note = ""
    if curve is None:
        sens = open_source(option, source_path, kind, snr, confidence, background)
        curve = sens.curve_for(host)
        sky_note = sens.sky_note(host, curve)
    q = np.logspace(np.log10(mass_ratio_range[0]), np.log10(mass_ratio_range[1]), nq)
    if period_range is None:
        from ..analysis.exclusion import default_periods

        period = default_periods(curve, n_p)
    else:
        lo, hi = (p.to_value(u.yr) for p in period_range)
        period = np.logspace(np.log10(lo), np.log10(hi), n_p) * u.yr
    note_assumed_span(curve, span)
    if inclination is not None:
        from ..analysis.readouts import curve_at_inclination

        curve = curve_at_inclination(curve, inclination)
    prob = None
    if sampled:
        from ..analysis.probability import exclusion_probability

        prob = exclusion_probability(
            host,
            curve,
            q,
            period,
            samples=samples,
            seed=seed,
            credibility=credibility,
            snr=snr,
            span=span,
            eccentricity=ecc,
            mass_samples=posterior,
            orientation=False if inclination is not None else None,
        )
        result = prob.deterministic
    else:
        result = exclusion_map(
            host, curve, mass_ratio=q, period=period, snr=snr, span=span, eccentricity=ecc
        )

    if not np.isfinite(result.max_mass_ratio).any():
        from ..sensitivity.curve import frequency_unit_hint

        hint = frequency_unit_hint(curve.frequency)
        if hint:  # the likelier mistake: a text curve written in nHz or mHz
            raise click.UsageError(f"no period of the grid is constrained: {hint}")
        band = band_periods(curve).value
        p_isco = orbital_period(result.isco_frequency).value
        raise click.UsageError(
            f"no period of the grid ({period[0].to_value(u.yr):.3g}-"
            f"{period[-1].to_value(u.yr):.3g} yr) is constrained: the curve covers P = "
            f"{band[0]:.3g}-{band[1]:.3g} yr and binaries above ISCO (P < "
            f"{p_isco:.3g} yr) do not exist; "
            "change --period-range"
        )
    inputs = host.describe()
    inputs.update(
        snr=f"{snr:g}",
        span=str(result.span),
        grid=f"{nq}x{n_p}",
        eccentricity=f"{ecc:g}",
        mass_ratio_range="{:g},{:g}".format(*mass_ratio_range),
        period_range=f"{period[0]:.4g},{period[-1]:.4g}",
    )
    inputs["sensitivity_sky"] = sky_note
    if posterior is not None:
        inputs.update(posterior.describe())
    if array_path is not None:
        inputs["background"] = curve.meta["background"]
    files = provenance_files(option, source_path)
    if posterior is not None:
        files["mass_samples"] = mass_samples_path
    meta = provenance(inputs, files=files)
    table = exclusion_table(result, meta, prob_map=prob)
    fig = None
    if formats:
        from ..report.paper_style import apply_style

        fig = apply_style(
            exclusion_figure(result, prob_map=prob, merger_times=True if merger_lines else None),
            style,
        )
    # the table and figures are published together or not at all; with --overwrite
    # every file of the host's earlier set goes (e.g. a PDF this run does not make)
    # (the forecast over time of --years belongs to the same set)
    every_format = [f"{stem.name}.{ext}" for ext in ("ecsv", *FormatList().choices)]
    time_lines = []
    with output_set(out, stem.name, overwrite, earlier=every_format):
        write_table(table, targets[0], overwrite)
        written = [targets[0]]
        if fig is not None:
            written += save_figure(fig, stem, formats, overwrite)
        if years is not None:
            time_lines = _over_time(
                host,
                array_path,
                background,
                years,
                rms_factor,
                target_q,
                q,
                period,
                snr,
                ecc,
                time_stem,
                meta,
                overwrite,
                written,
            )
    lines = summary_lines(result) + [host_line(host, distance is None)]
    if sky_note:
        lines.append(f"{host.name}: sensitivity {sky_note}")
    if prob is not None:
        lines += credible_summary_lines(prob)
    lines += time_lines
    lines.append("wrote " + ", ".join(str(p) for p in written))
    return lines


def _mass_samples(path, mass_err, distance_err, velocity_err):
    """The posterior-sample table of ``--mass-samples`` (or None), with its conflicts refused."""
    if path is None:
        return None
    from ..binary.mass_samples import load_mass_samples

    if mass_err:
        raise click.UsageError("--mass-samples replaces --mass-err: give one of them")
    posterior = load_mass_samples(path)
    if posterior.distance is not None and (distance_err or velocity_err is not None):
        raise click.UsageError(
            f"--mass-samples: {path} has a distance per sample, which "
            "replaces --distance-err/--velocity-err: drop those"
        )
    return posterior


def _over_time(
    host,
    array_path,
    background,
    years,
    rms_factor,
    target_q,
    q,
    period,
    snr,
    ecc,
    stem,
    meta,
    overwrite,
    written,
):
    """The forecast over time for ``exclude --years``: writes table and figure, returns lines."""
    from astropy import units as u

    from .._files import write_table
    from ..analysis.epochs import forecast_over_time
    from ..report.figures import save_figure
    from ..sensitivity.pulsar_list import load_array
    from .progress import progress_bar

    arr = load_array(array_path).with_background(background)
    with progress_bar(len(arr) * len(years), "timing-model fits over the epochs") as bar:
        result = forecast_over_time(
            host,
            arr,
            list(years) * u.yr,
            rms_factor,
            mass_ratio=q,
            period=period,
            snr=snr,
            eccentricity=ecc,
            callback=bar.update,
        )
    table = result.to_table(meta=meta, target_q=target_q)
    write_table(table, stem.with_suffix(".ecsv"), overwrite)
    written += [stem.with_suffix(".ecsv")]
    written += save_figure(result.plot(target_q=target_q), stem, ("png",), overwrite)
    lines = []
    for y, s, qq in zip(
        result.years.to_value(u.yr),
        result.span.to_value(u.yr),
        result.tightest_mass_ratio,
        strict=True,
    ):
        bound = "nothing detectable" if not qq == qq else f"q > {qq:.3g} would be detectable"
        lines.append(f"{host.name}: +{y:g} yr (span {s:.3g} yr): {bound} (forecast)")
    if target_q is not None:
        first = result.first_epoch(target_q)
        lines.append(
            f"{host.name}: q = {target_q:g} "
            + (
                "is not reached within these epochs"
                if first is None
                else f"becomes detectable after +{first.to_value(u.yr):g} yr"
            )
        )
    return lines
