"""Plots: the candidate scatter on each documented axis, spread histograms, refused axes, the
named picture sets of a check and a synthesis.

Figures are returned, never written: the PNG signature is that of the PNG specification
(ISO/IEC 15948) and text is checked in SVGs rendered with their text kept as text.  The
values drawn come from a divider [HB-divider] whose best candidate is exact.
"""

from __future__ import annotations

import re

import matplotlib
import pytest
from matplotlib.figure import Figure

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.front import error_front
from synth.report.pictures.axes import figure_bytes
from synth.report.plots import (
    COSTS,
    candidate_scatter,
    check_pictures,
    design_pictures,
    target_histogram,
    target_histograms,
)
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize

PNG = b"\x89PNG\r\n\x1a\n"


def divider(target):
    return design_from_dict({
        "design": {"title": "probe divider", "package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [target],
    })


@pytest.fixture(scope="module")
def result():
    return synthesize(divider({"voltage": "out", "equals": "4 V", "within": "5%"}), top=4,
                      spread=SpreadSettings(samples=500, seed=2))


def svg_text(figure):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        return figure_bytes(figure, "svg").decode("utf-8")


@pytest.mark.parametrize(("cost", "label"), [
    ("supply", "supply current"), ("hottest", "hottest part's use (%)"),
    ("distinct", "distinct values")])
def test_candidate_scatter_on_each_axis(result, cost, label):
    figure = candidate_scatter(result, cost=cost)
    assert isinstance(figure, Figure)
    assert figure_bytes(figure, "png")[:8] == PNG
    svg = svg_text(figure)
    assert label in svg and "largest relative error (%)" in svg
    assert "probe divider" in svg and "best" in svg


def test_scatter_draws_on_a_given_axes_in_engineering_units(result):
    host = Figure()
    ax = host.subplots()
    assert candidate_scatter(result, ax=ax) is host
    host.canvas.draw()  # tick labels are set when drawn
    ticks = [t.get_text() for t in ax.get_xticklabels() if t.get_text()]
    # 12 V over 30k draws 400 µA: the ticks read in µA, never in A with an offset
    assert ticks and all(t.endswith("µA") for t in ticks), ticks


def test_unknown_axis_is_refused(result):
    with pytest.raises(DesignError, match="cost 'price' is not known; use one of "
                                          + ", ".join(COSTS)):
        candidate_scatter(result, cost="price")


def test_histograms_of_each_target_with_samples():
    design = divider({"voltage": "out", "at_most": "4.2 V"})
    values = {"R1": 20e3}  # 12 V x 10k / 30k = 4 V [HB-divider]
    spread = analyse_spread(design, values, SpreadSettings(samples=2000, seed=3))
    pictures = target_histograms(design, spread, stem="probe")
    assert [stem for stem, _ in pictures] == ["probe-1-voltage-at-out"]
    figure = pictures[0][1]
    svg = svg_text(figure)
    assert "Monte Carlo, 2,000 samples" in svg and "worst case" in svg
    assert "window" in svg and "inside the window" in svg
    figure.canvas.draw()
    ticks = [t.get_text() for t in figure.axes[0].get_xticklabels() if t.get_text()]
    assert ticks and all(re.fullmatch(r"[-−]?[\d.]+\s[mµ]?V", t) for t in ticks), ticks
    # without Monte Carlo samples there is nothing to draw
    none = analyse_spread(design, values, SpreadSettings(samples=0))
    assert target_histograms(design, none) == []
    with pytest.raises(DesignError, match="has no Monte Carlo samples"):
        target_histogram(design, none, 0)


def test_labels_are_plain_text_and_file_names_short():
    label = "gain $A^{" + "x" * 300 + " ^_$ unbalanced $"
    design = divider({"name": label, "voltage": "out", "at_most": "4.2 V"})
    spread = analyse_spread(design, {"R1": 20e3}, SpreadSettings(samples=500, seed=3))
    pictures = target_histograms(design, spread, stem="probe")
    stem, figure = pictures[0]
    assert len(stem) <= len("probe-1-") + 40
    assert stem.startswith("probe-1-gain-a-xxx")
    assert "gain $A^{" in svg_text(figure)  # drawn as written, not parsed as math text


def test_check_pictures_name_every_picture():
    design = design_from_dict({"design": {"title": "t", "package": "0603"},
                               "source": [{"ref": "V1", "kind": "voltage", "plus": "in",
                                           "minus": "gnd", "value": "12 V"}],
                               "resistor": [{"ref": "R1", "nodes": ["in", "out"],
                                             "value": "20k"},
                                            {"ref": "R2", "nodes": ["out", "gnd"],
                                             "value": "10k", "package": "0805"}],
                               "target": [{"name": "output", "voltage": "out",
                                           "equals": "4 V"}]})
    plain = check_pictures(check(design))
    assert [stem for stem, _ in plain] == ["network", "derating-0603", "derating-0805"]
    spread = check_pictures(check(design, spread=SpreadSettings(samples=300)))
    assert [stem for stem, _ in spread] == ["network", "derating-0603", "derating-0805",
                                            "contributions-1-output", "spread-1-output"]
    assert all(isinstance(figure, Figure) for _, figure in spread)


def test_design_pictures_add_the_scatter_and_the_front(result):
    names = [stem for stem, _ in design_pictures(result)]
    assert names[:1] == ["candidates"] and "front" not in names
    front = error_front(result.design)
    pictures = dict(design_pictures(result, cost="hottest", front=front))
    assert {"candidates", "front", "network", "derating-0603",
            "contributions-1-voltage-at-out", "spread-1-voltage-at-out"} == set(pictures)
    assert "hottest part's use (%)" in svg_text(pictures["candidates"])


def test_histogram_of_kept_samples_says_how_many_of_how_many():
    design = divider({"voltage": "out", "at_most": "4.2 V"})
    kept = analyse_spread(design, {"R1": 20e3},
                          SpreadSettings(samples=2000, seed=3, keep_samples=True,
                                         kept_samples=300))
    assert len(kept.targets[0].mc_values) == 300
    assert "Monte Carlo, first 300 of 2,000 samples" in svg_text(target_histogram(design, kept))
    every = analyse_spread(design, {"R1": 20e3},
                           SpreadSettings(samples=2000, seed=3, keep_samples=True))
    assert "Monte Carlo, 2,000 samples" in svg_text(target_histogram(design, every))
    streamed = analyse_spread(design, {"R1": 20e3}, SpreadSettings(samples=2000, seed=3))
    assert "Monte Carlo, 2,000 samples in 256 bins" in svg_text(
        target_histogram(design, streamed))
