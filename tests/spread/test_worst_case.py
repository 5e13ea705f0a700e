"""Worst case over the tolerance box for every candidate: dissipation peaks inside the box.

A load R fed from an exact 100 Ω source resistance dissipates V²R/(100 + R)², which
peaks at R = 100 Ω with V²/400 (maximum power transfer) [HB-max-power]: a part whose
tolerance box holds 100 Ω can exceed a limit that every vertex of the box meets
[CALC-interior-power].  ``require = "worst-case"`` must then refuse it.  The expected
answers below are worked out by hand from those formulas over the E24 values [IEC60063].
"""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.synthesis import synthesize

E24_62_TO_160 = [62, 68, 75, 82, 91, 100, 110, 120, 130, 150, 160]  # [IEC60063]
LIMIT_W = 0.2497  # just below the 0.25 W peak, above the 0.2495 W at 91 Ω and 110 Ω ±20 %


def load_design(limit):
    """10 V through an exact 100 Ω into RL (E24, ±20 %), out held to 5 V ± 30 %."""
    rl = {"ref": "RL", "nodes": ["out", "gnd"], "choose": "E24", "range": ["62", "160"],
          "tolerance": "20%", "tcr": "0 ppm/C"}
    targets = [{"voltage": "out", "equals": "5 V", "within": "30%"}]
    design = {"design": {"require": "worst-case"}}
    if limit == "package":
        # a 2512 part's 1 W at 25 °C [CP-chip-ratings], of which 24.97 % may be used
        rl["package"] = "2512"
        design["design"]["max_power_use"] = "24.97%"
    else:
        targets.append({"power": "RL", "at_most": f"{LIMIT_W * 1e3} mW"})
    design["source"] = [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                         "value": "10 V"}]
    design["resistor"] = [{"ref": "RS", "nodes": ["in", "out"], "value": "100",
                           "tolerance": "0%", "tcr": "0 ppm/C"}, rl]
    design["target"] = targets
    return design_from_dict(design, origin=f"load limited by {limit}")


def power(r):
    return 100 * r / (100 + r) ** 2  # 10 V, 100 Ω source [HB-max-power]


def holds_over_the_box(r):
    low, high = 0.8 * r, 1.2 * r
    out = [10 * x / (100 + x) for x in (low, high)]  # monotone in RL [HB-bilinear]
    in_window = all(3.5 - 1e-12 <= v <= 6.5 + 1e-12 for v in out)
    peak = 0.25 if low < 100 < high else max(power(low), power(high))
    return in_window and peak <= LIMIT_W


def test_hand_worked_cases():
    # 91 Ω and 110 Ω pass at nominal and at both vertices; only the interior peak fails
    for r in (91, 110):
        assert max(power(r), power(0.8 * r), power(1.2 * r)) < LIMIT_W < 0.25
        assert not holds_over_the_box(r)
    assert [r for r in E24_62_TO_160 if holds_over_the_box(r)] == [68, 75, 150]


@pytest.mark.parametrize("limit", ["package", "power target"])
def test_require_worst_case_refuses_a_box_whose_interior_breaks_the_limit(limit):
    design = load_design(limit)
    nominal = synthesize(design, top=2, require="nominal")
    # at nominal values 91 Ω (4.76 V) and 110 Ω (5.24 V) are best
    assert [c.values["RL"] for c in nominal.candidates] == [91.0, 110.0]
    robust = synthesize(design, top=5)
    assert robust.require == "worst-case" and robust.feasible and robust.proven_optimal
    # by error: 75 Ω gives 4.286 V, 68 Ω 4.048 V, 150 Ω 6 V
    assert [c.values["RL"] for c in robust.candidates] == [75.0, 68.0, 150.0]
    for c in robust.candidates:
        assert holds_over_the_box(c.values["RL"])


def test_the_worst_case_meets_a_zero_edge_within_the_noise_floor():
    # exact parts and sources: the box is the nominal point, 0 V at the balanced
    # midpoint [HB-divider], rounded to about 1e-16 V [CP-noise-floor]
    from synth.checking import check

    from conftest import balanced_bridge

    design = balanced_bridge({"voltage": "out", "at_least": "0 V", "at_most": "0 V"},
                             tolerance="0%", require="worst-case")
    result = check(design)
    assert result.spread is not None and result.spread.targets[0].noise > 0
    assert result.ok and result.problems == ()
