"""``ptaconstrain demo``: the whole tool on the shipped, invented example data."""

import click

from . import main, no_cycle_collection
from .params import max_memory_option

__all__ = ["demo"]


@main.command()
@click.option(
    "--out",
    type=click.Path(file_okay=False),
    default="ptaconstrain-demo",
    show_default=True,
    help="Output directory; must be empty or new.",
)
@click.option("--overwrite", is_flag=True, help="Write into a non-empty --out, replacing files.")
@max_memory_option
def demo(out, overwrite):
    """Run the tool on the shipped example data (all of it invented).

    Five fictional galaxies against a synthetic 95% upper limit (exclusion)
    and a synthetic future noise budget (forecast).  Needs no network.

    \b
    Example:
      ptaconstrain demo --out demo-output
    """
    from ..demo import run_demo

    bars = _ProgressBars()
    try:
        with no_cycle_collection():
            lines = run_demo(out, overwrite=overwrite, progress=bars)
    finally:
        bars.close()
    for line in lines:
        click.echo(line)


class _ProgressBars:
    """``progress(label, done, total)`` drawn as click progress bars on stderr."""

    def __init__(self):
        self.label = None
        self.bar = None

    def __call__(self, label, done, total):
        from .progress import progress_bar

        if label != self.label:
            self.close()
            self.label = label
            self.bar = progress_bar(total, label)
            self.bar.__enter__()
        self.bar.update(done - self.bar.pos)

    def close(self):
        if self.bar is not None:
            self.bar.__exit__(None, None, None)
        self.bar, self.label = None, None
