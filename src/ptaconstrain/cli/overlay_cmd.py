"""``ptaconstrain overlay``: several sensitivity curves in one figure."""

import click

from . import main
from .params import CURVE_FILE, POSITIVE, TIME, FormatList

__all__ = ["overlay"]


@main.command()
@click.argument("curves", nargs=-1, required=True, type=CURVE_FILE)
@click.option(
    "--kind",
    type=click.Choice(["h0_limit", "strain_psd", "characteristic_strain"]),
    default=None,
    help="What plain-text curves hold (ECSV files say it themselves).",
)
@click.option(
    "--confidence",
    type=click.FloatRange(0, 1, min_open=True, max_open=True),
    default=None,
    help="Confidence of plain-text limits (default 0.95, noted).",
)
@click.option(
    "--snr",
    type=POSITIVE,
    default=5.0,
    show_default=True,
    help="S/N threshold at which noise budgets are drawn.",
)
@click.option(
    "--span",
    type=TIME,
    default=None,
    help="Span for noise budgets that state none; bare numbers are yr.",
)
@click.option(
    "--style",
    type=click.Choice(["column", "page", "slide"]),
    default="page",
    show_default=True,
    help="Figure width: journal column, page or slide.",
)
@click.option(
    "--format",
    "formats",
    type=FormatList(),
    default="png",
    show_default=True,
    help="Figure formats, comma-separated.",
)
@click.option(
    "--out",
    type=click.Path(dir_okay=False),
    required=True,
    help="Output figure path without suffix, e.g. curves (writes curves.png).",
)
@click.option("--overwrite", is_flag=True, help="Replace existing files.")
def overlay(curves, kind, confidence, snr, span, style, formats, out, overwrite):
    """Draw any number of sensitivity curves in one figure: limits solid, forecasts dashed.

    \b
    Example:
      ptaconstrain overlay src/ptaconstrain/data/synthetic_h0_limit.ecsv \\
          src/ptaconstrain/data/synthetic_future_psd.ecsv --out curves
    """
    from pathlib import Path

    from .._files import check_new, output_set
    from ..report.curves_plot import curves_figure
    from ..report.figures import save_figure
    from ..report.paper_style import apply_style
    from ..report.provenance import safe_name
    from .sources import is_ecsv, load_curves

    stem = Path(out)
    if stem.suffix.lower().lstrip(".") in ("png", "pdf", "svg"):
        stem = stem.with_suffix("")
    check_new([stem.with_name(f"{stem.name}.{f}") for f in formats], overwrite)
    loaded = [
        load_curves(p, kind=kind, confidence=confidence)
        if not is_ecsv(p)
        else load_curves(p, confidence=confidence)
        for p in curves
    ]
    fig = apply_style(
        curves_figure(loaded, [Path(p).name for p in curves], snr=snr, span=span), style
    )
    with output_set(stem.parent if str(stem.parent) else ".", safe_name(stem.name), overwrite):
        written = save_figure(fig, stem, formats, overwrite)
    n_lim = sum(c.is_limit for c in loaded)
    click.echo(
        f"{len(loaded)} curves ({n_lim} upper limits, {len(loaded) - n_lim} noise "
        f"budgets at S/N >= {snr:g}); wrote " + ", ".join(str(p) for p in written)
    )
