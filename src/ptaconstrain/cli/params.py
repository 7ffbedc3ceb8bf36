"""click parameter types for quantities with units and for ranges.

astropy is imported only when a value is converted, never at start-up.
"""

import click

__all__ = [
    "QuantityType",
    "RangeType",
    "FormatList",
    "MassError",
    "DistanceError",
    "LevelList",
    "InputFile",
    "CURVE_FILE",
    "ARRAY_FILE",
    "LIMIT_MAP_FILE",
    "CATALOGUE_FILE",
    "MASS_SAMPLES_FILE",
    "BackgroundType",
    "BACKGROUND_HELP",
    "YearList",
    "MASS",
    "DISTANCE",
    "TIME",
    "FREQUENCY",
    "SPEED",
    "POSITIVE",
    "SNR",
    "Checked",
    "max_memory_option",
    "background_option",
    "column_options",
]


class QuantityType(click.ParamType):
    """A number with optional units, e.g. ``2e10``, ``"2e10 solMass"``, ``"8 nHz"``.

    Read by :func:`ptaconstrain._inputs.quantity`, the package's one unit
    policy, so the command line and the library read the same text the same
    way: bare numbers are in ``default_unit``, the value must be finite and,
    if ``positive``, greater than zero (or >= 0 with ``allow_zero``).
    """

    name = "quantity"

    def __init__(self, default_unit, positive=True, allow_zero=False):
        self.default_unit = default_unit
        self.positive = positive
        self.allow_zero = allow_zero

    def convert(self, value, param, ctx):
        from .. import _inputs
        from ..errors import InputError

        field = param.name if param is not None and param.name else "value"
        try:
            q = _inputs.quantity(value, self.default_unit, field)
            if self.positive:
                _inputs.positive(q, field, allow_zero=self.allow_zero)
        except InputError as err:
            text = str(err)
            # click names the option already: drop the library's field prefix
            self.fail(text[len(field) + 2 :] if text.startswith(f"{field}: ") else text, param, ctx)
        return q


class RangeType(click.ParamType):
    """Two positive numbers ``LOW,HIGH`` (or ``LOW:HIGH``), with optional units."""

    name = "low,high"

    def __init__(self, default_unit=None, upper=None):
        self.default_unit = default_unit
        self.upper = upper

    def convert(self, value, param, ctx):
        if isinstance(value, tuple):
            return value
        text = str(value).replace(":", ",")
        parts = [p.strip() for p in text.split(",")]
        if len(parts) != 2 or not all(parts):
            self.fail(f"{value!r} is not a range: write LOW,HIGH e.g. '1e-3,1'", param, ctx)
        if self.default_unit is None:
            lo, hi = (_float(p, self, param, ctx) for p in parts)
            if not (0 < lo < hi) or (self.upper is not None and hi > self.upper):
                bound = f" and HIGH <= {self.upper:g}" if self.upper is not None else ""
                self.fail(f"{value!r}: need 0 < LOW < HIGH{bound}", param, ctx)
            return lo, hi
        qt = QuantityType(self.default_unit)
        lo, hi = (qt.convert(p, param, ctx) for p in parts)
        if not lo < hi:
            self.fail(f"{value!r}: need LOW < HIGH", param, ctx)
        return lo, hi


def _float(text, ptype, param, ctx):
    import math

    try:
        x = float(text)
    except ValueError:
        ptype.fail(f"{text!r} is not a number", param, ctx)
    if not math.isfinite(x):
        ptype.fail(f"{text!r} is not finite", param, ctx)
    return x


def _fraction(text, ptype, param, ctx):
    """'30%' -> 0.3, refusing negative percentages."""
    frac = _float(text[:-1], ptype, param, ctx) / 100.0
    if frac < 0:
        ptype.fail(f"{text!r} must be >= 0", param, ctx)
    return frac


class FormatList(click.ParamType):
    """Comma-separated figure formats out of ``choices``, e.g. ``png,pdf``.

    With ``allow_none``, ``none`` means no figures (an empty tuple).
    """

    name = "formats"

    def __init__(self, choices=("png", "pdf", "svg"), allow_none=False):
        self.choices = choices
        self.allow_none = allow_none

    def convert(self, value, param, ctx):
        if isinstance(value, tuple):
            return value
        if self.allow_none and str(value).strip().lower() == "none":
            return ()
        items = tuple(dict.fromkeys(v.strip().lower().lstrip(".") for v in str(value).split(",")))
        bad = [v for v in items if v not in self.choices]
        if bad or not items:
            self.fail(
                f"unknown figure format {bad[0] if bad else value!r}: use "
                f"{', '.join(self.choices)}",
                param,
                ctx,
            )
        return items


