"""The entity-first block measurement equals the general evaluation, quantity for quantity.

`Evaluator.evaluate` measures a loop-solved network block by block in the solver's own
layout (synth/circuit/blocks.py); `Evaluator.evaluate_general` solves the whole batch and
measures it candidate-first with the formulas of the targets [HB-divider] [HB-ohm]: the
node-voltage difference, the ratio of two differences and its −20·log10 in dB, a branch
current, I·R·I, the seen resistance, the sum of delivered supply currents and the noise
floors.  Both must give the same numbers (bit for bit; a sum of three or more supply
currents within 1e-15 relative) on random networks with regulators, positions of several
parts, per-candidate sources, more candidates than one block, and candidates beyond the
float range.  [CALC-exact-nodal] checks the solve itself against an independent one.
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.circuit.measure import Evaluator, SourceValues
from synth.design.reader import design_from_dict
from tests.circuit.test_invariants import random_topology

FIELDS = ("targets", "resistor_power", "resistor_voltage", "part_current", "part_voltage",
          "part_power", "target_noise")


def random_design(seed):
    """A random network (no controlled source) with a target of every kind on it."""
    rng = np.random.default_rng(seed)
    tables = random_topology(rng, n_controlled=0, n_regulators=int(rng.integers(0, 3)))
    tables.pop("controlled")
    for r in tables["resistor"]:
        r["value"] = float(10 ** rng.uniform(2, 5))
    if len(tables["resistor"]) > 2:  # a position of two parts, and one of three
        tables["resistor"][1].update(combine="series", value=[1e3, 2.2e3])
        tables["resistor"][2].update(combine="parallel", value=[1e4, 1e4, 4.7e4])
    for s in tables["source"]:
        s["value"] = float(rng.uniform(-24, 24) if s["kind"] == "voltage"
                           else rng.uniform(-0.01, 0.01))
    for g in tables["regulator"]:
        g["setpoint"] = float(rng.uniform(0.5, 5.0))
    nodes = sorted({n for r in tables["resistor"] for n in r["nodes"]} - {"gnd"})
    a, b, c = (str(x) for x in rng.choice(nodes, 3, replace=False))
    first, second = tables["resistor"][0]["ref"], tables["resistor"][-1]["ref"]
    tables["target"] = [
        {"voltage": a, "equals": "1 V"}, {"voltage": [b, c], "at_most": "3 V"},
        {"ratio": [[a, "gnd"], [b, c]], "equals": 0.5},
        {"loss": [[a, "gnd"], [b, "gnd"]], "at_least": "1 dB"},
        {"current": first, "at_most": "1 mA"}, {"current": tables["source"][0]["ref"],
                                                "at_most": "10 mA"},
        {"power": second, "at_most": "10 mW"},
        {"resistance": [a, "gnd"], "equals": "1k"},
        {"resistance": [b, "gnd"], "equals": "1k", "without": [first]},
    ]
    return {key: value for key, value in tables.items() if value}


def compare(ev, r, sources=None, parts=True):
    fast = ev.evaluate(r, sources, parts=parts)
    plain = ev.evaluate_general(np.atleast_2d(r), sources or ev.nominal_sources, parts=parts)
    for field in FIELDS:
        np.testing.assert_array_equal(getattr(fast, field), getattr(plain, field), field)
    for field in ("node_voltages", "branch_currents", "regulator_outputs",
                  "regulator_determinant"):
        np.testing.assert_array_equal(getattr(fast.solution, field),
                                      getattr(plain.solution, field), field)
    np.testing.assert_allclose(fast.supply_current, plain.supply_current, rtol=1e-15, atol=0)
    return fast


@pytest.mark.parametrize("seed", range(12))
def test_block_measure_equals_the_general_evaluation(seed):
    design = design_from_dict(random_design(seed))
    ev = Evaluator(design)
    rng = np.random.default_rng(seed)
    n = ev.solver.preferred_chunk + 77  # two blocks, the second one short
    r = ev.weights * 10 ** rng.uniform(-1, 1, (n, len(design.resistors)))
    r[:3, 0] = [1e300, 1e-300, np.inf]  # per-unit solves, overflow, non-finite values
    r[3] = 1e305
    with np.errstate(all="ignore"):
        compare(ev, r)
        compare(ev, r[:5], parts=False)
        compare(ev, np.asfortranarray(r[:200]))  # read without a transposing copy
        src = ev.nominal_sources
        per_row = SourceValues(src.voltages * rng.uniform(0.5, 1.5, (200, len(src.voltages))),
                               src.currents * rng.uniform(0.5, 1.5, (200, len(src.currents))),
                               src.setpoints)
        compare(ev, r[:200], per_row)


def test_reuse_writes_into_the_previous_arrays_and_nothing_else():
    design = design_from_dict(random_design(3))
    ev = Evaluator(design)
    r = np.tile(ev.weights, (10, 1))
    kept = ev.evaluate(r, reuse=True)
    again = ev.evaluate(r * 2, reuse=True)
    assert np.shares_memory(kept.targets, again.targets)
    fresh = ev.evaluate(r)
    assert not np.shares_memory(fresh.targets, again.targets)
    np.testing.assert_array_equal(again.targets, ev.evaluate(r * 2).targets)


def test_operating_points_and_transfer_targets_measure_alike():
    # a gain and an offset between two operating points [HB-superposition], the supply
    # current the largest point's
    from tests.design.test_transfer import mapper

    design = design_from_dict(mapper({"name": "t", "input": "VIN", "output": "out",
                                      "ends": ["0.1 V", "3.2 V"], "within": "1%",
                                      "gain": 0.155, "offset": "1.65 V"}))
    ev = Evaluator(design)
    assert ev.supply_groups and {t.kind for t in design.targets} >= {"gain", "offset"}
    rng = np.random.default_rng(1)
    r = ev.weights * 10 ** rng.uniform(-1, 1, (300, len(design.resistors)))
    r[0, 0] = np.inf
    with np.errstate(all="ignore"):
        compare(ev, ev.follow(r))


def _address(array):
    return array.__array_interface__["data"][0]


def test_a_result_still_held_is_never_overwritten_and_a_dropped_one_is_written_again():
    design = design_from_dict(random_design(3))
    ev = Evaluator(design)
    r = np.tile(ev.weights, (10, 1))
    first = ev.evaluate(r)
    want = first.targets.copy()
    second = ev.evaluate(r * 2)  # the first result is alive: fresh arrays
    np.testing.assert_array_equal(first.targets, want)
    assert not np.shares_memory(first.targets, second.targets)
    column = second.solution.node_voltages[:, 1]  # a view keeps its arrays held
    volts = column.copy()
    del second
    third = ev.evaluate(r * 3)
    np.testing.assert_array_equal(column, volts)
    assert not np.shares_memory(column, third.solution.node_voltages)
    address = _address(third.targets)
    del third  # nothing holds it now: the next call of that size writes into it
    fourth = ev.evaluate(r * 4)
    assert _address(fourth.targets) == address
    np.testing.assert_array_equal(fourth.targets, ev.evaluate_general(
        r * 4, ev.nominal_sources).targets)
    # a call with reuse never overwrites a result that was returned without it
    fifth = ev.evaluate(r * 5, reuse=True)
    assert not np.shares_memory(fourth.targets, fifth.targets)
    np.testing.assert_array_equal(fourth.targets, ev.evaluate_general(
        r * 4, ev.nominal_sources).targets)


def test_a_smaller_call_writes_into_the_first_columns_of_a_dropped_result():
    design = design_from_dict(random_design(1))
    ev = Evaluator(design)
    r = np.tile(ev.weights, (40, 1)) * np.linspace(0.5, 2.0, 40)[:, None]
    big = ev.evaluate(r)
    address = _address(big.targets)
    del big
    small = ev.evaluate(r[:7] * 3)  # views of the first 7 candidates of the kept arrays
    assert _address(small.targets) == address and small.targets.shape[0] == 7
    with np.errstate(all="ignore"):
        np.testing.assert_array_equal(small.targets, ev.evaluate_general(
            r[:7] * 3, ev.nominal_sources).targets)
        np.testing.assert_array_equal(small.target_noise, ev.evaluate_general(
            r[:7] * 3, ev.nominal_sources).target_noise)
    held = small.targets
    del small
    again = ev.evaluate(r[:5])  # a view of the kept arrays is alive: fresh ones
    assert not np.shares_memory(held, again.targets)


def test_targets_sharing_a_noise_scale_measure_alike():
    # two powers, two voltages and two currents: each scale formed once, in its first
    # target's noise row, and copied to the others [HB-ohm]
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "9 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "a"], "value": "1k"},
                     {"ref": "R2", "nodes": ["a", "gnd"], "value": "2k2"},
                     {"ref": "R3", "nodes": ["a", "gnd"], "value": "4k7"}],
        "target": [{"power": "R1", "at_most": "50 mW"}, {"voltage": "a", "equals": "5 V"},
                   {"current": "R2", "at_most": "5 mA"}, {"power": "R3", "at_most": "20 mW"},
                   {"voltage": ["in", "a"], "at_most": "6 V"},
                   {"current": "V1", "at_most": "20 mA"}]})
    ev = Evaluator(design)
    rng = np.random.default_rng(4)
    r = ev.weights * 10 ** rng.uniform(-1, 1, (64, len(design.resistors)))
    fast = compare(ev, r)
    assert np.all(fast.target_noise[:, 0] == fast.target_noise[:, 3])
    assert np.all(fast.target_noise[:, 1] == fast.target_noise[:, 4])
