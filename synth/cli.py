"""The ``rnsynth`` command line: parses options, calls the library, prints.

Exit codes: 0 success, 1 the run worked but the design fails (a target missed,
a part over its allowance, no standard values meet the limits), 2 bad input.
"""

from __future__ import annotations

__all__ = ["cli", "main"]

import json
import sys
import time
from collections.abc import Callable
from functools import wraps
from pathlib import Path
from typing import Any, TypeVar

import click
import tomli_w

from synth import __version__
from synth.bom.build import build_bom
from synth.catalog.series import nearest_value, series_names, series_values
from synth.checking import check as run_check
from synth.design.board import load_board
from synth.design.load import load_design
from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.errors import DesignError, InfeasibleError, RnsynthError
from synth.files import write_atomic
from synth.report.bom import bom_summary, render_bom
from synth.report.check import check_json, check_text
from synth.report.synthesis import design_json, design_text
from synth.spread.records import SpreadSettings
from synth.synthesis import RANKINGS, synthesize
from synth.templates.active import bias_rules, bias_tables, gain_tables
from synth.templates.passive import (
    QuickSettings,
    divider_tables,
    led_tables,
    pad_tables,
    regulator_tables,
)
from synth.units import format_eng, format_rkm, parse_quantity, parse_resistance

F = TypeVar("F", bound=Callable[..., Any])


def _friendly(command: F) -> F:
    """Turn rnsynth errors into one line on stderr and the documented exit code."""

    @wraps(command)
    def run(*args: Any, **kwargs: Any) -> Any:
        try:
            return command(*args, **kwargs)
        except InfeasibleError as exc:
            click.echo(f"rnsynth: {exc}", err=True)
            sys.exit(1)
        except (DesignError, RnsynthError) as exc:
            click.echo(f"rnsynth: {exc}", err=True)
            sys.exit(2)

    return run  # type: ignore[return-value]


def _emit_json(document: Any) -> None:
    click.echo(json.dumps(document, indent=2, ensure_ascii=False))


def _parse_range(text: str) -> tuple[float, float]:
    low, sep, high = text.partition(":")
    if not sep:
        raise DesignError(f"--range {text!r} needs two ends separated by a colon, e.g. 1k:10k")
    try:
        ends = parse_resistance(low), parse_resistance(high)
    except DesignError as exc:
        raise DesignError(f"--range {text!r}: {exc}") from None
    if ends[0] <= 0 or ends[1] < ends[0]:
        raise DesignError(f"--range {text!r} is empty or not positive; give the low end first")
    return ends


def _spread_options(command: F) -> F:
    options = [
        click.option("--samples", default=100_000, show_default=True,
                     help="Monte Carlo samples for the spread (0: none)."),
        click.option("--distribution", type=click.Choice(["uniform", "normal"]),
                     default="uniform", show_default=True,
                     help="Shape of each tolerance; normal reads tolerance as 3 sigma."),
        click.option("--seed", default=1, show_default=True, help="Monte Carlo seed."),
        click.option("--plots", type=click.Path(file_okay=False), default=None,
                     metavar="FOLDER", help="Write PNG and SVG plots into this folder."),
    ]
    for option in reversed(options):
        command = option(command)
    return command


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="rnsynth")
def cli() -> None:
    """rnsynth: from electrical targets to standard resistor values.

    Shell completion follows click's convention, e.g. for bash:
    eval "$(_RNSYNTH_COMPLETE=bash_source rnsynth)".
    """


@cli.command("series")
@click.argument("name", type=click.Choice(series_names(), case_sensitive=False))
@click.option("--range", "span", default="1:9.99", show_default=True, metavar="LOW:HIGH",
              help="Resistance range to list, e.g. 1k:10k.")
@click.option("--nearest", metavar="VALUE", help="Print only the value nearest to this one.")
@click.option("--json", "as_json", is_flag=True, help="Print a JSON list of ohms.")
@_friendly
def series_command(name: str, span: str, nearest: str | None, as_json: bool) -> None:
    """List the values of an IEC 60063 series (E3 ... E192)."""
    if nearest is not None:
        try:
            wanted = parse_resistance(nearest)
        except DesignError as exc:
            raise DesignError(f"--nearest: {exc}") from None
        values = [nearest_value(wanted, name)]
    else:
        low, high = _parse_range(span)
        values = [float(v) for v in series_values(name, low, high)]
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
def check_command(design_file: str, as_json: bool, verify: bool, samples: int,
                  distribution: str, seed: int, plots: str | None) -> None:
    """Analyse a design whose values are all given.

    Prints node voltages, each part's current, dissipation and use of its
    derated rating, and whether each target is met.  Exits 1 when a target
    is missed or a part is over its allowance.
    """
    design = load_design(design_file)
    settings = _spread_settings(samples, distribution, seed)
    result = run_check(design, verify=verify, spread=settings)
    if as_json:
        _emit_json(check_json(result))
    else:
        click.echo(check_text(result))
    if plots and result.spread is not None:
        from synth.report.plots import target_histograms

        _write_plots(target_histograms(design, result.spread, plots), as_json)
    if not result.ok:
        sys.exit(1)


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


