"""The documented ranking: the objective, then fewer distinct values, then coarser series,
then lower supply current (synthesize's Notes; objectives within 1e-12 tie).

Each key is checked against the next one so that swapping any two of them changes
the order.
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.search.ranking import TIE_TOLERANCE, RankedCandidates

# name: (objective, distinct values, coarseness (sum of series ranks), supply current A)
ROWS = {
    "coarse, one value": (0.5 * TIE_TOLERANCE, 1, 3, 2e-3),  # ties with the zeros
    "fine, one value, low current": (0.0, 1, 6, 5e-4),
    "fine, one value": (0.0, 1, 6, 1e-3),
    "coarsest, two values, lowest current": (0.0, 2, 2, 1e-4),
    "better still, but not a tie": (1e3 * TIE_TOLERANCE, 1, 1, 1e-6),
}
EXPECTED = list(ROWS)
# the choice indices run against the expected order: the last key must not decide
INDEX = {name: len(EXPECTED) - k for k, name in enumerate(EXPECTED)}


def ranked(names):
    if not names:
        return RankedCandidates.empty(1)
    rows = [ROWS[n] for n in names]
    return RankedCandidates(
        indices=np.array([[INDEX[n]] for n in names], dtype=np.int64),
        objective=np.array([r[0] for r in rows]),
        distinct=np.array([r[1] for r in rows], dtype=np.int64),
        coarseness=np.array([r[2] for r in rows], dtype=np.int64),
        supply=np.array([r[3] for r in rows]),
    )


def names_of(result):
    by_index = {i: name for name, i in INDEX.items()}
    return [by_index[int(i)] for i in result.indices[:, 0]]


@pytest.mark.parametrize("split", [0, 2, 5])
def test_tie_break_order(split):
    shuffled = [EXPECTED[k] for k in (4, 2, 3, 0, 1)]
    merged = ranked(shuffled[:split]).merged(ranked(shuffled[split:]), top=5)
    assert names_of(merged) == EXPECTED


def test_top_keeps_the_best_and_a_candidate_arriving_twice_once():
    first = ranked(["fine, one value", "coarse, one value"])
    again = ranked(["coarse, one value", "better still, but not a tie"])
    merged = first.merged(again, top=2)
    assert names_of(merged) == ["coarse, one value", "fine, one value"]
    assert names_of(first.merged(again, top=10)) == [
        "coarse, one value", "fine, one value", "better still, but not a tie"]


def test_mirror_designs_tie_on_the_documented_order():
    # 56 + 24 and 24 + 56 ohm in series meet the goal exactly and draw the same current
    # (compared to 12 significant digits); same count of values and same series ranks,
    # so the tie goes to the lower catalogue positions, part by part: R1 = 24 ohm first
    # (docs/design-file.md, ties)
    from synth.design.reader import design_from_dict
    from synth.synthesis import synthesize

    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "8 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "mid"], "choose": "E24",
                      "range": ["20", "60"]},
                     {"ref": "R2", "nodes": ["mid", "gnd"], "choose": "E24",
                      "range": ["20", "60"]}],
        "target": [{"current": "V1", "equals": "100 mA"}],
    })
    ranked = synthesize(design, top=6, spread=None).candidates
    pairs = [(c.values["R1"], c.values["R2"]) for c in ranked if c.objective < 1e-12]
    assert (24.0, 56.0) in pairs and (56.0, 24.0) in pairs
    assert pairs.index((24.0, 56.0)) < pairs.index((56.0, 24.0))


def test_supply_first_breaks_a_tie_by_supply_before_the_other_keys():
    # for the error-against-supply front [HB-epsilon-constraint]: among the tied objectives
    # the lowest supply current first, whatever its distinct values and series
    names = list(reversed(EXPECTED))
    got = ranked([]).merged(ranked(names), top=len(names), supply_first=True)
    order = [EXPECTED[len(EXPECTED) - int(i)] for i in got.indices[:, 0]]
    assert order == ["coarsest, two values, lowest current", "fine, one value, low current",
                     "fine, one value", "coarse, one value", "better still, but not a tie"]
