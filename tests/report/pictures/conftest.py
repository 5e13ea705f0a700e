"""Helpers of the picture tests: tick label text as drawn."""

from __future__ import annotations

import re

import pytest


def drawn_ticks(figure, axis):
    """The non-empty tick labels of ``axis`` once the figure is drawn."""
    figure.canvas.draw()
    return [t.get_text() for t in axis.get_ticklabels() if t.get_text()]


@pytest.fixture
def ticks():
    return drawn_ticks


ENG = r"[-−]?\d+(?:\.\d+)?\s[pnµmkM]?{unit}"


def in_unit(labels, unit):
    """True when every label is a number, a space, an SI prefix and ``unit`` (no offset)."""
    return bool(labels) and all(re.fullmatch(ENG.format(unit=re.escape(unit)), t)
                                for t in labels)


def plain_numbers(labels, axis):
    """True when every label is a plain number inside the axis's view (no offset, no ×10^n)."""
    low, high = sorted(axis.get_view_interval())
    span = high - low
    values = [float(t.replace("−", "-")) for t in labels]
    return bool(values) and all(low - span <= v <= high + span for v in values)
