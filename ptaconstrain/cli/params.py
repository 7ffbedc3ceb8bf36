"""click parameter types for quantities with units and for ranges.

astropy is imported only when a value is converted, never at start-up.
"""

import click

__all__ = ["QuantityType", "RangeType", "FormatList", "MASS", "DISTANCE", "TIME",
           "FREQUENCY", "SPEED", "POSITIVE"]


class QuantityType(click.ParamType):
    """A number with optional units, e.g. ``2e10``, ``"2e10 solMass"``, ``"8 nHz"``.

    Bare numbers are read in ``default_unit``; the value must be finite and,
    if ``positive``, greater than zero.
    """

    name = "quantity"

    def __init__(self, default_unit, positive=True, allow_zero=False):
        self.default_unit = default_unit
        self.positive = positive
        self.allow_zero = allow_zero

    def convert(self, value, param, ctx):
        import numpy as np
        from astropy import units as u

        if isinstance(value, u.Quantity):
            return value
        unit = u.Unit(self.default_unit)
        text = str(value).strip()
        try:
            q = u.Quantity(text)
            q = q.value * unit if q.unit == u.dimensionless_unscaled else q.to(unit)
        except (TypeError, ValueError, u.UnitsError):
            self.fail(
                f"cannot read {text!r} as a {unit.physical_type}: give a number "
                f"(read as {unit}) or a number with units, e.g. '1 {unit}'",
                param, ctx,
            )
        if not np.isfinite(q.value):
            self.fail(f"{text!r} is not finite", param, ctx)
        if self.positive and (q.value < 0 or (q.value == 0 and not self.allow_zero)):
            self.fail(f"{text!r} must be {'>= 0' if self.allow_zero else 'positive'}",
                      param, ctx)
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


class FormatList(click.ParamType):
    """Comma-separated figure formats out of ``choices``, e.g. ``png,pdf``."""

    name = "formats"

    def __init__(self, choices=("png", "pdf", "svg")):
        self.choices = choices

    def convert(self, value, param, ctx):
        if isinstance(value, tuple):
            return value
        items = tuple(dict.fromkeys(v.strip().lower().lstrip(".") for v in str(value).split(",")))
        bad = [v for v in items if v not in self.choices]
        if bad or not items:
            self.fail(f"unknown figure format {bad[0] if bad else value!r}: use "
                      f"{', '.join(self.choices)}", param, ctx)
        return items


MASS = QuantityType("solMass")
DISTANCE = QuantityType("Mpc")
TIME = QuantityType("yr")
FREQUENCY = QuantityType("Hz")
SPEED = QuantityType("km/s")
POSITIVE = click.FloatRange(min=0, min_open=True)
