"""The ``rnsynth`` command line: parses options, calls the library, prints.

Exit codes: 0 success, 1 the run worked but the design fails (a target missed,
a part over its allowance, no standard values meet the limits), 2 bad input.
"""

from __future__ import annotations

__all__ = ["cli", "main"]

import json
import sys
from collections.abc import Callable
from functools import wraps
from typing import Any, TypeVar

import click

from synth import __version__
from synth.analysis import check as run_check
from synth.catalogs import nearest_value, series_names, series_values
from synth.design import load_design
from synth.errors import DesignError, InfeasibleError, RnsynthError
from synth.report import check_json, check_text
from synth.units import format_eng, format_rkm, parse_resistance

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
@_friendly
def check_command(design_file: str, as_json: bool, verify: bool) -> None:
    """Analyse a design whose values are all given.

    Prints node voltages, each part's current, dissipation and use of its
    derated rating, and whether each target is met.  Exits 1 when a target
    is missed or a part is over its allowance.
    """
    design = load_design(design_file)
    result = run_check(design, verify=verify)
    if as_json:
        _emit_json(check_json(result))
    else:
        click.echo(check_text(result))
    if not result.ok:
        sys.exit(1)


def main() -> None:
    """Entry point of the ``rnsynth`` console script."""
    cli(prog_name="rnsynth")
