"""Small HTML builders: every text is escaped unless it is already :class:`Markup`."""

from __future__ import annotations

__all__ = ["Cell", "Markup", "element", "escape", "table"]

import html
from collections.abc import Sequence


class Markup(str):
    """Text that is already HTML (built here from escaped parts): never escaped again.

    Joining keeps it safe: ``Markup + text`` escapes the plain text.

    Examples
    --------
    >>> Markup("<b>R1</b>") + " < 1 W"
    '<b>R1</b> &lt; 1 W'
    """

    def __add__(self, other: str) -> Markup:
        return Markup(str.__add__(self, escape(other)))

    def __radd__(self, other: str) -> Markup:
        return Markup(str.__add__(escape(other), self))


Cell = str | Markup
"""A table cell: plain text (escaped) or :class:`Markup`."""


def escape(text: object) -> Markup:
    """``text`` as HTML: ``Markup`` passes unchanged, anything else is escaped.

    Examples
    --------
    >>> escape('<R1 & "R2">'), escape(Markup("<b>x</b>"))
    ('&lt;R1 &amp; &quot;R2&quot;&gt;', '<b>x</b>')
    """
    if isinstance(text, Markup):
        return text
    return Markup(html.escape(str(text), quote=True))


def element(tag: str, *children: object, cls: str | None = None, **attributes: str) -> Markup:
    """``<tag class=... attr=...>children</tag>``; children and attribute values are escaped.

    Examples
    --------
    >>> element("p", "1 < 2", cls="note")
    '<p class="note">1 &lt; 2</p>'
    """
    pairs = ([("class", cls)] if cls else []) + list(attributes.items())
    attrs = "".join(f' {name.replace("_", "-")}="{escape(value)}"' for name, value in pairs)
    return Markup(f"<{tag}{attrs}>{''.join(escape(c) for c in children)}</{tag}>")


def table(headers: Sequence[str], rows: Sequence[Sequence[Cell]], *, caption: str | None = None,
          cls: str | None = None, row_classes: Sequence[str | None] | None = None) -> Markup:
    """A table with a header row that repeats on every printed page.

    Parameters
    ----------
    headers : sequence of str
    rows : sequence of sequences of cells
    caption : str, optional
    cls : str, optional
        The table's class.
    row_classes : sequence of (str or None), optional
        A class per row (a failing row is marked by more than colour: see the style).
    """
    head = element("thead", Markup(element("tr", *(Markup(element("th", h, scope="col"))
                                                   for h in headers))))
    classes = row_classes or [None] * len(rows)
    body = element("tbody", *(Markup(element("tr", *(Markup(element("td", c)) for c in row),
                                             cls=rc))
                              for row, rc in zip(rows, classes, strict=True)))
    parts = [element("caption", caption)] if caption else []
    return element("table", *parts, head, body, cls=cls)
