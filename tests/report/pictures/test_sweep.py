"""The sweep picture: the points drawn are the sweep's, one curve per other-key combination."""

from __future__ import annotations

import math

import numpy as np
from matplotlib.figure import Figure

from synth.report.pictures.sweep import sweep_plot
from synth.sweep import SweepAxis, SweepPoint, SweepResult


def result(spacing="linear"):
    axes = (SweepAxis("source.V1.value", (1.0, 2.0, 4.0), "V", spacing),
            SweepAxis("resistor.R2.value", (1e3, 2e3), "Ω"))
    points = []
    for k, (v, r) in enumerate((v, r) for v in axes[0].values for r in axes[1].values):
        verdict = "error" if k == 5 else "fails" if k == 4 else "meets"
        points.append(SweepPoint((v, r), "check", verdict,
                                 objective=None if k == 5 else k / 100))
    return SweepResult("d.toml", axes, tuple(points))


def test_each_curve_holds_its_points_in_per_cent():
    figure = sweep_plot(result())
    assert isinstance(figure, Figure)
    ax = figure.axes[0]
    lines = ax.get_lines()
    assert [line.get_label() for line in lines] == ["resistor.R2.value = 1000 Ω",
                                                    "resistor.R2.value = 2000 Ω"]
    assert list(lines[0].get_xdata()) == [1.0, 2.0, 4.0]
    assert list(lines[0].get_ydata()) == [0.0, 2.0, 4.0]  # points 0, 2, 4, in per cent
    ys = lines[1].get_ydata()
    assert list(ys[:2]) == [1.0, 3.0] and math.isnan(ys[2])  # point 5 could not be calculated
    crosses = [c for c in ax.collections if c.get_offsets().shape[0] == 1
               and np.allclose(c.get_offsets(), [[4.0, 4.0]])]
    assert crosses  # point 4 fails: drawn as a cross of its own
    assert ax.get_xlabel() == "source.V1.value" and "%" in ax.get_ylabel()


def test_a_log_spaced_first_key_gets_a_log_axis():
    assert sweep_plot(result("log")).axes[0].get_xscale() == "log"
    assert sweep_plot(result()).axes[0].get_xscale() == "linear"
