"""The class section of the design report (synth.report.classes): words follow the verdict."""

from __future__ import annotations

import json

from synth.design.reader import design_from_dict
from synth.least_cost import choose_classes
from synth.report.classes import classes_json, classes_text


def _divider(require: str, window: str, classes: list[str], **design) -> object:
    return design_from_dict({
        "design": {"require": require, **design},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["1k", "10k"],
                      "classes": classes},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "1234"}],
        "target": [{"voltage": "out", "equals": "5 V", "within": window}]})


def test_a_yield_choice_is_reported_unproven_with_its_yield():
    choice = choose_classes(_divider("yield", "3%", ["5%", "1%"], min_yield="95%"), top=1,
                            spread=None)
    text = classes_text(choice)
    assert "least cost found, NOT proven" in text and "not proven: a yield" in text
    assert "yield (95 % lower bound)" in text and "requirement in yield" in text
    doc = json.loads(json.dumps(classes_json(choice)))
    assert doc["proven"] is False and doc["front"][0]["yield_low"] is not None


def test_a_nominal_requirement_none_met_says_so_and_shows_no_design():
    choice = choose_classes(_divider("nominal", "0.001%", ["5%", "1%"]), top=1)
    text = classes_text(choice)
    assert "no class assignment meets the requirement at nominal values (proven)" in text
    assert "no design" in text and "which part to tighten" in text
    assert classes_json(choice)["chosen"] is None and classes_json(choice)["cost"] is None
