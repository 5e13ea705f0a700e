"""The derating curve of a package with each of its parts' operating points.
"""

from __future__ import annotations

__all__ = ["derating_curve", "packages_used"]

from collections.abc import Sequence

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure
from matplotlib.ticker import MultipleLocator

from synth.design.model import Design
from synth.rating import derated_power
from synth.report.pictures.axes import eng_axis, figure_for
from synth.results import PartReport
from synth.spread.records import SpreadResult
from synth.units import format_eng


def packages_used(parts: Sequence[PartReport]) -> list[str]:
    """The packages of the rated resistors, in order of first use."""
    return list(dict.fromkeys(p.package for p in parts if p.kind == "resistor" and p.package))


def derating_curve(design: Design, parts: Sequence[PartReport], package: str, *,
                   spread: SpreadResult | None = None, ax: Axes | None = None) -> Figure:
    """A package's allowed dissipation against ambient, with its parts' operating points.

    Drawn: the package's derated rating (solid), the design's allowance, that
    times ``max_power_use`` (dashed), the hottest ambient the design states
    (dotted), each part's nominal dissipation there (filled circle, labelled
    with its designator), its worst case over the tolerance box when a spread
    is given (open triangle) and its allowance (cross on the dashed line).

    Parameters
    ----------
    design : Design
    parts : sequence of PartReport
        ``CheckResult.parts`` or ``Candidate.parts``.
    package : str
        A package name of the design's table.
    spread : SpreadResult, optional
        Adds each part's worst-case dissipation.
    ax : Axes, optional
        Draw here instead of on a new figure.

    Returns
    -------
    Figure

    Examples
    --------
    >>> from synth.checking import check
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "design": {"package": "0603"},
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "10k"}],
    ...     "target": [{"current": "R1", "equals": "1.2 mA"}]})
    >>> figure = derating_curve(d, check(d).parts, "0603")
    >>> figure.axes[0].get_title()
    '0603 derating: 100 mW to 70 °C, none at 155 °C'

    Notes
    -----
    The curve is :func:`synth.rating.derated_power` (linear from the rated
    ambient to the zero-power temperature, IEC 60115-1 rating points, and at most
    the power that takes the part's own temperature to the zero-power temperature
    when its thermal resistance is larger than the line's slope).
    """
    rating = design.packages[package]
    figure, ax = figure_for(ax, (7.6, 4.2))
    low = min(-55.0, design.temperature_c[0])
    high = rating.zero_power_c + 15.0
    # the knees of the curve are points of it, so the drawn line bends exactly there
    ambient = np.union1d(np.linspace(low, high, 241),
                         [rating.rated_ambient_c, rating.zero_power_c])
    theta = rating.thermal_resistance_k_per_w
    if theta and rating.zero_power_c - theta * rating.rated_power_w < rating.rated_ambient_c:
        # a hot-spot limit below the line bends the curve at its own knee
        ambient = np.union1d(ambient, [rating.zero_power_c - theta * rating.rated_power_w])
    rated = derated_power(rating, ambient)
    ax.plot(ambient, rated, color="black", linestyle="-", linewidth=1.8,
            label=f"{package} rating, derated")
    ax.plot(ambient, rated * design.margin_frac, color="black", linestyle="--", linewidth=1.4,
            label=f"allowed: {design.margin_frac * 100:g}% of it")
    hot = design.rating_ambient_c
    ax.axvline(hot, color="black", linestyle=":", linewidth=1.2,
               label=f"hottest ambient {hot:g} °C")
    mine = [p for p in parts if p.kind == "resistor" and p.package == package]
    worst = {p.ref: p.worst_power for p in spread.parts} if spread is not None else {}
    if mine:
        ax.plot([hot] * len(mine), [p.power for p in mine], linestyle="none", marker="o",
                markersize=7, color="black", label="part at nominal values")
        allowed = [p.allowed_power for p in mine if p.allowed_power is not None]
        if allowed:
            ax.plot([hot], [allowed[0]], linestyle="none", marker="X", markersize=9,
                    color="black", label=f"its allowance {format_eng(allowed[0], 'W')}")
        if worst:
            ax.plot([hot] * len(mine), [worst.get(p.ref, np.nan) for p in mine],
                    linestyle="none", marker="^", markersize=7, markerfacecolor="white",
                    color="black", label="worst case over the tolerances")
        # labels in a column right of the points, top to bottom by dissipation, each joined
        # to its point: parts of equal dissipation stay readable
        ordered = sorted(mine, key=lambda q: -q.power)
        at = (hot - low) / (high - low)  # where the points stand, as a fraction of the width
        column = 0.03 if at > 0.3 else at + 0.06
        for k, p in enumerate(ordered):
            ax.annotate(f"{p.ref} {format_eng(p.power, 'W')}", (hot, p.power),
                        xycoords="data", textcoords="axes fraction",
                        xytext=(column, 0.38 - 0.3 * k / max(len(ordered) - 1, 1)),
                        fontsize=7, va="center", parse_math=False,
                        arrowprops={"arrowstyle": "-", "linewidth": 0.5})
    ax.xaxis.set_major_locator(MultipleLocator(50))
    eng_axis(ax.xaxis, "°C")
    eng_axis(ax.yaxis, "W")
    ax.set_xlabel("ambient temperature")
    ax.set_ylabel("dissipation")
    ax.set_xlim(low, high)
    ax.set_ylim(0, rating.rated_power_w * 1.15)
    ax.set_title(f"{package} derating: {format_eng(rating.rated_power_w, 'W')} to "
                 f"{rating.rated_ambient_c:g} °C, none at {rating.zero_power_c:g} °C",
                 parse_math=False, fontsize=10)
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return figure
