"""The ``report`` command: a design-review page (HTML) for one or several designs.
"""

from __future__ import annotations

__all__ = ["report_command"]

import sys
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING, Any

import click

from synth.cli.commands import cli
from synth.cli.options import (
    Progress,
    SearchOptions,
    SpreadOptions,
    check_time_limit,
    friendly,
    page_search_options,
)
from synth.cli.streams import (
    STREAM,
    check_output,
    check_plot_folder,
    plot_files,
    write_files,
    write_output,
)
from synth.errors import DesignError

if TYPE_CHECKING:
    from synth.deadline import Deadline
    from synth.design.board import Board
    from synth.design.model import Design
    from synth.results import CheckResult, SynthesisResult


def _input_files(files: tuple[str, ...], board: Board) -> list[str | Path]:
    """Every file the page depends on: those named, the designs a board names, their tables."""
    paths: list[str | Path] = list(files)
    for net in board.networks:
        design = net.design
        if Path(design.origin).is_file():
            paths.append(design.origin)
        if design.packages_path is not None:
            paths.append(design.packages_path)
        paths.extend(r.stock_path for r in design.resistors if r.stock_path is not None)
    if board.stock_path is not None:
        paths.append(board.stock_path)
    return paths


def _analyse(design: Design, search: SearchOptions, spread: SpreadOptions,
             deadline: Deadline) -> CheckResult | SynthesisResult:
    from synth.checking import check
    from synth.synthesis import synthesize

    # the page draws every target's distribution: keep the Monte Carlo samples
    settings = replace(spread.settings(), keep_samples=True)
    if not design.free_resistors:
        return check(design, spread=settings)
    progress = Progress(enabled=not search.quiet and sys.stderr.isatty())
    try:
        return synthesize(design, top=search.top, time_limit_s=search.time_limit,
                          progress=progress, spread=settings, rank_by=search.rank_by,
                          require=search.require,
                          min_yield=None if search.min_yield is None else search.min_yield.value,
                          deadline=deadline)
    finally:
        progress.close()


_FRONT_SECONDS = 30.0  # the most the error-supply front may take (its plot says if cut short)


def _pictures(result: CheckResult | SynthesisResult, search: SearchOptions,
              deadline: Deadline) -> list[tuple[str, Any]]:
    """Every picture of a design's section (those ``--plots`` writes), by file stem."""
    from synth.front import error_front
    from synth.report.plots import check_pictures, design_pictures
    from synth.results import CheckResult
    from synth.spread.range_curve import range_curves

    if isinstance(result, CheckResult):
        return check_pictures(result, range_curves(result.design, result.positions,
                                                   result.values))
    if not result.candidates:
        return []
    budget = deadline.budget(0.5)  # the front takes at most half the time left
    limit = _FRONT_SECONDS if budget is None else max(min(budget, _FRONT_SECONDS), 0.01)
    front = error_front(result.design, time_limit_s=limit, require=result.require)
    best = result.candidates[0].check
    return design_pictures(result, cost=search.plot_axis, front=front,
                           curves=range_curves(result.design, best.positions, best.values))


@cli.command("report")
@click.argument("files", nargs=-1, required=True,
                type=click.Path(dir_okay=False, allow_dash=True))
@click.option("--output", required=True, type=click.Path(dir_okay=False, allow_dash=True),
              help="The HTML page to write, e.g. review.html (-: standard output).")
@click.option("--force", is_flag=True, help="Replace an existing output file and plots.")
@page_search_options
@friendly
def report_command(files: tuple[str, ...], output: str, force: bool, search: SearchOptions,
                   spread: SpreadOptions) -> None:
    """Write a design-review page: one self-contained HTML file for one or more designs.

    FILES are design files (or board files).  A design with free parts is
    synthesised with the options below and its best candidate shown; a fully
    specified design is checked.  The page gives the inputs and assumptions,
    catalogues and package ratings, the values, every target's status, nominal,
    worst case and yield, each part's stress against its derated rating,
    cautions, figures, the BOM, the rnsynth version and a fingerprint of the
    inputs.  Exits 1 when a design fails (the page is written and says so).
    """
    from synth import __version__
    from synth.bom.build import bom_of_values
    from synth.deadline import Deadline, command_start
    from synth.design.board import load_board
    from synth.digest import input_digest
    from synth.report.review import ReviewedDesign, review_html
    from synth.report.review.section import passes, verdict_lines
    from synth.results import CheckResult

    check_time_limit(search.time_limit)
    if search.top < 1:
        raise DesignError(f"--top {search.top} must be at least 1")
    if search.min_yield is not None and search.require not in (None, "yield"):
        raise DesignError("--min-yield goes with --require yield; add it or drop --min-yield")
    # refused before the work, and at the end when another run took the name meanwhile
    check_output(output, force=force)
    check_plot_folder(spread.plots)
    spread.settings()  # refuses bad --samples / --seed before any work
    board = load_board(list(files), stdin=click.get_binary_stream("stdin"))
    for net in board.networks:
        for note in net.design.deprecations:
            click.echo(f"rnsynth: note: {note}", err=True)
    deadline = Deadline(search.time_limit, start=command_start())  # the whole page's
    results = [_analyse(net.design, search, spread, deadline) for net in board.networks]
    pictures = [_pictures(result, search, deadline) for result in results]
    options: dict[str, object] = {
        "samples": spread.samples, "distribution": spread.distribution, "seed": spread.seed,
        "top": search.top, "rank_by": search.rank_by, "require": search.require or "design",
        "min_yield": "-" if search.min_yield is None else search.min_yield.value,
        "time_limit": "-" if search.time_limit is None else search.time_limit,
        "plot_x": search.plot_axis,
    }
    digest = input_digest(_input_files(files, board), options)
    picks = [r if isinstance(r, CheckResult) else r.candidates[0] if r.candidates else None
             for r in results]
    bom = (bom_of_values(board, [p for p in picks if p is not None])
           if all(p is not None for p in picks) else None)
    several = len(board.networks) > 1 or any(n.count != 1 for n in board.networks)
    designs = [ReviewedDesign(result=r, name=n.name if several else None, count=n.count,
                              pictures=tuple(p))
               for r, n, p in zip(results, board.networks, pictures, strict=True)]
    title = board.title if len(files) == 1 and len(designs) > 1 else None
    page = review_html(designs, bom=bom, digest=digest, version=__version__, title=title)
    plots = []
    if spread.plots:
        several_files = len(results) > 1
        plots = plot_files([(f"design{k}-{stem}" if several_files else stem, figure)
                            for k, drawn in enumerate(pictures, 1)
                            for stem, figure in drawn], spread.plots)
    # the page and the plots are one output: all of it, or none
    to_stdout = output == STREAM
    page_file: list[tuple[str | Path, str | bytes]] = [] if to_stdout else [(output, page)]
    written = write_files([*page_file, *plots], force=force,
                          folder=spread.plots if plots else None)
    if to_stdout:
        write_output(STREAM, page, force=force)
    for result in results:
        word = "passes" if passes(result) else "FAILS"
        click.echo(f"{result.design.origin}: {word}: {verdict_lines(result)[0]}", err=to_stdout)
    for path in written[len(page_file):]:
        click.echo(f"plot written: {path}", err=to_stdout)
    if not to_stdout:
        click.echo(f"review page written: {output}")
    if not all(passes(r) for r in results):
        sys.exit(1)

