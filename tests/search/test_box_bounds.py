"""Box bounds of the search: a position of several parts is limited part by part.

The parts of a series position carry one current, so the hottest takes at least 1/N
of the position's power and at least 1/N of its voltage; the parts of a parallel
position all see its full voltage and the hottest takes at least 1/N of its power
[HB-ohm].  A box may only be pruned when some *part* must break its allowance: were
the position's total charged to one part, the search would lose designs that hold.
The answers are compared with the independent exhaustive search [CALC-exhaustive],
whose derating and margins are written out in tests/brute.py [CP-derating] [CP-margin].
"""

from __future__ import annotations

import numpy as np
import pytest
from brute import exhaustive
from hypothesis import given, settings
from hypothesis import strategies as st

from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.search.choices import choices_for
from synth.search.problem import SearchProblem
from synth.synthesis import synthesize


def supply(value):
    return [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd", "value": value}]


# 0603 at 25 °C: 0.1 W x 50 % = 50 mW and 50 V x 80 % = 40 V per part [CP-chip-ratings]
ALLOWED_W, ALLOWED_V = 0.05, 40.0

DESIGNS = {
    # about 70 V across R1: each of its two parts sees about 35 V, the pair 70 V
    "series pair over one part's voltage": {
        "source": supply("100 V"),
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["100k", "1M"], "combine": "series", "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "100k",
                      "package": "0603"}],
        "target": [{"voltage": "out", "equals": "30 V", "within": "2%"}],
    },
    # 60 mW in R1, shared by two parallel parts
    "parallel pair over one part's power": {
        "source": supply("5 V"),
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E24",
                      "range": ["300", "1k"], "combine": "parallel", "package": "0603"}],
        "target": [{"current": "R1", "equals": "12 mA", "within": "3%"}],
    },
    # 12 V x 6 mA = 72 mW in R1, shared by two series parts
    "series pair over one part's power": {
        "source": supply("24 V"),
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "10k"], "combine": "series", "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "2k"}],
        "target": [{"voltage": "out", "equals": "12 V", "within": "3%"}],
    },
}


def _position_totals(candidate, ref):
    parts = [p for p in candidate.parts if p.position == ref]
    return parts, sum(p.power for p in parts)


@pytest.mark.parametrize("name", list(DESIGNS))
def test_position_over_one_parts_allowance_is_still_found(name):
    design = design_from_dict(DESIGNS[name], origin=name)
    result = synthesize(design, top=3)
    # the independent exhaustive search finds feasible designs: so must the search,
    # with the same objectives [CALC-exhaustive]
    objectives, _ = exhaustive(design)
    assert len(objectives) >= 3
    assert result.feasible and result.proven_optimal
    np.testing.assert_allclose([c.objective for c in result.candidates], objectives[:3],
                               rtol=1e-9, atol=1e-12)
    best = result.candidates[0]
    parts, total_power = _position_totals(best, "R1")
    assert len(parts) == 2 and all(p.power <= ALLOWED_W and p.voltage <= ALLOWED_V
                                   for p in parts)
    # the position as a whole is beyond what one part may take: the share matters
    arrangement = DESIGNS[name]["resistor"][0]["combine"]
    total_voltage = (sum(p.voltage for p in parts) if arrangement == "series"
                     else parts[0].voltage)
    assert total_power > ALLOWED_W or total_voltage > ALLOWED_V


def test_string_of_three_equal_parts_shares_the_voltage():
    # 3 equal E24 parts in series: each sees a third of the string's voltage [HB-ohm]
    # and may take 40 V and 50 mW [CP-chip-ratings] [CP-margin]; R2 is unrated
    design = design_from_dict({
        "source": supply("150 V"),
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["30k", "3M"], "combine": "series", "parts": 3,
                      "equal_parts": True, "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "100k"}],
        "target": [{"voltage": "out", "equals": "50 V", "within": "2%"}],
    }, origin="string")
    # by hand: each part v of E24 from 10k to 1M [IEC60063], current 150 / (3v + 100k)
    e24 = np.array([1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6,
                    3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1])
    each = np.concatenate([e24 * 1e4, e24 * 1e5, [1e6]])
    current = 150.0 / (3 * each + 100e3)
    errors = np.abs(current * 100e3 - 50.0) / 50.0
    ok = (current * each <= ALLOWED_V) & (current ** 2 * each <= ALLOWED_W) & (errors <= 0.02)
    want = float(each[ok][np.argmin(errors[ok])])
    assert want == 68e3
    best = synthesize(design, top=1).candidates[0]
    assert best.values == {"R1A": want, "R1B": want, "R1C": want}
    string_voltage = 3 * want * float(current[each == want][0])
    assert string_voltage > ALLOWED_V  # more than one part could take alone


@settings(max_examples=60, deadline=None)
@given(data=st.data())
@pytest.mark.parametrize("name", list(DESIGNS))
def test_box_bounds_never_prune_a_feasible_candidate(name, data):
    # soundness of branch and bound: a box holding a feasible candidate is kept, and its
    # bound is at most that candidate's exact objective [CALC-exhaustive]
    design = design_from_dict(DESIGNS[name], origin=name)
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    problem = SearchProblem(design, ev, choices, relaxed=False)
    n = len(choices[0])
    ranked, _ = problem.score(np.arange(n)[:, None])
    feasible_at = ranked.indices[:, 0]
    assert len(feasible_at)
    lo = data.draw(st.integers(0, n - 1))
    hi = data.draw(st.integers(lo, min(n - 1, lo + data.draw(st.integers(0, 40)))))
    bound, keep = problem.box_bounds(np.array([[lo]]), np.array([[hi]]))
    inside = (feasible_at >= lo) & (feasible_at <= hi)
    if inside.any():
        assert keep[0]
        assert bound[0] <= ranked.objective[inside].min() + 1e-12
