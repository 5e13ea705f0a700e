"""The ``rnsynth`` command line: parses options, calls the library, prints.

Exit codes: 0 success, 1 the run worked but the design fails (a target missed,
a part over its allowance, no standard values meet the limits), 2 bad input.

Start-up stays quick: the library modules (numpy, scipy, ortools, matplotlib
behind them) are imported inside the commands that use them, so ``--version``,
``--help`` and shell completion load only click.
"""

from __future__ import annotations

__all__ = ["cli", "main"]

import functools
import json
import sys
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, fields, replace
from pathlib import Path
from typing import IO, TYPE_CHECKING, Any, TypeVar, cast

import click

from synth.errors import DesignError, InfeasibleError, RnsynthError
from synth.units import parse_decibels, parse_fraction, parse_quantity, parse_resistance

if TYPE_CHECKING:
    from synth.design.model import Design
    from synth.results import Candidate, SynthesisResult
    from synth.spread.records import SpreadSettings
    from synth.templates.passive import QuickSettings

F = TypeVar("F", bound=Callable[..., Any])


# -- errors ------------------------------------------------------------------------------


class _BadInput(click.ClickException):
    """Bad input found while parsing options: one line on stderr, exit code 2."""

    exit_code = 2

    def show(self, file: IO[Any] | None = None) -> None:
        click.echo(f"rnsynth: {self.format_message()}", err=True)


def _friendly(command: F) -> F:
    """Turn rnsynth errors into one line on stderr and the documented exit code."""

    @functools.wraps(command)
    def run(*args: Any, **kwargs: Any) -> Any:
        try:
            return command(*args, **kwargs)
        except InfeasibleError as exc:
            click.echo(f"rnsynth: {exc}", err=True)
            sys.exit(1)
        except (DesignError, RnsynthError) as exc:
            click.echo(f"rnsynth: {exc}", err=True)
            sys.exit(2)
        except KeyboardInterrupt:
            # outputs are written atomically: an interrupted run leaves no partial file
            click.echo("rnsynth: interrupted; nothing was written", err=True)
            sys.exit(130)
        except (ArithmeticError, RuntimeError, ValueError, MemoryError) as exc:
            # a numerical or solver failure (a singular network, CP-SAT refusing a model)
            # is reported, never shown as a traceback
            name = type(exc).__name__
            click.echo(f"rnsynth: the calculation could not be completed ({name}: {exc}); "
                       "check the design's values and limits", err=True)
            sys.exit(2)

    return cast(F, run)


# -- option types ------------------------------------------------------------------------


@dataclass(frozen=True)
class _Given:
    """An option's value as the user wrote it (kept for design files) and its number."""

    text: str
    value: float


@dataclass(frozen=True)
class _Range:
    """A resistance range LOW:HIGH as written, and its ends in ohm."""

    text: str
    low: float
    high: float


def _option_name(param: click.Parameter | None) -> str:
    if param is None:
        return "value"
    if isinstance(param, click.Option) and param.opts:
        return max(param.opts, key=len)
    return param.human_readable_name


class _Measured(click.ParamType[_Given]):
    """A value with a unit ("12 V", "20 mA", "4k7", "60 C", "50%", "6 dB")."""

    def __init__(self, name: str, parse: Callable[[str], float]):
        self.name = name
        self._parse = parse

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> _Given:
        if isinstance(value, _Given):
            return value
        text = str(value).strip()
        try:
            return _Given(text, float(self._parse(text)))
        except DesignError as exc:
            raise _BadInput(f"{_option_name(param)}: {exc}") from None


def _voltage(text: str) -> float:
    return parse_quantity(text, "V")


def _current(text: str) -> float:
    return parse_quantity(text, "A")


def _temperature(text: str) -> float:
    from synth.units import parse_temperature

    return parse_temperature(text)


VOLTAGE = _Measured("voltage", _voltage)
CURRENT = _Measured("current", _current)
RESISTANCE = _Measured("resistance", parse_resistance)
TEMPERATURE = _Measured("temperature", _temperature)
PERCENT = _Measured("percent", parse_fraction)
DECIBELS = _Measured("dB", parse_decibels)