class MassError(click.ParamType):
    """Mass error: ``0.2`` (dex), ``0.15,0.25`` (lower,upper dex) or ``30%`` (fraction).

    Converts to ``{"mass_err_dex": ...}`` or ``{"mass_err_frac": ...}`` for Host.
    """

    name = "dex|lo,hi|pct%"

    def convert(self, value, param, ctx):
        if isinstance(value, dict):
            return value
        text = str(value).strip()
        if text.endswith("%"):
            return {"mass_err_frac": _fraction(text, self, param, ctx)}
        parts = [_float(p, self, param, ctx) for p in text.split(",")]
        if len(parts) not in (1, 2) or min(parts) < 0:
            self.fail(
                f"{text!r}: give dex >= 0 ('0.2'), lower,upper dex ('0.15,0.25') "
                "or a percentage ('30%')",
                param,
                ctx,
            )
        return {"mass_err_dex": tuple(parts) if len(parts) == 2 else parts[0]}


class DistanceError(click.ParamType):
    """Distance error: ``5`` or ``5 Mpc`` (Gaussian sigma) or ``10%`` (fraction)."""

    name = "sigma|pct%"

    def convert(self, value, param, ctx):
        if isinstance(value, dict):
            return value
        text = str(value).strip()
        if text.endswith("%"):
            return {"distance_err_frac": _fraction(text, self, param, ctx)}
        return {"distance_err": QuantityType("Mpc", allow_zero=True).convert(text, param, ctx)}


class LevelList(click.ParamType):
    """Comma-separated probabilities in (0, 1), e.g. ``0.5,0.9,0.95``."""

    name = "p1,p2,..."

    def convert(self, value, param, ctx):
        if isinstance(value, tuple):
            return value
        levels = tuple(_float(p, self, param, ctx) for p in str(value).split(","))
        if not levels or not all(0 < v < 1 for v in levels):
            self.fail(f"{value!r}: each level must be in (0, 1), e.g. 0.5,0.9,0.95", param, ctx)
        return tuple(sorted(set(levels)))


class InputFile(click.ParamType):
    """An input file: a path, or the short name of a shipped file of an accepted kind.

    Resolved by :func:`ptaconstrain.data.resolve` (the one rule: an existing path
    wins, otherwise a shipped name such as ``synthetic_h0_limit``); converts to the
    file's path as text.  Shell completion offers the shipped names.
    """

    name = "file|shipped-name"

    def __init__(self, *kinds, directories=False):
        self.kinds = kinds
        self.directories = directories  # a partitioned catalogue is a directory

    def convert(self, value, param, ctx):
        from pathlib import Path

        from ..data import resolve
        from ..errors import InputError

        if self.directories and Path(value).is_dir():
            return str(value)
        try:
            return str(resolve(value, self.kinds))
        except InputError as err:
            self.fail(str(err), param, ctx)

    def shell_complete(self, ctx, param, incomplete):
        from click.shell_completion import CompletionItem

        from ..data import shipped

        items = [
            CompletionItem(f.name)
            for f in shipped()
            if f.kind in self.kinds and f.name.startswith(incomplete)
        ]
        return items + [CompletionItem(incomplete, type="file")]


CURVE_FILE = InputFile("curve")
ARRAY_FILE = InputFile("pulsar list")
LIMIT_MAP_FILE = InputFile("limit map")
CATALOGUE_FILE = InputFile("catalogue", "hosts", directories=True)
MASS_SAMPLES_FILE = InputFile("mass samples")


class BackgroundType(click.ParamType):
    """The background as common red noise: ``A`` or ``A,gamma`` (gamma 13/3 if omitted)."""

    name = "A[,gamma]"

    def convert(self, value, param, ctx):
        from ..errors import InputError
        from ..sensitivity.background import Background, parse_background

        if value is None or isinstance(value, Background):
            return value
        try:
            return parse_background(value)
        except InputError as err:
            self.fail(str(err), param, ctx)


