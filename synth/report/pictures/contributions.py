"""Tolerance contribution bars: each varying quantity's share of a target's RSS variance.
"""

from __future__ import annotations

__all__ = ["contribution_bars"]

import math

from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.report.pictures.axes import figure_for
from synth.spread.records import SpreadResult
from synth.units import format_eng


def contribution_bars(spread: SpreadResult, target: int = 0, *, unit: str = "",
                      ax: Axes | None = None) -> Figure:
    """Horizontal bars of each quantity's share of one target's root-sum-square variance.

    Each bar is split into the quantity's tolerance (hatched ``///``) and its
    temperature drift (hatched ``...``); the bars are ordered largest first and
    labelled with the quantity's contribution to the RSS deviation in the
    target's unit.

    Parameters
    ----------
    spread : SpreadResult
        The spread of a design (``CheckResult.spread`` or ``Candidate.spread``).
    target : int
        Index of the target in the design's order.
    unit : str
        The target's unit (``"V"``, ``"A"``, ``"Ω"``; ``""`` for a ratio).
    ax : Axes, optional
        Draw here instead of on a new figure.

    Returns
    -------
    Figure

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> from synth.spread.analyse import analyse_spread
    >>> from synth.spread.records import SpreadSettings
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "5 V"}]})
    >>> s = analyse_spread(d, settings=SpreadSettings(samples=0))
    >>> figure = contribution_bars(s, unit="V")
    >>> [t.get_text() for t in figure.axes[0].get_yticklabels()]
    ['R1', 'R2']

    Notes
    -----
    The shares are those of :meth:`synth.spread.records.TargetSpread.variance_shares`
    (the law of propagation of uncertainty, JCGM 100:2008 eq. 10).
    """
    record = spread.targets[target]
    shares = record.variance_shares()
    total = sum(t + d for t, d in record.rss_terms.values())
    names = sorted(shares, key=lambda n: (-shares[n], n))
    figure, ax = figure_for(ax, (6.4, max(2.4, 0.42 * len(names) + 1.6)))
    rows = list(range(len(names)))[::-1]
    tolerance = [100 * record.rss_terms[n][0] / total for n in names]
    drift = [100 * record.rss_terms[n][1] / total for n in names]
    ax.barh(rows, tolerance, color="white", edgecolor="black", hatch="///",
            label="tolerance")
    if any(d > 0 for d in drift):
        ax.barh(rows, drift, left=tolerance, color="white", edgecolor="black", hatch="...",
                label="temperature drift (TCR)")
    for row, name in zip(rows, names, strict=True):
        # each quantity's own root-sum-square deviation, in the target's unit
        own = math.sqrt(sum(record.rss_terms[name]))
        ax.text(100 * shares[name] + 1.5, row,
                f"{shares[name] * 100:.3g}%  (±{format_eng(own, unit)})",
                va="center", fontsize=8, parse_math=False)
    ax.set_yticks(rows, names)
    ax.set_xlim(0, 125)
    ax.set_xticks([0, 25, 50, 75, 100], ["0%", "25%", "50%", "75%", "100%"])
    ax.set_xlabel("share of the root-sum-square variance")
    rss = format_eng(record.rss_abs, unit)
    ax.set_title(f"{record.label}: what its spread is made of (RSS ±{rss})", parse_math=False,
                 fontsize=10)
    if names:
        ax.legend(loc="lower right", fontsize="small")
    else:
        ax.text(50, 0, "nothing varies this target", ha="center", va="center")
    return figure