class _Window(click.ParamType[str]):
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
            elif self.unit:
                parse_quantity(text, self.unit)
            else:
                _plain_number(text)
        except DesignError as exc:
            raise _BadInput(f"{_option_name(param)}: {exc}") from None
        return text


def _plain_number(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise DesignError(f"{text!r} is neither a percentage nor a plain number; "
                          'write e.g. "1%" or 0.05') from None


class _ResistanceRange(click.ParamType[_Range]):
    """A resistance range LOW:HIGH, read by the quick designs' own range rule."""

    name = "LOW:HIGH"

    def convert(self, value: Any, param: click.Parameter | None,
                ctx: click.Context | None) -> _Range:
        if isinstance(value, _Range):
            return value
        from synth.templates.passive import QuickSettings, value_range

        text = str(value).strip()
        try:
            low, high = value_range(QuickSettings(value_range=text))
            return _Range(text, parse_resistance(low), parse_resistance(high))
        except DesignError as exc:
            raise _BadInput(str(exc)) from None


RESISTANCE_RANGE = _ResistanceRange()


class _CatalogueChoice(click.Choice[str]):
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


def _series_names() -> Sequence[str]:
    from synth.catalog.series import series_names

    return series_names()


def _rankings() -> Sequence[str]:
    from synth.synthesis import RANKINGS

    return RANKINGS


# -- shared option groups ----------------------------------------------------------------


def _option_group(record: type, options: Sequence[Callable[[F], F]]) -> Callable[[F], F]:
    """Add ``options`` to a command and hand their values to it as one ``record``.

    The command receives a keyword argument named after the record's class
    (``_Spread`` -> ``spread``) instead of one argument per option.
    """
    keyword = record.__name__.strip("_").lower()
    names = [f.name for f in fields(record)]

    def decorate(command: F) -> F:
        @functools.wraps(command)
        def run(*args: Any, **kwargs: Any) -> Any:
            values = {name: kwargs.pop(name) for name in names}
            return command(*args, **{keyword: record(**values)}, **kwargs)

        for option in reversed(options):
            run = option(run)
        return cast(F, run)

    return decorate


@dataclass(frozen=True)
class _Spread:
    samples: int
    distribution: str
    seed: int
    plots: str | None

    def settings(self) -> SpreadSettings:
        from synth.spread.records import SpreadSettings

        if self.samples < 0:
            raise DesignError(f"--samples {self.samples} must be 0 (no Monte Carlo) or more")
        return SpreadSettings(samples=self.samples, distribution=self.distribution,
                              seed=self.seed)


_spread_options = _option_group(_Spread, [
    click.option("--samples", default=100_000, show_default=True,
                 help="Monte Carlo samples for the spread (0: none)."),
    click.option("--distribution", type=click.Choice(["uniform", "normal"]),
                 default="uniform", show_default=True,
                 help="Shape of each tolerance; normal reads tolerance as 3 sigma."),
    click.option("--seed", default=1, show_default=True, help="Monte Carlo seed."),
    click.option("--plots", type=click.Path(file_okay=False), default=None,
                 metavar="FOLDER", help="Write PNG and SVG plots into this folder."),
])

_PLOT_AXES = ("supply", "hottest", "distinct")


def _deprecated_cost(ctx: click.Context, param: click.Parameter, value: str | None
                     ) -> str | None:
    if value is not None and not ctx.resilient_parsing:
        click.echo("rnsynth: --cost is deprecated and goes in the next version; "
                   "use --plot-x", err=True)
    return value


@dataclass(frozen=True)
class _Search:
    top: int
    rank_by: str
    plot_x: str
    cost: str | None
    time_limit: float | None
    as_json: bool
    quiet: bool
    require: str | None
    min_yield: _Given | None

    @property
    def plot_axis(self) -> str:
        """The candidate plot's x axis: ``--plot-x``, or the deprecated ``--cost``."""
        return self.cost if self.cost is not None else self.plot_x


_search_group = _option_group(_Search, [
    click.option("--top", default=10, show_default=True, help="Candidates to show."),
    click.option("--rank-by", type=_CatalogueChoice(_rankings), default="nominal",
                 show_default=True,
                 help="nominal error, worst-case error over the tolerance box, or "
                      "Monte Carlo yield."),
    click.option("--plot-x", type=click.Choice(_PLOT_AXES), default="supply",
                 show_default=True, help="Horizontal axis of the candidate plot."),
    click.option("--cost", type=click.Choice(_PLOT_AXES), default=None, hidden=True,
                 callback=_deprecated_cost, help="Deprecated name of --plot-x."),
    click.option("--time-limit", type=float, default=None, metavar="SECONDS",
                 help="Stop searching after this long and show the best so far, "
                      "marked unproven."),
    click.option("--json", "as_json", is_flag=True, help="Print the results as JSON."),
    click.option("--quiet", is_flag=True, help="No progress bar."),
    click.option("--require", type=click.Choice(["nominal", "worst-case", "yield"]),
                 default=None,
                 help="Basis every window and limit must hold on [default: the design's "
                      "require, else nominal]."),
    click.option("--min-yield", type=PERCENT, default=None,
                 help='Least Monte Carlo yield with --require yield, e.g. "99%".'),
])


def _search_options(command: F) -> F:
    # applied inside out: help lists the spread options, then the search options
    return _spread_options(_search_group(command))


@dataclass(frozen=True)
class _Quick:
    series: str
    value_range: _Range | None
    within: str | None
    package: str
    ambient: _Given
    margin: _Given
    save: str | None
    force: bool

    def settings(self) -> QuickSettings:
        """The library's quick settings (the options' text as typed)."""
        from synth.templates.passive import QuickSettings

        return QuickSettings(series=self.series.upper(),
                             value_range=None if self.value_range is None
                             else self.value_range.text,
                             within=self.within, package=self.package,
                             ambient=self.ambient.text, margin=self.margin.text)


def _quick_options(main_unit: str) -> Callable[[F], F]:
    """The options every quick command shares; ``main_unit`` is its main target's unit."""
    group = _option_group(_Quick, [
        click.option("--series", default="E96", show_default=True,
                     type=_CatalogueChoice(_series_names, case_sensitive=False),
                     help="Series to choose from."),
        click.option("--range", "value_range", type=RESISTANCE_RANGE, default=None,
                     help="Values each chosen part may take [default: 100:10M; a pad: "
                          "impedance/100 to impedance x 100]."),
        click.option("--within", type=_Window(main_unit), default=None,
                     help='Hard window on the main target, e.g. "1%" or "10 mV".'),
        click.option("--package", default="0603", show_default=True,
                     help="Package of the chosen parts (name in the package table)."),
        click.option("--ambient", type=TEMPERATURE, default="25 C", show_default=True,
                     help="Ambient temperature for derating."),
        click.option("--margin", type=PERCENT, default="50%", show_default=True,
                     help="Share of the derated power a part may use."),
        click.option("--save", type=click.Path(dir_okay=False), default=None,
                     help="Also write the equivalent design file here."),
        click.option("--force", is_flag=True, help="Let --save replace an existing file."),
    ])

    def decorate(command: F) -> F:
        # applied inside out: help lists spread, search, then these shared options
        return _search_options(group(command))

    return decorate


# -- output helpers ----------------------------------------------------------------------


def _emit_json(document: Any) -> None:
    click.echo(json.dumps(document, indent=2, ensure_ascii=False))


def _write_plots(paths: list[Any], as_json: bool) -> None:
    if not as_json:
        for path in paths:
            click.echo(f"plot written: {path}")


class _Progress:
    """A progress bar on stderr for searches longer than about a second."""

    def __init__(self, enabled: bool):
        self.enabled = enabled
        self.start = time.monotonic()
        self.shown = False

    def __call__(self, fraction: float) -> None:
        if not self.enabled or time.monotonic() - self.start < 1.0:
            return
        width = 30
        done = int(fraction * width)
        click.echo(f"\rsearching [{'#' * done}{'.' * (width - done)}] {fraction * 100:5.1f}%",
                   err=True, nl=False)
        self.shown = True

    def close(self) -> None:
        if self.shown:
            click.echo("\r" + " " * 50 + "\r", err=True, nl=False)


Rules = Callable[["Candidate"], list[str]]


def _run_design(design: Design, search: _Search, spread: _Spread,
                rules: Rules | None = None, prepared: SynthesisResult | None = None) -> None:
    from synth.report.synthesis import design_json, design_text
    from synth.synthesis import synthesize

    if not design.free_resistors:
        raise DesignError(f"{design.origin}: no resistor has choose = ...; mark the parts "
                          "rnsynth should pick, or use rnsynth check")
    if search.top < 1:
        raise DesignError(f"--top {search.top} must be at least 1")
    settings = spread.settings()
    if search.time_limit is not None and not search.time_limit > 0:
        raise DesignError(f"--time-limit {search.time_limit} must be a positive number of "
                          "seconds")
    if search.min_yield is not None and search.require not in (None, "yield"):
        raise DesignError("--min-yield goes with --require yield; add it or drop --min-yield")
    for note in design.deprecations:
        click.echo(f"rnsynth: note: {note}", err=True)
    progress = _Progress(enabled=not search.quiet and sys.stderr.isatty())
    try:
        result = (prepared if prepared is not None else synthesize(
            design, top=search.top, time_limit_s=search.time_limit, progress=progress,
            spread=settings, rank_by=search.rank_by, require=search.require,
            min_yield=None if search.min_yield is None else search.min_yield.value))
    finally:
        progress.close()
    if search.as_json:
        document = design_json(result)
        if rules is not None and result.candidates:
            document["rules"] = rules(result.candidates[0])
        _emit_json(document)
    else:
        click.echo(design_text(result))
        if rules is not None and result.candidates:
            click.echo("rules of thumb for the best design:")
            for line in rules(result.candidates[0]):
                click.echo(f"  {line}")
    if spread.plots and result.candidates:
        from synth.report.plots import candidate_scatter, target_histograms

        best = result.candidates[0]
        paths = candidate_scatter(result, spread.plots, cost=search.plot_axis)
        if best.spread is not None:
            paths += target_histograms(design, best.spread, spread.plots)
        _write_plots(paths, search.as_json)
    if not result.feasible:
        sys.exit(1)


def _quick_run(tables: dict[str, Any], origin: str, quick: _Quick, search: _Search,
               spread: _Spread, rules: Rules | None = None) -> None:
    from synth.design.reader import design_from_dict
    from synth.files import write_atomic

    prepared = None
    if quick.package.lower() == "auto":
        from synth.synthesis import synthesize
        from synth.templates.packages import synthesize_auto

        def run(candidate_design: Design) -> SynthesisResult:
            return synthesize(candidate_design, top=search.top, time_limit_s=search.time_limit,
                              spread=spread.settings(), rank_by=search.rank_by,
                              require=search.require,
                              min_yield=None if search.min_yield is None
                              else search.min_yield.value)

        tables, design, prepared, chosen = synthesize_auto(tables, origin, run)
        if not search.as_json:
            click.echo("packages chosen: " + ", ".join(map(str, chosen)))
    else:
        design = design_from_dict(tables, origin=origin)
    if quick.save is not None:
        import tomli_w

        write_atomic(quick.save, tomli_w.dumps(tables), force=quick.force)
        if not search.as_json:
            click.echo(f"design file written: {quick.save}")
    _run_design(design, search, spread, rules, prepared)


# -- commands ----------------------------------------------------------------------------


def _print_version(ctx: click.Context, param: click.Parameter, value: bool) -> None:
    if not value or ctx.resilient_parsing:
        return
    from synth import __version__

    click.echo(f"rnsynth, version {__version__}")
    ctx.exit()


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--version", is_flag=True, expose_value=False, is_eager=True,
              callback=_print_version, help="Show the version and exit.")
