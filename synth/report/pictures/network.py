"""A drawing of a design's network with its chosen values: nodes, resistors, sources, regulators.

The layout is rnsynth's own and plain, like a ladder: every node is a
horizontal rail, one row per node ordered by potential (the most positive at
the top, ground at the bottom unless a node lies below it; rows evenly
spaced, not to scale), and every branch a vertical line in a column of its own
between its two rails, its symbol in the middle.  A branch joins a rail where
a dot is drawn; a line crossing a rail without a dot does not touch it.  The
columns are ordered to cross as few rails as possible (every order tried for
up to seven branches, else barycentre ordering and swaps of neighbours).

* resistor: an open rectangle (hatched for a resistor that is not on the
  bill of materials, such as a load or an input resistance);
* voltage source: a circle with + and − at its ends;
* current source: a circle with an arrow in the current's direction;
* regulating element (regulator or amplifier output): a square between
  ground and its output, with dotted taps to the nodes it senses;
* controlled source: a diamond (dotted taps to its control nodes);
  transistor: a circle between emitter and collector, a tap to its base.

Each symbol is labelled with its designator and value in engineering
notation, each rail with its node's name and voltage.
"""

from __future__ import annotations

__all__ = ["first_point_view", "network_drawing"]

import itertools
import math
from dataclasses import dataclass, replace

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure
from matplotlib.patches import Circle, FancyArrowPatch, Polygon

from synth.report.pictures.axes import figure_for
from synth.results import CheckResult
from synth.units import format_eng

_ROW = 1.5  # vertical distance between rails
_COLUMN = 2.6  # horizontal distance between branches
_EXHAUSTIVE = 7  # branches up to which every column order is tried
_BODY = 0.5  # length of a resistor's rectangle
_WIDTH = 0.2  # its width
_RADIUS = 0.22  # radius of a source's circle
_TAP = 0.45  # horizontal reach of a tap from its element


@dataclass(frozen=True)
class _Branch:
    kind: str  # resistor, load, voltage, current, regulator, controlled, transistor
    label: str
    ends: tuple[str, str]  # resistor nodes; source minus/plus or from/to; ground/output
    taps: tuple[tuple[str, str], ...] = ()  # (node, name) it senses or is driven from

    def nodes(self) -> tuple[str, ...]:
        return (*self.ends, *(node for node, _ in self.taps))


def _branches(result: CheckResult) -> list[_Branch]:
    design = result.design
    internal = {t.ref for t in design.transistors}
    out: list[_Branch] = []
    for s in design.sources:
        if s.ref.split(".")[0] in internal:
            continue
        unit = "V" if s.kind == "voltage" else "A"
        out.append(_Branch(s.kind, f"{s.ref}\n{format_eng(s.value, unit)}", (s.neg, s.pos)))
    for g in design.regulators:
        taps = tuple((node, role) for node, role in ((g.sense, "sense"), (g.reference, "ref"))
                     if node != g.output)
        out.append(_Branch("regulator", f"{g.ref}\nholds {format_eng(g.setpoint, 'V')}",
                           (design.ground, g.output), taps))
    for t in design.transistors:
        out.append(_Branch("transistor", f"{t.ref}\n{t.polarity}, β {t.beta:g}",
                           (t.emitter, t.collector), ((t.base, "base"),)))
    for c in design.controlled:
        if c.ref.split(".")[0] in internal:
            continue
        taps = tuple((node, "control") for node in c.control_nodes or ())
        out.append(_Branch("controlled", f"{c.ref}\ngain {c.gain:.4g}", (c.neg, c.pos), taps))
    for r in design.resistors:
        refs = r.part_refs
        value = result.positions.get(r.ref, result.values.get(r.ref, math.nan))
        label = f"{r.ref}\n{format_eng(value, 'Ω')}"
        if len(refs) > 1:
            label += f" ({r.position.arrangement})" + "".join(
                f"\n{ref} {format_eng(result.values.get(ref, math.nan), 'Ω')}" for ref in refs)
        out.append(_Branch("resistor" if r.bom else "load", label, r.nodes))
    return out


def _rows(names: tuple[str, ...], volts: dict[str, float]) -> dict[str, int]:
    """Row of each node: its rank by voltage (ties in order of appearance), lowest first."""
    def key(item: tuple[int, str]) -> tuple[float, int]:
        volt = volts.get(item[1], 0.0)
        return (volt if math.isfinite(volt) else 0.0, item[0])

    ordered = sorted(enumerate(names), key=key)
    return {name: row for row, (_, name) in enumerate(ordered)}


def _span(branch: _Branch, rows: dict[str, int]) -> tuple[int, int]:
    a, b = (rows[n] for n in branch.ends)
    return min(a, b), max(a, b)


