"""How far two solutions differ (synth.circuit.solution.solution_difference).

Each quantity is compared relative to the larger of its two values, with a floor from
the network's scale (a componentwise error with a floor, the mixed measure of rounding
analysis [HB-float-error]).  Expected differences are worked out by hand.
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.checking import check
from synth.circuit.solution import MeshSolution, solution_difference

from conftest import divider


def solution(volts, amps):
    return MeshSolution(np.array([volts], dtype=float), np.array([amps], dtype=float),
                        np.zeros((1, 0)))


@pytest.mark.parametrize(("second", "expected"), [
    # equal: no difference
    (([0.0, 10.0, 5.0], [5e-4, 5e-4, 5e-4]), 0.0),
    # 5 µA off in R2: judged against the larger of 0.5 mA and the 1 mA that 10 V drives
    # through 10k (what a drop's rounding in this network moves a current by)
    (([0.0, 10.0, 5.0], [5e-4, 5.05e-4, 5e-4]), 5e-6 / 1e-3),
    # 5 µA off in the source: against the largest current a resistor can carry, 1 mA
    (([0.0, 10.0, 5.0], [5e-4, 5e-4, 5.05e-4]), 5e-6 / 1e-3),
    # a voltage off by 1 mV in a 10 V network: 1e-4
    (([0.0, 10.0, 5.001], [5e-4, 5e-4, 5e-4]), 1e-3 / 10.0),
    # NaN where the other solve is finite: no agreement at all
    (([0.0, 10.0, float("nan")], [5e-4, 5e-4, 5e-4]), np.inf),
])
def test_differences_are_relative_to_the_quantities_compared(second, expected):
    first = solution([0.0, 10.0, 5.0], [5e-4, 5e-4, 5e-4])
    got = solution_difference(first, solution(*second), np.array([[1e4, 1e4]]))
    assert got == pytest.approx(expected, rel=1e-9)


def test_a_tiny_current_is_compared_to_what_its_resistor_can_carry():
    # 10 V over 1 Ω in series with 1 PΩ: 1e-14 A flows [HB-ohm]; a nodal solve gets it
    # from (10 V - 9.99999999999999 V) / 1 Ω, so it is off by the rounding of 10 V
    # (about 1e-15 V, 10 % of that current): relative to what 10 V drives through 1 Ω
    # that is 1e-16, the solve's unit roundoff, not a disagreement [HB-float-error]
    result = check(divider("1", "1e15"), verify=True)
    assert result.verify_difference is not None and result.verify_difference < 1e-14
    mesh = solution([0.0, 10.0, 10.0 - 1e-14], [1e-14, 1e-14, -1e-14])
    nodal = solution([0.0, 10.0, 10.0 - 1e-14], [1.1e-14, 1e-14, -1.1e-14])
    assert solution_difference(mesh, nodal, np.array([[1.0, 1e15]])) == pytest.approx(
        1e-15 / 10.0, rel=1e-6)


@pytest.mark.parametrize(("top", "bottom"), [("1e308", "1e308"), ("1e-300", "1e-300"),
                                             ("1", "1e15"), ("1m", "1T")])
def test_verify_agrees_to_rounding_at_the_edges_of_the_float_range(top, bottom):
    # both solves are exact to rounding here [HB-mna] [HB-mesh]; before per-unit solves
    # and this measure the 1e308 divider differed by 5e-8 and 1 Ω over 1 PΩ by 0.1
    result = check(divider(top, bottom), verify=True)
    assert result.verify_difference is not None and result.verify_difference < 1e-14