def cli() -> None:
    """rnsynth: from electrical targets to standard resistor values.

    Shell completion follows click's convention, e.g. for bash:
    eval "$(_RNSYNTH_COMPLETE=bash_source rnsynth)".
    """


@cli.command("series")
@click.argument("name", type=_CatalogueChoice(_series_names, case_sensitive=False))
@click.option("--range", "span", type=RESISTANCE_RANGE, default="1:9.99", show_default=True,
              help="Resistance range to list, e.g. 1k:10k.")
@click.option("--nearest", type=RESISTANCE, metavar="VALUE",
              help="Print only the value nearest to this one.")
@click.option("--json", "as_json", is_flag=True, help="Print a JSON list of ohms.")
@_friendly
def series_command(name: str, span: _Range, nearest: _Given | None, as_json: bool) -> None:
    """List the values of an IEC 60063 series (E3 ... E192)."""
    from synth.catalog.series import nearest_value, series_values
    from synth.units import format_eng, format_rkm

    if nearest is not None:
        values = [nearest_value(nearest.value, name)]
    else:
        values = [float(v) for v in series_values(name, span.low, span.high)]
    if as_json:
        _emit_json(values)
        return
    for value in values:
        click.echo(f"{format_eng(value, 'Ω'):>10}  {format_rkm(value)}")


