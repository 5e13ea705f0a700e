"""The ``rnsynth`` command line: parses options, calls the library, prints.

Exit codes: 0 success, 1 the run worked but the design fails (a target missed,
a part over its allowance, no standard values meet the limits), 2 bad input.

Start-up stays quick: the library modules (numpy, scipy, ortools, matplotlib
behind them) are imported inside the commands that use them, so ``--version``,
``--help`` and shell completion load only click.
"""

from __future__ import annotations

__all__ = ["BLAS_THREADS", "cli", "main"]

import os

# imported for their effect: they register the quick commands, report and sweep
import synth.cli.quick
import synth.cli.report
import synth.cli.sweep  # noqa: F401
from synth.cli.commands import cli

BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")
"""Thread counts of the linear-algebra libraries, set to 1 unless the user set them: the
command's own parallelism is its ``--jobs`` processes, and threads that wait on busy cores
made a large network's sparse solves ten times slower on a loaded machine (measured:
``check`` of a 1,000-resistor grid under ``--time-limit 2`` took 14.5 s with the default
threads, 3.3 s with one)."""


def main() -> None:
    """Entry point of the ``rnsynth`` console script."""
    for name in BLAS_THREADS:  # before numpy loads: it reads them once
        os.environ.setdefault(name, "1")
    cli(prog_name="rnsynth")
