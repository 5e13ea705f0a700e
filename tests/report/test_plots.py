"""Plots: the candidate scatter on each documented axis, spread histograms, refused axes and
folders, and files written whole (PNG and SVG).

The PNG signature is that of the PNG specification (ISO/IEC 15948); text is checked in
SVGs written with their text kept as text.  The values drawn come from a divider
[HB-divider] whose best candidate is exact.
"""

from __future__ import annotations

import matplotlib
import pytest
from matplotlib.figure import Figure

from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.report.plots import COSTS, candidate_scatter, target_histograms
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
    return synthesize(divider({"voltage": "out", "equals": "4 V", "within": "5%"}), top=4)


def svg_text(path):
    return path.read_text(encoding="utf-8")


@pytest.mark.parametrize(("cost", "label"), [
    ("supply", "supply current"), ("hottest", "hottest part's use (%)"),
    ("distinct", "distinct values")])
def test_candidate_scatter_on_each_axis(tmp_path, result, cost, label):
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        paths = candidate_scatter(result, tmp_path / "plots", cost=cost)
    assert [p.name for p in paths] == ["candidates.png", "candidates.svg"]
    assert paths[0].read_bytes()[:8] == PNG
    svg = svg_text(paths[1])
    assert label in svg and "largest relative error (%)" in svg
    assert "probe divider" in svg and "best" in svg
    assert not list((tmp_path / "plots").glob(".*"))  # no temporary file left


def test_unknown_axis_is_refused(tmp_path, result):
    with pytest.raises(DesignError, match="cost 'price' is not known; use one of "
                                          + ", ".join(COSTS)):
        candidate_scatter(result, tmp_path, cost="price")


def test_a_file_in_the_way_of_the_folder_is_refused(tmp_path, result):
    blocker = tmp_path / "plots"
    blocker.write_text("not a folder", encoding="utf-8")
    with pytest.raises(DesignError, match="cannot create the plot folder"):
        candidate_scatter(result, blocker / "inner")


def test_a_failed_save_leaves_no_partial_file(tmp_path, result, monkeypatch):
    def broken(self, *args, **kwargs):
        raise OSError("disk full")

    monkeypatch.setattr(Figure, "savefig", broken)
    with pytest.raises(DesignError, match=r"could not be written \(disk full\)"):
        candidate_scatter(result, tmp_path)
    assert list(tmp_path.iterdir()) == []


def test_histograms_of_each_target_with_samples(tmp_path):
    design = divider({"voltage": "out", "at_most": "4.2 V"})
    values = {"R1": 20e3}  # 12 V x 10k / 30k = 4 V [HB-divider]
    spread = analyse_spread(design, values, SpreadSettings(samples=2000, seed=3))
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        paths = target_histograms(design, spread, tmp_path, stem="probe")
    assert [p.name for p in paths] == ["probe-1-voltage-at-out.png",
                                       "probe-1-voltage-at-out.svg"]
    svg = svg_text(paths[1])
    assert "Monte Carlo, 2,000 samples" in svg and "worst case" in svg
    assert "window" in svg and "inside the window" in svg
    # without Monte Carlo samples there is nothing to draw
    none = analyse_spread(design, values, SpreadSettings(samples=0))
    assert target_histograms(design, none, tmp_path / "empty") == []
    assert list((tmp_path / "empty").iterdir()) == []


def test_labels_are_plain_text_and_file_names_short(tmp_path):
    label = "gain $A^{" + "x" * 300 + " ^_$ unbalanced $"
    design = divider({"name": label, "voltage": "out", "at_most": "4.2 V"})
    spread = analyse_spread(design, {"R1": 20e3}, SpreadSettings(samples=500, seed=3))
    with matplotlib.rc_context({"svg.fonttype": "none"}):
        paths = target_histograms(design, spread, tmp_path, stem="probe")
    assert len(paths) == 2
    assert all(len(p.name) <= len("probe-1-") + 40 + len(".png") for p in paths)
    assert paths[0].name.startswith("probe-1-gain-a-xxx")
    assert "gain $A^{" in svg_text(paths[1])  # drawn as written, not parsed as math text