@cli.command("check")
@click.argument("design_file", type=click.Path(dir_okay=False))
@click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
@click.option("--verify", is_flag=True,
              help="Also solve by nodal analysis and report the largest difference.")
@_spread_options
@_friendly
def check_command(design_file: str, as_json: bool, verify: bool, spread: _Spread) -> None:
    """Analyse a design whose values are all given.

    Prints node voltages, each part's current, dissipation and use of its
    derated rating, and whether each target is met.  Exits 1 when a target
    is missed or a part is over its allowance.
    """
    from synth.checking import check
    from synth.design.load import load_design
    from synth.report.check import check_json, check_text

    design = load_design(design_file)
    result = check(design, verify=verify, spread=spread.settings())
    if as_json:
        _emit_json(check_json(result))
    else:
        click.echo(check_text(result))
    if spread.plots and result.spread is not None:
        from synth.report.plots import target_histograms

        _write_plots(target_histograms(design, result.spread, spread.plots), as_json)
    if not result.ok:
        sys.exit(1)


@cli.command("design")
@click.argument("design_file", type=click.Path(dir_okay=False))
@_search_options
@_friendly
def design_command(design_file: str, search: _Search, spread: _Spread) -> None:
    """Choose standard values for the free parts of a design.

    Shows the ideal continuous values, then the best candidates, each
    re-checked by a full mesh solve: values, each target's value and error,
    the hottest part and supply current.  Exits 1 when no standard values
    meet every window and limit (the nearest designs are shown and the binding
    target or limit named).
    """
    from synth.design.load import load_design

    _run_design(load_design(design_file), search, spread)


