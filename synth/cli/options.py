"""The command line's shared pieces: errors to exit codes, typed option values, option groups,
output helpers.
"""

from __future__ import annotations

__all__ = [
    "CURRENT", "DECIBELS", "MAX_SAMPLES", "PERCENT", "PLOT_AXES", "RESISTANCE",
    "RESISTANCE_RANGE", "TEMPERATURE", "VOLTAGE", "BadInput", "CatalogueChoice", "Given",
    "Measured", "OneLineGroup", "Progress", "QuickOptions", "Range", "SearchOptions",
    "SpreadOptions", "Window",
    "check_time_limit", "emit_json", "friendly", "jobs_option", "option_group", "option_name",
    "page_search_options", "quick_options", "ranking_choices", "search_options",
    "series_name_choices", "spread_options",
]

import functools
import json
import math
import sys
import time
import warnings
from collections.abc import Callable, Sequence
from dataclasses import dataclass, fields
from typing import TYPE_CHECKING, Any, TypeVar, cast

import click

from synth.cli.types import (
    CURRENT,
    DECIBELS,
    PERCENT,
    RESISTANCE,
    RESISTANCE_RANGE,
    TEMPERATURE,
    VOLTAGE,
    BadInput,
    CatalogueChoice,
    Count,
    Given,
    Measured,
    Range,
    Window,
    option_name,
    ranking_choices,
    series_name_choices,
)
from synth.errors import DesignError, InfeasibleError, RnsynthError

if TYPE_CHECKING:
    from synth.spread.records import SpreadSettings
    from synth.templates.passive import QuickSettings

F = TypeVar("F", bound=Callable[..., Any])



# -- errors ------------------------------------------------------------------------------


def _one_line(exc: BaseException) -> str:
    """An error's message on one line (a newline in a user's text is shown as \\n)."""
    return str(exc).replace("\r", "\\r").replace("\n", "\\n")


class OneLineGroup(click.Group):
    """The command group: click's own usage errors (an option of the wrong type, an unknown
    choice) are shown in one line on stderr, exit 2, like every other refusal."""

    def main(self, *args: Any, **kwargs: Any) -> Any:
        if not kwargs.get("standalone_mode", True):
            return super().main(*args, **kwargs)
        kwargs["standalone_mode"] = False
        try:
            code = super().main(*args, **kwargs)
        except click.UsageError as exc:
            command = exc.ctx.command_path if exc.ctx is not None else "rnsynth"
            message = exc.format_message().replace("\r", "\\r").replace("\n", "\\n")
            click.echo(f"rnsynth: {message} (see {command} --help)", err=True)
            sys.exit(exc.exit_code)
        except click.ClickException as exc:
            exc.show()
            sys.exit(exc.exit_code)
        except click.Abort:
            click.echo("Aborted!", err=True)
            sys.exit(1)
        sys.exit(code if isinstance(code, int) else 0)


def friendly(command: F) -> F:
    """Turn rnsynth errors into one line on stderr and the documented exit code."""

    @functools.wraps(command)
    def run(*args: Any, **kwargs: Any) -> Any:
        try:
            with warnings.catch_warnings():
                # float overflow in a solve is judged by its result (non-finite values are
                # refused or reported), not printed as a warning with a source line
                warnings.simplefilter("ignore", RuntimeWarning)
                return command(*args, **kwargs)
        except InfeasibleError as exc:
            click.echo(f"rnsynth: {_one_line(exc)}", err=True)
            sys.exit(1)
        except (DesignError, RnsynthError) as exc:
            click.echo(f"rnsynth: {_one_line(exc)}", err=True)
            sys.exit(2)
        except KeyboardInterrupt:
            # outputs are written atomically: an interrupted run leaves no partial file
            click.echo("rnsynth: interrupted; nothing was written", err=True)
            sys.exit(130)
        except (ArithmeticError, RuntimeError, ValueError, MemoryError) as exc:
            # a numerical or solver failure (a singular network, CP-SAT refusing a model)
            # is reported, never shown as a traceback
            name = type(exc).__name__
            click.echo(f"rnsynth: the calculation could not be completed ({name}: "
                       f"{_one_line(exc)}); "
                       "check the design's values and limits", err=True)
            sys.exit(2)

    return cast(F, run)


# -- shared option groups ----------------------------------------------------------------


