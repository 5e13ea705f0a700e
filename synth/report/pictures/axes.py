"""What every picture shares: a figure or a given axes, engineering-unit ticks, rendering to bytes.
"""

from __future__ import annotations

__all__ = ["FORMATS", "eng_axis", "figure_bytes", "figure_for", "plain_axis"]

import io
from typing import cast

from matplotlib.axes import Axes
from matplotlib.axis import Axis
from matplotlib.figure import Figure
from matplotlib.ticker import EngFormatter, ScalarFormatter

from synth.errors import DesignError

FORMATS = ("png", "svg")
"""The file formats :func:`figure_bytes` renders."""


def figure_for(ax: Axes | None, size: tuple[float, float] = (6.4, 4.0)) -> tuple[Figure, Axes]:
    """The axes to draw on and its figure: ``ax`` when given, else a new figure of ``size`` in.

    A new figure uses matplotlib's object API (no pyplot state, no display).
    """
    if ax is not None:
        return cast(Figure, ax.get_figure(root=True)), ax
    figure = Figure(figsize=size, layout="constrained")
    return figure, figure.subplots()


def eng_axis(axis: Axis, unit: str) -> None:
    """Ticks of ``axis`` in engineering notation with ``unit``: ``4 mV``, ``50 µA``, ``10 kΩ``.

    Without a unit (a ratio) the ticks are plain numbers without an offset.
    """
    if unit:
        axis.set_major_formatter(EngFormatter(unit=unit, sep="\N{NO-BREAK SPACE}"))
    else:
        plain_axis(axis)


def plain_axis(axis: Axis) -> None:
    """Plain-number ticks: no offset text and no scientific multiplier above the axis."""
    formatter = ScalarFormatter(useOffset=False)
    formatter.set_scientific(False)
    axis.set_major_formatter(formatter)


def figure_bytes(figure: Figure, fmt: str = "svg", dpi: int = 120) -> bytes:
    """The figure rendered as a PNG or SVG file's bytes (for a file, or an HTML page).

    Parameters
    ----------
    figure : Figure
    fmt : {"png", "svg"}
    dpi : int
        Pixels per inch of a PNG.

    Examples
    --------
    >>> figure = Figure()
    >>> _ = figure.subplots().plot([0, 1], [0, 1])
    >>> figure_bytes(figure, "png")[:4], b"<svg" in figure_bytes(figure, "svg")
    (b'\\x89PNG', True)
    """
    if fmt not in FORMATS:
        raise DesignError(f"format {fmt!r} is not known; use one of {', '.join(FORMATS)}")
    buffer = io.BytesIO()
    figure.savefig(buffer, format=fmt, dpi=dpi, bbox_inches="tight",
                   metadata={"Date": None} if fmt == "svg" else None)
    return buffer.getvalue()
