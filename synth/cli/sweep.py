"""The ``sweep`` command: one synthesis (or check) per point of a grid of design-file values.
"""

from __future__ import annotations

__all__ = ["sweep_command"]

import sys
from pathlib import Path

import click

from synth.cli.commands import cli
from synth.cli.options import check_time_limit, friendly
from synth.cli.streams import STREAM, check_output, write_files, write_output
from synth.errors import DesignError

_FORMAT_OF_SUFFIX = {".csv": "csv", ".json": "json", ".txt": "table"}
_PLOT_SUFFIXES = (".png", ".svg")


def _format(form: str | None, as_json: bool, output: str | None) -> str:
    """``--format``, ``--json``, else the format of ``--output``'s suffix, else a table."""
    if as_json:
        if form not in (None, "json"):
            raise DesignError(f"--json and --format {form} ask for two formats; keep one")
        return "json"
    if form is not None:
        return form
    if output is None or output == STREAM:
        return "table"
    suffix = Path(output).suffix.lower()
    if suffix not in _FORMAT_OF_SUFFIX:
        raise DesignError(f"--output {output}: the name ends in neither .csv, .json nor .txt; "
                          "give one of them or --format csv|json|table")
    return _FORMAT_OF_SUFFIX[suffix]


def _check_plot(plot: str | None, *, force: bool) -> None:
    if plot is None:
        return
    if plot == STREAM or Path(plot).suffix.lower() not in _PLOT_SUFFIXES:
        raise DesignError(f"--plot {plot}: name a .png or .svg file for the plot")
    check_output(plot, force=force)


def _tables(design_file: str) -> tuple[dict[str, object], str]:
    """The design's tables and its name (``<stdin>`` for ``-``)."""
    from synth.inputs import STDIN, decode_input, parse_toml, read_stream, read_toml, require_suffix

    if design_file == STREAM:
        data = read_stream(click.get_binary_stream("stdin"), "design file", STDIN)
        return parse_toml(decode_input(data, STDIN), STDIN, "design file"), STDIN
    require_suffix(design_file, "design file")
    return read_toml(design_file, "design file"), design_file


@cli.command("sweep")
@click.argument("design_file", type=click.Path(dir_okay=False, allow_dash=True))
@click.option("--over", "over", multiple=True, required=True,
              metavar="KEY=LOW:HIGH:STEPS[:log]",
              help="A design-file value to step (repeatable; the grid is every "
                   "combination, the first --over varying slowest), e.g. "
                   "source.V1.value=10V:15V:6; :log spaces the values on a log scale.")
@click.option("--check", "check_only", is_flag=True,
              help="Check every point instead of choosing its free parts.")
@click.option("--jobs", type=int, default=None, metavar="N",
              help="Worker processes [default: all cores]; 1 runs in this process.")
@click.option("--cluster", default=None, metavar="tcp://HOST:PORT",
              help="Run the points on this Dask distributed scheduler's workers "
                   "(needs the cluster extra).")
@click.option("--time-limit", type=float, default=None, metavar="SECONDS",
              help="Each point's search time limit (a point cut short is marked unproven).")
@click.option("--format", "form", type=click.Choice(["table", "csv", "json"]), default=None,
              help="Output format [default: from --output's suffix, else table].")
@click.option("--json", "as_json", is_flag=True, help="Print the results as JSON.")
@click.option("--output", type=click.Path(dir_okay=False, allow_dash=True), default=None,
              help="Write the results to this file (.csv, .json or .txt; -: standard "
                   "output).")
@click.option("--plot", type=click.Path(dir_okay=False), default=None, metavar="FILE",
              help="Draw the largest error against the first --over key (.png or .svg).")
@click.option("--force", is_flag=True, help="Let --output and --plot replace existing files.")
@friendly
def sweep_command(design_file: str, over: tuple[str, ...], check_only: bool, jobs: int | None,
                  cluster: str | None, time_limit: float | None, form: str | None,
                  as_json: bool, output: str | None, plot: str | None, force: bool) -> None:
    """Synthesise (or check) a design at every point of a grid of its values.

    Each --over KEY names a value of DESIGN_FILE: TABLE.ITEM.FIELD (source.VBAT.value,
    resistor.RLOAD.value, target.2.equals; ITEM a designator, a target's name, or a
    position from 1) or design.FIELD (design.ambient).  Prints one row per point:
    the swept values, the verdict, the largest error, whether the best design is
    proven optimal, the supply current and the chosen values.  Exits 1 when any
    point fails.  A DESIGN_FILE of - reads the design from standard input.
    """
    from synth.report.sweep import render_sweep, sweep_summary
    from synth.sweep import sweep, sweep_axis

    check_time_limit(time_limit)
    if jobs is not None and jobs < 1:
        raise DesignError(f"--jobs {jobs} must be at least 1 (1 runs in this process)")
    fmt = _format(form, as_json, output)
    check_output(output, force=force)
    _check_plot(plot, force=force)
    axes = [sweep_axis(text) for text in over]
    tables, origin = _tables(design_file)
    result = sweep(tables, axes, check_only=check_only, jobs=jobs, cluster=cluster,
                   time_limit_s=time_limit, origin=origin)
    text = render_sweep(result, fmt)
    files: list[tuple[str | Path, str | bytes]] = []
    if output is not None and output != STREAM:
        files.append((output, text))
    if plot is not None:
        from synth.report.pictures.axes import figure_bytes
        from synth.report.pictures.sweep import sweep_plot

        files.append((plot, figure_bytes(sweep_plot(result), Path(plot).suffix.lower()[1:])))
    written = write_files(files, force=force)
    if output is None or output == STREAM:
        write_output(STREAM, text, force=force)
    else:
        click.echo(sweep_summary(result))
    for path in written:
        click.echo(f"{'plot' if str(path) == plot else 'sweep'} written: {path}",
                   err=output == STREAM)
    if not result.ok:
        sys.exit(1)
