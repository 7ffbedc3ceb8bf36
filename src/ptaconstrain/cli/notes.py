"""``Note:`` lines for options a command ignores and for assumed observing spans.

A note is a :class:`~ptaconstrain.errors.PtaconstrainWarning`; the command group
prints each one as one ``Note: ...`` line after a successful command.
"""

import warnings

import click

__all__ = ["explicit_options", "note_ignored_options", "note_assumed_span"]


def explicit_options(ctx=None):
    """Names of the options the user typed (not defaults) of the current command."""
    from click.core import ParameterSource

    ctx = ctx or click.get_current_context(silent=True)
    if ctx is None:
        return frozenset()
    return frozenset(
        name for name in ctx.params if ctx.get_parameter_source(name) == ParameterSource.COMMANDLINE
    )


def _note(text):
    from ..errors import PtaconstrainWarning

    warnings.warn(text, PtaconstrainWarning, stacklevel=3)


def note_ignored_options(explicit, forecast, sampled, option=None):
    """A note for each option given that does not apply to this run.

    Parameters
    ----------
    explicit : set of str
        Option names given on the command line (:func:`explicit_options`).
    forecast : bool
        The run is a forecast (noise budget or pulsar list), not an exclusion.
    sampled : bool
        Some host's errors are sampled (probability maps).
    option : str, optional
        The sensitivity option used (``--curve``, ``--array``, ``--limit-map``).
    """
    if not forecast and "snr" in explicit:
        _note(
            "--snr is ignored: an upper limit is compared with h0 directly; the S/N "
            "threshold applies to noise budgets and pulsar lists"
        )
    if not forecast and "inclination" in explicit:
        _note(
            "--inclination is ignored: an upper limit bounds h0 itself; the inclination "
            "applies to forecasts from noise budgets and pulsar lists"
        )
    if option in ("--array", "--limit-map") and "confidence" in explicit:
        _note(
            f"--confidence is ignored with {option}: it sets the confidence of a "
            "--curve that states none"
        )
    if not sampled:
        for name in ("samples", "seed", "credibility"):
            if name in explicit:
                _note(
                    f"--{name} is ignored: no host has a mass, distance or velocity "
                    "error, so nothing is sampled"
                )


def note_assumed_span(curve, span):
    """A note when an upper limit states no span and none is given (the chirp test uses it).

    Noise budgets announce their own assumed span
    (:meth:`ptaconstrain.sensitivity.curve.StrainCurve.observing_span`).
    """
    if curve.is_limit and curve.span is None and span is None:
        guess = curve.observing_span()
        _note(
            f"span: the curve states no observing span, so {guess.to_value('yr'):.3g} yr "
            "(1 / lowest frequency) is assumed for the chirping test; give --span"
        )
