"""The general commands: series, check, design and bom, on the ``rnsynth`` group.
"""

from __future__ import annotations

__all__ = ["bom_command", "check_command", "cli", "design_command", "series_command"]

import math
import sys
from typing import TYPE_CHECKING

import click

from synth.errors import DesignError

if TYPE_CHECKING:
    pass

from synth.cli.options import (
    RESISTANCE,
    RESISTANCE_RANGE,
    CatalogueChoice,
    Given,
    OneLineGroup,
    Range,
    SearchOptions,
    SpreadOptions,
    check_time_limit,
    emit_json,
    friendly,
    jobs_option,
    search_options,
    series_name_choices,
    spread_options,
)
from synth.cli.run import run_design
from synth.cli.streams import (
    STREAM,
    check_output,
    check_plot_folder,
    plot_files,
    plots_left_out,
    read_design,
    write_files,
    write_output,
)

_DESIGN_FILE = click.Path(dir_okay=False, allow_dash=True)
_FORCE_PLOTS = click.option("--force", is_flag=True, help="Let --plots replace existing files.")

BOM_WORK_LIMIT = 20.0  # synth.bom.consolidate.DEFAULT_WORK_LIMIT, without loading ortools

# -- commands ----------------------------------------------------------------------------


def _print_version(ctx: click.Context, param: click.Parameter, value: bool) -> None:
    if not value or ctx.resilient_parsing:
        return
    from synth import __version__

    click.echo(f"rnsynth, version {__version__}")
    ctx.exit()


@click.group(cls=OneLineGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--version", is_flag=True, expose_value=False, is_eager=True,
              callback=_print_version, help="Show the version and exit.")
def cli() -> None:
    """rnsynth: from electrical targets to standard resistor values.

    Shell completion follows click's convention, e.g. for bash:
    eval "$(_RNSYNTH_COMPLETE=bash_source rnsynth)".
    """


@cli.command("series")
@click.argument("name", type=CatalogueChoice(series_name_choices, case_sensitive=False))
@click.option("--range", "span", type=RESISTANCE_RANGE, default="1:9.99", show_default=True,
              help="Resistance range to list, e.g. 1k:10k.")
@click.option("--nearest", type=RESISTANCE, metavar="VALUE",
              help="Print only the value nearest to this one.")
@click.option("--json", "as_json", is_flag=True, help="Print a JSON list of ohms.")
@friendly
def series_command(name: str, span: Range, nearest: Given | None, as_json: bool) -> None:
    """List the values of an IEC 60063 series (E3 ... E192)."""
    from synth.catalog.series import nearest_value, series_values
    from synth.units import format_eng, format_rkm

    if nearest is not None:
        values = [nearest_value(nearest.value, name)]
    else:
        values = [float(v) for v in series_values(name, span.low, span.high)]
    if as_json:
        emit_json(values)
        return
    for value in values:
        click.echo(f"{format_eng(value, 'Ω'):>10}  {format_rkm(value)}")


@cli.command("check")
@click.argument("design_file", type=_DESIGN_FILE)
@click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
@click.option("--verify", is_flag=True,
              help="Also solve by nodal analysis and report the largest difference.")
@click.option("--time-limit", type=float, default=None, metavar="SECONDS",
              help="Wall-clock limit of the whole check: the Monte Carlo is shrunk to the "
                   "samples that fit (at least 1,000), and the output says how many ran.")
@spread_options
@_FORCE_PLOTS
@jobs_option
@friendly
def check_command(design_file: str, as_json: bool, verify: bool, time_limit: float | None,
                  spread: SpreadOptions, force: bool, jobs: int) -> None:
    """Analyse a design whose values are all given.

    Prints node voltages, each part's current, dissipation and use of its
    derated rating, and whether each target is met.  Exits 1 when a target
    is missed or a part is over its allowance.  A DESIGN_FILE of - reads the
    design from standard input.
    """
    from synth.checking import check
    from synth.deadline import Deadline, command_start
    from synth.report.check import check_json, check_text

    check_time_limit(time_limit)
    check_plot_folder(spread.plots)
    settings = spread.settings()
    design = read_design(design_file)
    deadline = Deadline(time_limit, start=command_start())
    result = check(design, verify=verify, spread=settings, jobs=jobs, deadline=deadline)
    written = []
    if spread.plots:
        from synth.report.plots import check_pictures
        from synth.spread.range_curve import range_curves

        curves = range_curves(result.design, result.positions, result.values)
        figures = check_pictures(result, curves)
        plots = plot_files(figures, spread.plots, deadline)
        note = plots_left_out(figures, plots)
        if note is not None:
            click.echo(f"rnsynth: note: {note}", err=True)
        written = write_files(plots, force=force, folder=spread.plots if plots else None)
    if as_json:
        emit_json(check_json(result))
    else:
        click.echo(check_text(result))
        for path in written:
            click.echo(f"plot written: {path}")
    if not result.ok:
        sys.exit(1)