def _spread_settings(samples: int, distribution: str, seed: int) -> SpreadSettings:
    if samples < 0:
        raise DesignError(f"--samples {samples} must be 0 (no Monte Carlo) or more")
    return SpreadSettings(samples=samples, distribution=distribution, seed=seed)


def _write_plots(paths: list[Any], as_json: bool) -> None:
    if not as_json:
        for path in paths:
            click.echo(f"plot written: {path}")


def _run_design(design: Design, top: int, time_limit: float | None, as_json: bool,
                quiet: bool, spread: dict[str, Any]) -> None:
    if not design.free_resistors:
        raise DesignError(f"{design.origin}: no resistor has choose = ...; mark the parts "
                          "rnsynth should pick, or use rnsynth check")
    if top < 1:
        raise DesignError(f"--top {top} must be at least 1")
    settings = _spread_settings(spread["samples"], spread["distribution"], spread["seed"])
    progress = _Progress(enabled=not quiet and sys.stderr.isatty())
    try:
        result = synthesize(design, top=top, time_limit_s=time_limit, progress=progress,
                            spread=settings, rank_by=spread["rank_by"])
    finally:
        progress.close()
    rules = spread.get("rules")
    if as_json:
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
    if spread["plots"] and result.candidates:
        from synth.report.plots import candidate_scatter, target_histograms

        best = result.candidates[0]
        paths = candidate_scatter(result, spread["plots"], cost=spread["cost"])
        if best.spread is not None:
            paths += target_histograms(design, best.spread, spread["plots"])
        _write_plots(paths, as_json)
    if not result.feasible:
        sys.exit(1)


def _search_options(command: F) -> F:
    options = [
        click.option("--top", default=10, show_default=True, help="Candidates to show."),
        click.option("--rank-by", type=click.Choice(RANKINGS), default="nominal",
                     show_default=True,
                     help="nominal error, worst-case error over the tolerance box, or "
                          "Monte Carlo yield."),
        click.option("--cost", type=click.Choice(["supply", "hottest", "distinct"]),
                     default="supply", show_default=True,
                     help="Horizontal axis of the candidate plot."),
        click.option("--time-limit", type=float, default=None, metavar="SECONDS",
                     help="Stop searching after this long and show the best so far, "
                          "marked unproven."),
        click.option("--json", "as_json", is_flag=True, help="Print the results as JSON."),
        click.option("--quiet", is_flag=True, help="No progress bar."),
    ]
    for option in reversed(options):
        command = option(command)
    return _spread_options(command)


def _quick_options(command: F) -> F:
    options = [
        click.option("--series", default="E96", show_default=True,
                     type=click.Choice(series_names(), case_sensitive=False),
                     help="Series to choose from."),
        click.option("--range", "value_range", default=None, metavar="LOW:HIGH",
                     help="Values each chosen part may take [default: 100:10M; a pad: "
                          "impedance/100 to impedance x 100]."),
        click.option("--within", default=None, metavar="WINDOW",
                     help='Hard window on the main target, e.g. "1%" or "10 mV".'),
        click.option("--package", default="0603", show_default=True,
                     help="Package of the chosen parts (name in the package table)."),
        click.option("--ambient", default="25 C", show_default=True,
                     help="Ambient temperature for derating."),
        click.option("--margin", default="50%", show_default=True,
                     help="Share of the derated power a part may use."),
        click.option("--save", type=click.Path(dir_okay=False), default=None,
                     help="Also write the equivalent design file here."),
        click.option("--force", is_flag=True, help="Let --save replace an existing file."),
    ]
    for option in reversed(options):
        command = option(command)
    return _search_options(command)


