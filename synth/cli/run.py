"""Running a design or a quick command's design: search, print or emit JSON, plots, exit code.
"""

from __future__ import annotations

__all__ = ["Rules", "quick_run", "run_design"]

import sys
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import click

from synth.errors import DesignError

if TYPE_CHECKING:
    from synth.design.model import Design
    from synth.results import Candidate, SynthesisResult

from synth.cli.options import (
    Progress,
    QuickOptions,
    SearchOptions,
    SpreadOptions,
    check_time_limit,
    emit_json,
    write_plots,
)

Rules = Callable[["Candidate"], list[str]]

_FRONT_SECONDS = 30.0  # the most the front of the plots may take (its plot says if cut short)


def run_design(design: Design, search: SearchOptions, spread: SpreadOptions,
                rules: Rules | None = None, prepared: SynthesisResult | None = None) -> None:
    from synth.report.synthesis import design_json, design_text
    from synth.synthesis import synthesize

    if not design.free_resistors:
        raise DesignError(f"{design.origin}: no resistor has choose = ...; mark the parts "
                          "rnsynth should pick, or use rnsynth check")
    if search.top < 1:
        raise DesignError(f"--top {search.top} must be at least 1")
    settings = spread.settings()
    check_time_limit(search.time_limit)
    if search.min_yield is not None and search.require not in (None, "yield"):
        raise DesignError("--min-yield goes with --require yield; add it or drop --min-yield")
    for note in design.deprecations:
        click.echo(f"rnsynth: note: {note}", err=True)
    progress = Progress(enabled=not search.quiet and sys.stderr.isatty())
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
        emit_json(document)
    else:
        click.echo(design_text(result))
        if rules is not None and result.candidates:
            click.echo("rules of thumb for the best design:")
            for line in rules(result.candidates[0]):
                click.echo(f"  {line}")
    if spread.plots and result.candidates:
        from synth.front import error_front
        from synth.report.plots import design_pictures

        front = error_front(design, time_limit_s=_FRONT_SECONDS if search.time_limit is None
                            else min(search.time_limit, _FRONT_SECONDS),
                            require=result.require)
        write_plots(spread.plots, design_pictures(result, cost=search.plot_axis, front=front),
                    search.as_json)
    if not result.feasible:
        sys.exit(1)


def quick_run(tables: dict[str, Any], origin: str, quick: QuickOptions, search: SearchOptions,
               spread: SpreadOptions, rules: Rules | None = None) -> None:
    from synth.design.reader import design_from_dict
    from synth.files import write_atomic
    from synth.templates.passive import option_names

    names = option_names(tables)

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

        tables, design, prepared, chosen = synthesize_auto(tables, origin, run, options=names)
        if not search.as_json:
            click.echo("packages chosen: " + ", ".join(map(str, chosen)))
    else:
        design = design_from_dict(tables, origin=origin, options=names)
    if quick.save is not None:
        import tomli_w

        write_atomic(quick.save, tomli_w.dumps(tables), force=quick.force)
        if not search.as_json:
            click.echo(f"design file written: {quick.save}")
    run_design(design, search, spread, rules, prepared)