def _crossings(order: tuple[int, ...], branches: list[_Branch], rows: dict[str, int]) -> int:
    """Rails a column crosses without joining them, for a column order."""
    column = {k: c for c, k in enumerate(order)}
    reach: dict[str, list[int]] = {}
    for k, branch in enumerate(branches):
        for node in branch.nodes():
            reach.setdefault(node, []).append(column[k])
    count = 0
    for k, branch in enumerate(branches):
        low, high = _span(branch, rows)
        for node, columns in reach.items():
            if (low < rows[node] < high and node not in branch.nodes()
                    and min(columns) < column[k] < max(columns)):
                count += 1
    return count


def _columns(branches: list[_Branch], rows: dict[str, int]) -> list[int]:
    """Column of each branch: the order that crosses fewest rails (ties: the first found)."""
    n = len(branches)
    if n <= _EXHAUSTIVE:
        best = min(itertools.permutations(range(n)),
                   key=lambda order: _crossings(order, branches, rows))
    else:
        order = list(range(n))
        for _ in range(4):  # barycentre: each branch at the mean place of its nodes' rows
            place = {k: c for c, k in enumerate(order)}
            rail = {node: float(np.mean([place[k] for k, b in enumerate(branches)
                                         if node in b.nodes()])) for node in rows}
            order.sort(key=lambda k: (np.mean([rail[m] for m in branches[k].nodes()]),
                                      place[k]))
        improved = True
        while improved:
            improved = False
            for i in range(n - 1):
                swapped = [*order[:i], order[i + 1], order[i], *order[i + 2:]]
                if (_crossings(tuple(swapped), branches, rows)
                        < _crossings(tuple(order), branches, rows)):
                    order, improved = swapped, True
        best = tuple(order)
    column = [0] * n
    for c, k in enumerate(best):
        column[k] = c
    return column


def _symbol(ax: Axes, kind: str, x: float, y: float, up: int) -> None:
    """The symbol of a branch centred at (x, y); ``up`` is +1 when its second end is above."""
    style = {"facecolor": "white", "edgecolor": "black", "linewidth": 1.4, "zorder": 3}
    if kind in ("resistor", "load"):
        w, h = _WIDTH / 2, _BODY / 2
        ax.add_patch(Polygon([(x - w, y - h), (x + w, y - h), (x + w, y + h), (x - w, y + h)],
                             closed=True, hatch="////" if kind == "load" else None, **style))
    elif kind in ("voltage", "current", "transistor"):
        ax.add_patch(Circle((x, y), _RADIUS * (1.3 if kind == "transistor" else 1.0), **style))
        if kind == "voltage":  # ends are (minus, plus): + toward the second end
            for sign, text in ((up, "+"), (-up, "−")):
                ax.text(x, y + sign * 0.5 * _RADIUS, text, ha="center", va="center",
                        fontsize=9, zorder=4)
        elif kind == "current":  # from the first end to the second
            r = 0.65 * _RADIUS
            ax.add_patch(FancyArrowPatch((x, y - up * r), (x, y + up * r), arrowstyle="-|>",
                                         mutation_scale=10, color="black", zorder=4))
    elif kind == "regulator":
        s = _RADIUS * 1.2
        ax.add_patch(Polygon([(x - s, y - s), (x + s, y - s), (x + s, y + s), (x - s, y + s)],
                             closed=True, **style))
        ax.text(x, y, "reg", ha="center", va="center", fontsize=7, zorder=4)
    else:  # a controlled source
        s = _RADIUS * 1.3
        ax.add_patch(Polygon([(x, y - s), (x + s, y), (x, y + s), (x - s, y)], closed=True,
                             **style))


def first_point_view(result: CheckResult) -> CheckResult:
    """A design of operating points' check seen as its single network at the first point.

    The single design with the first point's source (and resistor) values, and
    the node voltages of that point's copy.
    """
    single = result.design.single
    assert single is not None
    point = result.design.points[0]
    mark = f"@{point.name}"
    sources = tuple(replace(s, value=point.sources.get(s.ref, s.value)) for s in single.sources)
    resistors = tuple(replace(r, value=point.resistors.get(r.ref, r.value))
                      for r in single.resistors)
    nodes = {name.removesuffix(mark): v for name, v in result.nodes.items()
             if name.endswith(mark) or name == single.ground}
    positions = {**result.positions, **point.resistors}
    return replace(result, design=replace(single, sources=sources, resistors=resistors),
                   nodes=nodes, positions=positions)


