"""Command-line interface: thin click commands composed into one group.

Only click is imported at start-up (``ptaconstrain --help`` must stay fast);
each command imports the library inside its body.  Errors a user can fix are
printed as one line, ``Error: ...``, with a non-zero exit status and no
traceback (see :class:`OneLineErrors`).
"""

import sys

import click

from .. import __version__

__all__ = ["main"]


class OneLineErrors(click.Group):
    """A click group that reports usage and input errors on a single line."""

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True,
             **extra):
        try:
            rv = super().main(args=args, prog_name=prog_name, complete_var=complete_var,
                              standalone_mode=False, **extra)
        except click.exceptions.Abort:
            click.echo("Aborted.", err=True)
            sys.exit(1)
        except click.UsageError as err:
            hint = ""
            if err.ctx is not None:
                hint = f" (see '{err.ctx.command_path} --help')"
            click.echo(f"Error: {err.format_message()}{hint}", err=True)
            sys.exit(err.exit_code)
        except click.ClickException as err:
            click.echo(f"Error: {err.format_message()}", err=True)
            sys.exit(err.exit_code)
        except (ValueError, OSError) as err:
            click.echo(f"Error: {_one_line(err)}", err=True)
            sys.exit(1)
        if not standalone_mode:
            return rv
        sys.exit(rv if isinstance(rv, int) else 0)


def _one_line(err):
    text = str(err).strip() or type(err).__name__
    if isinstance(err, OSError) and err.filename and err.strerror:
        # e.g. "/proc/x: no such file or directory", "out/: permission denied"
        return f"{err.filename}: {err.strerror.lower()}"
    return " ".join(text.split())


@click.group(cls=OneLineErrors, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="ptaconstrain")
def main():
    """Bound black-hole companions in galaxies with pulsar-timing-array sensitivity.

    \b
    Examples:
      ptaconstrain demo --out demo-output
      ptaconstrain exclude --mass 2e10 --distance 100 \\
          --curve src/ptaconstrain/data/synthetic_h0_limit.ecsv --out results

    Bare numbers are read as solMass (masses) and Mpc (distances).
    """


def _register():
    from . import demo, exclude  # noqa: F401  (commands attach themselves)

    for optional in ("array_cmds", "rank_cmd"):
        try:
            __import__(f"{__name__}.{optional}")
        except ModuleNotFoundError as err:
            if err.name != f"{__name__}.{optional}":
                raise


_register()
