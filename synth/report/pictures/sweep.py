"""A sweep's main figure, its largest error, against its first swept key.
"""

from __future__ import annotations

__all__ = ["MAX_CURVES", "sweep_plot"]

import itertools
import math

from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.report.pictures.axes import eng_axis, figure_for, plain_axis
from synth.sweep import SweepAxis, SweepResult

MAX_CURVES = 8
"""Curves (combinations of the other axes' values) named in the legend; more are drawn unnamed."""

_X_UNIT = {"%": "", "ppm/C": "", "C": "°C"}


def _label(axis: SweepAxis, value: float) -> str:
    if axis.unit == "%":
        return f"{axis.key} = {value * 100:.4g} %"
    return f"{axis.key} = {value:.4g} {axis.unit}".rstrip()


def sweep_plot(result: SweepResult, *, ax: Axes | None = None) -> Figure:
    """The largest error of each point against the first axis's values.

    One curve per combination of the other axes' values; points that meet every
    window and limit are filled circles, points that fail crosses, points that could
    not be calculated are left out.  A log-spaced first axis gets a log scale.

    Parameters
    ----------
    result : SweepResult
    ax : Axes, optional
        Draw here instead of on a new figure.
    """
    figure, axes = figure_for(ax)
    first, others = result.axes[0], result.axes[1:]
    per_curve = len(first.values)
    combos = list(itertools.product(*(a.values for a in others)))
    scale = {"%": 100.0, "ppm/C": 1e6}.get(first.unit, 1.0)
    for k, combo in enumerate(combos):
        points = result.points[k::len(combos)] if combos else result.points
        assert len(points) == per_curve
        xs = [p.values[0] * scale for p in points]
        ys = [p.objective * 100 if p.objective is not None and math.isfinite(p.objective)
              else math.nan for p in points]
        name = ", ".join(_label(a, v) for a, v in zip(others, combo, strict=True))
        line = axes.plot(xs, ys, linestyle="-", linewidth=1,
                         label=name if name and k < MAX_CURVES else None)[0]
        colour = line.get_color()
        met = [(x, y) for x, y, p in zip(xs, ys, points, strict=True) if p.ok]
        failed = [(x, y) for x, y, p in zip(xs, ys, points, strict=True)
                  if p.verdict == "fails"]
        if met:
            axes.scatter(*zip(*met, strict=True), marker="o", color=colour, zorder=3)
        if failed:
            axes.scatter(*zip(*failed, strict=True), marker="x", color="red", zorder=3)
    if first.spacing == "log":
        axes.set_xscale("log")
    else:
        eng_axis(axes.xaxis, _X_UNIT.get(first.unit, first.unit))
    plain_axis(axes.yaxis)
    unit = {"%": " (%)", "ppm/C": " (ppm/C)"}.get(first.unit, "")
    axes.set_xlabel(first.key + unit, parse_math=False)
    axes.set_ylabel("largest relative error (%)")
    axes.set_title(f"sweep of {result.origin} (o meets, red x fails)", parse_math=False)
    if others and any(not str(line.get_label()).startswith("_")
                      for line in axes.get_lines()):
        axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return figure
