"""Plots of spread and of ranked candidates, and the named set of pictures a run draws.

Readable without colour: distributions are hatched bars, limits are lines of
different dash patterns named in the legend, and the best candidate is a
large star with a label.  Every function returns a matplotlib Figure drawn
with the object API (no display, no global pyplot state), or draws on the
``ax`` it is given; none writes a file.  :func:`check_pictures` and
:func:`design_pictures` name each figure by a file stem made from a safe slug
of its label, for the command line to write.
"""

from __future__ import annotations

__all__ = ["COSTS", "Picture", "candidate_scatter", "check_pictures", "design_pictures",
           "target_histogram", "target_histograms"]

import re
from collections.abc import Sequence

import numpy as np
from matplotlib.axes import Axes
from matplotlib.figure import Figure

from synth.design.model import Design
from synth.errors import DesignError
from synth.front import ErrorFront
from synth.report.pictures.axes import eng_axis, figure_for, plain_axis
from synth.report.pictures.contributions import contribution_bars
from synth.report.pictures.derating import derating_curve, packages_used
from synth.report.pictures.linearity import linearity_plot
from synth.report.pictures.network import network_drawing
from synth.report.pictures.supply_front import front_plot
from synth.report.pictures.transfer_curve import transfer_curve
from synth.results import Candidate, CheckResult, SynthesisResult
from synth.spread.range_curve import RangeCurve
from synth.spread.records import SpreadResult

COSTS = ("supply", "hottest", "distinct")
"""What the candidate scatter puts on its horizontal axis."""

Picture = tuple[str, Figure]
"""A figure and the file stem it is written under (``"network"``, ``"spread-1-output"``)."""


_SLUG_LENGTH = 40  # characters of a label kept in a file name


def _slug(text: str) -> str:
    """A file-name part from a label: ASCII letters, digits and dashes, at most 40 long."""
    slug = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()[:_SLUG_LENGTH]
    return slug.strip("-") or "target"


def target_histogram(design: Design, spread: SpreadResult, target: int = 0, *,
                     ax: Axes | None = None) -> Figure:
    """A histogram of one target's Monte Carlo samples, its window and worst case marked.

    Drawn from the samples kept with ``SpreadSettings(keep_samples=True)`` (at most
    ``kept_samples``, the first ones drawn: the legend says how many of how many), or
    else from the streamed histogram of every sample (fixed bins over the worst-case
    range; samples outside it are counted in the legend, not drawn).

    Raises
    ------
    DesignError
        When the spread has no Monte Carlo samples of the target.
    """
    record = design.targets[target]
    t = spread.targets[target]
    if t.mc_values is None and t.mc_histogram is None:
        raise DesignError(f"target {t.label!r} has no Monte Carlo samples; analyse the spread "
                          "with samples")
    figure, axes = figure_for(ax)
    run = spread.samples_run or 0
    if t.mc_values is not None:
        values = t.mc_values[np.isfinite(t.mc_values)]
        drawn = (f"{len(values):,} samples" if len(t.mc_values) >= run
                 else f"first {len(values):,} of {run:,} samples")
        axes.hist(values, bins=60, facecolor="none", edgecolor="black", hatch="///",
                  label=f"Monte Carlo, {drawn}")
    elif t.mc_histogram is not None:
        h = t.mc_histogram
        edges = np.linspace(h.low, h.high, len(h.counts) + 1)
        outside = h.below + h.above + h.undefined
        axes.stairs(np.asarray(h.counts), edges, fill=True, facecolor="none",
                    edgecolor="black", hatch="///",
                    label=f"Monte Carlo, {run:,} samples in {len(h.counts)} bins"
                    + (f" ({outside:,} outside, not drawn)" if outside else ""))
    low, high = record.bounds
    for edge in (low, high):
        if np.isfinite(edge):
            axes.axvline(edge, color="black", linestyle="-", linewidth=2,
                         label="window" if edge == low or not np.isfinite(low) else None)
    axes.axvline(t.worst_low, color="black", linestyle="--", label="worst case")
    axes.axvline(t.worst_high, color="black", linestyle="--")
    axes.axvline(t.nominal, color="black", linestyle=":", label="nominal")
    eng_axis(axes.xaxis, record.unit)
    # a user's label is drawn as plain text: "$" and "^" are not math text
    axes.set_xlabel(t.label, parse_math=False)
    axes.set_ylabel("samples")
    inside = "" if t.inside is None else f", {t.inside * 100:.3g}% inside the window"
    axes.set_title(f"{t.label}{inside}", parse_math=False)
    axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return figure


