"""The files of a catalogue ranking: table, rejected rows, sky and cumulative figures.

:func:`rank_to_files` is what ``ptaconstrain rank`` (and the demo) call: it ranks
with :func:`ptaconstrain.catalogue.rank_catalog` and writes every output, refusing
existing files before anything is written unless ``overwrite``.
"""

__all__ = ["rank_to_files", "ranking_output_paths", "top_figure_stems", "top_figures",
           "TABLE_FILE", "REJECTED_FILE"]

TABLE_FILE = "ranking.ecsv"
REJECTED_FILE = "ranking_rejected.ecsv"


def ranking_output_paths(out_dir, formats=("png",)):
    """The files ``rank`` always writes into ``out_dir`` (table, rejected rows, figures)."""
    from pathlib import Path

    from .rankplots import FIGURE_STEMS

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

    from .provenance import safe_name

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
    from .figures import exclusion_figure, save_figure

    written = []
    for row, stem in stems:
        host = Host(str(row["name"]), row["mass"], row["distance"],
                    redshift=float(row["redshift"]), ra=float(row["ra"].value),
                    dec=float(row["dec"].value))
        result = exclusion_map(host, sensitivity, snr=snr, span=span)
        written += save_figure(exclusion_figure(result), stem, formats, overwrite)
    return written


def rank_to_files(catalog, sensitivity, out_dir, *, files=None, options=None, formats=("png",),
             top=20, exclusion_figures=0, overwrite=False, progress=None, **kwargs):
    """Rank a catalogue, then write the table, the rejected rows and the figures.

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
    from .rankplots import ranking_figures

    paths = ranking_output_paths(out_dir, formats)
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
