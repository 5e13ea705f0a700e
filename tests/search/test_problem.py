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
