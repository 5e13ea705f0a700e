"""HTML builders: a user's text is escaped everywhere, markup built here is not [HTML-LS]."""

from __future__ import annotations

from html.parser import HTMLParser

from synth.report.review.markup import Markup, element, escape, table


class _Tags(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def _parse(text: str) -> _Tags:
    parser = _Tags()
    parser.feed(text)
    return parser


HOSTILE = '<script>alert("x")</script> & co'


def test_text_and_attributes_are_escaped():
    # the five characters of [HTML-LS] §13.1.4 are written as references
    assert escape(HOSTILE) == "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; co"
    tree = _parse(element("p", HOSTILE, title=HOSTILE))
    assert tree.tags == ["p"]
    assert "".join(tree.text) == HOSTILE


def test_markup_is_kept_and_joining_escapes_plain_text():
    bold = element("b", "R1")
    assert element("p", bold) == "<p><b>R1</b></p>"
    joined = bold + " < 1 W"
    assert isinstance(joined, Markup) and joined == "<b>R1</b> &lt; 1 W"
    assert "<" + bold == "&lt;<b>R1</b>"


def test_table_has_a_repeating_header_and_marks_rows():
    text = table(["part", "status"], [["R1", "within"], [HOSTILE, "OVER"]], caption="stress",
                 row_classes=[None, "fail"])
    tree = _parse(text)
    assert tree.tags[:4] == ["table", "caption", "thead", "tr"]
    assert tree.tags.count("th") == 2 and tree.tags.count("td") == 4
    assert "script" not in tree.tags
    assert '<tr class="fail">' in text and text.count("<tr") == 3
