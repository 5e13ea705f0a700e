"""The shared picture helpers: a given axes is drawn on, ticks in engineering units, bytes.

The PNG signature is that of the PNG specification (ISO/IEC 15948); the prefixes those
of the SI brochure [SI-brochure].
"""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure

from synth.errors import DesignError
from synth.report.pictures.axes import eng_axis, figure_bytes, figure_for, plain_axis

from .conftest import drawn_ticks, in_unit, plain_numbers


def test_a_given_axes_and_its_figure_are_used():
    host = Figure()
    ax = host.subplots()
    assert figure_for(ax) == (host, ax)
    figure, new = figure_for(None, (3.0, 2.0))
    assert new.get_figure() is figure and tuple(figure.get_size_inches()) == (3.0, 2.0)


def test_engineering_ticks_carry_the_prefix_and_unit():
    figure, ax = figure_for(None)
    ax.plot([0.0, 2e-3], [1e3, 47e3])
    eng_axis(ax.xaxis, "A")
    eng_axis(ax.yaxis, "Ω")
    assert in_unit(drawn_ticks(figure, ax.xaxis), "A")
    assert any(t.endswith("mA") for t in drawn_ticks(figure, ax.xaxis))
    assert in_unit(drawn_ticks(figure, ax.yaxis), "Ω")
    assert any(t.endswith("kΩ") for t in drawn_ticks(figure, ax.yaxis))


def test_plain_ticks_have_no_offset():
    figure, ax = figure_for(None)
    ax.plot([0, 1], [100000.001, 100000.002])
    plain_axis(ax.yaxis)
    # an offset would write -0.0002 .. 0.0002 beside "+1e5": the ticks read 100000.0010 ...
    assert plain_numbers(drawn_ticks(figure, ax.yaxis), ax.yaxis)
    # without a unit a ratio reads as plain numbers
    eng_axis(ax.xaxis, "")
    assert all("e" not in t for t in drawn_ticks(figure, ax.xaxis))


def test_bytes_of_each_format_and_an_unknown_one_refused():
    figure, ax = figure_for(None)
    ax.plot([0, 1], [0, 1])
    assert figure_bytes(figure, "png")[:8] == b"\x89PNG\r\n\x1a\n"
    assert b"<svg" in figure_bytes(figure, "svg")
    with pytest.raises(DesignError, match="format 'gif' is not known; use one of png, svg"):
        figure_bytes(figure, "gif")
