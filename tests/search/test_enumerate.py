"""Small spaces scored outright: the same ranking as branch and bound and as exhaustive search.

Random small designs (ladders and bridges, one target or several, a power target, rated
parts, a supply budget) are searched three ways: scored outright
(:mod:`synth.search.enumerate`), by branch and bound, and by the independent exhaustive
search of tests/brute.py [CALC-exhaustive] (nodal analysis [HB-mna], its own derating
[CP-derating] [CP-margin]).  Enumeration and branch and bound must return the same
candidates in the same order (the documented tie-break decides among equal objectives);
the objectives must be those of the exhaustive search.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from brute import exhaustive

import synth.search.branch_and_bound as bb
import synth.search.enumerate as enumerate_module
from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.search.branch_and_bound import _split, search
from synth.search.choices import choices_for
from synth.search.enumerate import ENUMERATE_BELOW, box_rows, enumerates

SERIES = ("E6", "E12")


def _supply(volts):
    return [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
             "value": f"{volts} V"}]


def _ladder(rng, parts):
    """A ladder of ``parts`` free resistors, in -> t1 -> ... -> gnd, targets on some taps."""
    nodes = ["in"] + [f"t{k}" for k in range(1, parts)] + ["gnd"]
    series = str(rng.choice(SERIES))
    package = {"package": "0402"} if rng.random() < 0.3 else {}
    resistors = [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": series,
                  "range": ["1k", "10k"], **package} for k in range(parts)]
    volts = float(rng.choice([5.0, 12.0, 24.0]))
    taps = sorted(rng.choice(np.arange(1, parts), size=int(rng.integers(1, parts)),
                             replace=False).tolist())
    targets = [{"voltage": f"t{k}",
                "equals": f"{volts * (1 - k / parts) * rng.uniform(0.8, 1.2):.4g} V"}
               for k in taps]
    if rng.random() < 0.3:
        targets.append({"current": "V1", "at_most": f"{volts / (parts * 3e3) * 1e3:.3g} mA"})
    if rng.random() < 0.2:
        targets.append({"power": "R1", "at_most": f"{volts ** 2 / (parts * 2e3) * 1e3:.3g} mW"})
    return {"source": _supply(volts), "resistor": resistors, "target": targets}


def _bridge(rng):
    """A four-arm bridge with a load across it: a null or an offset between the taps."""
    series = str(rng.choice(SERIES))
    arms = [["in", "a"], ["a", "gnd"], ["in", "b"], ["b", "gnd"]]
    resistors = [{"ref": f"R{k + 1}", "nodes": nodes, "choose": series, "range": ["1k", "10k"]}
                 for k, nodes in enumerate(arms)]
    resistors.append({"ref": "RL", "nodes": ["a", "b"], "value": "22k"})
    targets = [{"voltage": ["a", "b"], "equals": f"{rng.uniform(0.1, 1.5):.3g} V"},
               {"voltage": "a", "at_least": "1 V"}]
    return {"source": _supply(5.0), "resistor": resistors, "target": targets}


def _designs(count, seed):
    rng = np.random.default_rng(seed)
    out = []
    for k in range(count):
        tables = _bridge(rng) if k % 4 == 3 else _ladder(rng, int(rng.integers(2, 5)))
        out.append(design_from_dict(tables, origin=f"random design {k}"))
    return out


def _both(design, top=5):
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    enumerated = search(design, evaluator, choices, top=top, enumerate_below=10**9)
    bounded = search(design, evaluator, choices, top=top, enumerate_below=0)
    return enumerated, bounded


@pytest.mark.parametrize("design", _designs(16, seed=20), ids=lambda d: d.origin)
def test_enumeration_ranks_as_branch_and_bound_and_exhaustive_search(design):
    enumerated, bounded = _both(design)
    assert enumerated.proven and bounded.proven
    assert enumerated.evaluated == enumerated.combinations  # every candidate scored
    np.testing.assert_array_equal(enumerated.ranked.indices, bounded.ranked.indices)
    np.testing.assert_array_equal(enumerated.ranked.objective, bounded.ranked.objective)
    # the objectives of the independent exhaustive search, best first [CALC-exhaustive]
    objectives, total = exhaustive(design)
    assert total == enumerated.combinations
    want = objectives[:5]
    np.testing.assert_allclose(enumerated.ranked.objective, want, rtol=1e-9, atol=1e-12)


def test_the_threshold_edge_picks_the_method_and_keeps_the_ranking():
    # 7 x 7 = 49 combinations: enumerated below 50, bounded at 50 and above (the branch
    # and bound then solves box vertices, fewer than 49 candidates are scored)
    design = design_from_dict({
        "source": _supply(12.0),
        "resistor": [{"ref": f"R{k}", "nodes": nodes, "choose": "E6", "range": ["1k", "10k"]}
                     for k, nodes in ((1, ["in", "out"]), (2, ["out", "gnd"]))],
        "target": [{"voltage": "out", "equals": "5 V"}]})
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    total = 49
    below = search(design, evaluator, choices, top=3, enumerate_below=total + 1)
    at = search(design, evaluator, choices, top=3, enumerate_below=total)
    assert below.combinations == at.combinations == total
    assert below.evaluated == total
    assert at.evaluated != total
    np.testing.assert_array_equal(below.ranked.indices, at.ranked.indices)
    objectives, _ = exhaustive(design)  # [CALC-exhaustive]
    np.testing.assert_allclose(below.ranked.objective, objectives[:3], rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize(("total", "axes", "below", "expected"), [
    (ENUMERATE_BELOW - 1, 3, ENUMERATE_BELOW, True),
    (ENUMERATE_BELOW, 3, ENUMERATE_BELOW, False),
    (16, 1, 0, True), (17, 1, 0, False),  # never fewer than 17
    (4 * 2 ** 6, 6, 0, True), (4 * 2 ** 6 + 1, 6, 0, False),  # a box of 4 x 2^k or fewer
    (10 ** 9, 0, 0, True),  # no axis: one candidate
])
def test_enumerates_below_the_largest_of_its_three_thresholds(total, axes, below, expected):
    assert enumerates(total, axes, below) is expected


def test_box_rows_list_every_index_of_every_box_once_in_order():
    lo = np.array([[0, 2, 1], [3, 0, 0], [1, 1, 1]])
    hi = np.array([[1, 4, 1], [3, 1, 2], [1, 1, 1]])
    want = [row for b in range(len(lo)) for row in itertools.product(
        *[range(lo[b, a], hi[b, a] + 1) for a in range(lo.shape[1])])]
    np.testing.assert_array_equal(box_rows(lo, hi), np.array(want))
    # any run of the list is the same run of the whole
    np.testing.assert_array_equal(box_rows(lo, hi, 4, 5), np.array(want[4:9]))
    one = box_rows(lo[:1], hi[:1])  # the one-box path
    np.testing.assert_array_equal(one, np.array(want[:6]))


@pytest.mark.parametrize("every_axis", [False, True])
def test_split_children_are_disjoint_and_cover_their_box(every_axis):
    rng = np.random.default_rng(5)
    a, b = (rng.integers(0, 9, size=(30, 4)) for _ in range(2))
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    lo[0] = hi[0]  # one box of a single candidate along every axis but none split
    lo[0, 1] = hi[0, 1] - 1
    c_lo, c_hi = _split(lo, hi, every_axis)
    parents = sorted(map(tuple, box_rows(lo, hi)))
    children = sorted(map(tuple, box_rows(c_lo, c_hi)))
    assert parents == children  # every candidate in exactly one child
    if every_axis:
        halved = (hi - lo + 1 > 1).sum(axis=1)
        assert len(c_lo) == int((2 ** halved).sum())
    else:
        assert len(c_lo) == 2 * len(lo)


def test_halving_every_axis_or_one_gives_the_same_ranking(monkeypatch):
    design = design_from_dict(_ladder(np.random.default_rng(11), 4), origin="ladder")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    every = search(design, evaluator, choices, top=4, enumerate_below=0)
    monkeypatch.setattr(bb, "_FEW_OPEN", 0)  # one axis per split from the start
    one = search(design, evaluator, choices, top=4, enumerate_below=0)
    assert every.proven and one.proven
    np.testing.assert_array_equal(every.ranked.indices, one.ranked.indices)


def test_an_enumeration_out_of_time_is_unproven(monkeypatch):
    design = _designs(1, seed=3)[0]
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    monkeypatch.setattr(enumerate_module, "SOLVE_ROWS", 4)  # several runs, asked between
    outcome = search(design, Evaluator(design), choices, top=3, time_limit_s=0.0,
                     enumerate_below=10**9)
    assert not outcome.proven and outcome.stopped == "time limit" and outcome.settled == 0
