"""Plots of spread and of ranked candidates (matplotlib, headless, PNG and SVG).

Readable without colour: distributions are hatched bars, limits are lines of
different dash patterns named in the legend, and the best candidate is a
large star with a label.  Figures are drawn with matplotlib's object API and
its Agg canvas, so no display and no global pyplot state are involved.
"""

from __future__ import annotations

__all__ = ["COSTS", "candidate_scatter", "target_histograms"]

import os
import re
import tempfile
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import EngFormatter

from synth.design.model import Design
from synth.errors import DesignError
from synth.results import Candidate, SynthesisResult
from synth.spread.records import SpreadResult

COSTS = ("supply", "hottest", "distinct")
"""What the candidate scatter puts on its horizontal axis."""


_SLUG_LENGTH = 40  # characters of a label kept in a file name


def _slug(text: str) -> str:
    """A file-name part from a label: ASCII letters, digits and dashes, at most 40 long."""
    slug = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()[:_SLUG_LENGTH]
    return slug.strip("-") or "target"


def _save(figure: Figure, folder: Path, stem: str) -> list[Path]:
    written = []
    for suffix in (".png", ".svg"):
        target = folder / f"{stem}{suffix}"
        handle, temp = tempfile.mkstemp(prefix=f".{target.name}.", dir=folder)
        os.close(handle)
        try:
            figure.savefig(temp, format=suffix[1:], dpi=120, bbox_inches="tight")
            os.replace(temp, target)
        except OSError as exc:  # a full disk, the file-size limit
            Path(temp).unlink(missing_ok=True)
            raise DesignError(f"{target}: could not be written ({exc.strerror or exc})") from None
        except BaseException:
            Path(temp).unlink(missing_ok=True)
            raise
        written.append(target)
    return written


def _folder(path: str | Path) -> Path:
    folder = Path(path)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise DesignError(f"{folder}: cannot create the plot folder ({exc.strerror})") from None
    return folder


def target_histograms(design: Design, spread: SpreadResult, folder: str | Path,
                      stem: str = "spread") -> list[Path]:
    """One histogram per target of its Monte Carlo samples, window and worst case marked.

    Returns the files written (PNG and SVG of each).
    """
    out = _folder(folder)
    written: list[Path] = []
    for k, (target, t) in enumerate(zip(design.targets, spread.targets, strict=True), 1):
        if t.mc_values is None:
            continue
        figure = Figure(figsize=(6.4, 4.0))
        axes = figure.subplots()
        values = t.mc_values[np.isfinite(t.mc_values)]
        axes.hist(values, bins=60, facecolor="none", edgecolor="black", hatch="///",
                  label=f"Monte Carlo, {len(values):,} samples")
        low, high = target.bounds
        for edge in (low, high):
            if np.isfinite(edge):
                axes.axvline(edge, color="black", linestyle="-", linewidth=2,
                             label="window" if edge == low or not np.isfinite(low) else None)
        axes.axvline(t.worst_low, color="black", linestyle="--", label="worst case")
        axes.axvline(t.worst_high, color="black", linestyle="--")
        axes.axvline(t.nominal, color="black", linestyle=":", label="nominal")
        unit = f" ({target.unit})" if target.unit else ""
        # a user's label is drawn as plain text: "$" and "^" are not math text
        axes.set_xlabel(f"{t.label}{unit}", parse_math=False)
        axes.set_ylabel("samples")
        inside = "" if t.inside is None else f", {t.inside * 100:.3g}% inside the window"
        axes.set_title(f"{t.label}{inside}", parse_math=False)
        axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
        written += _save(figure, out, f"{stem}-{k}-{_slug(t.label)}")
    return written


def _cost(candidate: Candidate, cost: str) -> float:
    if cost == "supply":
        return candidate.supply_current
    if cost == "hottest":
        hot = candidate.hottest
        return 0.0 if hot is None or hot.utilization is None else hot.utilization * 100
    return float(len(set(candidate.values.values())))


def candidate_scatter(result: SynthesisResult, folder: str | Path, cost: str = "supply",
                      stem: str = "candidates") -> list[Path]:
    """Scatter of the ranked candidates: error against a cost, the best marked.

    Parameters
    ----------
    result : SynthesisResult
    folder : str or Path
    cost : {"supply", "hottest", "distinct"}
        Supply current (A), the hottest part's use of its allowance (%), or
        the number of distinct values.
    """
    if cost not in COSTS:
        raise DesignError(f"cost {cost!r} is not known; use one of {', '.join(COSTS)}")
    out = _folder(folder)
    figure = Figure(figsize=(6.4, 4.0))
    axes = figure.subplots()
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
        axes.xaxis.set_major_formatter(EngFormatter(unit="A"))
    axes.set_ylabel("largest relative error (%)")
    axes.set_title(result.design.title or "ranked candidates", parse_math=False)
    axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small")
    return _save(figure, out, stem)