def _quick_run(tables: dict[str, Any], origin: str, save: str | None, force: bool, top: int,
               time_limit: float | None, as_json: bool, quiet: bool,
               spread: dict[str, Any]) -> None:
    design = design_from_dict(tables, origin=origin)
    if save is not None:
        write_atomic(save, tomli_w.dumps(tables), force=force)
        if not as_json:
            click.echo(f"design file written: {save}")
    _run_design(design, top, time_limit, as_json, quiet, spread)


def _settings(series: str, value_range: str | None, within: str | None, package: str | None,
              ambient: str, margin: str) -> QuickSettings:
    return QuickSettings(series=series.upper(), value_range=value_range, within=within,
                         package=package, ambient=ambient, margin=margin)


@cli.command("design")
@click.argument("design_file", type=click.Path(dir_okay=False))
@_search_options
@_friendly
def design_command(design_file: str, top: int, time_limit: float | None, as_json: bool,
                   quiet: bool, **spread: Any) -> None:
    """Choose standard values for the free parts of a design.

    Shows the ideal continuous values, then the best candidates, each
    re-checked by a full mesh solve: values, each target's value and error,
    the hottest part and supply current.  Exits 1 when no standard values
    meet every window and limit (the nearest designs are shown and the binding
    target or limit named).
    """
    _run_design(load_design(design_file), top, time_limit, as_json, quiet, spread)


@cli.command("divider")
@click.option("--input", "input_voltage", required=True, help='Input voltage, e.g. "12 V".')
@click.option("--output", "output_voltage", required=True, help="Wanted output voltage.")
@click.option("--load", default=None, help="Load resistance on the output, e.g. 100k.")
@click.option("--max-current", default=None, help="Most current the divider may draw.")
@_quick_options
@_friendly
def divider_command(input_voltage: str, output_voltage: str, load: str | None,
                    max_current: str | None, series: str, value_range: str | None,
                    within: str | None, package: str, ambient: str, margin: str,
                    save: str | None, force: bool, top: int, time_limit: float | None,
                    as_json: bool, quiet: bool, **spread: Any) -> None:
    """Voltage divider: R1 from input to output, R2 from output to ground."""
    settings = _settings(series, value_range, within, package, ambient, margin)
    tables = divider_tables(input_voltage=input_voltage, output_voltage=output_voltage,
                            settings=settings, load=load, max_current=max_current)
    _quick_run(tables, "rnsynth divider options", save, force, top, time_limit, as_json, quiet,
               spread)


@cli.command("regulator")
@click.option("--style", type=click.Choice(["feedback", "adjust"]), default="feedback",
              show_default=True,
              help="feedback: reference at the divider tap (feedback-pin regulators); "
                   "adjust: reference across the top resistor (three-terminal adjustable).")
@click.option("--reference", required=True, help='Reference voltage, e.g. "0.8 V".')
@click.option("--output", "output_voltage", required=True, help="Wanted output voltage.")
@click.option("--pin-current", default="0 A", show_default=True,
              help="Feedback-pin current (into the pin) or adjust-pin current (out of it).")
@click.option("--load", default=None, help="Load resistance on the output.")
@click.option("--min-current", default=None, help="Least current in the top resistor.")
@click.option("--max-current", default=None, help="Most current in the top resistor.")
@_quick_options
@_friendly
def regulator_command(style: str, reference: str, output_voltage: str, pin_current: str,
                      load: str | None, min_current: str | None, max_current: str | None,
                      series: str, value_range: str | None, within: str | None, package: str,
                      ambient: str, margin: str, save: str | None, force: bool, top: int,
                      time_limit: float | None, as_json: bool, quiet: bool, **spread: Any) -> None:
    """Regulator feedback network: RTOP from output to the tap, RBOT from tap to ground."""
    settings = _settings(series, value_range, within, package, ambient, margin)
    tables = regulator_tables(style=style, reference=reference, output_voltage=output_voltage,
                              settings=settings, pin_current=pin_current, load=load,
                              min_current=min_current, max_current=max_current)
    _quick_run(tables, "rnsynth regulator options", save, force, top, time_limit, as_json,
               quiet, spread)