def target_histograms(design: Design, spread: SpreadResult,
                      stem: str = "spread") -> list[Picture]:
    """One histogram per target with samples, each named ``{stem}-{k}-{slug of its label}``."""
    return [(f"{stem}-{k}-{_slug(t.label)}", target_histogram(design, spread, k - 1))
            for k, t in enumerate(spread.targets, 1)
            if t.mc_values is not None or t.mc_histogram is not None]


def _cost(candidate: Candidate, cost: str) -> float:
    if cost == "supply":
        return candidate.supply_current
    if cost == "hottest":
        hot = candidate.hottest
        return 0.0 if hot is None or hot.utilization is None else hot.utilization * 100
    return float(len(set(candidate.values.values())))


def candidate_scatter(result: SynthesisResult, cost: str = "supply", *,
                      ax: Axes | None = None) -> Figure:
    """Scatter of the ranked candidates: error against a cost, the best marked.

    Parameters
    ----------
    result : SynthesisResult
    cost : {"supply", "hottest", "distinct"}
        Supply current (A), the hottest part's use of its allowance (%), or
        the number of distinct values.
    ax : Axes, optional
        Draw here instead of on a new figure.
    """
    if cost not in COSTS:
        raise DesignError(f"cost {cost!r} is not known; use one of {', '.join(COSTS)}")
    figure, axes = figure_for(ax)
    xs = [_cost(c, cost) for c in result.candidates]
    ys = [c.objective * 100 for c in result.candidates]
    axes.scatter(xs[1:], ys[1:], marker="o", facecolors="none", edgecolors="black",
                 label="candidates")
    if xs:
        axes.scatter(xs[:1], ys[:1], marker="*", s=220, color="black", label="best")
        axes.annotate("best", (xs[0], ys[0]), textcoords="offset points", xytext=(8, 8))
    for c, x, y in zip(result.candidates, xs, ys, strict=True):
        axes.annotate(str(c.rank), (x, y), textcoords="offset points", xytext=(-10, -12),
                      fontsize="small")
    axes.set_xlabel({"supply": "supply current", "hottest": "hottest part's use (%)",
                     "distinct": "distinct values"}[cost])
    if cost == "supply":
        eng_axis(axes.xaxis, "A")
    else:
        plain_axis(axes.xaxis)
    plain_axis(axes.yaxis)
    axes.set_ylabel("largest relative error (%)")
    axes.set_title(result.design.title or "ranked candidates", parse_math=False)
    axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return figure


def _checked_pictures(checked: CheckResult, spread: SpreadResult | None,
                      curves: Sequence[RangeCurve] = ()) -> list[Picture]:
    """Network, derating of each package, each transfer curve over a source's range and,
    with a spread, contributions and histograms."""
    design = checked.design
    pictures: list[Picture] = [("network", network_drawing(checked))]
    pictures += [(f"range-{k}-{_slug(c.label)}", transfer_curve(c))
                 for k, c in enumerate(curves, 1)]
    pictures += [(f"linearity-{k}-{_slug(c.label)}", linearity_plot(c))
                 for k, c in enumerate(checked.linearity, 1)]
    pictures += [(f"derating-{_slug(package)}",
                  derating_curve(design, checked.parts, package, spread=spread))
                 for package in packages_used(checked.parts)]
    if spread is not None:
        pictures += [(f"contributions-{k}-{_slug(t.label)}",
                      contribution_bars(spread, k - 1, unit=design.targets[k - 1].unit))
                     for k, t in enumerate(spread.targets, 1)]
        pictures += target_histograms(design, spread)
    return pictures


def check_pictures(result: CheckResult, curves: Sequence[RangeCurve] = ()) -> list[Picture]:
    """Every picture of a checked design, named by file stem.

    The network with its values (``network``), each linearity target's error
    in °C against temperature (``linearity-1-out``), each target across a source's
    range when ``curves`` are given (``range-1-output``, from
    :func:`synth.spread.range_curve.range_curves`), the derating curve of each
    package used (``derating-0603``) and, when the spread was analysed, each
    target's contribution bars (``contributions-1-output``) and Monte Carlo
    histogram (``spread-1-output``).
    """
    return _checked_pictures(result, result.spread, curves)


def design_pictures(result: SynthesisResult, cost: str = "supply",
                    front: ErrorFront | None = None,
                    curves: Sequence[RangeCurve] = ()) -> list[Picture]:
    """Every picture of a synthesis, named by file stem.

    The candidate scatter (``candidates``), the error-against-supply front
    when given (``front``), then the pictures of :func:`check_pictures` for
    the best candidate (``curves`` its range curves).
    """
    pictures: list[Picture] = [("candidates", candidate_scatter(result, cost=cost))]
    if front is not None:
        pictures.append(("front", front_plot(front, result.candidates,
                                             title=result.design.title or None)))
    if result.candidates:
        best = result.candidates[0]
        pictures += _checked_pictures(best.check, best.spread, curves)
    return pictures
