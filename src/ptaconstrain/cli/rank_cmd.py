"""``ptaconstrain rank``: order a galaxy catalogue by its worth as continuous-wave targets."""

import click

from . import main
from .params import (
    ARRAY_FILE,
    CATALOGUE_FILE,
    CURVE_FILE,
    LIMIT_MAP_FILE,
    SNR,
    TIME,
    Checked,
    FormatList,
    QuantityType,
    background_option,
    column_options,
    max_memory_option,
)

__all__ = ["rank"]

METRIC_CHOICES = ("expected_number", "h0_ratio", "prob_equal_mass", "min_mass_ratio")


def _stage_line(text):
    """One stderr line per stage of the Dask engine (on a terminal only, like the bar)."""
    import sys

    if sys.stderr.isatty():
        click.echo(f"dask: {text}", err=True)


@main.command()
@click.argument("catalog", type=CATALOGUE_FILE)
@click.option(
    "--curve",
    type=CURVE_FILE,
    default=None,
    help="Sensitivity curve (ECSV, text with --kind, or a shipped name).",
)
@click.option(
    "--kind",
    type=click.Choice(["h0_limit", "strain_psd", "characteristic_strain"]),
    default=None,
    help="What a plain-text --curve holds.",
)
@click.option(
    "--array",
    "array_path",
    type=ARRAY_FILE,
    default=None,
    help="Pulsar list (ECSV, or a shipped name): sky-dependent forecast.",
)
@background_option("With --array only.")
@click.option(
    "--limit-map",
    "limit_map_path",
    type=LIMIT_MAP_FILE,
    default=None,
    help="HEALPix FITS map of h0 upper limits (or a shipped name).",
)
@click.option("--out", type=click.Path(file_okay=False), required=True, help="Output directory.")
@click.option(
    "--metric",
    type=click.Choice(METRIC_CHOICES),
    default="expected_number",
    show_default=True,
    help="What the ranking sorts by.",
)
@click.option(
    "--relation",
    multiple=True,
    help="Mass relation name or TOML file, in order of preference; repeat. "
    "Default: all shipped relations.",
)
@column_options()
@click.option(
    "--top",
    type=click.IntRange(1),
    default=20,
    show_default=True,
    help="Targets to list, mark and write to ranking_top.ecsv.",
)
@click.option(
    "--full-ecsv",
    is_flag=True,
    help="Also write the whole table as ranking.ecsv (slow; for small catalogues).",
)
@click.option(
    "--rate",
    type=QuantityType("1/yr"),
    default="1e-10",
    show_default=True,
    help="Binary merger rate per galaxy; bare numbers are per yr.",
)
@click.option(
    "--q-min",
    type=click.FloatRange(0, 1, min_open=True, max_open=True),
    default=0.01,
    show_default=True,
    help="Smallest mass ratio of the population.",
)
@click.option(
    "--q-index",
    type=Checked("q_index"),
    default=-1.0,
    show_default=True,
    help="Power-law index of p(q) (-1: log-uniform).",
)
@click.option(
    "--snr", type=SNR, default=5.0, show_default=True, help="S/N threshold for noise budgets."
)
@click.option(
    "--span",
    type=TIME,
    default=None,
    help="Observing span for a noise-budget --curve; bare numbers are yr.",
)
@click.option(
    "--sky-averaged", is_flag=True, help="Ignore galaxy positions with --array/--limit-map."
)
@click.option(
    "--nodes",
    type=click.IntRange(1, 64),
    default=16,
    show_default=True,
    help="Quadrature nodes over the mass scatter.",
)
@click.option(
    "--chunk-size",
    type=click.IntRange(1000),
    default=100_000,
    show_default=True,
    help="Rows read and computed at a time.",
)
@click.option(
    "--exclusion-figures",
    type=click.IntRange(0, 50),
    default=0,
    show_default=True,
    help="Also draw the exclusion figure of this many top targets.",
)
@click.option(
    "--format",
    "formats",
    type=FormatList(),
    default="png",
    show_default=True,
    help="Figure formats, e.g. png,pdf.",
)
@click.option(
    "--engine",
    type=click.Choice(["memory", "dask"]),
    default="memory",
    show_default=True,
    help="dask: rank a Parquet or HATS catalogue on a Dask cluster (needs the "
    "'scale' extra); writes ranking.parquet/ instead of ranking.fits.",
)
@click.option(
    "--workers",
    type=click.IntRange(1),
    default=2,
    show_default=True,
    help="Local Dask cluster size (one process and thread each, 2 GB limit).",
)
@click.option(
    "--scheduler",
    default=None,
    help="Address of an existing Dask scheduler, e.g. tcp://10.0.0.5:8786 "
    "(instead of a local cluster).",
)
@click.option("--overwrite", is_flag=True, help="Replace existing output files.")
@max_memory_option
def rank(
    catalog,
    curve,
    kind,
    array_path,
    limit_map_path,
    out,
    metric,
    relation,
    columns_file,
    column_pairs,
    top,
    full_ecsv,
    on_bad,
    rate,
    q_min,
    q_index,
    snr,
    span,
    sky_averaged,
    nodes,
    chunk_size,
    exclusion_figures,
    formats,
    engine,
    workers,
    scheduler,
    overwrite,
    background,
):
    """Rank a galaxy catalogue as continuous-wave targets.  Example:

    \b
      ptaconstrain rank demo_catalogue --curve synthetic_h0_limit --out ranking
      ptaconstrain rank demo_catalogue --array demo_array --background 2.4e-15 --out ranking
      ptaconstrain rank galaxies_hats/ --engine dask --workers 2 \\
          --curve synthetic_h0_limit --out ranking  # your own HATS catalogue

    CATALOG is a table file or a shipped (invented) catalogue named as
    'ptaconstrain data' lists them, like --curve, --array and --limit-map;
    with the 'scale' extra also a Parquet file, a directory of Parquet files
    or a HATS catalogue, which --engine dask ranks on a Dask cluster (the
    manual's page "Very large catalogues" shows how).

    The catalogue needs name, ra, dec and distance (Mpc) or redshift, plus a
    measured mass (solMass) or a predictor for a scaling relation
    (velocity_dispersion, bulge_mass, k_abs_mag, core_radius, stellar_mass).
    Writes ranking.fits (every ranked galaxy: every metric, the inputs used,
    provenance; with --engine dask ranking.parquet/, one file per partition
    in rank order, the rank column ordering them all),
    ranking_top.ecsv (the --top best), ranking_rejected.ecsv,
    with --full-ecsv also ranking.ecsv (the whole table as text), and the
    figures ranking_sky / ranking_cumulative;
    with --exclusion-figures N also <name>_exclusion.* (upper limit) or
    <name>_forecast.* (noise budget) for the N best targets.
    """
    from .._files import check_new
    from .._inputs import check_field
    from ..catalogue import (
        CatalogReader,
        MassRatioDistribution,
        PopulationModel,
        select_relations,
    )
    from ..report.ranking_files import rank_to_files, ranking_output_paths
    from .progress import progress_bar
    from .sources import chosen_source, column_map, open_source

    if span is not None:
        check_field(span, "span", "--span")
    columns = column_map(columns_file, column_pairs)
    option, sens_path = chosen_source(curve, array_path, limit_map_path, kind, background)
    population = PopulationModel(rate, MassRatioDistribution(q_min, q_index))
    if engine == "dask" and full_ecsv:
        raise click.UsageError(
            "--full-ecsv is for --engine memory; the Dask engine writes "
            "the whole ranking as ranking.parquet/"
        )
    if scheduler and engine != "dask":
        raise click.UsageError("--scheduler applies to --engine dask only")
    check_new(ranking_output_paths(out, formats, full_ecsv, engine), overwrite)
    select_relations(list(relation) or None)
    loaded = open_source(option, sens_path, kind, snr, background=background)  # after check_new
    sens, role = loaded.source, loaded.role
    if engine == "dask":
        reader, n_rows = catalog, 0  # the engine checks the columns before any cluster starts
    else:
        reader = CatalogReader(catalog)
        # fail on a missing column or relation before the progress bar starts (one line)
        columns.resolve(reader.colnames)
        n_rows = reader.n_rows
    files = {"catalogue": catalog, role: sens_path}
    if columns_file:
        files["columns"] = columns_file
    files.update({f"relation_{i}": r for i, r in enumerate(relation) if r.endswith(".toml")})
    options = {
        "metric": metric,
        "relations": ",".join(relation) or "all shipped",
        "on_bad": on_bad,
        "rate": str(rate),
        "q_min": q_min,
        "q_index": q_index,
        "snr": snr,
        "span": str(span),
        "sky_averaged": sky_averaged,
        "nodes": nodes,
        "background": "none" if background is None else background.describe(),
    }
    if engine == "dask":
        options.update(engine="dask", workers=workers, scheduler=scheduler)
    with progress_bar(n_rows, "ranking") as bar:
        ranking, written = rank_to_files(
            reader,
            sens,
            out,
            files=files,
            options=options,
            formats=formats,
            top=top,
            exclusion_figures=exclusion_figures,
            overwrite=overwrite,
            progress=bar.update,
            full_ecsv=full_ecsv,
            engine=engine,
            workers=workers,
            scheduler=scheduler,
            stage=_stage_line,
            columns=columns,
            relations=list(relation) or None,
            population=population,
            metric=metric,
            snr=snr,
            span=span,
            on_bad=on_bad,
            chunk_size=chunk_size,
            n_nodes=nodes,
            sky="averaged" if sky_averaged else "auto",
        )
    for line in ranking.summary_lines(top):
        click.echo(line)
    click.echo(f"wrote {len(written)} files in {out}/: " + ", ".join(p.name for p in written))
