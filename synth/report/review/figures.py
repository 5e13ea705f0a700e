"""The figures of a review page, as inline SVG (no computation: the plots draw results).

Every figure is drawn by :mod:`synth.report.plots` (a matplotlib Figure) and
embedded as an ``<svg>`` element: glyphs as paths (``svg.fonttype = "path"``, so no
font is fetched or needed), no XML prolog, no metadata (the file's date would change the page), and
every ``id`` prefixed per figure so that several figures on one page never share
one.
"""

from __future__ import annotations

__all__ = ["ReviewFigure", "caption", "figure_svg", "inline_svg", "review_figures"]

import io
import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any


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


def caption(stem: str) -> str:
    """What the picture under file stem ``stem`` shows (see :mod:`synth.report.plots`)."""
    kind, _, rest = stem.partition("-")
    label = rest.partition("-")[2] if rest[:1].isdigit() else rest
    words = {
        "network": "The network with its values.",
        "candidates": "Ranked candidates: largest relative error against the chosen axis; "
                      "the best is the star.",
        "front": "Largest goal error against supply current over the feasible designs (the "
                 "front; its title says when it was cut short).",
        "derating": f"Derating of package {rest}: allowed power against ambient, the "
                    "design's ambient and the parts' dissipation marked.",
        "contributions": f"Target {label}: each varying quantity's contribution to its "
                         "spread.",
        "spread": f"Target {label}: Monte Carlo distribution, its window, worst case and "
                  "nominal value.",
    }
    return words.get(kind, stem)


def review_figures(pictures: Sequence[tuple[str, Any]], prefix: str = "f"
                   ) -> list[ReviewFigure]:
    """The pictures of one design's section as inline SVG figures with captions.

    Parameters
    ----------
    pictures : sequence of (str, Figure)
        File stem and figure, as :func:`synth.report.plots.check_pictures` and
        :func:`synth.report.plots.design_pictures` give them.
    prefix : str
        Prefix of the figures' ids (unique per section of a page).
    """
    return [ReviewFigure(caption=caption(stem), svg=figure_svg(figure, f"{prefix}{k}-"))
            for k, (stem, figure) in enumerate(pictures, 1)]