@cli.command("divider")
@click.option("--input", "input_voltage", type=VOLTAGE, required=True,
              help='Input voltage, e.g. "12 V".')
@click.option("--output", "output_voltage", type=VOLTAGE, required=True,
              help="Wanted output voltage.")
@click.option("--load", type=RESISTANCE, default=None,
              help="Load resistance on the output, e.g. 100k.")
@click.option("--max-current", type=CURRENT, default=None,
              help="Most current the divider may draw.")
@_quick_options("V")
@_friendly
def divider_command(input_voltage: _Given, output_voltage: _Given, load: _Given | None,
                    max_current: _Given | None, quick: _Quick, search: _Search,
                    spread: _Spread) -> None:
    """Voltage divider: R1 from input to output, R2 from output to ground."""
    from synth.templates.passive import divider_tables

    tables = divider_tables(input_voltage=input_voltage.text, output_voltage=output_voltage.text,
                            settings=quick.settings(), load=_text(load),
                            max_current=_text(max_current))
    _quick_run(tables, "rnsynth divider options", quick, search, spread)


def _text(given: _Given | None) -> str | None:
    return None if given is None else given.text


@cli.command("regulator")
@click.option("--style", type=click.Choice(["feedback", "adjust"]), default="feedback",
              show_default=True,
              help="feedback: reference at the divider tap (feedback-pin regulators); "
                   "adjust: reference across the top resistor (three-terminal adjustable).")
@click.option("--reference", type=VOLTAGE, required=True,
              help='Reference voltage, e.g. "0.8 V".')
@click.option("--output", "output_voltage", type=VOLTAGE, required=True,
              help="Wanted output voltage.")
@click.option("--pin-current", type=CURRENT, default="0 A", show_default=True,
              help="Feedback-pin current (into the pin) or adjust-pin current (out of it).")
