"""The derating picture: the package's curve, its allowance and each part's operating point.

The curve is the linear derating [CP-derating] of the 0603 row (100 mW to 70 °C, none at
155 °C [CP-chip-ratings]) with half of it allowed [CP-margin]; 12 V across 10k
dissipates 14.4 mW [HB-ohm].
"""

from __future__ import annotations

import numpy as np
import pytest
from matplotlib.figure import Figure

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.report.pictures.derating import derating_curve, packages_used
from synth.spread.records import SpreadSettings

from .conftest import drawn_ticks, in_unit


def design(ambient="85 C"):
    return design_from_dict({
        "design": {"package": "0603", "ambient": ambient},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "10k"},
                     {"ref": "R2", "nodes": ["in", "gnd"], "value": "47k", "package": "1206"}],
        "target": [{"current": "R1", "equals": "1.2 mA"}]})


def test_curve_allowance_and_operating_point():
    d = design()
    result = check(d, spread=SpreadSettings(samples=0))
    assert packages_used(result.parts) == ["0603", "1206"]
    figure = derating_curve(d, result.parts, "0603", spread=result.spread)
    assert isinstance(figure, Figure)
    ax = figure.axes[0]
    lines = {line.get_label(): line for line in ax.get_lines()}
    rated = lines["0603 rating, derated"]
    x, y = rated.get_xdata(), rated.get_ydata()
    # 100 mW up to 70 C, 0 at 155 C, half-way at 112.5 C [CP-derating]
    assert np.interp([25.0, 70.0, 112.5, 155.0], x, y) == pytest.approx(
        [0.1, 0.1, 0.05, 0.0], abs=1e-9)
    allowed = lines["allowed: 50% of it"].get_ydata()
    assert allowed == pytest.approx(y * 0.5)
    point = lines["part at nominal values"]
    assert list(point.get_xdata()) == [85.0]
    assert point.get_ydata()[0] == pytest.approx(12.0 ** 2 / 10e3, rel=1e-9)  # [HB-ohm]
    # at 85 C the 0603 allows 100 mW x 70/85 x 50 % = 41.18 mW [CP-derating] [CP-margin]
    cross = next(line for label, line in lines.items() if label.startswith("its allowance"))
    assert cross.get_ydata()[0] == pytest.approx(0.1 * 70 / 85 * 0.5, rel=1e-9)
    assert "41.18 mW" in cross.get_label()
    assert "worst case over the tolerances" in lines
    labels = [t.get_text() for t in ax.texts]
    assert labels == ["R1 14.4 mW"]  # the 1206 part is on its own picture
    assert in_unit(drawn_ticks(figure, ax.yaxis), "W")
    assert in_unit(drawn_ticks(figure, ax.xaxis), "°C")


def test_a_given_axes_is_drawn_on():
    d = design(ambient="25 C")
    result = check(d)
    host = Figure()
    ax = host.subplots()
    assert derating_curve(d, result.parts, "1206", ax=ax) is host
    assert ax.get_title().startswith("1206 derating: 250 mW to 70 °C")
    assert "worst case over the tolerances" not in {line.get_label() for line in ax.get_lines()}


def test_a_part_on_less_copper_bends_the_curve_at_its_own_knee():
    # 1000 K/W on a 0.1 W, 70 -> 155 °C row: the element reaches 155 °C at (155 - T)/1000 W
    # [HB-self-heating], below the line from 55 °C on: 100 mW to 55 °C, 70 mW at 85 °C,
    # where the line alone would give 82.35 mW [CALC-derating]
    from dataclasses import replace

    d = design()
    hot = replace(d.packages["0603"], thermal_resistance_k_per_w=1000.0)
    d = replace(d, packages={**d.packages, "0603": hot})
    result = check(d, spread=SpreadSettings(samples=0))
    ax = derating_curve(d, result.parts, "0603").axes[0]
    rated = next(line for line in ax.get_lines() if line.get_label() == "0603 rating, derated")
    x, y = rated.get_xdata(), rated.get_ydata()
    assert 55.0 in list(x)  # the knee is a point of the drawn line
    assert np.interp([25.0, 55.0, 85.0, 155.0], x, y) == pytest.approx(
        [0.1, 0.1, 0.07, 0.0], abs=1e-12)
