"""``ptaconstrain rank``: order a galaxy catalogue by its worth as continuous-wave targets."""

import click

from . import main
from .params import POSITIVE, TIME, FormatList, QuantityType

__all__ = ["rank", "run_rank", "demo_part", "output_paths", "top_figure_stems", "top_figures",
           "TABLE_FILE", "REJECTED_FILE"]

TABLE_FILE = "ranking.ecsv"
REJECTED_FILE = "ranking_rejected.ecsv"
DEMO_CATALOGUE = "demo_catalogue.ecsv"
METRIC_CHOICES = ("expected_number", "h0_ratio", "prob_equal_mass", "min_mass_ratio")


def _column_options(pairs):
    out = {}
    for text in pairs:
        field, sep, col = str(text).partition("=")
        if not sep or not field.strip() or not col.strip():
            raise click.BadParameter(f"{text!r}: write FIELD=COLUMN, e.g. distance=dist_mpc",
                                     param_hint="'--column'")
        out[field.strip()] = col.strip()
    return out


def _sensitivity(curve, kind, array_path, limit_map_path):
    """Load the one sensitivity given; returns (object, role, path)."""
    given = [p for p in (curve, array_path, limit_map_path) if p is not None]
    if len(given) != 1:
        raise click.UsageError("give exactly one of --curve, --array or --limit-map")
    if curve is not None:
        from ..sensitivity.curve import load_curve

        return load_curve(curve, kind=kind), "curve", curve
    if kind is not None:
        raise click.UsageError("--kind applies to --curve only")
    if array_path is not None:
        try:
            from ..sensitivity.pulsar_list import load_array
        except ModuleNotFoundError as err:
            raise click.UsageError("--array needs ptaconstrain.sensitivity.pulsar_list, "
                                   "which this installation lacks: use --curve") from err
        return load_array(array_path), "array", array_path
    try:
        from ..sensitivity.limit_map import load_limit_map
    except ModuleNotFoundError as err:
        raise click.UsageError("--limit-map needs ptaconstrain.sensitivity.limit_map, which this "
                               "installation lacks: use --curve") from err
    return load_limit_map(limit_map_path), "limit_map", limit_map_path


def output_paths(out_dir, formats=("png",)):
    """The files ``rank`` always writes into ``out_dir`` (table, rejected rows, figures)."""
    from pathlib import Path

    from ..report.rankplots import FIGURE_STEMS

    out_dir = Path(out_dir)
    paths = [out_dir / TABLE_FILE, out_dir / REJECTED_FILE]
    paths += [out_dir / f"{stem}.{fmt}" for stem in FIGURE_STEMS for fmt in formats]
    return paths


def top_figure_stems(ranking, out_dir, n):
    """Stems of the per-galaxy figures of the ``n`` best targets, named as ``exclude`` names them.

    ``<safe name>_exclusion`` for an upper limit, ``<safe name>_forecast`` for a
    noise budget; two names that become the same file name get ``_rank<N>``.

    Returns
    -------
    list of (table row, pathlib.Path)
    """
    from pathlib import Path

    from ..report.provenance import safe_name

    kind = "exclusion" if ranking.is_limit else "forecast"
    out, seen = [], set()
    for row in ranking.table[: int(n)]:  # at most 50 galaxies, not the catalogue
        stem = safe_name(row["name"])
        if stem in seen:
            stem = f"{stem}_rank{int(row['rank'])}"
        seen.add(stem)
        out.append((row, Path(out_dir) / f"{stem}_{kind}"))
    return out


def top_figures(ranking, sensitivity, stems, formats=("png",), overwrite=False, snr=5.0,
                span=None):
    """Exclusion (or forecast) figures of the best targets, at their median mass.

    Parameters
    ----------
    ranking : Ranking
    sensitivity : StrainCurve or PositionalSensitivity
    stems : list of (row, path)
        From :func:`top_figure_stems`.

    Returns
    -------
    list of pathlib.Path written
    """
    from ..analysis.exclusion import exclusion_map
    from ..binary.host import Host
    from ..report.figures import exclusion_figure, save_figure

    written = []
    for row, stem in stems:
        host = Host(str(row["name"]), row["mass"], row["distance"],
                    redshift=float(row["redshift"]), ra=float(row["ra"].value),
                    dec=float(row["dec"].value))
        result = exclusion_map(host, sensitivity, snr=snr, span=span)
        written += save_figure(exclusion_figure(result), stem, formats, overwrite)
    return written