@cli.command("led")
@click.option("--supply", required=True, help='Supply voltage, e.g. "5 V".')
@click.option("--forward", required=True, help="Forward voltage of one LED.")
@click.option("--count", default=1, show_default=True, help="LEDs in series.")
@click.option("--current", required=True, help='LED current, e.g. "20 mA".')
@_quick_options
@_friendly
def led_command(supply: str, forward: str, count: int, current: str, series: str,
                value_range: str | None, within: str | None, package: str, ambient: str,
                margin: str, save: str | None, force: bool, top: int, time_limit: float | None,
                as_json: bool, quiet: bool, **spread: Any) -> None:
    """LED series resistor, R = (Vsupply - count x Vforward) / I.

    With --package auto the smallest chip package whose derated allowance
    covers the resistor's dissipation is chosen.  --range is not used: the
    resistor is searched around its ideal value.
    """
    settings = _settings(series, value_range, within,
                         None if package.lower() == "auto" else package, ambient, margin)
    tables, chosen = led_tables(supply=supply, forward=forward, count=count, current=current,
                                settings=settings)
    if not as_json:
        click.echo(f"package: {chosen}")
    _quick_run(tables, "rnsynth led options", save, force, top, time_limit, as_json, quiet,
               spread)


@cli.command("pad")
@click.option("--impedance", default="50", show_default=True, help="Line impedance, ohm.")
@click.option("--loss", required=True, help='Attenuation, e.g. "6 dB".')
@click.option("--shape", type=click.Choice(["T", "Pi"], case_sensitive=False), default="T",
              show_default=True, help="Pad shape.")
@_quick_options
@_friendly
def pad_command(impedance: str, loss: str, shape: str, series: str, value_range: str | None,
                within: str | None, package: str, ambient: str, margin: str, save: str | None,
                force: bool, top: int, time_limit: float | None, as_json: bool,
                quiet: bool, **spread: Any) -> None:
    """Matched attenuator pad (T or Pi) between two terminations of the line impedance."""
    settings = _settings(series, value_range, within, package, ambient, margin)
    tables = pad_tables(impedance=impedance, loss=loss, shape=shape, settings=settings)
    _quick_run(tables, "rnsynth pad options", save, force, top, time_limit, as_json, quiet,
               spread)


@cli.command("bias")
@click.option("--supply", required=True, help='Supply voltage, e.g. "10 V".')
@click.option("--collector-current", required=True, help='Wanted collector current, e.g. "1 mA".')
@click.option("--collector-voltage", required=True, help="Wanted collector voltage.")
@click.option("--beta", default="100:50:300", show_default=True,
              help="Current gain: typical or typical:least:greatest.")
@click.option("--vbe", default="0.7 V", show_default=True, help="Base-emitter drop.")
@_quick_options
@_friendly
def bias_command(supply: str, collector_current: str, collector_voltage: str, beta: str,
                 vbe: str, series: str, value_range: str | None, within: str | None,
                 package: str, ambient: str, margin: str, save: str | None, force: bool,
                 top: int, time_limit: float | None, as_json: bool, quiet: bool,
                 **spread: Any) -> None:
    """Four-resistor NPN bias: R1 supply-base, R2 base-ground, RC, RE.

    Also reports the rules of thumb for the best design: emitter voltage about
    a tenth of the supply, divider current at least ten times the base current,
    and the divider's stiffness against beta.
    """
    settings = _settings(series, value_range, within, package, ambient, margin)
    tables = bias_tables(supply=supply, collector_current=collector_current,
                         collector_voltage=collector_voltage, settings=settings, beta=beta,
                         vbe=vbe)
    spread["rules"] = lambda candidate: bias_rules(
        candidate, parse_quantity(supply, "V"), tables["transistor"][0]["beta"][1])
    _quick_run(tables, "rnsynth bias options", save, force, top, time_limit, as_json, quiet,
               spread)


@cli.command("gain")
@click.option("--gain", "wanted", required=True, help="Gain magnitude, e.g. 10.")
@click.option("--inverting", is_flag=True, help="Inverting stage (gain -RF/RIN).")
@click.option("--input-resistance", default=None, help="Input resistance (inverting stage).")
@click.option("--open-loop-gain", default=None, help="Finite open-loop gain (default: ideal).")
@_quick_options
@_friendly
def gain_command(wanted: str, inverting: bool, input_resistance: str | None,
                 open_loop_gain: str | None, series: str, value_range: str | None,
                 within: str | None, package: str, ambient: str, margin: str,
                 save: str | None, force: bool, top: int, time_limit: float | None,
                 as_json: bool, quiet: bool, **spread: Any) -> None:
    """Amplifier gain network: non-inverting (1 + RF/RG) or inverting (-RF/RIN)."""
    settings = _settings(series, value_range, within, package, ambient, margin)
    tables = gain_tables(gain=wanted, settings=settings, inverting=inverting,
                         input_resistance=input_resistance, open_loop_gain=open_loop_gain)
    _quick_run(tables, "rnsynth gain options", save, force, top, time_limit, as_json, quiet,
               spread)


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
