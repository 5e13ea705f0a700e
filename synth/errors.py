"""Errors raised by rnsynth.

Every error a user can cause derives from :class:`RnsynthError`.  Bad input
(:class:`DesignError`) also inherits :class:`ValueError`, so library callers
that already catch ``ValueError`` keep working.  A design that is well formed
but cannot be met by any standard values is :class:`InfeasibleError`: that is
an engineering answer, not a bug, and the command line exits 1 for it.
"""

from __future__ import annotations

__all__ = ["DesignError", "InfeasibleError", "RnsynthError", "excerpt", "name_list", "nearest_name"]

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


def excerpt(text: str, limit: int = 40, *, quoted: bool = False) -> str:
    """A user's name or text as a message shows it: itself when short and printable, else
    quoted (a newline stays on the line as \\n) and cut to about ``limit`` characters;
    ``quoted`` quotes it always (a label in running text).

    Examples
    --------
    >>> excerpt("R1"), excerpt("R\\n1"), excerpt("x" * 50)[-6:]
    ('R1', "'R\\\\n1'", "xx...'")
    """
    if not quoted and text.isprintable() and len(text) <= limit:
        return text
    shown = repr(text)
    return shown if len(shown) <= limit + 2 else shown[:limit] + "..." + shown[0]


def name_list(names: Iterable[str], limit: int = 10) -> str:
    """Names for a message: at most ``limit`` of them, then how many there are in all.

    Examples
    --------
    >>> name_list(["0402", "0603"]), name_list(f"R{k}" for k in range(1, 21))
    ('0402, 0603', 'R1, R2, R3, R4, R5, R6, R7, R8, R9, R10, ... (20 in all)')
    >>> name_list([])
    '(none)'
    """
    pool = list(names)
    if not pool:
        return "(none)"
    text = ", ".join(excerpt(name) for name in pool[:limit])
    return text if len(pool) <= limit else f"{text}, ... ({len(pool):,} in all)"
