"""A target swept across a source's range: the curve, its window and worst-case envelope.

The nominal curve is a straight line in the source [HB-superposition]; the envelope at
a swept value is the extreme over every corner of the tolerance box, recomputed here by
the closed form of the offset-and-scale node with every part and the reference at either
end of its tolerance [HB-superposition] [HB-bilinear]; the lower envelope is a minimum of
straight lines, so it never falls below the chord between its ends (and the upper never
rises above it): judging the ends is exact.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from synth.checking import check
from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.report.pictures.transfer_curve import transfer_curve
from synth.spread.range_curve import range_curves
from synth.spread.records import SpreadSettings
from synth.spread.variables import SpreadVariables


def design():
    return design_from_dict({
        "design": {"tcr": "0 ppm/C"},
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "range": ["-10 V", "10 V"]},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V", "tolerance": "0.5%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "442k", "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["ref", "out"], "value": "137k", "tolerance": "1%"},
                     {"ref": "R3", "nodes": ["out", "gnd"], "value": "200k", "tolerance": "1%"}],
        "transfer": [{"name": "map", "input": "VIN", "output": "out",
                      "ends": ["0.1 V", "3.2 V"], "within": "10 mV"}],
    })


def corners(x):
    """Every corner of the box, by the closed form [HB-superposition]."""
    values = []
    for f1, f2, f3, fr in itertools.product((0.99, 1.01), (0.99, 1.01), (0.99, 1.01),
                                            (0.995, 1.005)):
        g1, g2, g3 = 1 / (442e3 * f1), 1 / (137e3 * f2), 1 / (200e3 * f3)
        values.append((x * g1 + 3.3 * fr * g2) / (g1 + g2 + g3))
    return min(values), max(values)


def test_the_curve_its_window_and_its_envelope():
    d = design()
    result = check(d)
    (curve,) = range_curves(d, result.positions, result.values, samples=11)
    assert curve.label == "map output" and curve.source == "VIN" and curve.exact
    assert curve.inputs[0] == -10 and curve.inputs[-1] == 10
    # a straight line between the ends [HB-superposition]
    line = np.linspace(curve.nominal[0], curve.nominal[-1], 11)
    assert np.allclose(curve.nominal, line, rtol=0, atol=1e-12)
    assert curve.nominal[0] == pytest.approx(result.nodes["out@VIN low"], rel=1e-12)
    # the window runs straight from one end's window to the other's
    assert curve.low[0] == pytest.approx(0.09) and curve.high[-1] == pytest.approx(3.21)
    assert curve.low[5] == pytest.approx((0.09 + 3.19) / 2)
    for k, x in enumerate(curve.inputs):
        low, high = corners(x)
        assert curve.worst_low[k] == pytest.approx(low, rel=1e-12)
        assert curve.worst_high[k] == pytest.approx(high, rel=1e-12)
    chord_low = np.linspace(curve.worst_low[0], curve.worst_low[-1], 11)
    chord_high = np.linspace(curve.worst_high[0], curve.worst_high[-1], 11)
    assert np.all(curve.worst_low >= chord_low - 1e-12)
    assert np.all(curve.worst_high <= chord_high + 1e-12)


def test_no_curve_without_a_range_and_the_picture():
    single = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k"}],
        "point": [{"name": "a"}, {"name": "b"}]})
    assert range_curves(single, {"R1": 1e3}, {"R1": 1e3}) == ()
    d = design()
    result = check(d)
    (curve,) = range_curves(d, result.positions, result.values, samples=5)
    figure = transfer_curve(curve)
    assert len(figure.axes) == 2 and figure.axes[1].get_xlabel() == "VIN"
    assert figure.axes[1].get_ylabel() == "from the window's centre"


def test_a_matched_array_gives_no_envelope_its_vertices_do_not_bound():
    # R1 and R3 in one array: the common deviation enters both, so a target is not
    # linear-fractional in it and the vertices' envelope would not be exact
    # [CP-matched-array]; each operating point's copy shares the one common deviation
    data = {
        "design": {"tcr": "0 ppm/C"},
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "range": ["-10 V", "10 V"]},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V", "tolerance": "0.5%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "442k", "array": "RN1"},
                     {"ref": "R2", "nodes": ["ref", "out"], "value": "137k", "tolerance": "1%"},
                     {"ref": "R3", "nodes": ["out", "gnd"], "value": "200k", "array": "RN1"}],
        "array": [{"name": "RN1", "tolerance": "1%", "ratio_tolerance": "0.1%",
                   "tcr": "0 ppm/C"}],
        "transfer": [{"name": "map", "input": "VIN", "output": "out",
                      "ends": ["0.1 V", "3.2 V"], "within": "50 mV"}],
    }
    d = design_from_dict(data)
    result = check(d)
    (curve,) = range_curves(d, result.positions, result.values, samples=5)
    assert not curve.exact and np.isnan(curve.worst_high).all()
    spread = check(d, spread=SpreadSettings(samples=2000)).spread
    assert spread is not None and spread.variables.count("RN1") == 1
    assert all(t.method == "vertices, common mode scanned" for t in spread.targets)
    # both points' copies of R1 and R3 follow the one common variable
    var = SpreadVariables(d, Evaluator(d))
    assert len(var.common_of) == 4 and set(var.common_of.values()) == {len(var) - 1}