def option_group(record: type, options: Sequence[Callable[[F], F]],
                 fixed: dict[str, Any] | None = None) -> Callable[[F], F]:
    """Add ``options`` to a command and hand their values to it as one ``record``.

    The command receives a keyword argument named after the record's class
    (``SpreadOptions`` -> ``spread``) instead of one argument per option.  ``fixed``
    gives the record's fields that this command does not offer as options.
    """
    keyword = record.__name__.removesuffix("Options").lower()
    given = dict(fixed or {})
    names = [f.name for f in fields(record) if f.name not in given]

    def decorate(command: F) -> F:
        @functools.wraps(command)
        def run(*args: Any, **kwargs: Any) -> Any:
            values = {**given, **{name: kwargs.pop(name) for name in names}}
            return command(*args, **{keyword: record(**values)}, **kwargs)

        for option in reversed(options):
            run = option(run)
        return cast(F, run)

    return decorate


MAX_SAMPLES = 10_000_000_000
"""Monte Carlo samples a run may ask for.  The Monte Carlo streams its figures, so its
memory does not grow with the count; its time does (about 3e6 samples a second on a
small network, one core): ``--time-limit`` shrinks a run to the samples that fit."""


def _processes(ctx: click.Context, param: click.Parameter, value: str | None) -> int:
    """``--jobs``: a whole number of processes, 1 or more; every available core by default."""
    from synth.parallel import available_cores

    if value is None:
        return available_cores()
    text = value.strip()
    if not (text.isascii() and text.isdigit()) or int(text) < 1:
        raise BadInput(f"--jobs {value!r} must be a whole number of processes, 1 or more "
                       "(1 runs everything in this process)")
    return int(text)


_JOBS = click.option(
    "--jobs", callback=_processes, default=None, metavar="N",
    help="Processes to use: the search, the Monte Carlo's seeded shards and a board's "
         "networks are spread over them, with the same results for any N (1: this process "
         "only) [default: every core available].")


def jobs_option(command: F) -> F:
    """``--jobs N``: the most processes a command's work may use (the result is the same for
    every N); the command receives ``jobs``, an int."""
    return _JOBS(command)


def check_time_limit(seconds: float | None, option: str = "--time-limit") -> None:
    """Refuse a time limit that is not a positive, finite number of seconds."""
    if seconds is not None and not (math.isfinite(seconds) and seconds > 0):
        raise DesignError(f"{option} {seconds} must be a positive number of seconds (a finite one)")


@dataclass(frozen=True)
class SpreadOptions:
    samples: int
    distribution: str
    seed: int
    plots: str | None

    def settings(self) -> SpreadSettings:
        from synth.spread.records import SpreadSettings

        if not 0 <= self.samples <= MAX_SAMPLES:
            raise DesignError(f"--samples {self.samples} must be 0 (no Monte Carlo) to "
                              f"{MAX_SAMPLES:,}")
        if self.seed < 0:
            raise DesignError(f"--seed {self.seed} must be 0 or more")
        # samples are kept only for the histograms; otherwise memory stays bounded
        return SpreadSettings(samples=self.samples, distribution=self.distribution,
                              seed=self.seed, keep_samples=self.plots is not None)


spread_options = option_group(SpreadOptions, [
    click.option("--samples", type=Count(), default=100_000, show_default=True,
                 help="Monte Carlo samples for the spread (0: none; 1e9 reads as "
                      "1,000,000,000)."),
    click.option("--distribution", type=click.Choice(["uniform", "normal"]),
                 default="uniform", show_default=True,
                 help="Shape of each tolerance; normal reads tolerance as 3 sigma."),
    click.option("--seed", default=1, show_default=True, help="Monte Carlo seed."),
    click.option("--plots", type=click.Path(file_okay=False), default=None,
                 metavar="FOLDER",
                 help="Write PNG and SVG plots into this folder (existing files are kept "
                      "unless --force)."),
])

PLOT_AXES = ("supply", "hottest", "distinct")


def _deprecated_cost(ctx: click.Context, param: click.Parameter, value: str | None
                     ) -> str | None:
    if value is not None and not ctx.resilient_parsing:
        click.echo("rnsynth: --cost is deprecated and goes in the next version; "
                   "use --plot-x", err=True)
    return value


@dataclass(frozen=True)
class SearchOptions:
    top: int
    rank_by: str
    plot_x: str
    cost: str | None
    time_limit: float | None
    as_json: bool
    quiet: bool
    require: str | None
    min_yield: Given | None

    @property
    def plot_axis(self) -> str:
        """The candidate plot's x axis: ``--plot-x``, or the deprecated ``--cost``."""
        return self.cost if self.cost is not None else self.plot_x


