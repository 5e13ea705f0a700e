"""Least cost over part classes (synth.least_cost): the choice against an exhaustive search
written apart, the front, the tighten table against a hand RSS, and the bad input."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from click.testing import CliRunner
from refcheck import eseries

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.least_cost import choose_classes, class_assignments

# the bundled table's classes, written out here apart from synth [CP-series-tolerance]
_CLASSES = {"5%": (("E24",), 0.05, 1.0), "1%": (("E24", "E96"), 0.01, 1.5),
            "0.1%": (("E24", "E192"), 0.001, 8.0)}


def _divider(classes, window="0.5%", require="worst-case", **design):
    return design_from_dict({
        "design": {"require": require, **design},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["1k", "10k"],
                      "classes": list(classes)},
                     {"ref": "R2", "nodes": ["out", "gnd"], "range": ["1k", "10k"],
                      "classes": list(classes)}],
        "target": [{"voltage": "out", "equals": "3.3 V", "within": window}]})


def _exhaustive(window: float, goal: float = 3.3, supply: float = 12.0):
    """Every class pair and value pair: (least cost, least worst-case error there, values).

    The unloaded divider's output V·R2/(R1+R2) falls with R1 and rises with R2
    [HB-divider], so its extremes over the tolerance box are two corners [HB-bilinear].
    """
    best = None
    for (n1, (s1, t1, c1)), (n2, (s2, t2, c2)) in itertools.product(_CLASSES.items(),
                                                                     repeat=2):
        r1 = np.array(sorted({v for s in s1 for v in eseries.values(s, 1e3, 1e4)}))
        r2 = np.array(sorted({v for s in s2 for v in eseries.values(s, 1e3, 1e4)}))
        a, b = np.meshgrid(r1, r2, indexing="ij")
        low = supply * b * (1 - t2) / (a * (1 + t1) + b * (1 - t2))
        high = supply * b * (1 + t2) / (a * (1 - t1) + b * (1 + t2))
        worst = np.maximum(np.abs(low - goal), np.abs(high - goal)) / goal
        ok = worst <= window * (1 + 1e-9)
        if not ok.any():
            continue
        k = np.unravel_index(np.argmin(np.where(ok, worst, np.inf)), worst.shape)
        row = (c1 + c2, float(worst[k]), (n1, n2), (float(a[k]), float(b[k])))
        if best is None or row[:2] < best[:2]:
            best = row
    return best


@pytest.mark.parametrize("window", [0.005, 0.012, 0.03])
def test_least_cost_matches_an_exhaustive_search_over_classes_and_values(window):
    # [CALC-exhaustive]: classes and values enumerated in the test, the worst case by hand
    cost, error, names, values = _exhaustive(window)
    choice = choose_classes(_divider(_CLASSES, f"{window * 100:g}%"), top=1)
    assert choice.proven and choice.cost == pytest.approx(cost)
    best = choice.result.candidates[0]
    t = best.spread.targets[0]
    worst = max(abs(t.worst_low - 3.3), abs(t.worst_high - 3.3)) / 3.3
    assert worst == pytest.approx(error, rel=1e-9)
    # ties of cost go by error: the exhaustive search's divider ratio (pairs of one ratio tie
    # on error; the search breaks that tie by its own documented order), in its classes
    ratio = best.values["R2"] / (best.values["R1"] + best.values["R2"])
    assert ratio == pytest.approx(values[1] / (values[0] + values[1]), rel=1e-12)
    assert (choice.classes["R1"], choice.classes["R2"]) == names


def test_the_front_is_monotone_and_ends_at_the_dearest_classes():
    choice = choose_classes(_divider(_CLASSES, "1.2%"), top=1)
    front = choice.front
    assert [p.cost for p in front] == sorted({p.cost for p in front})
    assert front[-1].classes == {"R1": "0.1%", "R2": "0.1%"}
    for before, after in itertools.pairwise(front):
        assert after.meets >= before.meets
        if after.meets == before.meets and before.error is not None:
            assert after.error <= before.error + 1e-12
    first = next(p for p in front if p.meets)
    assert first.cost == choice.cost and all(not p.meets for p in front if p.cost < first.cost)
    # every cheaper level was searched: the assignments up to the least cost, and the dearest
    listed = class_assignments(choice.result.design)
    assert choice.cost < listed[-1][0]
    assert choice.searched == sum(1 for c, _ in listed if c <= choice.cost) + 1


def test_the_next_class_figure_matches_a_hand_rss():
    # a 10k/10k divider: each part's sensitivity is ±0.5 [HB-divider]; RSS of independent
    # half-widths [GUM-propagation]: now sqrt(2)·0.5·1 %, after sqrt((0.5·0.1 %)² + (0.5·1 %)²)
    design = design_from_dict({
        "design": {"require": "nominal"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": r, "nodes": n, "range": ["10k", "10k"], "classes": ["1%", "0.1%"]}
                     for r, n in (("R1", ["in", "out"]), ("R2", ["out", "gnd"]))],
        "target": [{"voltage": "out", "equals": "5 V", "within": "1%"}]})
    choice = choose_classes(design, top=1)
    assert choice.classes == {"R1": "1%", "R2": "1%"} and choice.cost == 3.0
    rows = {r.ref: r for r in choice.tighten}
    assert rows["R1"].rss_now / 5 == pytest.approx(math.sqrt(2) * 0.5 * 0.01, rel=1e-6)
    assert rows["R1"].rss_after / 5 == pytest.approx(
        math.hypot(0.5 * 0.001, 0.5 * 0.01), rel=1e-6)
    assert rows["R1"].share == pytest.approx(0.5, rel=1e-6)
    assert rows["R1"].to_class == "0.1%" and rows["R1"].added_cost == pytest.approx(6.5)


def test_no_assignment_meets_proven_when_every_one_was_searched():
    choice = choose_classes(_divider(("5%", "1%"), "0.1%"), top=1)
    assert choice.classes is None and choice.cost is None and choice.proven
    assert choice.searched == choice.assignments == 4
    assert not any(p.meets for p in choice.front)


def test_a_yield_requirement_chooses_by_yield_and_is_never_called_proven():
    design = _divider(("5%", "1%"), "1.5%", require="yield", min_yield="90%")
    choice = choose_classes(design, top=1, spread=None)
    assert choice.classes is not None and not choice.proven
    assert "Monte Carlo" in choice.why_not_proven
    assert choice.front[-1].yield_low is not None


def test_a_time_limit_leaves_the_least_cost_unproven():
    choice = choose_classes(_divider(_CLASSES, "0.5%"), top=1, time_limit_s=1e-6)
    assert not choice.proven and "time limit" in choice.why_not_proven


def test_a_design_without_classes_is_refused():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E24",
                      "range": ["1k", "2k"]}]})
    with pytest.raises(DesignError, match="no free part names classes"):
        choose_classes(design)


_DESIGN = """
[design]
require = "worst-case"
{design}
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"
[[resistor]]
ref = "R1"
nodes = ["in", "out"]
range = ["1k", "10k"]
classes = {classes}
[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "3.3k"
[[target]]
voltage = "out"
equals = "3.3 V"
within = "3%"
"""


@pytest.mark.parametrize(("classes", "table", "fragment"), [
    ('["1%", "2%"]', None, "resistor R1: class '2%' is not in the class table"),
    ('["x"]', "name,series,tolerance,tcr,cost\nx,E24,,,1\n", "class 'x' has no tolerance"),
    ('["1%"]', "value,tolerance,price\n4.7k,1%,-0.2\n", "price '-0.2' is negative"),
    ('["x"]', "name,series,tolerance,tcr,cost\nx,E24,1%,,-1\n", "cost '-1' is negative"),
])
def test_bad_class_input_is_refused_in_one_line_with_exit_2(tmp_path, classes, table,
                                                             fragment):
    design = "" if table is None else 'class_table = "mine.csv"'
    if table is not None:
        (tmp_path / "mine.csv").write_text(table, encoding="utf-8")
    path = tmp_path / "probe.toml"
    path.write_text(_DESIGN.format(design=design, classes=classes), encoding="utf-8")
    result = CliRunner().invoke(cli, ["design", str(path)])
    assert result.exit_code == 2, result.output
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and fragment in lines[0] and "probe.toml" in lines[0]
    assert "Traceback" not in result.output


def test_the_cli_prints_the_front_and_the_tighten_table_and_json_carries_them(tmp_path):
    path = tmp_path / "probe.toml"
    path.write_text(_DESIGN.format(design="", classes='["5%", "1%", "0.1%"]'),
                    encoding="utf-8")
    text = CliRunner().invoke(cli, ["design", str(path), "--top", "1"])
    assert text.exit_code == 0, text.output
    assert "proven least cost" in text.output and "trade-off front" in text.output
    assert "which part to tighten" in text.output
    import json
    doc = json.loads(CliRunner().invoke(cli, ["design", str(path), "--json", "--top", "1"]
                                        ).stdout)
    assert doc["classes"]["proven"] and doc["classes"]["chosen"] == {"R1": "1%"}
    assert [p["cost"] for p in doc["classes"]["front"]] == [1.0, 1.5, 8.0]
    assert doc["classes"]["tighten"][0]["to_class"] == "0.1%"
    short = tmp_path / "short.toml"
    short.write_text(_DESIGN.format(design="", classes='["5%"]').replace('"3%"', '"0.01%"'),
                     encoding="utf-8")
    failed = CliRunner().invoke(cli, ["design", str(short), "--top", "1"])
    assert failed.exit_code == 1 and "no class assignment meets" in failed.output


def test_a_yield_requirement_without_min_yield_is_refused():
    with pytest.raises(DesignError, match='require = "yield" needs min_yield'):
        choose_classes(_divider(("5%", "1%"), require="nominal"), require="yield")


def test_a_value_search_left_unfinished_leaves_the_least_cost_unproven(monkeypatch):
    import dataclasses

    import synth.least_cost as least_cost

    real = least_cost.search

    def unfinished(*args, **kwargs):
        return dataclasses.replace(real(*args, **kwargs), proven=False)

    monkeypatch.setattr(least_cost, "search", unfinished)
    choice = choose_classes(_divider(("5%", "1%"), "3%"), top=1)
    assert choice.classes is not None and not choice.proven
    assert choice.why_not_proven == "a value search was cut short or did not finish"


def test_classes_from_a_stock_list_with_prices_choose_its_rows(tmp_path):
    # a 12 V to 3.3 V divider from a shelf: the 1 % rows cannot hold 0.6 % over the box
    # (2 x 1 % x (1 - 0.275) = 1.45 % [HB-divider]), the 0.1 % rows can, at their price
    (tmp_path / "shelf.csv").write_text(
        "value,tolerance,tcr,price\n"
        "8.66k,1%,100,0.02\n3.3k,1%,100,0.02\n8.7k,1%,100,0.02\n"
        "8.7k,0.1%,25,0.30\n3.3k,0.1%,25,0.25\n1k,0.1%,25,0.25\n", encoding="utf-8")
    design = design_from_dict({
        "design": {"require": "worst-case", "class_table": "shelf.csv",
                   "classes": ["1%", "0.1%"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["2k", "20k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "range": ["2k", "20k"]}],
        "target": [{"voltage": "out", "equals": "3.3 V", "within": "0.6%"}]},
        origin=str(tmp_path / "probe.toml"))
    choice = choose_classes(design, top=1)
    assert choice.proven and choice.classes == {"R1": "0.1%", "R2": "0.1%"}
    assert choice.cost == pytest.approx(0.60)  # each class costs its dearest row
    values = choice.result.candidates[0].values
    assert (values["R1"], values["R2"]) == (8700.0, 3300.0)  # 1k is outside the range


def test_operating_point_copies_take_their_part_s_class():
    design = design_from_dict({
        "design": {"require": "worst-case", "classes": ["1%", "0.1%"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "range": ["11 V", "13 V"]}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["1k", "10k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "range": ["1k", "10k"]}],
        "target": [{"voltage": "out", "at_least": "2.9 V", "at_most": "3.7 V"}]})
    choice = choose_classes(design, top=1)
    assert choice.proven and choice.classes == {"R1": "1%", "R2": "1%"}
    from synth.least_cost import classed_positions, with_classes
    parts = classed_positions(design)
    tight = tuple(p.classes[1] for p in parts)
    placed = with_classes(design, parts, tight)
    assert {r.tolerance for r in placed.resistors} == {0.001}
    assert {r.tolerance for r in placed.single.resistors} == {0.001}


def _best_meeting_by_pair(window: float, goal: float = 3.3, supply: float = 12.0):
    """For every class pair: (cost, least worst-case error of its value pairs that hold the
    window over the box, or None), by the same hand worst case as ``_exhaustive``."""
    out = []
    for (s1, t1, c1), (s2, t2, c2) in itertools.product(_CLASSES.values(), repeat=2):
        r1 = np.array(sorted({v for s in s1 for v in eseries.values(s, 1e3, 1e4)}))
        r2 = np.array(sorted({v for s in s2 for v in eseries.values(s, 1e3, 1e4)}))
        a, b = np.meshgrid(r1, r2, indexing="ij")
        low = supply * b * (1 - t2) / (a * (1 + t1) + b * (1 - t2))
        high = supply * b * (1 + t2) / (a * (1 - t1) + b * (1 + t2))
        worst = np.maximum(np.abs(low - goal), np.abs(high - goal)) / goal
        ok = worst <= window * (1 + 1e-9)
        out.append((c1 + c2, float(worst[ok].min()) if ok.any() else None))
    return out


def test_with_time_for_it_the_front_holds_every_cost_level_above_the_least_cost():
    # [CALC-exhaustive]: at every level from the least cost up, the front's error is the
    # least worst-case error of any class pair at that cost or less, enumerated apart
    pairs = _best_meeting_by_pair(0.03)
    choice = choose_classes(_divider(_CLASSES, "3%"), top=1, front_s=60.0)
    assert choice.proven and choice.cost == pytest.approx(3.0) and choice.front_complete
    levels = sorted({round(cost, 9) for cost, _ in pairs})
    assert [round(p.cost, 9) for p in choice.front] == levels
    for point in choice.front:
        if point.cost < choice.cost:
            continue
        expected = min(e for c, e in pairs if e is not None and c <= point.cost + 1e-9)
        assert point.meets and point.error == pytest.approx(expected, rel=1e-9)
    assert choice.searched == len(pairs)
    # without that time: the levels up to the least cost and the dearest, said incomplete
    short = choose_classes(_divider(_CLASSES, "3%"), top=1, front_s=0.0)
    assert short.proven and short.cost == choice.cost and not short.front_complete
    assert [round(p.cost, 9) for p in short.front] == [c for c in levels
                                                       if c <= 3.0 + 1e-9] + [16.0]
    assert short.front[-1].error == pytest.approx(choice.front[-1].error, rel=1e-12)
