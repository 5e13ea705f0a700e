"""The review page as a document: self-contained, escaped, one section per design, the
verdicts in words, the key numbers, the fingerprint and the BOM [HTML-LS]."""

from __future__ import annotations

import re
from html.parser import HTMLParser

from synth.report.review import ReviewedDesign, review_html
from synth.report.review.section import verdict_lines

from .conftest import HOSTILE

FETCHING = {"script", "link", "img", "iframe", "object", "embed", "audio", "video", "source"}


class _Page(HTMLParser):
    """Tags, attributes, ids and text (without the style sheet) of a page."""

    def __init__(self) -> None:
        super().__init__()
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.text: list[str] = []
        self._in_style = False

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._in_style = tag == "style"

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        self._in_style = False

    def handle_data(self, data):
        if not self._in_style:
            self.text.append(data)

    @property
    def words(self) -> str:
        return re.sub(r"\s+", " ", " ".join(self.text))


def _parse(page: str) -> _Page:
    parsed = _Page()
    parsed.feed(page)
    return parsed


def test_page_fetches_nothing(review):
    page = review[0]
    assert page.startswith("<!DOCTYPE html>\n<html lang=\"en\">")
    parsed = _parse(page)
    names = {tag for tag, _ in parsed.tags}
    assert not names & FETCHING
    for tag, attrs in parsed.tags:
        assert "src" not in attrs, tag
        for name, value in attrs.items():
            if name in ("href", "xlink:href"):
                assert value.startswith("#"), (tag, name, value)
            if value and "http" in value:
                assert name.startswith("xmlns"), (tag, name, value)  # namespaces, not fetches
    # every url( is a reference inside the page (an SVG clip path or pattern)
    assert re.findall(r"url\((?!#)", page) == []
    assert "@import" not in page and "@font-face" not in page


def test_ids_are_unique_across_sections_and_figures(review):
    ids = [attrs["id"] for _, attrs in _parse(review[0]).tags if "id" in attrs]
    assert len(ids) == len(set(ids)) > 10


def test_a_users_text_is_escaped(review):
    page = review[0]
    parsed = _parse(page)
    assert HOSTILE in parsed.words  # shown as written ...
    assert "<script>" not in page  # ... and never as markup [HTML-LS]
    assert "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; co" in page


def test_each_design_has_its_section_and_its_verdict(review):
    page, _, results, _ = review
    parsed = _parse(page)
    sections = [attrs for tag, attrs in parsed.tags if tag == "section"]
    assert [s["class"] for s in sections] == ["design"] * 3 + ["bom"]
    for result in results:
        assert verdict_lines(result)[0] in parsed.words
    # the summary says how many fail, the failing designs' verdict boxes are marked
    assert "2 of 3 design(s) FAIL" in parsed.words
    boxes = [attrs["class"] for tag, attrs in parsed.tags
             if tag == "div" and "verdict" in (attrs.get("class") or "")]
    assert boxes == ["verdict fail", "verdict", "verdict fail", "verdict fail"]


def test_key_numbers_are_on_the_page(review):
    words = _parse(review[0]).words
    # R1 = 20k gives exactly 4 V; the fixed divider gives 6 V; 360 mW in each 100 Ω
    # [HB-divider] [HB-ohm]
    assert "R1 20 kΩ 20K E24" in words
    assert "tap 4 V 4 V 0%" in words
    assert "tap 6 V 4 V +50% 3.96 V .. 4.04 V OUT of its window" in words
    assert "R1 100 Ω 360 mW 50 mW 720 %" in words
    assert "OVER its power allowance" in words


def test_each_parts_self_heating_is_stated(review):
    words = _parse(review[0]).words
    # 6 V across 100 Ω: 360 mW, on 850 K/W a 306 K rise; 10k + 10k from 12 V: 0.6 mA,
    # 3.6 mW, 3.06 K [HB-ohm] [HB-self-heating] [CP-thermal-resistance]
    assert "R1 +306 K, R2 +306 K" in words
    assert "R1 +3.06 K, R2 +3.06 K" in words


def test_statuses_are_words_and_failing_rows_are_marked_without_colour(review):
    parsed = _parse(review[0])
    failing = [attrs for tag, attrs in parsed.tags if tag == "tr" and attrs.get("class")]
    assert failing and all(a["class"] == "fail" for a in failing)
    assert "within its allowance" in parsed.words
    style = review[0][review[0].index("<style>"):review[0].index("</style>")]
    assert "tr.fail td" in style and "dashed" in style


def test_version_fingerprint_and_each_file_are_shown(review):
    page, _, _, digest = review
    words = _parse(page).words
    assert "rnsynth version 9.9.9-test" in words
    assert digest.sha256 in words
    for name, own in digest.files:
        assert name in words and own in words


def test_bom_lists_the_values_shown(review):
    words = _parse(review[0]).words
    # free 20k + 10k, fixed 10k + 10k, hot 100 + 100 -> three lines, six parts
    assert "3 lines, 6 parts" in words
    assert "no consolidation" in words


def test_figures_are_inline_svg_with_glyphs_as_paths(review):
    page = review[0]
    parsed = _parse(page)
    svgs = [attrs for tag, attrs in parsed.tags if tag == "svg"]
    # free: candidates, network, one derating curve (0603), contributions and histogram
    # of its one target; each check: the same without the candidates
    assert len(svgs) == 5 + 4 + 4
    assert "<text" not in page and "font-family:" not in page.split("</style>", 1)[1]
    assert "<figcaption>" in page


def test_without_figures_and_titles(review):
    _, _, results, digest = review
    page = review_html([ReviewedDesign(result=results[1], name="lamp", count=2)], bom=None,
                       digest=digest, version="1")
    words = _parse(page).words
    assert "<svg" not in page and "Bill of materials" not in words
    assert "Design review: fixed divider" in words
    assert "network lamp, 2 copies on the board" in words


def test_a_design_of_operating_points_lists_each_part_once(review):
    """The positions table holds the design as written; the points are named."""
    from synth.checking import check
    from synth.design.reader import design_from_dict

    _, _, _, digest = review
    design = design_from_dict({
        "source": [{"ref": "VB", "kind": "voltage", "plus": "bat", "minus": "gnd",
                    "range": ["3 V", "4.2 V"]}],
        "resistor": [{"ref": "RA", "nodes": ["bat", "out"], "value": "20k"},
                     {"ref": "RB", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "at_most": "1.5 V"}]})
    page = review_html([ReviewedDesign(result=check(design), name="sense")], bom=None,
                       digest=digest, version="1")
    assert "RA@" not in page and "VB@VB high (+)" not in page
    assert "VB low (VB = 3 V); VB high (VB = 4.2 V)" in page
    assert "voltage at out @ VB high" in page