@cli.command("design")
@click.argument("design_file", type=_DESIGN_FILE)
@search_options
@_FORCE_PLOTS
@jobs_option
@friendly
def design_command(design_file: str, search: SearchOptions, spread: SpreadOptions,
                   force: bool, jobs: int) -> None:
    """Choose standard values for the free parts of a design.

    Shows the ideal continuous values, then the best candidates, each
    re-checked by a full mesh solve: values, each target's value and error,
    the hottest part and supply current.  Exits 1 when no standard values
    meet every window and limit (the nearest designs are shown and the binding
    target or limit named).  A DESIGN_FILE of - reads the design from standard
    input.
    """
    run_design(read_design(design_file), search, spread, force=force, jobs=jobs)




@cli.command("bom")
@click.argument("files", nargs=-1, required=True, type=_DESIGN_FILE)
@click.option("--stock", type=click.Path(dir_okay=False), default=None,
              help="House stock list (CSV: value, package, tolerance, tcr, quantity, ...).")
@click.option("--stock-only", is_flag=True,
              help="Choose only values the stock list holds.")
@click.option("--pool", type=int, default=None,
              help="Feasible candidates kept per network for consolidation [default: 200].")
@click.option("--format", "form",
              type=click.Choice(["csv", "json", "markdown", "per-designator"]),
              default="csv", show_default=True,
              help="Output format; per-designator: a CSV row per part, for a board tool.")
@click.option("--encoding", type=click.Choice(["utf-8", "utf-8-sig", "ascii"]), default=None,
              help="Text encoding [default: utf-8-sig (with a byte-order mark) for CSV, "
                   "utf-8 otherwise]; ascii spells out ohm.")
@click.option("--renumber", is_flag=True,
              help="Number every part afresh in board order (R1, R2, ...); by default the "
                   "design files' designators are kept and only repeats renumbered.")
@click.option("--ranges", is_flag=True,
              help="Collapse runs of designators (R1–R4) instead of listing each.")
@click.option("--output", type=click.Path(dir_okay=False, allow_dash=True), default=None,
              help="Write the BOM to this file instead of standard output (-: standard "
                   "output).")
@click.option("--force", is_flag=True, help="Replace an existing output file.")
@click.option("--time-limit", type=float, default=30.0, show_default=True,
              metavar="SECONDS",
              help="Wall-clock limit of the whole command: the networks' searches and the "
                   "consolidation (a guard: when it binds, a rerun may choose differently).")
@click.option("--work-limit", type=float, default=BOM_WORK_LIMIT, show_default=True,
              metavar="UNITS",
              help="Work limit of the consolidation in solver work units (about a second "
                   "each); the same board and limit give the same BOM.")
@click.option("--quiet", is_flag=True, help="No summary and no progress lines.")
@jobs_option
@friendly
def bom_command(files: tuple[str, ...], stock: str | None, stock_only: bool, pool: int | None,
                form: str, encoding: str | None, renumber: bool, ranges: bool,
                output: str | None,
                force: bool, time_limit: float, work_limit: float, quiet: bool,
                jobs: int) -> None:
    """Bill of materials for a board: design files and/or board files.

    Designs every network, then chooses one design per network so that the
    board has the fewest distinct BOM lines (CP-SAT, exact within the time
    limit), and writes one line per distinct orderable part.  A FILE of - reads a
    board or design file from standard input.
    """
    from synth.bom.build import build_bom
    from synth.deadline import Deadline, command_start
    from synth.design.board import load_board
    from synth.report.bom import bom_summary, render_bom, resolve_encoding

    check_time_limit(time_limit)
    if not (math.isfinite(work_limit) and work_limit > 0):
        raise DesignError(f"--work-limit {work_limit} must be a positive number of work "
                          "units (a finite one)")
    # refused before the work, and at the end when another run took the name meanwhile
    check_output(output, force=force)
    resolve_encoding(form, encoding)
    board = load_board(list(files), stock=stock, pool=pool,
                       stdin=click.get_binary_stream("stdin"))
    if stock_only and board.stock_path is None:
        raise DesignError("--stock-only needs a stock list; give --stock FILE")

    def note(name: str) -> None:
        if not quiet:
            click.echo(f"designing {name} ...", err=True)

    result = build_bom(board, stock_only=stock_only, time_limit_s=time_limit, progress=note,
                       renumber_all=renumber, work_limit=work_limit, jobs=jobs,
                       deadline=Deadline(time_limit, start=command_start()))
    text = render_bom(result, form, ranges=ranges, encoding=encoding)
    to_file = write_output(STREAM if output is None else output, text, force=force)
    if not quiet:
        click.echo(bom_summary(result), err=not to_file)
        if to_file:
            click.echo(f"BOM written: {output}")