@click.option("--load", type=RESISTANCE, default=None, help="Load resistance on the output.")
@click.option("--min-current", type=CURRENT, default=None,
              help="Least current in the top resistor.")
@click.option("--max-current", type=CURRENT, default=None,
              help="Most current in the top resistor.")
@_quick_options("V")
@_friendly
def regulator_command(style: str, reference: _Given, output_voltage: _Given,
                      pin_current: _Given, load: _Given | None, min_current: _Given | None,
                      max_current: _Given | None, quick: _Quick, search: _Search,
                      spread: _Spread) -> None:
    """Regulator feedback network: RTOP from output to the tap, RBOT from tap to ground."""
    from synth.templates.passive import regulator_tables

    tables = regulator_tables(style=style, reference=reference.text,
                              output_voltage=output_voltage.text, settings=quick.settings(),
                              pin_current=pin_current.text, load=_text(load),
                              min_current=_text(min_current), max_current=_text(max_current))
    _quick_run(tables, "rnsynth regulator options", quick, search, spread)


@cli.command("led")
@click.option("--supply", type=VOLTAGE, required=True, help='Supply voltage, e.g. "5 V".')
@click.option("--forward", type=VOLTAGE, required=True, help="Forward voltage of one LED.")
@click.option("--count", default=1, show_default=True, help="LEDs in series.")
@click.option("--current", type=CURRENT, required=True, help='LED current, e.g. "20 mA".')
@_quick_options("A")
@_friendly
def led_command(supply: _Given, forward: _Given, count: int, current: _Given, quick: _Quick,
                search: _Search, spread: _Spread) -> None:
    """LED series resistor, R = (Vsupply - count x Vforward) / I.

    With --package auto the smallest chip package whose derated allowance
    covers the resistor's dissipation is chosen.  --range is not used: the
    resistor is searched around its ideal value.
    """
    from synth.templates.passive import led_tables

    settings = quick.settings()
    if quick.package.lower() == "auto":
        settings = replace(settings, package="0603")  # the automatic choice follows
    tables, chosen = led_tables(supply=supply.text, forward=forward.text, count=count,
                                current=current.text, settings=settings)
    if not search.as_json and quick.package.lower() != "auto":
        click.echo(f"package: {chosen}")
    _quick_run(tables, "rnsynth led options", quick, search, spread)


@cli.command("pad")
@click.option("--impedance", type=RESISTANCE, default="50", show_default=True,
              help="Line impedance, ohm.")
@click.option("--loss", type=DECIBELS, required=True, help='Attenuation, e.g. "6 dB".')
@click.option("--shape", type=click.Choice(["T", "Pi"], case_sensitive=False), default="T",
              show_default=True, help="Pad shape.")
@_quick_options("Ω")
@_friendly
def pad_command(impedance: _Given, loss: _Given, shape: str, quick: _Quick, search: _Search,
                spread: _Spread) -> None:
    """Matched attenuator pad (T or Pi) between two terminations of the line impedance."""
    from synth.templates.passive import pad_tables

    tables = pad_tables(impedance=impedance.text, loss=loss.text, shape=shape,
                        settings=quick.settings())
    _quick_run(tables, "rnsynth pad options", quick, search, spread)


@cli.command("bias")
@click.option("--supply", type=VOLTAGE, required=True, help='Supply voltage, e.g. "10 V".')
@click.option("--collector-current", type=CURRENT, required=True,
              help='Wanted collector current, e.g. "1 mA".')
@click.option("--collector-voltage", type=VOLTAGE, required=True,
              help="Wanted collector voltage.")
@click.option("--beta", default="100:50:300", show_default=True,
              help="Current gain: typical or typical:least:greatest.")
@click.option("--vbe", type=VOLTAGE, default="0.7 V", show_default=True,
              help="Base-emitter drop.")