class YearList(click.ParamType):
    """Comma-separated non-negative years, e.g. ``5,10,20`` (sorted, duplicates dropped)."""

    name = "y1,y2,..."

    def convert(self, value, param, ctx):
        if isinstance(value, tuple):
            return value
        years = tuple(_float(p, self, param, ctx) for p in str(value).split(","))
        if not years or not all(0 <= y <= 100 for y in years):
            self.fail(
                f"{value!r}: give years added to the schedules, each in [0, 100], e.g. 5,10,20",
                param,
                ctx,
            )
        return tuple(sorted(set(years)))


#: Help text of every ``--background`` option.
BACKGROUND_HELP = (
    "Background as common red noise in every pulsar: A or A,gamma (gamma "
    "13/3 by default), e.g. 2.4e-15; per pulsar, without cross-correlations."
)

MASS = QuantityType("solMass")
DISTANCE = QuantityType("Mpc")
TIME = QuantityType("yr")
FREQUENCY = QuantityType("Hz")
SPEED = QuantityType("km/s")
POSITIVE = click.FloatRange(min=0, min_open=True)


class Checked(click.ParamType):
    """A plain number checked against a documented range of the input policy.

    ``field`` is a key of :data:`ptaconstrain._inputs.RANGES` (e.g. ``"snr"``);
    the check is :func:`ptaconstrain._inputs.check_field`, the same one files
    and tables pass through.
    """

    name = "float"

    def __init__(self, field):
        self.field = field

    def convert(self, value, param, ctx):
        from .._inputs import check_field
        from ..errors import InputError

        try:
            return check_field(value, self.field, label="value")
        except InputError as err:
            self.fail(str(err).removeprefix("value: "), param, ctx)


SNR = Checked("snr")


def _set_max_memory(ctx, param, value):
    if value is None:
        return None
    from .._inputs import parse_bytes, set_memory_limit
    from ..errors import InputError

    try:
        set_memory_limit(parse_bytes(value))
    except InputError as err:
        raise click.BadParameter(
            str(err).removeprefix("max-memory: "), ctx=ctx, param=param
        ) from err
    return value


#: ``--max-memory``: raise (or lower) the memory limit of one command (default 4 GB)
max_memory_option = click.option(
    "--max-memory",
    default=None,
    expose_value=False,
    is_eager=True,
    callback=_set_max_memory,
    help="Memory limit of the computation, e.g. 16GB (default 4 GB, or the environment "
    "variable PTACONSTRAIN_MAX_MEMORY); larger estimates are refused before starting.",
)


def background_option(scope=""):
    """``--background`` (a :class:`BackgroundType`); ``scope`` ends its help text."""
    return click.option(
        "--background",
        type=BackgroundType(),
        default=None,
        help=BACKGROUND_HELP + (f" {scope}" if scope else ""),
    )


def _scoped(scope, text):
    """``scope`` + ``text``, the text's first letter lowered after a scope."""
    if not scope or text[:2].isupper():  # an acronym keeps its capitals
        return f"{scope}{text}"
    return f"{scope}{text[0].lower()}{text[1:]}"


def column_options(scope=""):
    """``--columns``, ``--column`` and ``--on-bad``: how a table's columns map to fields.

    ``scope`` starts each help text, e.g. ``"With --hosts: "``; the values arrive
    as ``columns_file``, ``column_pairs`` and ``on_bad``
    (read by :func:`ptaconstrain.cli.sources.column_map`).
    """
    options = (
        click.option(
            "--columns",
            "columns_file",
            type=click.Path(dir_okay=False),
            default=None,
            help=_scoped(scope, 'TOML column mapping ([columns] FIELD = "name", [units] ...).'),
        ),
        click.option(
            "--column",
            "column_pairs",
            multiple=True,
            help=_scoped(scope, "One mapping FIELD=COLUMN (repeatable; overrides --columns)."),
        ),
        click.option(
            "--on-bad",
            type=click.Choice(["error", "skip"]),
            default="error",
            show_default=True,
            help=_scoped(scope, "Stop at a bad row, or skip bad rows and count them."),
        ),
    )

    def apply(command):
        for option in reversed(options):
            command = option(command)
        return command

    return apply
