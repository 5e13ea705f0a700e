"""Running a design or a quick command's design: search, print or emit JSON, plots, exit code.
"""

from __future__ import annotations

__all__ = ["Rules", "quick_run", "run_design"]

import sys
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

import click

from synth.errors import DesignError

if TYPE_CHECKING:
    from synth.deadline import Deadline
    from synth.design.model import Design
    from synth.results import Candidate, SynthesisResult
    from synth.spread.records import SpreadSettings

from synth.cli.options import (
    Progress,
    QuickOptions,
    SearchOptions,
    SpreadOptions,
    check_time_limit,
    emit_json,
)
from synth.cli.streams import (
    STREAM,
    check_output,
    check_plot_folder,
    plot_files,
    plots_left_out,
    write_files,
    write_output,
)

Rules = Callable[["Candidate"], list[str]]

_FRONT_SECONDS = 30.0  # the most the front of the plots may take (its plot says if cut short)


def _checked_settings(search: SearchOptions, spread: SpreadOptions) -> SpreadSettings:
    """The spread settings, after refusing the search and spread options that are wrong."""
    if search.top < 1:
        raise DesignError(f"--top {search.top} must be at least 1")
    settings = spread.settings()
    check_time_limit(search.time_limit)
    if search.min_yield is not None and search.require not in (None, "yield"):
        raise DesignError("--min-yield goes with --require yield; add it or drop --min-yield")
    check_plot_folder(spread.plots)
    return settings


def _plots(design: Design, result: SynthesisResult, search: SearchOptions,
           spread: SpreadOptions, deadline: Deadline) -> list[tuple[Path, bytes]]:
    """The plot files of a search (see ``synth.report.plots.design_pictures``).

    The front takes at most half the time the command has left (it says if cut short).
    """
    if not spread.plots or not result.candidates:
        return []
    from synth.front import error_front
    from synth.report.plots import design_pictures

    budget = deadline.budget(0.5)
    front = error_front(design, time_limit_s=_FRONT_SECONDS if budget is None
                        else max(min(budget, _FRONT_SECONDS), 0.01),
                        require=result.require)
    from synth.spread.range_curve import range_curves

    best = result.candidates[0].check
    curves = range_curves(result.design, best.positions, best.values)
    extra = {"curves": curves} if curves else {}  # only designs of operating points have them
    figures = design_pictures(result, cost=search.plot_axis, front=front, **extra)
    files = plot_files(figures, spread.plots, deadline)
    note = plots_left_out(figures, files)
    if note is not None:
        click.echo(f"rnsynth: note: {note}", err=True)
    return files