@_quick_options("A")
@_friendly
def bias_command(supply: _Given, collector_current: _Given, collector_voltage: _Given,
                 beta: str, vbe: _Given, quick: _Quick, search: _Search,
                 spread: _Spread) -> None:
    """Four-resistor NPN bias: R1 supply-base, R2 base-ground, RC, RE.

    Also reports the rules of thumb for the best design: emitter voltage about
    a tenth of the supply, divider current at least ten times the base current,
    and the divider's stiffness against beta.
    """
    from synth.templates.active import bias_rules, bias_tables

    tables = bias_tables(supply=supply.text, collector_current=collector_current.text,
                         collector_voltage=collector_voltage.text, settings=quick.settings(),
                         beta=beta, vbe=vbe.text)
    _, beta_least, _ = tables["transistor"][0]["beta"]
    rules = functools.partial(bias_rules, supply_v=supply.value, beta_least=beta_least)
    _quick_run(tables, "rnsynth bias options", quick, search, spread, rules)


@cli.command("gain")
@click.option("--gain", "wanted", required=True, help="Gain magnitude, e.g. 10.")
@click.option("--inverting", is_flag=True, help="Inverting stage (gain -RF/RIN).")
@click.option("--input-resistance", type=RESISTANCE, default=None,
              help="Input resistance (inverting stage).")
@click.option("--open-loop-gain", default=None, help="Finite open-loop gain (default: ideal).")
@_quick_options("")
@_friendly
def gain_command(wanted: str, inverting: bool, input_resistance: _Given | None,
                 open_loop_gain: str | None, quick: _Quick, search: _Search,
                 spread: _Spread) -> None:
    """Amplifier gain network: non-inverting (1 + RF/RG) or inverting (-RF/RIN)."""
    from synth.templates.active import gain_tables

    tables = gain_tables(gain=wanted, settings=quick.settings(), inverting=inverting,
                         input_resistance=_text(input_resistance),
                         open_loop_gain=open_loop_gain)
    _quick_run(tables, "rnsynth gain options", quick, search, spread)


@cli.command("bom")
@click.argument("files", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option("--stock", type=click.Path(dir_okay=False), default=None,
              help="House stock list (CSV: value, package, tolerance, quantity).")
@click.option("--stock-only", is_flag=True,
              help="Choose only values the stock list holds.")
@click.option("--pool", type=int, default=None,
              help="Feasible candidates kept per network for consolidation [default: 200].")
@click.option("--format", "form", type=click.Choice(["csv", "json", "markdown"]),
              default="csv", show_default=True, help="Output format.")
@click.option("--output", type=click.Path(dir_okay=False), default=None,
              help="Write the BOM to this file instead of standard output.")
@click.option("--force", is_flag=True, help="Replace an existing output file.")
@click.option("--time-limit", type=float, default=30.0, show_default=True,
              metavar="SECONDS", help="Time limit of the consolidation.")
@click.option("--quiet", is_flag=True, help="No summary and no progress lines.")
@_friendly
def bom_command(files: tuple[str, ...], stock: str | None, stock_only: bool, pool: int | None,
                form: str, output: str | None, force: bool, time_limit: float,
                quiet: bool) -> None:
    """Bill of materials for a board: design files and/or board files.

    Designs every network, then chooses one design per network so that the
    board has the fewest distinct BOM lines (CP-SAT, exact within the time
    limit), and writes one line per distinct orderable part.
    """
    from synth.bom.build import build_bom
    from synth.design.board import load_board
    from synth.files import write_atomic
    from synth.report.bom import bom_summary, render_bom

    if output is not None and Path(output).exists() and not force:
        raise DesignError(f"{output}: already exists; pass --force to replace it")
    board = load_board(list(files), stock=stock, pool=pool)
    if stock_only and board.stock_path is None:
        raise DesignError("--stock-only needs a stock list; give --stock FILE")

    def note(name: str) -> None:
        if not quiet:
            click.echo(f"designing {name} ...", err=True)

    result = build_bom(board, stock_only=stock_only, time_limit_s=time_limit, progress=note)
    text = render_bom(result, form)
    if output is None:
        click.echo(text, nl=False)
    else:
        write_atomic(output, text, force=force)
    if not quiet:
        click.echo(bom_summary(result), err=output is None)
        if output is not None:
            click.echo(f"BOM written: {output}")


def main() -> None:
    """Entry point of the ``rnsynth`` console script."""
    cli(prog_name="rnsynth")
