"""The ``rnsynth`` command line: parses options, calls the library, prints.

Exit codes: 0 success, 1 the run worked but the design fails (a target missed,
a part over its allowance, no standard values meet the limits), 2 bad input.

Start-up stays quick: the library modules (numpy, scipy, ortools, matplotlib
behind them) are imported inside the commands that use them, so ``--version``,
``--help`` and shell completion load only click.
"""

from __future__ import annotations

__all__ = ["cli", "main"]

# imported for their effect: they register the quick commands, report and sweep
import synth.cli.quick
import synth.cli.report
import synth.cli.sweep  # noqa: F401
from synth.cli.commands import cli


def main() -> None:
    """Entry point of the ``rnsynth`` console script."""
    cli(prog_name="rnsynth")
