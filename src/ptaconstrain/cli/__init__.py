"""Command-line interface: thin click commands composed into one group.

Only click is imported at start-up (``ptaconstrain --help`` must stay fast);
each command imports the library inside its body.  How problems reach the user
(:class:`OneLineErrors`):

- an input the user can fix (:class:`~ptaconstrain.errors.PtaconstrainError`),
  an operating-system error (``<path>: <reason>``) or a click error prints one
  line ``Error: ...``; the exit status is 1 (2 for click usage errors);
- any other exception is a bug: one line ``internal error: ...`` and exit
  status 70 (``EX_SOFTWARE``); ``--debug`` lets the traceback through;
- a soft assumption (:class:`~ptaconstrain.errors.PtaconstrainWarning`) made
  during a successful command prints one ``Note: ...`` line on stderr.
"""

import sys
import warnings
from contextlib import contextmanager

import click

from .._version import __version__

__all__ = ["main", "OneLineErrors", "EXIT_INTERNAL", "no_cycle_collection"]

#: exit status of an internal error (a bug), EX_SOFTWARE of sysexits.h
EXIT_INTERNAL = 70
# click >= 8.2 raises this usage error for a group called without arguments
_NO_ARGS_IS_HELP = getattr(click.exceptions, "NoArgsIsHelpError", ())


class OneLineErrors(click.Group):
    """A click group that reports errors on one line and soft assumptions as notes."""

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        from ..errors import PtaconstrainError, PtaconstrainWarning

        argv = sys.argv[1:] if args is None else list(args)
        debug = "--debug" in argv[: _first_command(argv)]
        line, status = None, 0
        with warnings.catch_warnings(record=True) as caught:
            # every warning is collected (none may end a command): ours and astropy's
            # become notes, numpy's RuntimeWarnings one note in all (_show_warnings)
            warnings.simplefilter("always")
            try:
                rv = super().main(
                    args=args,
                    prog_name=prog_name,
                    complete_var=complete_var,
                    standalone_mode=False,
                    **extra,
                )
            except click.exceptions.Abort:
                line, status = "Aborted.", 1
            except _NO_ARGS_IS_HELP as err:  # bare `ptaconstrain`: the help, as click shows it
                line, status = err.format_message(), err.exit_code
            except click.UsageError as err:
                hint = ""
                if err.ctx is not None:
                    hint = f" (see '{err.ctx.command_path} --help')"
                line = f"Error: {_squeeze(err.format_message())}{hint}"
                status = err.exit_code
            except click.ClickException as err:
                line, status = f"Error: {_squeeze(err.format_message())}", err.exit_code
            except (PtaconstrainError, OSError) as err:
                if debug:
                    raise
                line, status = f"Error: {_one_line(err)}", 1
            except Exception as err:  # anything else is a bug, and says so
                if debug:
                    raise
                line = (
                    f"internal error: {type(err).__name__}: {_one_line(err)} — please "
                    "report it; rerun with --debug for the traceback"
                )
                status = EXIT_INTERNAL
        # notes only after a success: a failed command's one line stays one line
        _show_warnings(caught, PtaconstrainWarning, notes=line is None)
        if args is None:
            _process_ends()
        if line is not None:
            click.echo(line, err=True)
            sys.exit(status)
        if not standalone_mode:
            return rv
        sys.exit(rv if isinstance(rv, int) else 0)


@contextmanager
def no_cycle_collection():
    """Python's cyclic garbage collector paused while one bounded command runs.

    A command such as ``demo`` or ``exclude`` for one host imports astropy,
    matplotlib and scipy, whose long-lived objects every full collection walks
    again: 0.15-0.4 s of the demo's CPU and about 0.1 s of an ``exclude`` (measured
    with benchmarks/bench_commands.py).  Reference counting still frees almost
    everything at once; the few cycles the command leaves (figures) wait for the
    collector, which is switched back on afterwards (in a command-line run the
    process ends there; the demo's peak memory grows by about 10%).  Commands
    over many items (``exclude --hosts``, ``rank``) keep the collector.

    Before it is switched on, every object made meanwhile is moved to the oldest
    generation (``gc.freeze`` then ``gc.unfreeze``, both constant-time): else
    they all wait in the youngest one, and the first allocation afterwards walks
    them all at once (0.1-0.2 s at the end of the demo, measured with cProfile).
    """
    import gc

    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.freeze()
            gc.unfreeze()
            gc.enable()


