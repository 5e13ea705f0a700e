"""Ideal continuous values (synth.search.ideal)."""

from __future__ import annotations

import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.search import ideal
from synth.search.ideal import ideal_values


def _negative_conductance():
    # a VCCS feeding node out from its own voltage: the node's conductance is
    # 1/R1 + 1/R2 - g, negative for small R1 and R2 [HB-controlled-sources]
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E96",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E96",
                      "range": ["1k", "100k"]}],
        "controlled": [{"ref": "G1", "kind": "vccs", "from": "gnd", "to": "out",
                        "control": ["out", "gnd"], "gain": "0.5 mS"}],
        "target": [{"voltage": "out", "equals": "3 V"}],
    })


def test_ideal_values_reach_a_zero_error_point_despite_a_negative_conductance():
    design = _negative_conductance()
    values = ideal_values(design)
    # the nodal equation by hand: V(out) = (1 V / R1) / (1/R1 + 1/R2 - g) [HB-mna]
    r1, r2, g = values["R1"], values["R2"], 0.5e-3
    assert (1.0 / r1) / (1 / r1 + 1 / r2 - g) == pytest.approx(3.0, rel=1e-6)
    assert check(design, values=values).targets[0].error == pytest.approx(0.0, abs=1e-6)


def test_a_single_start_would_stall_at_the_edge_of_the_box(monkeypatch):
    # the reason for several starts: from the middle alone the fit ends with both parts
    # at the top of their range and about -100 % error
    monkeypatch.setattr(ideal, "_EXTRA_STARTS", 0)
    design = _negative_conductance()
    values = ideal_values(design)
    assert values["R1"] == pytest.approx(100e3) and values["R2"] == pytest.approx(100e3)
    assert abs(check(design, values=values).targets[0].error) > 0.9

