"""Transfer targets: output = gain × input + offset between two operating points.

The offset-and-scale node's gain G1/ΣG and offset VREF·G2/ΣG by superposition
[HB-superposition]; a loop current into a burden RB loaded by R1 + R2 gives
V(adc) = I·(RB ∥ (R1 + R2))·R2/(R1 + R2) [HB-loaded-divider] [HB-ohm]; the search's best
gain against every E12 triple enumerated apart [CALC-exhaustive] [IEC60063].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.report.verdict import error_text
from synth.synthesis import synthesize
from tests.search.test_points_search import e12


def mapper(transfer, r=("10k", "20k", "30k"), choose=None, points=None):
    resistors = [{"ref": ref, "nodes": nodes, "value": value}
                 for (ref, nodes), value in zip((("R1", ["in", "out"]), ("R2", ["ref", "out"]),
                                                 ("R3", ["out", "gnd"])), r, strict=True)]
    if choose:
        for item in resistors:
            item.pop("value")
            item.update(choose=choose, range=["1k", "100k"])
    data = {
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "range": ["-10 V", "10 V"]},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V"}],
        "resistor": resistors,
        "transfer": [transfer],
    }
    if points is not None:
        data["point"] = points
    return data


def test_gain_and_offset_follow_the_closed_form():
    design = design_from_dict(mapper({"name": "t", "input": "VIN", "output": "out",
                                      "ends": ["0.1 V", "3.2 V"], "within": "1%",
                                      "gain": 0.155, "offset": "1.65 V"}))
    assert [t.label for t in design.targets] == [
        "t output @ VIN low", "t output @ VIN high", "t gain", "t offset"]
    result = check(design)
    g1, g2, g3 = 1 / 10e3, 1 / 20e3, 1 / 30e3
    gain = g1 / (g1 + g2 + g3)  # [HB-superposition]
    offset = 3.3 * g2 / (g1 + g2 + g3)
    by_label = {t.label: t for t in result.targets}
    assert by_label["t gain"].value == pytest.approx(gain, rel=1e-12)
    assert by_label["t offset"].value == pytest.approx(offset, rel=1e-12)
    assert by_label["t output @ VIN low"].value == pytest.approx(offset - 10 * gain, rel=1e-12)
    assert by_label["t gain"].unit == "V/V" and by_label["t offset"].unit == "V"
    # the report gives the errors in their units too
    assert error_text(by_label["t offset"]).endswith(f"{(offset - 1.65) * 1e3:+.4g} mV")


def test_a_loop_current_gain_is_in_volts_per_ampere():
    data = {
        "source": [{"ref": "IL", "kind": "current", "from": "gnd", "to": "loop",
                    "range": ["4 mA", "20 mA"], "tolerance": "1%"}],
        "resistor": [{"ref": "RB", "nodes": ["loop", "gnd"], "value": "150"},
                     {"ref": "R1", "nodes": ["loop", "adc"], "value": "10k"},
                     {"ref": "R2", "nodes": ["adc", "gnd"], "value": "30k"}],
        "transfer": [{"input": "IL", "output": "adc", "gain": 100, "offset": "1 mV",
                      "offset_within": "1 mV"}],
    }
    result = check(design_from_dict(data))
    loaded = 150 * 40e3 / (150 + 40e3)  # [HB-loaded-divider]
    gain = loaded * 30e3 / 40e3
    by_label = {t.label: t for t in result.targets}
    assert by_label["transfer 1 gain"].value == pytest.approx(gain, rel=1e-12)
    assert by_label["transfer 1 gain"].unit == "V/A"
    assert by_label["transfer 1 offset"].value == pytest.approx(0.0, abs=1e-12)


def test_a_node_as_input_measures_the_gain_between_two_voltages():
    design = design_from_dict(mapper({"input": "in", "output": "out", "gain": 0.5}))
    gain = next(t for t in check(design).targets if t.label == "transfer 1 gain")
    g1, g2, g3 = 1 / 10e3, 1 / 20e3, 1 / 30e3
    assert gain.value == pytest.approx(g1 / (g1 + g2 + g3), rel=1e-12)  # [HB-superposition]


def test_the_search_on_gain_and_offset_matches_an_exhaustive_search():
    design = design_from_dict(mapper({"input": "VIN", "output": "out", "gain": 0.155,
                                      "gain_within": "3%", "offset": "1.65 V",
                                      "offset_within": "3%"}, choose="E12"))
    result = synthesize(design, top=1)
    values = np.array(e12(1e3, 1e5))
    r1, r2, r3 = (g.ravel() for g in np.meshgrid(values, values, values, indexing="ij"))
    total = 1 / r1 + 1 / r2 + 1 / r3
    gain_err = np.abs(1 / r1 / total - 0.155) / 0.155  # [HB-superposition]
    offset_err = np.abs(3.3 / r2 / total - 1.65) / 1.65
    objective = np.where((gain_err <= 0.03) & (offset_err <= 0.03),
                         np.maximum(gain_err, offset_err), np.inf)
    assert result.proven_optimal and result.feasible
    assert result.candidates[0].objective == pytest.approx(objective.min(), rel=1e-9)


def test_a_sensor_between_the_points_keeps_the_search_exact():
    """R3 differs between the points: the gain has two denominators and is not vertex-bounded;
    the search must still find the exhaustive best [CALC-exhaustive]."""
    points = [{"name": "a", "sources": {"VIN": "-1.88 V"}, "resistors": {"R3": "3k"}},
              {"name": "b", "sources": {"VIN": "-0.77 V"}, "resistors": {"R3": "100k"}}]
    data = mapper({"input": "VIN", "output": "out", "points": ["a", "b"], "gain": 0.1138},
                  points=points)
    for item in data["resistor"][:2]:
        item.pop("value")
        item.update(choose="E12", range=["1k", "100k"])
    data["source"][0].pop("range")
    data["source"][0]["value"] = "0 V"
    result = synthesize(design_from_dict(data), top=1)
    values = np.array(e12(1e3, 1e5))
    r1, r2 = (g.ravel() for g in np.meshgrid(values, values, indexing="ij"))

    def out(vin, r3):
        return (vin / r1 + 3.3 / r2) / (1 / r1 + 1 / r2 + 1 / r3)  # [HB-superposition]

    gain = (out(-0.77, 100e3) - out(-1.88, 3e3)) / (-0.77 + 1.88)
    assert result.proven_optimal
    assert result.candidates[0].objective == pytest.approx(
        np.min(np.abs(gain - 0.1138) / 0.1138), rel=1e-9)


@pytest.mark.parametrize("transfer, fragment", [
    ({"input": "in", "output": "out", "offset": "1 V"}, "an offset needs a source as input"),
    ({"input": "VIN", "output": "out", "points": ["VIN low", "nowhere"], "gain": 1},
     "no point 'nowhere'"),
    ({"input": "VIN", "output": "out", "points": ["VIN low", "VIN low"], "gain": 1},
     "both points are 'VIN low'"),
    ({"input": "VIN", "output": "nowhere", "gain": 1}, "output node 'nowhere'"),
    ({"input": "nowhere", "output": "out", "gain": 1}, "neither a source nor a node"),
    ({"input": "VIN", "output": "out", "gain_within": "1%"}, "gain_within needs gain"),
    ({"input": "VIN", "output": "out", "offset_within": "1 mV"}, "offset_within needs offset"),
    ({"input": "VIN", "output": "out"}, "give ends (the output at each point), gain or offset"),
    ({"input": "VIN", "output": "out", "ends": ["0 V", "1 V"], "within": "1%"},
     "an end of 0 V has no relative error"),
    ({"input": "VIN", "output": "out", "within": "1%", "gain": 1}, "within is the window"),
    ({"input": "VIN", "output": "out", "gain": 0}, "gain 0 has no relative error"),
    ({"input": "VIN", "output": "out", "offset": "0 V"}, "offset 0 has no relative error"),
    ({"input": "VIN", "output": "out", "gain": "x"}, "'x' is not a number"),
    ({"input": "VIN", "output": "out", "gain": 1, "gain_within": -1}, "positive half-width"),
    ({"input": "VIN", "output": "out", "ends": "1 V"}, "ends must be the output at each"),
    ({"output": "out", "gain": 1}, "key 'input' is missing"),
    ({"input": "VIN", "gain": 1}, "key 'output' is missing"),
    ({"input": "VIN", "output": "out", "points": "VIN low", "gain": 1},
     "points must name two operating points"),
])
def test_bad_transfers_are_refused_in_one_line(transfer, fragment):
    with pytest.raises(DesignError) as caught:
        design_from_dict(mapper(transfer), "d.toml")
    assert fragment in str(caught.value) and "\n" not in str(caught.value)


def test_a_transfer_needs_points_and_two_input_values():
    data = mapper({"input": "VIN", "output": "out", "gain": 1})
    data["source"][0].pop("range")
    data["source"][0]["value"] = "1 V"
    with pytest.raises(DesignError, match="the design has none"):
        design_from_dict(data)
    data["point"] = [{"name": "a"}, {"name": "b"}]
    with pytest.raises(DesignError, match="VIN is 1 at both points"):
        design_from_dict(data)
    data["point"].append({"name": "c"})
    with pytest.raises(DesignError, match="the design has 3 operating points"):
        design_from_dict(data)