_SEARCH_CHOICES = [
    click.option("--top", default=10, show_default=True, help="Candidates to show."),
    click.option("--rank-by", type=CatalogueChoice(ranking_choices), default="nominal",
                 show_default=True,
                 help="nominal error, worst-case error over the tolerance box, or "
                      "Monte Carlo yield."),
    click.option("--plot-x", type=click.Choice(PLOT_AXES), default="supply",
                 show_default=True, help="Horizontal axis of the candidate plot."),
    click.option("--cost", type=click.Choice(PLOT_AXES), default=None, hidden=True,
                 callback=_deprecated_cost, help="Deprecated name of --plot-x."),
    click.option("--time-limit", type=float, default=None, metavar="SECONDS",
                 help="Seconds the whole command may take: the search stops and shows the "
                      "best so far, marked unproven; re-check and spread shrink to fit, and "
                      "the report says what was cut."),
    click.option("--quiet", is_flag=True, help="No progress bar."),
    click.option("--require", type=click.Choice(["nominal", "worst-case", "yield"]),
                 default=None,
                 help="Basis every window and limit must hold on [default: the design's "
                      "require, else nominal]."),
    click.option("--min-yield", type=PERCENT, default=None,
                 help='Least Monte Carlo yield with --require yield, e.g. "99%".'),
]
_JSON = click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
_search_group = option_group(SearchOptions, [*_SEARCH_CHOICES[:5], _JSON, *_SEARCH_CHOICES[5:]])
_page_search_group = option_group(SearchOptions, _SEARCH_CHOICES, fixed={"as_json": False})


def search_options(command: F) -> F:
    # applied inside out: help lists the spread options, then the search options
    return spread_options(_search_group(command))


def page_search_options(command: F) -> F:
    """The search and spread options of ``design``, for a command that writes a page (no --json)."""
    return spread_options(_page_search_group(command))


@dataclass(frozen=True)
class QuickOptions:
    series: str
    value_range: Range | None
    within: str | None
    package: str
    ambient: Given
    margin: Given
    save: str | None
    force: bool
    jobs: int

    def settings(self) -> QuickSettings:
        """The library's quick settings (the options' text as typed)."""
        from synth.templates.passive import QuickSettings

        return QuickSettings(series=self.series.upper(),
                             value_range=None if self.value_range is None
                             else self.value_range.text,
                             within=self.within, package=self.package,
                             ambient=self.ambient.text, margin=self.margin.text)


def _package_name(ctx: click.Context, param: click.Parameter, value: str) -> str:
    if not value.strip():
        raise BadInput("--package: give a package name (e.g. 0603) or auto, not an empty text")
    return value


def quick_options(main_unit: str, package: str = "0603") -> Callable[[F], F]:
    """The options every quick command shares; ``main_unit`` is its main target's unit."""
    group = option_group(QuickOptions, [
        click.option("--series", default="E96", show_default=True,
                     type=CatalogueChoice(series_name_choices, case_sensitive=False),
                     help="Series to choose from."),
        click.option("--range", "value_range", type=RESISTANCE_RANGE, default=None,
                     help="Values each chosen part may take [default: 100:10M; a pad: "
                          "impedance/100 to impedance x 100]."),
        click.option("--within", type=Window(main_unit), default=None,
                     help='Hard window on the main target, e.g. "1%" or "10 mV".'),
        click.option("--package", default=package, show_default=True,
                     callback=_package_name,
                     help="Package of the chosen parts (a name in the package table), or "
                          "auto: the smallest that carries each part's dissipation and "
                          "voltage, or a series string of equal parts."),
        click.option("--ambient", type=TEMPERATURE, default="25 C", show_default=True,
                     help="Ambient temperature for derating."),
        click.option("--margin", type=PERCENT, default="50%", show_default=True,
                     help="Share of the derated power a part may use."),
        click.option("--save", type=click.Path(dir_okay=False, allow_dash=True), default=None,
                     help="Also write the equivalent design file here (-: standard "
                          "output, the report then on stderr)."),
        click.option("--force", is_flag=True,
                     help="Let --save and --plots replace existing files."),
        _JOBS,
    ])

    def decorate(command: F) -> F:
        # applied inside out: help lists spread, search, then these shared options
        return search_options(group(command))

    return decorate


# -- output helpers ----------------------------------------------------------------------


def _strict(value: Any) -> Any:
    """The document with every NaN or infinity written as null (JSON has neither)."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {key: _strict(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_strict(item) for item in value]
    return value


def emit_json(document: Any) -> None:
    """Print a JSON document; a NaN or infinity (which JSON has not) is written as null."""
    click.echo(json.dumps(_strict(document), indent=2, ensure_ascii=False, allow_nan=False))


class Progress:
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
