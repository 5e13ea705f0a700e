"""Errors raised by rnsynth.

Every error a user can cause derives from :class:`RnsynthError`.  Bad input
(:class:`DesignError`) also inherits :class:`ValueError`, so library callers
that already catch ``ValueError`` keep working.  A design that is well formed
but cannot be met by any standard values is :class:`InfeasibleError`: that is
an engineering answer, not a bug, and the command line exits 1 for it.
"""

from __future__ import annotations

__all__ = ["DesignError", "InfeasibleError", "RnsynthError", "nearest_name"]

import difflib
from collections.abc import Iterable


class RnsynthError(Exception):
    """Base class of every error rnsynth raises on purpose."""


class DesignError(RnsynthError, ValueError):
    """Bad input: a design file, a value, an option or a catalogue row.

    The message is one sentence naming the file and item, the value, the
    rule broken and the fix.  The command line exits 2.
    """


class InfeasibleError(RnsynthError):
    """No standard values meet every target window and limit (exit 1)."""


def nearest_name(word: str, choices: Iterable[str]) -> str:
    """Return a ``"; did you mean 'x'?"`` hint, or ``""`` when nothing is close.

    Parameters
    ----------
    word : str
        The unknown name the user wrote.
    choices : iterable of str
        The valid names.

    Examples
    --------
    >>> nearest_name("tolerence", ["tolerance", "tcr"])
    "; did you mean 'tolerance'?"
    """
    pool = list(choices)
    close = difflib.get_close_matches(word, pool, n=1, cutoff=0.6)
    if not close:
        lowered = {c.lower(): c for c in pool}
        if word.lower() in lowered:
            close = [lowered[word.lower()]]
    return f"; did you mean '{close[0]}'?" if close else ""
