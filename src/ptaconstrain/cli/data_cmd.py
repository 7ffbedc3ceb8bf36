"""``ptaconstrain data``: the files shipped with the package, by name."""

import click

from . import main

__all__ = ["data"]


@main.command()
@click.argument("name", required=False)
def data(name):
    """List the shipped data files, or print the path of one.

    Every option that takes a curve, pulsar list, limit map or catalogue
    also takes one of these names, so the examples work from any directory.
    All of them are invented (fictional galaxies, a fictional pulsar array,
    synthetic curves), except the published scaling relations and the
    cosmology table.

    \b
    Examples:
      ptaconstrain data
      ptaconstrain data synthetic_h0_limit      # its path, e.g. to copy it
      ptaconstrain exclude --mass 2e10 --distance 100 \\
          --curve synthetic_h0_limit --out results
    """
    from ..data import KINDS, path, shipped

    if name is not None:
        try:
            click.echo(str(path(name)))
        except FileNotFoundError as err:
            raise click.BadParameter(
                f"{name!r} is not shipped; 'ptaconstrain data' lists the names", param_hint="'NAME'"
            ) from err
        return
    files = shipped()
    width = max(len(f.name) for f in files)
    kind_width = max(len(KINDS[f.kind]) for f in files)
    click.echo(
        "Shipped data (give the name wherever a file is asked for, e.g. "
        "--curve synthetic_h0_limit):"
    )
    for f in files:
        click.echo(f"  {f.name:<{width}}  {KINDS[f.kind]:<{kind_width}}  {f.description}")
