"""The front picture: the staircase through the front's points, candidates beside it.

The front itself is checked against an exhaustive enumeration in tests/test_front.py
[CALC-exhaustive]; here the picture draws exactly those points, in engineering units.
"""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure

from synth.design.reader import design_from_dict
from synth.front import ErrorFront, FrontPoint, error_front
from synth.report.pictures.supply_front import front_plot, front_summary
from synth.synthesis import synthesize

from .conftest import drawn_ticks, in_unit, plain_numbers


def divider():
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["1k", "100k"]}],
        "target": [{"voltage": "out", "equals": "4 V", "within": "10%"}]})


def test_the_points_drawn_are_the_front():
    design = divider()
    front = error_front(design)
    result = synthesize(design, top=3)
    figure = front_plot(front, result.candidates)
    assert isinstance(figure, Figure)
    ax = figure.axes[0]
    lines = {line.get_label(): line for line in ax.get_lines()}
    points = lines["front point (proven)"]
    expected = sorted((p.supply_current, p.objective * 100) for p in front.points)
    assert list(zip(points.get_xdata(), points.get_ydata(), strict=True)) == pytest.approx(
        expected)
    assert len(lines["ranked candidates"].get_xdata()) == 3
    assert in_unit(drawn_ticks(figure, ax.xaxis), "A")
    assert plain_numbers(drawn_ticks(figure, ax.yaxis), ax.yaxis)
    summary = [t.get_text() for t in ax.texts if "front point" in t.get_text()]
    assert summary == [front_summary(front)]
    assert "the whole front, each point proven" in summary[0]


def test_an_unproven_front_says_so_on_a_given_axes():
    cut = ErrorFront(points=(FrontPoint(1e-3, 0.01, {}, True), FrontPoint(5e-4, 0.02, {}, False)),
                     complete=False, runs=2, elapsed_s=1.0, stopped="time limit 1 s",
                     require="worst-case")
    host = Figure()
    ax = host.subplots()
    assert front_plot(cut, ax=ax, title="cut") is host
    labels = {line.get_label() for line in ax.get_lines()}
    assert "front point (unproven)" in labels
    text = front_summary(cut)
    assert text == ("2 front points from 2 exact searches (feasible over the tolerance box); "
                    "cut short by the time limit 1 s; 1 of 2 proven, lower supply currents "
                    "not explored")
    one = ErrorFront(points=(FrontPoint(1e-3, 0.01, {}, True),), complete=False, runs=1,
                     elapsed_s=0.1, stopped=None, require="nominal")
    assert front_summary(one).startswith("1 front point from 1 exact search (")


def test_an_empty_front_says_that_nothing_is_feasible():
    # 50 V from 100 V needs R1 = R2; the 0201 allows 25 mW, far below what 10..100 ohm
    # take (at least 25 W) [HB-ohm] [CP-derating]: nothing is feasible
    design = design_from_dict({
        "design": {"package": "0201"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "100 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
                      "range": ["10", "100"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["10", "100"]}],
        "target": [{"voltage": "out", "equals": "50 V", "within": "1%"}]})
    front = error_front(design)
    assert front.points == () and front.complete
    result = synthesize(design, top=2)
    figure = front_plot(front, result.candidates)
    labels = {line.get_label() for line in figure.axes[0].get_lines()}
    assert labels == {"nearest designs (infeasible)"}
    assert front_summary(front) == ("no design meets every window and limit at nominal "
                                    "values: the front is empty (proven by 1 exact search)")
    cut = ErrorFront((), False, 1, 1.0, "time limit 1 s", "nominal")
    assert front_summary(cut) == ("no feasible design found before the time limit 1 s; "
                                  "the front is unknown")
    assert front_summary(ErrorFront((), False, 0, 0.0, None, "nominal")) == (
        "no feasible design found; the front is unknown")
