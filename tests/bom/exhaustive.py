"""An exhaustive search over every choice of a tiny board, written apart from synth/bom.

Reference: every combination of one candidate per network is tried
[CALC-exhaustive]; the order of priorities is the one docs/board-and-bom.md states.
"""

from __future__ import annotations

import itertools


def every_choice(pools):
    """Each choice (a candidate index per network) with its lines, lines to buy and error."""
    for choice in itertools.product(*[range(len(p.lines)) for p in pools]):
        used = set()
        for network, candidate in enumerate(choice):
            used.update(pools[network].lines[candidate])
        error = 0.0
        for network, candidate in enumerate(choice):
            error += pools[network].errors[candidate]
        yield choice, used, error


def lexicographic_best(pools, in_stock=None):
    """(fewest lines, fewest to buy, least total error) over every choice."""
    best = None
    for _, used, error in every_choice(pools):
        buy = 0 if in_stock is None else len([k for k in used if k not in in_stock])
        key = (len(used), buy, error)
        if best is None or key[:2] < best[:2] or (key[:2] == best[:2] and error < best[2]):
            best = key
    return best


def least_error_within(pools, allowed):
    """The least total error of the choices whose lines all lie in ``allowed``."""
    errors = [error for _, used, error in every_choice(pools) if used <= set(allowed)]
    return min(errors)
