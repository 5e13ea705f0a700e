"""The figures of a review page, as inline SVG (no computation: the plots draw results).

Every figure is drawn by :mod:`synth.report.plots` and embedded as an ``<svg>``
element: glyphs as paths (``svg.fonttype = "path"``, so no font is fetched or
needed), no XML prolog, no metadata (the file's date would change the page), and
every ``id`` prefixed per figure so that several figures on one page never share
one.
"""

from __future__ import annotations

__all__ = ["ReviewFigure", "figure_svg", "inline_svg", "review_figures"]

import io
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from synth.results import CheckResult, SynthesisResult


def _svg_settings() -> Any:
    """matplotlib settings of embedded figures: text as paths, images inline, fixed ids."""
    from matplotlib import rc_context

    return rc_context({"svg.fonttype": "path", "svg.image_inline": True,
                       "svg.hashsalt": "rnsynth"})

_ID = re.compile(r'\bid="([^"]+)"')


@dataclass(frozen=True)
class ReviewFigure:
    """One figure of a review page.

    Attributes
    ----------
    caption : str
        What the figure shows, in words (plain text).
    svg : str
        An inline ``<svg>`` element (see :func:`inline_svg`).
    """

    caption: str
    svg: str


def inline_svg(text: str, prefix: str) -> str:
    """An SVG document made fit to sit inside an HTML page.

    Drops everything before the ``<svg`` element (XML prolog, doctype) and the
    ``<metadata>`` block, and prefixes every ``id`` (and every reference to one,
    ``url(#...)`` and ``href="#..."``) with ``prefix``.

    Examples
    --------
    >>> inline_svg('<?xml version="1.0"?>\\n<svg><metadata>x</metadata>'
    ...            '<path id="a"/><use xlink:href="#a"/></svg>\\n', "f1-")
    '<svg><path id="f1-a"/><use xlink:href="#f1-a"/></svg>'
    """
    start = text.index("<svg")
    body = re.sub(r"<metadata>.*?</metadata>\s*", "", text[start:], flags=re.DOTALL).strip()
    names = set(_ID.findall(body))

    def rename(match: re.Match[str]) -> str:
        name = match.group(2)
        return f"{match.group(1)}{prefix}{name}" if name in names else match.group(0)

    body = re.sub(r'(\bid=")([^"]+)', rename, body)
    body = re.sub(r"(url\(#)([^)]+)", rename, body)
    return re.sub(r'(href="#)([^"]+)', rename, body)


def figure_svg(figure: Any, prefix: str) -> str:
    """A matplotlib Figure as an inline ``<svg>`` element (see :func:`inline_svg`)."""
    buffer = io.StringIO()
    with _svg_settings():
        figure.savefig(buffer, format="svg", bbox_inches="tight", metadata={"Date": None})
    return inline_svg(buffer.getvalue(), prefix)


def _drawn(draw: Any, *args: Any, **kwargs: Any) -> list[str]:
    """The SVG files a plot function of :mod:`synth.report.plots` writes, read back."""
    with tempfile.TemporaryDirectory(prefix="rnsynth-review-") as folder, _svg_settings():
        paths = draw(*args, folder=folder, **kwargs)
        return [Path(p).read_text(encoding="utf-8") for p in paths if Path(p).suffix == ".svg"]


def review_figures(result: CheckResult | SynthesisResult, plot_x: str = "supply",
                   prefix: str = "f") -> list[ReviewFigure]:
    """The figures of one design's section: the ranked candidates, then each target's spread.

    Parameters
    ----------
    result : CheckResult or SynthesisResult
        A checked design, or a synthesis (its best candidate's spread is shown).
    plot_x : {"supply", "hottest", "distinct"}
        The candidate scatter's horizontal axis.
    prefix : str
        Prefix of the figures' ids (unique per section of a page).

    Returns
    -------
    list of ReviewFigure
        Empty when there is nothing to draw (no candidate, no Monte Carlo samples).
    """
    from synth.report.plots import candidate_scatter, target_histograms

    figures: list[ReviewFigure] = []
    spread = result.spread if isinstance(result, CheckResult) else (
        result.candidates[0].spread if result.candidates else None)
    if isinstance(result, SynthesisResult) and result.candidates:
        axis = {"supply": "supply current", "hottest": "the hottest part's use of its "
                "allowance", "distinct": "the number of distinct values"}[plot_x]
        for svg in _drawn(candidate_scatter, result, cost=plot_x):
            figures.append(ReviewFigure(
                caption=f"Ranked candidates: largest relative error against {axis}; the best "
                        "is the star.", svg=svg))
    if spread is not None:
        sampled = [t for t in spread.targets if t.mc_values is not None]
        for target, svg in zip(sampled, _drawn(target_histograms, result.design, spread),
                               strict=True):
            figures.append(ReviewFigure(
                caption=f"{target.label}: Monte Carlo distribution ({spread.settings.samples:,} "
                        f"{spread.settings.distribution} samples), its window (solid lines), "
                        "worst case (dashed) and nominal value (dotted).", svg=svg))
    return [ReviewFigure(caption=f.caption, svg=inline_svg(f.svg, f"{prefix}{k}-"))
            for k, f in enumerate(figures, 1)]