def run_rank(catalog, sensitivity, out_dir, *, files=None, options=None, formats=("png",),
             top=20, exclusion_figures=0, overwrite=False, progress=None, **kwargs):
    """Library calls behind ``rank``: rank, then write the table, rejected rows and figures.

    Nothing is written unless every output can be (existing files are refused
    before anything is written, unless ``overwrite``).

    Parameters
    ----------
    catalog : path-like, Table or CatalogReader
    sensitivity : StrainCurve or PositionalSensitivity
    out_dir : path-like
    files : dict, optional
        Role -> input path, recorded with checksums in the provenance.
    options : dict, optional
        Settings recorded in the provenance.
    formats : sequence of str
    top : int
    exclusion_figures : int
        Also draw the exclusion (forecast) figure of this many best targets.
    overwrite : bool
    progress : callable, optional
        See :func:`ptaconstrain.catalogue.rank_catalog`.
    **kwargs
        Passed to :func:`ptaconstrain.catalogue.rank_catalog`.

    Returns
    -------
    (Ranking, list of pathlib.Path)
    """
    from .._files import check_new, write_table
    from ..catalogue import rank_catalog
    from ..report.rankplots import ranking_figures

    paths = output_paths(out_dir, formats)
    check_new(paths, overwrite)
    ranking = rank_catalog(catalog, sensitivity, progress=progress, files=files,
                           inputs=options, **kwargs)
    stems = top_figure_stems(ranking, out_dir, exclusion_figures)
    check_new([f"{stem}.{fmt}" for _, stem in stems for fmt in formats], overwrite)
    write_table(ranking.to_table(), paths[0], overwrite)
    rejected = ranking.rejections.table()
    rejected.meta.update({"catalogue": ranking.meta["catalogue"], "on_bad":
                          ranking.meta["on_bad"],
                          "provenance": ranking.table.meta["provenance"]})
    write_table(rejected, paths[1], overwrite)
    written = paths[:2] + ranking_figures(ranking, out_dir, formats, top, overwrite)
    written += top_figures(ranking, sensitivity, stems, formats, overwrite,
                           snr=kwargs.get("snr", 5.0), span=kwargs.get("span"))
    return ranking, written


@main.command()
@click.argument("catalog", type=click.Path(dir_okay=False))
@click.option("--curve", type=click.Path(dir_okay=False), default=None,
              help="Sensitivity curve (ECSV, or text with --kind).")
@click.option("--kind", type=click.Choice(["h0_limit", "strain_psd", "characteristic_strain"]),
              default=None, help="What a plain-text --curve holds.")
@click.option("--array", "array_path", type=click.Path(dir_okay=False), default=None,
              help="Pulsar list (ECSV): sky-dependent forecast.")
@click.option("--limit-map", "limit_map_path", type=click.Path(dir_okay=False), default=None,
              help="HEALPix FITS map of h0 upper limits.")
@click.option("--out", type=click.Path(file_okay=False), required=True,
              help="Output directory.")
@click.option("--metric", type=click.Choice(METRIC_CHOICES), default="expected_number",
              show_default=True, help="What the ranking sorts by.")
@click.option("--relation", multiple=True,
              help="Mass relation name or TOML file, in order of preference; repeat. "
                   "Default: all shipped relations.")
@click.option("--columns", "columns_file", type=click.Path(dir_okay=False), default=None,
              help="TOML column mapping ([columns] FIELD = \"name\", [units] ...).")
@click.option("--column", "column_pairs", multiple=True,
              help="One mapping FIELD=COLUMN (repeatable; overrides --columns).")
@click.option("--top", type=click.IntRange(1), default=20, show_default=True,
              help="Targets to list and mark.")
@click.option("--on-bad", type=click.Choice(["error", "skip"]), default="error",
              show_default=True, help="Stop at a bad row, or skip bad rows and count them.")
@click.option("--rate", type=QuantityType("1/yr"), default="1e-10", show_default=True,
              help="Binary merger rate per galaxy; bare numbers are per yr.")
@click.option("--q-min", type=click.FloatRange(0, 1, min_open=True, max_open=True),
              default=0.01, show_default=True, help="Smallest mass ratio of the population.")
@click.option("--q-index", type=float, default=-1.0, show_default=True,
              help="Power-law index of p(q) (-1: log-uniform).")
@click.option("--snr", type=POSITIVE, default=5.0, show_default=True,
              help="S/N threshold for noise budgets.")
@click.option("--span", type=TIME, default=None,
              help="Observing span for a noise-budget --curve; bare numbers are yr.")
@click.option("--sky-averaged", is_flag=True,
              help="Ignore galaxy positions with --array/--limit-map.")
@click.option("--nodes", type=click.IntRange(1, 64), default=16, show_default=True,
              help="Quadrature nodes over the mass scatter.")