def network_drawing(result: CheckResult, *, ax: Axes | None = None,
                    title: str | None = None) -> Figure:
    """Draw a checked design's network with its values.

    Parameters
    ----------
    result : CheckResult
        A checked design (:func:`synth.checking.check`) or a candidate's
        re-check (``Candidate.check``): its values and node voltages are drawn.
    ax : Axes, optional
        Draw here instead of on a new figure.
    title : str, optional
        The title (the design's own title by default).

    Returns
    -------
    Figure
        The figure drawn on.

    Examples
    --------
    >>> from synth.checking import check
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "20k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "4 V"}]})
    >>> figure = network_drawing(check(d))
    >>> sorted(t.get_text() for t in figure.axes[0].texts if t.get_text().startswith("R"))
    ['R1\\n20 kΩ', 'R2\\n10 kΩ']

    Notes
    -----
    A design of operating points is drawn once, at its first point (its
    source values and node voltages there); the title names the point.
    """
    if result.design.points:
        result, point = first_point_view(result), result.design.points[0].name
        title = f"{title or result.design.title or ''} (at {point})".strip()
    design = result.design
    branches = _branches(result)
    names = design.node_names
    rows = _rows(names, result.nodes)
    columns = _columns(branches, rows)
    n_cols = max(columns, default=0) + 1
    figure, ax = figure_for(ax, (max(4.5, 1.3 * n_cols + 2.6), max(3.2, 0.62 * len(names) + 1.6)))
    reach: dict[str, list[float]] = {n: [] for n in names}
    dots: list[tuple[float, float]] = []
    for branch, column in zip(branches, columns, strict=True):
        x = column * _COLUMN
        a, b = (rows[n] * _ROW for n in branch.ends)
        low, high = min(a, b), max(a, b)
        ax.plot([x, x], [low, high], color="black", linewidth=1.2, zorder=1)
        for node in branch.ends:
            reach[node].append(x)
            dots.append((x, rows[node] * _ROW))
        # the symbol in the middle gap between rails, never on a rail it crosses
        gaps = round((high - low) / _ROW)
        y = low + (gaps // 2 + 0.5) * _ROW if gaps else low
        _symbol(ax, branch.kind, x, y, 1 if b >= a else -1)
        for k, (node, role) in enumerate(branch.taps):
            tx = x - _TAP * (k + 1)
            ty = rows[node] * _ROW
            ax.plot([x, tx, tx], [y, y, ty], color="black", linewidth=1.0, zorder=1,
                    linestyle="--" if branch.kind == "transistor" else ":")
            ax.text(tx - 0.05, (y + ty) / 2, role, rotation=90, ha="right", va="center",
                    fontsize=6, zorder=4)
            reach[node].append(tx)
            dots.append((tx, ty))
        reach_x = 0.45 if branch.kind in ("regulator", "transistor", "controlled") else 0.3
        ax.text(x + reach_x, y, branch.label, ha="left", va="center", fontsize=8, zorder=5,
                parse_math=False, linespacing=1.15,
                bbox={"facecolor": "white", "edgecolor": "none", "pad": 0.6, "alpha": 0.85})
    left = min((min(xs) for xs in reach.values() if xs), default=0.0)
    for name in names:
        y = rows[name] * _ROW
        xs = reach[name] or [0.0]
        start, stop = min(xs) - 0.25, max(xs) + 0.25
        ax.plot([start, stop], [y, y], color="black", linewidth=2.0, zorder=2)
        volts = result.nodes.get(name)
        text = name if volts is None else f"{name}  {format_eng(volts, 'V')}"
        ax.text(min(start, left - 0.8), y + 0.08, text, ha="right", va="bottom", fontsize=8,
                fontweight="bold", zorder=6, parse_math=False)
        if start > left - 0.8:  # a leader from the name to its rail
            ax.plot([left - 0.8, start], [y, y], color="black", linewidth=0.6,
                    linestyle=(0, (1, 3)), zorder=1)
    ax.plot([d[0] for d in dots], [d[1] for d in dots], linestyle="none", marker="o",
            markersize=5, color="black", zorder=6)
    ground_x = float(np.mean(reach[design.ground] or [0.0]))
    ground_y = rows[design.ground] * _ROW
    ax.plot([ground_x, ground_x], [ground_y, ground_y - 0.3], color="black", linewidth=1.4)
    for k, width in enumerate((0.4, 0.26, 0.12)):
        gy = ground_y - 0.3 - 0.09 * k
        ax.plot([ground_x - width / 2, ground_x + width / 2], [gy, gy], color="black",
                linewidth=1.4)
    ax.set_xlim(left - 2.6, (n_cols - 1) * _COLUMN + 2.2)
    ax.set_ylim(-0.8, (len(names) - 1) * _ROW + 0.5)
    ax.set_axis_off()
    ax.set_title(title if title is not None else (design.title or "network"), parse_math=False,
                 fontsize=10)
    return figure
