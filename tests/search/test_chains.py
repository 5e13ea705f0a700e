"""Series chains bounded by their sums: the search still agrees with exhaustive search.

Resistors joined at a node nothing else touches carry one current, so the rest of
the network sees only their sum [HB-ohm]; the search bounds such a chain as one
resistance and splits boxes over its sums (vertex extremes [HB-bilinear]).  These
designs leave parts free between the taps that matter (under-determined), the case
the chains are for.  Objectives are compared with the independent exhaustive search
(tests/brute.py, nodal analysis, its own derating [CALC-exhaustive] [HB-mna]
[CP-derating] [CP-margin]); the ranked candidates, tie-break included, with an
enumeration of every combination ranked by the same rule, nothing pruned.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from brute import exhaustive

import synth.search.chains as chains_module
from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.search.branch_and_bound import search
from synth.search.chains import SearchSpace
from synth.search.choices import choices_for
from synth.search.problem import SearchProblem
from synth.search.ranking import RankedCandidates


def ladder(parts, taps, series="E12", low="1k", high="10k", supply="12 V", **extra):
    """A chain in -> R1 -> t1 -> ... -> Rn -> gnd with voltages set at ``taps``."""
    nodes = ["in"] + [f"t{k}" for k in range(1, parts)] + ["gnd"]
    resistors = [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": series,
                  "range": [low, high], **extra.get(f"R{k + 1}", {})} for k in range(parts)]
    targets = [{"voltage": f"t{k}", "equals": volts} for k, volts in taps.items()]
    targets += extra.get("targets", [])
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": supply}],
        "resistor": resistors + extra.get("fixed", []), "target": targets,
    }, origin="ladder")


RATED = {f"R{k}": {"package": "0402"} for k in range(1, 6)}

DESIGNS = {
    # 12 V, one tap of four parts: R1 + R2 and R3 + R4 are what the tap sees [HB-divider]
    "one tap of four": ladder(4, {2: "6.2 V"}, targets=[{"current": "V1", "at_most": "1 mA"}]),
    "one tap of five": ladder(5, {2: "7.3 V"}),
    "two taps of five, rated": ladder(5, {1: "9.1 V", 3: "3.3 V"}, **RATED),
    # 12 V into a 2k2 load through 0402 parts (62.5 mW x 50 % allowed each
    # [CP-chip-ratings] [CP-margin]): the power limit of each part of the chain binds
    "chain into a load, power limited": ladder(
        3, {2: "5 V"}, low="100", high="1k", supply="12 V",
        fixed=[{"ref": "RL", "nodes": ["t2", "gnd"], "value": "2k2"}], **RATED),
    # an exact tap (6 V of 12 V): many candidates tie, the tie-break orders them
    "exact half of four": ladder(4, {2: "6 V"}, series="E6", low="1k", high="100k"),
}


def _all_ranked(design, top):
    """Every combination scored and ranked by the search's rule, nothing pruned."""
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    problem = SearchProblem(design, ev, choices, relaxed=False)
    grid = np.meshgrid(*[np.arange(len(c)) for c in choices], indexing="ij")
    every = np.stack([g.ravel() for g in grid], axis=1).astype(np.int64)
    found, _ = problem.score(every)
    return RankedCandidates.empty(len(choices)).merged(found, top), ev, choices


@pytest.mark.parametrize("name", list(DESIGNS))
def test_chains_agree_with_exhaustive_search(name):
    design = DESIGNS[name]
    everything, ev, choices = _all_ranked(design, top=8)
    outcome = search(design, ev, choices, top=8)
    assert outcome.proven
    assert SearchSpace(SearchProblem(design, ev, choices, relaxed=False)).reduced
    # the same candidates in the same order, ties included
    np.testing.assert_array_equal(outcome.ranked.indices, everything.indices)
    # and the objectives of the independent search [CALC-exhaustive]
    objectives, total = exhaustive(design)
    assert total == outcome.combinations
    assert len(objectives) > 0
    np.testing.assert_allclose(outcome.ranked.objective, objectives[:8], rtol=1e-9,
                               atol=1e-12)


