"""Contribution bars: one bar per varying quantity, its share of the RSS variance as drawn.

A 30k/10k divider from 10 V: sensitivities -0.75, 0.75 and 1 [HB-divider], each times its
1 % half-width; the shares of the variance by the law of propagation [GUM-propagation].
"""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure

from synth.design.reader import design_from_dict
from synth.report.pictures.contributions import contribution_bars
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings


def spread(tcr="0 ppm/C"):
    design = design_from_dict({
        "design": {"temperature": ["-15 C", "65 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": "1%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "30k", "tolerance": "1%",
                      "tcr": tcr},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "1%",
                      "tcr": tcr}],
        "target": [{"name": "output", "voltage": "out", "equals": "2.5 V"}]})
    return analyse_spread(design, settings=SpreadSettings(samples=0))


def bar_lengths(ax):
    """Total length of the bars on each row, by tick label."""
    rows = {round(t.get_position()[1]): t.get_text() for t in ax.get_yticklabels()}
    total: dict[str, float] = {}
    for patch in ax.patches:
        row = round(patch.get_y() + patch.get_height() / 2)
        total[rows[row]] = total.get(rows[row], 0.0) + patch.get_width()
    return total


def test_bars_are_the_shares_of_the_variance():
    figure = contribution_bars(spread(), unit="V")
    assert isinstance(figure, Figure)
    ax = figure.axes[0]
    lengths = bar_lengths(ax)
    # 0.5625 : 0.5625 : 1 of 2.125 [GUM-propagation]
    assert lengths == pytest.approx({"V1": 100 / 2.125, "R1": 56.25 / 2.125,
                                     "R2": 56.25 / 2.125}, rel=1e-6)
    assert sum(lengths.values()) == pytest.approx(100.0, rel=1e-9)
    top = max(ax.get_yticklabels(), key=lambda t: t.get_position()[1])
    assert top.get_text() == "V1"  # the largest at the top
    labels = [t.get_text() for t in ax.texts]
    # V1's own deviation: 2.5 V x 1 % = 25 mV, written in mV
    assert any(text.endswith("(±25 mV)") for text in labels), labels
    assert "output" in ax.get_title() and "mV" in ax.get_title()


def test_drift_is_a_second_hatched_segment_on_a_given_axes():
    host = Figure()
    ax = host.subplots()
    assert contribution_bars(spread("100 ppm/C"), unit="V", ax=ax) is host
    hatches = {patch.get_hatch() for patch in ax.patches}
    assert hatches == {"///", "..."}
    assert sum(bar_lengths(ax).values()) == pytest.approx(100.0, rel=1e-9)
    assert [t.get_text() for t in ax.get_xticklabels()] == ["0%", "25%", "50%", "75%", "100%"]