@click.option("--chunk-size", type=click.IntRange(1000), default=100_000, show_default=True,
              help="Rows read and computed at a time.")
@click.option("--exclusion-figures", type=click.IntRange(0, 50), default=0,
              show_default=True, help="Also draw the exclusion figure of this many top targets.")
@click.option("--format", "formats", type=FormatList(), default="png", show_default=True,
              help="Figure formats, e.g. png,pdf.")
@click.option("--overwrite", is_flag=True, help="Replace existing output files.")
def rank(catalog, curve, kind, array_path, limit_map_path, out, metric, relation, columns_file,
         column_pairs, top, on_bad, rate, q_min, q_index, snr, span, sky_averaged, nodes,
         chunk_size, exclusion_figures, formats, overwrite):
    """Rank a galaxy catalogue as continuous-wave targets.  Example:

    \b
      ptaconstrain rank src/ptaconstrain/data/demo_catalogue.ecsv \\
          --curve src/ptaconstrain/data/synthetic_h0_limit.ecsv --out ranking

    The catalogue needs name, ra, dec and distance (Mpc) or redshift, plus a
    measured mass (solMass) or a predictor for a scaling relation
    (velocity_dispersion, bulge_mass, k_abs_mag, core_radius, stellar_mass).
    Writes ranking.ecsv (every metric, the inputs used, provenance),
    ranking_rejected.ecsv and the figures ranking_sky / ranking_cumulative;
    with --exclusion-figures N also <name>_exclusion.* (upper limit) or
    <name>_forecast.* (noise budget) for the N best targets.
    """
    import sys

    from .._files import check_new
    from ..catalogue import (
        CatalogReader,
        ColumnMap,
        MassRatioDistribution,
        PopulationModel,
        load_column_map,
        select_relations,
    )

    columns = load_column_map(columns_file) if columns_file else ColumnMap()
    extra = _column_options(column_pairs)
    if extra:
        columns = ColumnMap({**columns.columns, **extra}, columns.units)
    sens, role, sens_path = _sensitivity(curve, kind, array_path, limit_map_path)
    population = PopulationModel(rate, MassRatioDistribution(q_min, q_index))
    check_new(output_paths(out, formats), overwrite)
    reader = CatalogReader(catalog)
    # fail on a missing column or relation before the progress bar starts (one-line error)
    columns.resolve(reader.colnames)
    select_relations(list(relation) or None)
    files = {"catalogue": catalog, role: sens_path}
    if columns_file:
        files["columns"] = columns_file
    files.update({f"relation_{i}": r for i, r in enumerate(relation) if r.endswith(".toml")})
    options = {"metric": metric, "relations": ",".join(relation) or "all shipped",
               "on_bad": on_bad, "rate": str(rate), "q_min": q_min, "q_index": q_index,
               "snr": snr, "span": str(span), "sky_averaged": sky_averaged, "nodes": nodes}
    # the bar is drawn on a terminal only: in a pipe or log it would add a stray line
    with click.progressbar(length=max(reader.n_rows, 1), label="ranking", file=sys.stderr,
                           hidden=not sys.stderr.isatty()) as bar:
        ranking, written = run_rank(
            reader, sens, out, files=files, options=options, formats=formats, top=top,
            exclusion_figures=exclusion_figures, overwrite=overwrite, progress=bar.update,
            columns=columns,
            relations=list(relation) or None, population=population, metric=metric,
            snr=snr, span=span, on_bad=on_bad, chunk_size=chunk_size, n_nodes=nodes,
            sky="averaged" if sky_averaged else "auto")
    for line in ranking.summary_lines(top):
        click.echo(line)
    click.echo(f"wrote {len(written)} files in {out}/: " + ", ".join(p.name for p in written))


def demo_part(out_dir, curve, overwrite=False):
    """Rank the shipped fictional catalogue against ``curve`` (for ``ptaconstrain demo``).

    Parameters
    ----------
    out_dir : path-like
    curve : StrainCurve
        The shipped synthetic h0 limit.
    overwrite : bool

    Returns
    -------
    list of str
        Summary lines.
    """
    from ..data import path as data_file

    path = data_file(DEMO_CATALOGUE)
    ranking, written = run_rank(
        path, curve, out_dir, files={"catalogue": path},
        options={"demo": "INVENTED galaxies (fictional catalogue), synthetic curve"},
        overwrite=overwrite)
    lines = ["catalogue ranking (INVENTED galaxies): " + ranking.summary_lines(0)[0]]
    lines += ranking.summary_lines(3)[1:]
    lines.append("  wrote " + ", ".join(p.name for p in written))
    return lines
