"""The orders a search can rank candidates by: names only, light enough for ``--help``.

The command line lists these as the choices of ``--rank-by`` without loading
the numeric libraries the search itself needs.
"""

from __future__ import annotations

__all__ = ["RANKINGS"]

RANKINGS = ("nominal", "worst-case", "yield")
"""What ``synthesize(rank_by=...)`` accepts: nominal error, worst-case error over the
tolerance box, or Monte Carlo yield."""