def run_design(design: Design, search: SearchOptions, spread: SpreadOptions,
               rules: Rules | None = None, prepared: SynthesisResult | None = None, *,
               force: bool = False, save: tuple[str, str] | None = None,
               deadline: Deadline | None = None, jobs: int = 1) -> None:
    """Search ``design``, write its output files, print its report, exit 1 when it fails.

    ``save`` is a design file to write with the plots (its name and TOML text; ``-``
    puts it on standard output and the report on stderr); ``force`` lets them replace
    existing files.  Nothing is written when an option or a write is refused.
    ``deadline`` is the command's (``--time-limit``), started with it; one is started
    here when not given.  ``jobs`` is the most processes the search may use.
    """
    from synth.deadline import Deadline, command_start
    from synth.report.synthesis import design_json, design_text
    from synth.synthesis import synthesize

    deadline = deadline or Deadline(search.time_limit, start=command_start())

    if not design.free_resistors:
        raise DesignError(f"{design.origin}: no resistor has choose = ...; mark the parts "
                          "rnsynth should pick, or use rnsynth check")
    settings = _checked_settings(search, spread)
    to_stdout = save is not None and save[0] == STREAM
    for note in design.deprecations:
        click.echo(f"rnsynth: note: {note}", err=True)
    progress = Progress(enabled=not search.quiet and sys.stderr.isatty())
    least_cost = prepared is None and any(r.classes for r in design.free_resistors)
    try:
        if least_cost:  # the parts' classes are chosen too, at least cost
            from synth.least_cost import choose_classes

            choice = choose_classes(
                design, top=search.top, time_limit_s=search.time_limit, progress=progress,
                spread=settings, rank_by=search.rank_by, require=search.require,
                min_yield=None if search.min_yield is None else search.min_yield.value,
                deadline=deadline, jobs=jobs)
            result = choice.result
        else:
            result = (prepared if prepared is not None else synthesize(
                design, top=search.top, time_limit_s=search.time_limit, progress=progress,
                spread=settings, rank_by=search.rank_by, require=search.require,
                min_yield=None if search.min_yield is None else search.min_yield.value,
                deadline=deadline, jobs=jobs))
    finally:
        progress.close()
    # the files first, all of them or none; then what is printed
    plots = _plots(design, result, search, spread, deadline)
    saved: list[tuple[str | Path, str | bytes]] = (
        [save] if save is not None and not to_stdout else [])
    written = write_files([*saved, *plots], force=force,
                          folder=spread.plots if plots else None)
    if save is not None:
        if to_stdout:
            write_output(STREAM, save[1], force=force)
        elif not search.as_json:
            click.echo(f"design file written: {save[0]}")
    if search.as_json:
        document = design_json(result)
        if rules is not None and result.candidates:
            document["rules"] = rules(result.candidates[0])
        if least_cost:
            from synth.report.classes import classes_json

            document["classes"] = classes_json(choice)
        emit_json(document)
    else:
        click.echo(design_text(result), err=to_stdout)
        if least_cost:
            from synth.report.classes import classes_text

            click.echo("", err=to_stdout)
            click.echo(classes_text(choice), err=to_stdout)
        if rules is not None and result.candidates:
            click.echo("rules of thumb for the best design:", err=to_stdout)
            for line in rules(result.candidates[0]):
                click.echo(f"  {line}", err=to_stdout)
    if not search.as_json:
        for path in written[len(saved):]:
            click.echo(f"plot written: {path}", err=to_stdout)
    if not result.feasible or (least_cost and choice.classes is None):
        sys.exit(1)


def quick_run(tables: dict[str, Any], origin: str, quick: QuickOptions, search: SearchOptions,
              spread: SpreadOptions, rules: Rules | None = None) -> None:
    from synth.design.reader import design_from_dict
    from synth.templates.passive import option_names

    names = option_names(tables)
    # refused before the search, and at the end when another run took the name meanwhile
    check_output(quick.save, force=quick.force)
    if quick.save == STREAM and search.as_json:
        raise DesignError("--save - and --json would both write to standard output; name a "
                          "file for --save")
    _checked_settings(search, spread)
    from synth.deadline import Deadline, command_start

    # the whole command's, every package tried
    deadline = Deadline(search.time_limit, start=command_start())
    prepared = None
    if quick.package.lower() == "auto":
        from synth.synthesis import synthesize
        from synth.templates.packages import synthesize_auto

        def run(candidate_design: Design) -> SynthesisResult:
            return synthesize(candidate_design, top=search.top, time_limit_s=search.time_limit,
                              spread=spread.settings(), rank_by=search.rank_by,
                              require=search.require,
                              min_yield=None if search.min_yield is None
                              else search.min_yield.value, deadline=deadline,
                              jobs=quick.jobs)

        tables, design, prepared, chosen = synthesize_auto(tables, origin, run, options=names)
        if not search.as_json:
            click.echo("packages chosen: " + ", ".join(map(str, chosen)),
                       err=quick.save == STREAM)
    else:
        design = design_from_dict(tables, origin=origin, options=names)
    save = None
    if quick.save is not None:
        import tomli_w

        save = (quick.save, tomli_w.dumps(tables))
    run_design(design, search, spread, rules, prepared, force=quick.force, save=save,
               deadline=deadline, jobs=quick.jobs)