def _process_ends():
    """Spare the ending process its final walk over every object.

    Called when the command came from the process's own command line (not from a
    test or a notebook passing ``args``): the interpreter is about to exit, and
    its last garbage collections would walk every object the imports made
    (0.17 s of CPU for numpy, astropy.table and matplotlib.figure alone,
    measured in benchmarks/bench_commands.py's floor).  Frozen objects are left
    out; files, atexit handlers and finalisers of live objects run as before.
    """
    import gc

    gc.freeze()


def _first_command(argv):
    """Index of the first non-option argument (the command), or len(argv)."""
    for i, arg in enumerate(argv):
        if not arg.startswith("-"):
            return i
    return len(argv)


#: Warnings a library addresses to the code that calls it (deprecations): no note
_FOR_MAINTAINERS = (DeprecationWarning, PendingDeprecationWarning, FutureWarning)


def _show_warnings(caught, ours, notes=True):
    """``Note:`` lines for our warnings (deduplicated) and library warnings; no tracebacks.

    numpy's RuntimeWarnings (overflow, invalid value) at extreme inputs become
    one note in all; astropy's warnings one note each (first line); any other
    library's warnings one note per category, at most three; a library's
    deprecation notices none (they concern this package's code, which the test
    suite runs with warnings as errors).  After a failure nothing is shown: the
    error's one line stays one line.
    """
    seen = set()
    numeric = 0
    for w in caught:
        if not notes:
            continue
        if issubclass(w.category, ours) or w.category.__module__.startswith("astropy"):
            text = _squeeze(
                str(w.message).strip().splitlines()[0]
                if str(w.message).strip()
                else w.category.__name__
            )
        elif issubclass(w.category, RuntimeWarning):
            numeric += 1
            continue
        elif issubclass(w.category, _FOR_MAINTAINERS):
            continue  # a library's notice to its callers' code, not about the results
        else:  # another library's warning: one note per kind, at most three in all
            kind = (w.category.__module__.split(".")[0], w.category.__name__)
            if kind in seen or len([k for k in seen if isinstance(k, tuple)]) >= 3:
                continue
            seen.add(kind)
            text = _squeeze((str(w.message).strip().splitlines() or [kind[1]])[0])
        if text not in seen:
            seen.add(text)
            click.echo(f"Note: {text}", err=True)
    if numeric:
        click.echo(
            "Note: the computation met numerical overflow or invalid values (at "
            "extreme inputs); check the results",
            err=True,
        )


def _squeeze(text):
    return " ".join(str(text).split())


def _one_line(err):
    """An exception as one line of text; OS errors as ``<path>: <reason>``."""
    if isinstance(err, OSError) and err.filename and err.strerror:
        # e.g. "/proc/x: no such file or directory", "out/: permission denied"
        return f"{err.filename}: {err.strerror.lower()}"
    return _squeeze(str(err).strip() or type(err).__name__)


@click.group(cls=OneLineErrors, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="ptaconstrain")
@click.option(
    "--debug", is_flag=True, help="Show the full traceback of an error instead of one line."
)
def main(debug):
    """Bound black-hole companions in galaxies with pulsar-timing-array sensitivity.

    \b
    Examples:
      ptaconstrain demo --out demo-output
      ptaconstrain exclude --mass 2e10 --distance 100 \\
          --curve synthetic_h0_limit --out results
      ptaconstrain data

    Files named by a shipped name (see 'ptaconstrain data') work from any
    directory; everything shipped is invented except the scaling relations
    and the cosmology table.

    Bare numbers are read as solMass (masses) and Mpc (distances).
    """


def _register():
    from . import (  # noqa: F401  (commands attach themselves)
        array_cmds,
        data_cmd,
        demo,
        exclude,
        overlay_cmd,
        rank_cmd,
    )


_register()
