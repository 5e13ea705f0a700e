"""The review page: one self-contained HTML document for one or several designs and their BOM.

Self-contained: the style sheet is inline, figures are inline SVG with glyphs as
paths, and the page has no script, no link, no image file and no font to fetch.
"""

from __future__ import annotations

__all__ = ["ReviewedDesign", "review_html"]

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from synth.bom.lines import BomResult
from synth.digest import InputDigest
from synth.report.bom import bom_rows
from synth.report.review.figures import review_figures
from synth.report.review.markup import Markup, element, escape, table
from synth.report.review.section import design_section, passes, verdict_lines
from synth.report.review.style import STYLE
from synth.results import CheckResult, SynthesisResult

_SAFETY = ("rnsynth is a design aid only, not safety certification: circuits above extra-low "
           "voltage, mains-connected or high-energy ones need qualified review under local "
           "codes and standards and licensed practice.")


@dataclass(frozen=True)
class ReviewedDesign:
    """One design of a review page.

    Attributes
    ----------
    result : CheckResult or SynthesisResult
        The check of a fully specified design, or the synthesis of one with free parts.
    name : str or None
        The network's name when the design comes from a board file.
    count : int
        Copies of the network on the board.
    pictures : tuple of (str, Figure)
        The figures to embed, with their file stems (see
        :func:`synth.report.plots.design_pictures` and ``check_pictures``).
    """

    result: CheckResult | SynthesisResult
    name: str | None = None
    count: int = 1
    pictures: tuple[tuple[str, Any], ...] = ()


def _provenance(digest: InputDigest, version: str) -> Markup:
    files = table(["input file", "SHA-256 of its bytes"],
                  [[name, element("span", own, cls="hash")] for name, own in digest.files],
                  caption="Inputs")
    options = ", ".join(f"{name} = {value}" for name, value in digest.options) or "none"
    facts = element("dl", Markup(
        element("dt", "rnsynth version") + element("dd", version)
        + element("dt", "inputs fingerprint") + element("dd", element("span", digest.sha256,
                                                                     cls="hash"))
        + element("dt", "options") + element("dd", options)), cls="facts")
    note = element("p", element("small", "The fingerprint is the SHA-256 of one line per input "
                                         "file (its own SHA-256, in the order given) and one "
                                         "line \"option NAME=VALUE\" per option, sorted."))
    return Markup(facts + files + note)


def _summary(designs: Sequence[ReviewedDesign]) -> Markup:
    rows, classes = [], []
    for number, item in enumerate(designs, 1):
        result = item.result
        ok = passes(result)
        label = result.design.title or item.name or result.design.origin
        rows.append([str(number), element("a", label, href=f"#design-{number}"),
                     element("span", "passes" if ok else "FAILS", cls="word"),
                     verdict_lines(result)[0]])
        classes.append(None if ok else "fail")
    failing = sum(1 for c in classes if c)
    head = ("Every design meets every window and limit on its required basis."
            if not failing else
            f"{failing} of {len(designs)} design(s) FAIL: see the verdicts below.")
    return Markup(element("div", element("p", Markup(element("b", "Verdict: ")
                                                     + escape(head))),
                          cls="verdict" if not failing else "verdict fail")
                  + table(["#", "design", "verdict", "in words"], rows, row_classes=classes,
                          caption="Designs on this page"))


def _bom(bom: BomResult) -> Markup:
    rows = bom_rows(bom)
    stocked = bom.board.stock_path is not None
    headers = ["line", "qty", "designators", "value (code)", "series", "tolerance, TCR",
               "package", "rating", "description"]
    cells = []
    for row in rows:
        size = " / ".join(x for x in (row["imperial"], row["metric"]) if x)
        rating = ", ".join(text for text in (
            None if row["rated_power_w"] is None else f"{row['rated_power_w']:g} W",
            None if row["voltage_rating_v"] is None else f"{row['voltage_rating_v']:g} V")
            if text) or "-"
        cell = [str(row["line"]), str(row["quantity"]), row["references"],
                f"{row['value']} ({row['code']})", row["series"],
                f"{row['tolerance']}, {row['tcr_ppm_per_c']:g} ppm/°C",
                f"{row['package']} ({size})" if size else row["package"], rating,
                row["description"]]
        if stocked:
            cell += [row["in_stock"], str(row["to_buy"])]
        cells.append(cell)
    if stocked:
        headers += ["in stock", "to buy"]
    note = ("One line per orderable part of the values shown above (each design keeps its "
            "values: no consolidation across designs, which rnsynth bom offers). "
            f"{len(bom.lines)} lines, {bom.parts} parts.")
    out = [element("h2", "Bill of materials", id="bom"), element("p", note),
           table(headers, cells, caption="Bill of materials")]
    for label, mapping in bom.renumbered.items():
        moves = ", ".join(f"{a} → {b}" for a, b in mapping.items())
        out.append(element("p", f"renumbered in {label}: {moves}"))
    return element("section", *out, cls="bom")


def review_html(designs: Sequence[ReviewedDesign], *, bom: BomResult | None,
                digest: InputDigest, version: str, title: str | None = None) -> str:
    """The review page of one or several designs, as one HTML document.

    Parameters
    ----------
    designs : sequence of ReviewedDesign
        One section each, in order.
    bom : BomResult or None
        The bill of materials over all designs (see :func:`synth.bom.build.bom_of_values`).
    digest : InputDigest
        The inputs' fingerprint, shown with ``version``.
    version : str
        The rnsynth version that made the page.
    title : str, optional
        The page's title (a board's); by default the only design's title.

    Returns
    -------
    str
        The document, starting ``<!DOCTYPE html>``.
    """
    if title is None:
        title = (designs[0].result.design.title or designs[0].result.design.origin
                 if len(designs) == 1 else f"{len(designs)} designs")
    sections = []
    for number, item in enumerate(designs, 1):
        drawn = review_figures(item.pictures, prefix=f"d{number}f")
        sections.append(design_section(item.result, number, drawn, name=item.name,
                                       count=item.count))
    body = [element("header", element("h1", f"Design review: {title}"), _summary(designs),
                    _provenance(digest, version)),
            *sections]
    if bom is not None:
        body.append(_bom(bom))
    body.append(element("footer", element("p", f"Made by rnsynth {version} from the inputs "
                                               f"with fingerprint {digest.sha256}."),
                        element("p", _SAFETY)))
    head = (Markup('<meta charset="utf-8">')
            + Markup('<meta name="viewport" content="width=device-width, initial-scale=1">')
            + element("title", f"Design review: {title}")
            + Markup(f"<style>{STYLE}</style>"))
    document = element("html", element("head", head), element("body", *body), lang="en")
    return f"<!DOCTYPE html>\n{document}\n"