def test_chains_solve_far_fewer_candidates():
    design = DESIGNS["one tap of five"]
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    with_chains = search(design, ev, choices, top=3)
    without = search(design, ev, choices, top=3, chains=False)
    np.testing.assert_array_equal(with_chains.ranked.indices, without.ranked.indices)
    assert with_chains.evaluated < without.evaluated / 5


def _space(design, chains=True):
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    return SearchSpace(SearchProblem(design, ev, choices, relaxed=False), chains)


def _members(space):
    return [axis.members for axis in space.axes]


def test_chains_join_the_parts_between_named_nodes():
    space = _space(DESIGNS["one tap of five"])
    assert _members(space) == [(0, 1), (2, 3, 4)]
    # each axis holds the distinct sums, ascending [HB-ohm]
    values = space.bounds.choices[0].values
    e12 = choices_for(DESIGNS["one tap of five"].resistors[0]).values
    assert np.array_equal(values, np.unique(np.add.outer(e12, e12)))
    assert list(space.sizes) == [len(values), len(space.bounds.choices[1].values)]


def test_whole_space_maps_to_every_combination_once():
    space = _space(DESIGNS["two taps of five, rated"])
    lo = np.zeros((1, len(space.sizes)), dtype=np.int64)
    hi = (space.sizes - 1)[None, :]
    p_lo, p_hi = space.places(lo, hi)
    grid = np.meshgrid(*[np.arange(a, b + 1) for a, b in zip(p_lo[0], p_hi[0], strict=True)],
                       indexing="ij")
    every = space.candidates(np.stack([g.ravel() for g in grid], axis=1))
    total = math.prod(len(c) for c in space.problem.choices)
    assert space.volume(lo, hi)[0] == total == len(np.unique(every, axis=0))


@pytest.mark.parametrize(("extra", "members"), [
    # a target on a part's own current or power names it: it is kept apart
    ({"targets": [{"current": "R2", "at_most": "1 mA"}]}, [(0,), (1,), (2, 3, 4)]),
    # different packages, different allowances: the hottest part's bound would not hold
    ({"R4": {"package": "0603"}}, [(0, 1), (2,), (3,), (4,)]),
    # a fixed part at the node: the node touches three resistors
    ({"fixed": [{"ref": "RL", "nodes": ["t4", "gnd"], "value": "10k"}]},
     [(0, 1), (2, 3), (4,)]),
])
def test_what_keeps_parts_apart(extra, members):
    assert _members(_space(ladder(5, {2: "7.3 V"}, **extra))) == members


def test_a_long_chain_is_cut_under_the_cap(monkeypatch):
    monkeypatch.setattr(chains_module, "AXIS_CAP", 13 * 13)
    space = _space(DESIGNS["one tap of five"])
    assert _members(space) == [(0, 1), (2, 3), (4,)]
    assert _members(_space(DESIGNS["one tap of five"], chains=False)) == [(k,) for k in
                                                                          range(5)]


def test_a_regulator_sense_node_is_named():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "regulator": [{"ref": "U1", "output": "out", "sense": "fb", "reference": "gnd",
                       "setpoint": "1.25 V"}],
        "resistor": [{"ref": f"R{k}", "nodes": nodes, "choose": "E12", "range": ["1k", "10k"]}
                     for k, nodes in ((1, ["out", "fb"]), (2, ["fb", "gnd"]),
                                      (3, ["in", "gnd"]))],
        "target": [{"voltage": "out", "equals": "5 V"}],
    })
    assert not _space(design).reduced


def test_a_supply_budget_is_kept_with_chains():
    # 12 V over at least 12.5 kohm of chain: at most 0.96 mA [HB-ohm]
    design = DESIGNS["one tap of five"]
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    with_chains = search(design, ev, choices, top=5, max_supply_a=0.96e-3)
    without = search(design, ev, choices, top=5, max_supply_a=0.96e-3, chains=False)
    assert with_chains.proven and without.proven
    np.testing.assert_array_equal(with_chains.ranked.indices, without.ranked.indices)
    total = [sum(c.values[i] for c, i in zip(choices, row, strict=True))
             for row in with_chains.ranked.indices]
    assert min(total) >= 12 / 0.96e-3
