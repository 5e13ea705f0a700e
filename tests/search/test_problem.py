"""The search's box bounds judge each physical part of a combined position.

A position of two parts in series carries the position's voltage between
them; the larger part sees at least half of it.  Bounding a box with the
whole position's voltage against one part's limiting element voltage would
drop boxes that hold feasible designs, so the search would report a design
infeasible that the exhaustive search [CALC-exhaustive] solves.
"""

from __future__ import annotations

import numpy as np
from brute import exhaustive

from synth.design.reader import design_from_dict
from synth.synthesis import synthesize

# 0201 parts: limiting element voltage 25 V, 80 % of it usable (the default use limit).
# About 36 V across R1: more than one 0201 may take, less than two in series see.
SPLIT_BY_VOLTAGE = {
    "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                "value": "40 V"}],
    "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
                  "range": ["10k", "100k"], "combine": "series", "package": "0201"},
                 {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    "target": [{"voltage": "out", "equals": "4 V", "within": "5%"}],
}


def test_series_position_is_limited_part_by_part_not_as_a_whole():
    design = design_from_dict(SPLIT_BY_VOLTAGE, origin="split by voltage")
    objectives, _ = exhaustive(design)
    assert len(objectives) > 0  # feasible only with the voltage shared by two parts
    result = synthesize(design, top=3)
    assert result.feasible and result.proven_optimal
    np.testing.assert_allclose([c.objective for c in result.candidates], objectives[:3],
                               rtol=1e-9, atol=1e-12)
    best = result.candidates[0]
    across = best.check.nodes["in"] - best.check.nodes["out"]
    assert across > 25 * 0.8  # more than one part could take alone


def test_a_band_of_zero_width_at_0_v_is_found_where_the_bridge_balances():
    # R2 = R1 = 4.7k puts the midpoint at 0 V exactly [HB-divider]; the loop solve rounds
    # it to about 1e-16 V of a 3.3 V network, within its noise floor [CP-noise-floor], so
    # the search keeps that candidate (and its box) instead of calling the band infeasible
    from conftest import balanced_bridge

    design = balanced_bridge({"voltage": "out", "at_least": "0 V", "at_most": "0 V"},
                             free=True)
    result = synthesize(design, top=3)
    assert result.feasible and [c.values for c in result.candidates] == [{"R2": 4700.0}]


def _problem(tables):
    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.search.problem import SearchProblem

    design = design_from_dict(tables, origin="bounds")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    return design, choices, SearchProblem(design, Evaluator(design), choices, relaxed=False)


def _whole(choices):
    return (np.zeros((1, len(choices)), dtype=np.int64),
            np.array([[len(c) - 1 for c in choices]], dtype=np.int64))


def test_a_power_target_peaking_inside_a_box_is_bounded_by_currents_and_voltages():
    # 12 V through 10k into R1: P1 = V² R1 / (R1 + 10k)² peaks at R1 = 10k [HB-max-power],
    # inside the box; its ends (1k, 100k) both dissipate about a third of it, so a bound
    # taken from them alone would drop the box that holds the exact design
    from synth.search.branch_and_bound import search

    tables = {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["in", "out"], "value": "10k"}],
        "target": [{"power": "R1", "equals": f"{12.0 ** 2 / (4 * 10e3) * 1e3} mW"}],
    }
    design, choices, problem = _problem(tables)
    assert problem.stressed
    bound, feasible = problem.box_bounds(*_whole(choices))
    assert feasible[0] and bound[0] == 0.0  # the box holds an exact design
    outcome = search(design, problem.ev, choices, top=3, enumerate_below=0)
    objectives, _ = exhaustive(design)  # [CALC-exhaustive]
    assert outcome.proven
    np.testing.assert_allclose(outcome.ranked.objective, objectives[:3], atol=1e-12)


def test_a_box_whose_every_part_is_over_its_allowance_is_dropped():
    # 24 V across 1k..1k2 of 0402 (62.5 mW, 50 % usable [CP-chip-ratings]): at least 480 mW
    tables = {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "24 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E24",
                      "range": ["1k", "1k2"], "package": "0402"}],
        "target": [{"current": "V1", "at_least": "1 mA"}],
    }
    _, choices, problem = _problem(tables)
    assert problem.stressed
    _, feasible = problem.box_bounds(*_whole(choices))
    assert not feasible[0]
    unrated = dict(tables, resistor=[{k: v for k, v in tables["resistor"][0].items()
                                      if k != "package"}])
    _, choices, problem = _problem(unrated)
    assert not problem.stressed  # no power target, no rated part: no stress spans
    _, feasible = problem.box_bounds(*_whole(choices))
    assert feasible[0]
