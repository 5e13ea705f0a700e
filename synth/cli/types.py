"""Typed option values of the command line: values with units, windows, resistance ranges,
catalogue choices.
"""

from __future__ import annotations

__all__ = [
    "CURRENT", "DECIBELS", "PERCENT", "RESISTANCE", "RESISTANCE_RANGE", "TEMPERATURE",
    "VOLTAGE", "BadInput", "CatalogueChoice", "Count", "Given", "Measured", "Range", "Window",
    "option_name", "ranking_choices", "series_name_choices",
]

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from decimal import Decimal, InvalidOperation
from typing import IO, Any

import click

from synth.errors import DesignError, excerpt
from synth.units import parse_decibels, parse_fraction, parse_quantity, parse_resistance


class BadInput(click.ClickException):
    """Bad input found while parsing options: one line on stderr, exit code 2."""

    exit_code = 2

    def show(self, file: IO[Any] | None = None) -> None:
        message = self.format_message().replace("\r", "\\r").replace("\n", "\\n")
        click.echo(f"rnsynth: {message}", err=True)


@dataclass(frozen=True)
class Given:
    """An option's value as the user wrote it (kept for design files) and its number."""

    text: str
    value: float


@dataclass(frozen=True)
class Range:
    """A resistance range LOW:HIGH as written, and its ends in ohm."""

    text: str
    low: float
    high: float


def option_name(param: click.Parameter | None) -> str:
    if param is None:
        return "value"
    if isinstance(param, click.Option) and param.opts:
        return max(param.opts, key=len)
    return param.human_readable_name


class Measured(click.ParamType[Given]):
    """A value with a unit ("12 V", "20 mA", "4k7", "60 C", "50%", "6 dB")."""

    def __init__(self, name: str, parse: Callable[[str], float]):
        self.name = name
        self._parse = parse

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> Given:
        if isinstance(value, Given):
            return value
        text = str(value).strip()
        try:
            return Given(text, float(self._parse(text)))
        except (DesignError, ArithmeticError) as exc:
            raise BadInput(f"{option_name(param)}: {exc}") from None


def _voltage(text: str) -> float:
    return parse_quantity(text, "V")


def _current(text: str) -> float:
    return parse_quantity(text, "A")


def _temperature(text: str) -> float:
    from synth.units import parse_temperature

    return parse_temperature(text)


VOLTAGE = Measured("voltage", _voltage)
CURRENT = Measured("current", _current)
RESISTANCE = Measured("resistance", parse_resistance)
TEMPERATURE = Measured("temperature", _temperature)
PERCENT = Measured("percent", parse_fraction)
DECIBELS = Measured("dB", parse_decibels)


class Window(click.ParamType[str]):
    """A hard window on the main target: relative ("1%", "50 ppm") or in the target's unit.

    The design reader has the last word on each target; this refuses the
    obvious mistakes while the options are parsed.
    """

    name = "window"

    def __init__(self, unit: str):
        self.unit = unit

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> str:
        text = str(value).strip()
        try:
            if text.endswith(("%", "ppm")):
                parse_fraction(text)
            elif self.unit == "Ω":
                parse_resistance(text)
            elif self.unit == "°C":
                _temperature(text)
            elif self.unit:
                parse_quantity(text, self.unit)
            else:
                _plain_number(text)
        except DesignError as exc:
            raise BadInput(f"{option_name(param)}: {exc}") from None
        return text


def _plain_number(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise DesignError(f"{text!r} is neither a percentage nor a plain number; "
                          'write e.g. "1%" or 0.05') from None


_NUMBER = re.compile(r"[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?")
"""A decimal number in digits, optionally with an exponent (no inf or nan)."""


class Count(click.ParamType[int]):
    """A whole count, written as digits (``1000000``, ``1_000_000``) or in exponent notation
    when that is whole (``1e9``, ``2.5e6``); a count of 30 digits or more is refused here,
    before any range check has to print it."""

    name = "COUNT"

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> int:
        if isinstance(value, int) and not isinstance(value, bool):
            return value
        text = str(value).strip()
        shown = excerpt(text, quoted=True)
        too_large = (f"{option_name(param)}: {shown} is far too large a count; write one "
                     "of fewer than 30 digits")
        if not _NUMBER.fullmatch(text.replace("_", "")):
            number = Decimal("nan")
        else:
            try:
                number = Decimal(text.replace("_", ""))
            except InvalidOperation:  # an exponent beyond decimal's own range
                raise BadInput(too_large) from None
        if number.is_finite() and number.adjusted() >= 29:
            raise BadInput(too_large)
        if not number.is_finite() or number != number.to_integral_value():
            raise BadInput(f"{option_name(param)}: {shown} is not a whole number; write "
                           "e.g. 100000 or 1e6")
        return int(number)


class _ResistanceRange(click.ParamType[Range]):
    """A resistance range LOW:HIGH, read by the quick designs' own range rule."""

    name = "LOW:HIGH"

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> Range:
        if isinstance(value, Range):
            return value
        from synth.templates.passive import QuickSettings, value_range

        text = str(value).strip()
        try:
            low, high = value_range(QuickSettings(value_range=text))
            return Range(text, parse_resistance(low), parse_resistance(high))
        except DesignError as exc:
            raise BadInput(str(exc)) from None


RESISTANCE_RANGE = _ResistanceRange()


class CatalogueChoice(click.Choice[str]):
    """A choice whose names come from the library, read on first use (not at start-up)."""

    def __init__(self, names: Callable[[], Sequence[str]], case_sensitive: bool = True):
        self._names = names
        self._loaded: tuple[str, ...] | None = None
        super().__init__((), case_sensitive=case_sensitive)

    @property
    def choices(self) -> tuple[str, ...]:
        if self._loaded is None:
            self._loaded = tuple(self._names())
        return self._loaded

    @choices.setter
    def choices(self, value: Sequence[str]) -> None:
        """The parent's constructor stores an empty placeholder; the names load lazily."""

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> str:
        if ctx is not None and ctx.resilient_parsing:
            return str(value)  # shell completion: leave the check (and its imports) to a run
        return super().convert(value, param, ctx)


def series_name_choices() -> Sequence[str]:
    from synth.catalog.names import series_names

    return series_names()


def ranking_choices() -> Sequence[str]:
    from synth.search.orders import RANKINGS

    return RANKINGS
