"""The general measurement of a solved batch (synth/circuit/batch.py).

A resistor's voltage is |I·R| and its dissipation I·R·I [HB-ohm]; both must equal what the
node voltages of the same solve say, |V(a) − V(b)| and |V(a) − V(b)|·|I|, to rounding.  Where
I·R is not a number (an infinite resistance carries no current: ∞·0) the voltage between the
ends is taken instead.
"""

from __future__ import annotations

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from tests.circuit.test_blocks import random_design


def _across_from_nodes(ev, sol):
    ends = ev.network.resistor_ends
    v = sol.node_voltages
    return np.abs(v[:, ends[:, 0]] - v[:, ends[:, 1]])


def test_voltage_and_power_of_each_resistor_agree_with_the_node_voltages():
    for seed in (0, 1, 3, 4):  # networks whose regulators can regulate
        design = design_from_dict(random_design(seed))
        ev = Evaluator(design)
        rng = np.random.default_rng(seed)
        r = ev.weights * 10 ** rng.uniform(-1, 1, (50, len(design.resistors)))
        with np.errstate(all="ignore"):
            got = ev.batch.measure(r, ev.solver.solve(r, ev.nominal_sources.voltages,
                                                      ev.nominal_sources.currents,
                                                      ev.nominal_sources.setpoints),
                                   None)
            sol = ev.solver.solve(r, ev.nominal_sources.voltages, ev.nominal_sources.currents,
                                  ev.nominal_sources.setpoints)
        between = _across_from_nodes(ev, sol)
        ok = np.isfinite(between).all(axis=1)
        assert ok.all()
        scale = np.abs(sol.node_voltages).max(axis=1, keepdims=True)
        np.testing.assert_allclose(got.across[ok], between[ok], rtol=1e-9,
                                   atol=1e-12 * float(scale[ok].max()))
        current = np.abs(sol.branch_currents[:, :len(design.resistors)])
        np.testing.assert_allclose(got.power[ok], (between * current)[ok], rtol=1e-9,
                                   atol=1e-12 * float((scale * current.max()).max()))


def test_an_infinite_resistance_has_the_voltage_between_its_ends():
    # 10 V across R1 = 1k in series with R2 = ∞: no current, all 10 V across R2 [HB-ohm]
    # (R2's typical value of 1M makes it the loop's link, whose ends' voltages are finite)
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "mid"], "value": "1k"},
                     {"ref": "R2", "nodes": ["mid", "gnd"], "value": "1M"}],
        "target": [{"voltage": "mid", "equals": "5 V"}]})
    ev = Evaluator(design)
    r = np.array([[1e3, np.inf], [1e3, 1e3]])
    assert "R2" not in ev.solver.tree_branches
    with np.errstate(all="ignore"):
        fast = ev.evaluate(r)
        general = ev.evaluate_general(r, ev.nominal_sources)
    for got in (fast, general):
        np.testing.assert_allclose(got.resistor_voltage, [[0.0, 10.0], [5.0, 5.0]],
                                   atol=1e-12)
        np.testing.assert_allclose(got.resistor_power[1], [25e-3, 25e-3], rtol=1e-12)
