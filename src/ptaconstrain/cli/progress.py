"""The one progress bar of the command line: on stderr, and only on a terminal.

In a pipe or a log a bar would leave a stray line per task, so it is hidden there.
"""

import sys

import click

__all__ = ["progress_bar"]


def progress_bar(length, label):
    """A click progress bar on stderr, hidden when stderr is not a terminal.

    Parameters
    ----------
    length : int
        Number of steps.
    label : str

    Returns
    -------
    click progress bar (a context manager with ``update(n)``)
    """
    return click.progressbar(
        length=max(int(length), 1), label=label, file=sys.stderr, hidden=not sys.stderr.isatty()
    )
