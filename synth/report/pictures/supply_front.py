"""The error-against-supply-current front of a design, with the ranked candidates beside it.
"""

from __future__ import annotations

__all__ = ["front_plot", "front_summary"]

from collections.abc import Sequence

from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.front import ErrorFront
from synth.report.pictures.axes import eng_axis, figure_for, plain_axis
from synth.results import Candidate


def front_summary(front: ErrorFront) -> str:
    """One line saying how many points were computed and how far they are proven."""
    n = len(front.points)
    proven = sum(p.proven for p in front.points)
    basis = "over the tolerance box" if front.require == "worst-case" else "at nominal values"
    if not n:
        if front.complete:
            return (f"no design meets every window and limit {basis}: the front is empty "
                    f"(proven by {front.runs} exact search{'es' if front.runs != 1 else ''})")
        return (f"no feasible design found before the {front.stopped}; the front is unknown"
                if front.stopped else "no feasible design found; the front is unknown")
    text = (f"{n} front point{'s' if n != 1 else ''} from {front.runs} exact "
            f"search{'es' if front.runs != 1 else ''} (feasible {basis})")
    if front.complete:
        return text + "; the whole front, each point proven"
    cut = f"; cut short by the {front.stopped}" if front.stopped else ""
    return text + f"{cut}; {proven} of {n} proven, lower supply currents not explored"


def front_plot(front: ErrorFront, candidates: Sequence[Candidate] = (), *,
               ax: Axes | None = None, title: str | None = None) -> Figure:
    """Largest goal error against supply current: the front of every feasible design.

    The front is a staircase (the least error reachable within each supply
    budget), its points filled squares (open squares when unproven); the
    ranked candidates, when given, are open circles labelled by rank (crosses,
    named nearest designs, when none is feasible).

    Parameters
    ----------
    front : ErrorFront
        From :func:`synth.front.error_front`.
    candidates : sequence of Candidate
        The ranked candidates to show beside it (``SynthesisResult.candidates``).
    ax : Axes, optional
        Draw here instead of on a new figure.
    title : str, optional

    Returns
    -------
    Figure

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> from synth.front import error_front
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
    ...                   "range": ["1k", "100k"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E12",
    ...                   "range": ["1k", "100k"]}],
    ...     "target": [{"voltage": "out", "equals": "4 V", "within": "10%"}]})
    >>> figure = front_plot(error_front(d))
    >>> figure.axes[0].get_xlabel()
    'supply current'
    """
    figure, ax = figure_for(ax, (6.8, 4.2))
    points = sorted(front.points, key=lambda p: p.supply_current)
    xs = [p.supply_current for p in points]
    ys = [p.objective * 100 for p in points]
    if points:
        ax.step(xs, ys, where="post", color="black", linewidth=1.4,
                label="least error within a supply budget")
        proven = [p.proven for p in points]
        ax.plot([x for x, ok in zip(xs, proven, strict=True) if ok],
                [y for y, ok in zip(ys, proven, strict=True) if ok], linestyle="none",
                marker="s", markersize=6, color="black", label="front point (proven)")
        if not all(proven):
            ax.plot([x for x, ok in zip(xs, proven, strict=True) if not ok],
                    [y for y, ok in zip(ys, proven, strict=True) if not ok], linestyle="none",
                    marker="s", markersize=6, markerfacecolor="white", color="black",
                    label="front point (unproven)")
    if candidates:
        cx = [c.supply_current for c in candidates]
        cy = [c.objective * 100 for c in candidates]
        feasible = all(c.feasible for c in candidates)
        ax.plot(cx, cy, linestyle="none", marker="o" if feasible else "x", markersize=8,
                markerfacecolor="none", color="black",
                label="ranked candidates" if feasible else "nearest designs (infeasible)")
        for c, x, y in zip(candidates, cx, cy, strict=True):
            ax.annotate(str(c.rank), (x, y), textcoords="offset points", xytext=(6, -10),
                        fontsize=7)
    eng_axis(ax.xaxis, "A")
    plain_axis(ax.yaxis)
    ax.set_xlabel("supply current")
    ax.set_ylabel("largest goal error (%)")
    ax.set_title(title or "error against supply current", parse_math=False, fontsize=10)
    ax.text(0.0, -0.2, front_summary(front), transform=ax.transAxes, fontsize=7,
            va="top", wrap=True)
    ax.legend(loc="upper right", fontsize="small")
    return figure
