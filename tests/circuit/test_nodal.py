"""The modified nodal solver [HB-mna], against the exact rational reference (sympy).

Reference: tests/reference.py [CALC-exact-nodal].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.circuit.measure import Evaluator
from synth.circuit.nodal import nodal_solve
from synth.design.reader import design_from_dict

from reference import exact_nodal


def test_nodal_matches_exact_solve_with_both_source_kinds():
    nodes = ["gnd", "a", "b", "c"]
    resistors = [("a", "b", 1000), ("b", "gnd", 2200), ("b", "c", 470), ("c", "gnd", 3300),
                 ("a", "c", 10000)]
    vsources = [("a", "gnd", 9)]
    isources = [("gnd", "c", 0.002)]
    # the exact rational nodal solve, to a relative 1e-12 [CALC-exact-nodal]
    voltages, currents, delivered = exact_nodal(nodes, resistors, vsources, isources)
    design = design_from_dict({
        "resistor": [{"ref": f"R{k}", "nodes": [a, b], "value": float(v)}
                     for k, (a, b, v) in enumerate(resistors)],
        "source": [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd", "value": 9.0},
                   {"ref": "I1", "kind": "current", "from": "gnd", "to": "c",
                    "value": "2 mA"}],
    })
    ev = Evaluator(design)
    sol = nodal_solve(ev.network, [[float(v) for *_, v in resistors]], [9.0], [0.002])
    for name, k in ev.node_index.items():
        assert sol.node_voltages[0, k] == pytest.approx(float(voltages[name]), rel=1e-12,
                                                        abs=1e-15)
    np.testing.assert_allclose(sol.branch_currents[0, :5], [float(c) for c in currents],
                               rtol=1e-12)
    assert sol.branch_currents[0, 5] == pytest.approx(float(delivered[0]), rel=1e-12)
    assert sol.branch_currents[0, 6] == pytest.approx(0.002)
