"""A linearity target's error in °C against temperature, with its allowed band.
"""

from __future__ import annotations

__all__ = ["linearity_plot"]

from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.linearity import LinearityCheck
from synth.report.pictures.axes import figure_for, plain_axis


def linearity_plot(check: LinearityCheck, *, ax: Axes | None = None) -> Figure:
    """The error in °C against temperature of one linearity target.

    Drawn: the error over every temperature solved (solid line), the grid's
    points (open circles) and the refinement's (dots), the allowed band
    (dashed lines at ± ``within``) and the largest error (a cross, labelled).
    Readable without colour.

    Examples
    --------
    >>> import numpy as np
    >>> c = LinearityCheck("out", "RT1", 0.5, np.linspace(0, 100, 11), np.zeros(11),
    ...                    np.array([45.0]), np.array([0.2]), 45.0, 0.2, 0.0)
    >>> linearity_plot(c).axes[0].get_ylabel()
    'error (°C)'
    """
    figure, axes = figure_for(ax, (7.0, 4.0))
    t, error = check.curve
    axes.plot(t, error, color="black", linewidth=1.2, label="error")
    axes.plot(check.grid_c, check.grid_error_c, linestyle="none", marker="o",
              markerfacecolor="none", color="black", label=f"grid, {len(check.grid_c)} points")
    if len(check.refined_c):
        axes.plot(check.refined_c, check.refined_error_c, linestyle="none", marker=".",
                  color="black", label=f"refined, {len(check.refined_c)} points")
    for side in (-1, 1):
        axes.axhline(side * check.within_c, color="black", linestyle="--",
                     label="allowed" if side > 0 else None)
    axes.plot([check.worst_c], [check.worst_error_c], marker="x", markersize=10,
              color="black", linestyle="none")
    axes.annotate(f"{check.worst_error_c:+.3g} °C at {check.worst_c:.4g} °C",
                  (check.worst_c, check.worst_error_c), textcoords="offset points",
                  xytext=(6, 6), fontsize="small")
    plain_axis(axes.xaxis)
    plain_axis(axes.yaxis)
    axes.set_xlabel("temperature (°C)")
    axes.set_ylabel("error (°C)")
    axes.set_title(f"{check.label}: sensor {check.sensor}", parse_math=False)
    axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return figure
