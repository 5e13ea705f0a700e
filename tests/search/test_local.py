"""The local descent's moves (synth/search/local.py), listed in their documented order.

Each round tries every single step of one position by ±1..3 catalogue steps, every pair of
steps of two positions, and every common shift of all positions (each with one position
nudged by one more step), inside the space; ties go to the first.  The list is written out
here position by position, as plain loops (common practice: coordinate search on a
lattice), and must equal the vectorised one row for row.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from synth.search.local import _PAIR_REACH, _SHIFT_REACH, _STEPS, _moves


def _written_out(point, sizes):
    k = len(point)
    rows = []
    for step in _STEPS:
        for p in range(k):
            row = list(point)
            row[p] += step
            rows.append(row)
    reach = next((r for most, r in _PAIR_REACH if k <= most), 0)
    if k > 1 and reach:
        steps = [s for s in range(-reach, reach + 1) if s]
        for da, db in itertools.product(steps, steps):
            for a, b in itertools.combinations(range(k), 2):
                row = list(point)
                row[a] += da
                row[b] += db
                rows.append(row)
    for shift in range(-_SHIFT_REACH, _SHIFT_REACH + 1):
        if not shift:
            continue
        for nudge in [None, *[(p, 1) for p in range(k)], *[(p, -1) for p in range(k)]]:
            row = [x + shift for x in point]
            if nudge is not None:
                row[nudge[0]] += nudge[1]
            rows.append(row)
    return np.array([r for r in rows if all(0 <= x < s for x, s in zip(r, sizes, strict=True))],
                    dtype=np.int64).reshape(-1, k)


@pytest.mark.parametrize("k", [1, 2, 3, 4, 7, 10, 11, 24, 25])
def test_moves_are_the_written_out_list_in_its_order(k):
    rng = np.random.default_rng(k)
    for _ in range(3):
        sizes = rng.integers(2, 60, k)
        point = np.array([rng.integers(0, s) for s in sizes], dtype=np.int64)
        np.testing.assert_array_equal(_moves(point, sizes), _written_out(point, sizes))
