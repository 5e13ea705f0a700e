"""A target across a source's range: the transfer curve, its window band and worst-case envelope.
"""

from __future__ import annotations

__all__ = ["transfer_curve"]

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.report.pictures.axes import eng_axis, figure_for
from synth.spread.range_curve import RangeCurve


def transfer_curve(curve: RangeCurve, *, ax: Axes | None = None,
                   title: str | None = None) -> Figure:
    """Draw one target across its source's range.

    Above, the nominal curve with the two ends the design is judged at (dots:
    judging the ends is exact); below, on the scale of the window, each curve
    less the window's centre line: the window band (shaded, straight between
    the ends' windows), the nominal curve and the worst case over the
    tolerance box at each swept value (dashed, when every vertex was solved).
    On a given ``ax`` only the lower view is drawn.

    Parameters
    ----------
    curve : RangeCurve
        From :func:`synth.spread.range_curve.range_curves`.
    ax : Axes, optional
        Draw here instead of on a new figure.
    title : str, optional
        The title (the target's label by default).

    Returns
    -------
    Figure

    Examples
    --------
    >>> import numpy as np
    >>> x = np.linspace(-10, 10, 3)
    >>> c = RangeCurve("out", "VIN", "V", "V", x, 0.155 * x + 1.65, 0.15 * x + 1.6,
    ...                0.16 * x + 1.7, 0.155 * x + 1.64, 0.155 * x + 1.66, True)
    >>> transfer_curve(c).axes[1].get_xlabel()
    'VIN'
    """
    if ax is None:
        figure = Figure(figsize=(6.4, 6.0), layout="constrained")
        top, bottom = figure.subplots(2, 1, sharex=True)
    else:
        figure, bottom = figure_for(ax)
        top = None
    x = curve.inputs
    finite = np.isfinite(curve.low) & np.isfinite(curve.high)
    centre = np.where(finite, (curve.low + curve.high) / 2, curve.nominal)
    if top is not None:
        top.plot(x, curve.nominal, color="black", linewidth=1.5, label="nominal")
        top.plot(x[[0, -1]], curve.nominal[[0, -1]], "o", color="black",
                 label="range ends (judged here, exact)")
        top.set_ylabel(curve.label)
        eng_axis(top.yaxis, curve.unit)
        top.legend(loc="best", fontsize="small")
        top.set_title(title if title is not None else curve.label, parse_math=False)
    # the deviation from the window's centre line shows the band and the envelope
    with np.errstate(invalid="ignore"):
        low, high = curve.low - centre, curve.high - centre
    if finite.any():
        bottom.fill_between(x, low, high, where=finite, color="#9ecae1", alpha=0.5,
                            linewidth=0, label="window")
    else:
        for edge in (low, high):
            if np.isfinite(edge).any():
                bottom.plot(x, edge, color="#3182bd", linewidth=1, label="window edge")
    bottom.plot(x, curve.nominal - centre, color="black", linewidth=1.5, label="nominal")
    if curve.exact:
        bottom.plot(x, curve.worst_low - centre, color="#d62728", linestyle="--",
                    linewidth=1, label="worst case over the tolerance box")
        bottom.plot(x, curve.worst_high - centre, color="#d62728", linestyle="--",
                    linewidth=1)
    else:
        bottom.text(0.01, 0.01, "no exact worst-case envelope (too many varying "
                    "quantities, or a matched array)",
                    transform=bottom.transAxes, fontsize="small")
    bottom.plot(x[[0, -1]], (curve.nominal - centre)[[0, -1]], "o", color="black")
    bottom.set_xlabel(curve.source)
    bottom.set_ylabel("from the window's centre" if finite.any() else "from nominal")
    eng_axis(bottom.xaxis, curve.input_unit)
    eng_axis(bottom.yaxis, curve.unit)
    bottom.legend(loc="best", fontsize="small")
    if top is None:
        bottom.set_title(title if title is not None else curve.label, parse_math=False)
    return figure
