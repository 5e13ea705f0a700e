"""synthesize() and rnsynth design: ranking, re-check, infeasible designs, time limits."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.synthesis import synthesize

from conftest import EXAMPLES

DIVIDER = """
[design]
title = "bench meter input scaler"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "E12"
range = ["1k", "1M"]
package = "0603"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
choose = "E12"
range = ["1k", "1M"]
package = "0603"

[[target]]
name = "scaled"
voltage = "out"
equals = "2.5 V"
within = "WINDOW"
"""


def run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def test_design_json_fields(tmp_design):
    path = tmp_design(DIVIDER.replace("WINDOW", "2%"))
    result = run("design", path, "--json", "--top", "3")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.output)
    assert doc["proven_optimal"] is True and doc["feasible"] is True
    assert len(doc["candidates"]) == 3
    best = doc["candidates"][0]
    assert set(best["values"]) == {"R1", "R2"}
    assert all(isinstance(v, float) for v in best["values"].values())
    r1, r2 = best["values"]["R1"], best["values"]["R2"]
    # the unloaded divider, V_out = V_in R2 / (R1 + R2) [HB-divider]
    assert best["targets"][0]["value"] == pytest.approx(12 * r2 / (r1 + r2))  # divider formula
    assert best["objective"] == pytest.approx(abs(best["targets"][0]["error"]))
    assert {"value", "goal", "error"} <= set(best["targets"][0])
    for part in best["parts"]:
        assert {"ref", "power", "allowed_power", "utilization"} <= set(part)
    objectives = [c["objective"] for c in doc["candidates"]]
    assert objectives == sorted(objectives)
    assert doc["ideal"]["R1"] / doc["ideal"]["R2"] == pytest.approx(12 / 2.5 - 1, rel=1e-6)


def test_infeasible_design_exits_one_and_names_the_binding_target(tmp_design):
    path = tmp_design(DIVIDER.replace("WINDOW", "0.01%"))
    result = run("design", path)
    assert result.exit_code == 1
    assert "NO standard values meet every window and limit" in result.output
    assert "Binding: target 'scaled'" in result.output
    doc = json.loads(run("design", path, "--json").output)
    assert doc["feasible"] is False and doc["candidates"]
    assert doc["binding"].startswith("target 'scaled'")


def test_infeasible_power_limit_is_named():
    # 24 V across two 0201 resistors drawing at least 20 mA: 240 mW each, far over 25 mW
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "24 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["100", "1k"], "package": "0201"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
                      "range": ["100", "1k"], "package": "0201"}],
        "target": [{"voltage": "out", "equals": "12 V"}, {"current": "V1", "at_least": "20 mA"}],
    })
    result = synthesize(design)
    assert not result.feasible
    assert result.binding is not None and "would dissipate" in result.binding
    assert "0201 allows 25 mW" in result.binding


def test_time_limit_marks_the_result_unproven():
    resistors = [{"ref": f"R{k}", "nodes": nodes, "choose": "E192", "range": ["100", "1M"]}
                 for k, nodes in enumerate([["in", "a"], ["a", "b"], ["b", "c"], ["c", "gnd"],
                                            ["a", "c"], ["b", "gnd"]], start=1)]
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": resistors,
        "target": [{"voltage": "a", "equals": "7.1 V"}, {"voltage": "b", "equals": "4.3 V"},
                   {"voltage": "c", "equals": "1.9 V"}, {"current": "V1", "equals": "1 mA"}],
    })
    result = synthesize(design, time_limit_s=0.2)
    assert result.proven_optimal is False
    assert result.candidates  # the best so far


def test_design_without_free_parts_is_bad_input():
    path = EXAMPLES[0] if EXAMPLES[0].name != "greenhouse_probe.toml" else EXAMPLES[1]
    result = run("design", next(p for p in EXAMPLES if p.name == "scale_bridge.toml"))
    assert result.exit_code == 2 and "no resistor has choose" in result.stderr
    assert path.exists()


@pytest.mark.parametrize("name", ["greenhouse_probe.toml", "railway_signal.toml"])
def test_examples_design(name):
    path = next(p for p in EXAMPLES if p.name == name)
    result = run("design", path)
    assert result.exit_code == 0, result.output
    assert "proven optimal" in result.output and "ideal values" in result.output


def test_progress_bar_hidden_when_not_a_terminal(tmp_design, monkeypatch):
    import types

    import click.testing

    from synth.cli import options as cli_module

    # a clock on which every reading is 2 s after the last: the bar is due at once
    ticks = iter(range(0, 10**6, 2))
    monkeypatch.setattr(cli_module, "time", types.SimpleNamespace(monotonic=lambda: next(ticks)))
    path = tmp_design(DIVIDER.replace("WINDOW", "2%"))
    result = run("design", path)  # CliRunner's stderr is not a terminal
    assert result.exit_code == 0 and "searching" not in result.stderr
    # the same run on a terminal draws the bar, so only the terminal check hid it
    monkeypatch.setattr(click.testing._NamedTextIOWrapper, "isatty", lambda self: True)
    shown = run("design", path)
    assert shown.exit_code == 0 and "searching [" in shown.stderr
    assert "searching" not in run("design", path, "--quiet").stderr


def test_stock_list_and_parallel_combination(tmp_path):
    stock = tmp_path / "shelf.csv"
    stock.write_text("value,package,tolerance,quantity\n1k,0603,1%,100\n2k2,0603,1%,50\n"
                     "4k7,0603,1%,20\n10k,0603,1%,200\n", encoding="utf-8")
    design_file = tmp_path / "d.toml"
    design_file.write_text("""
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "5 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "shelf.csv"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
choose = "E6"
range = ["500", "5k"]
combine = "parallel"
package = "0603"

[[target]]
voltage = "out"
equals = "1.5 V"
""", encoding="utf-8")
    doc = json.loads(run("design", design_file, "--json").output)
    best = doc["candidates"][0]
    assert best["values"]["R1"] in (1e3, 2.2e3, 4.7e3, 10e3)
    a, b = best["values"]["R2A"], best["values"]["R2B"]
    assert best["positions"]["R2"] == pytest.approx(a * b / (a + b))
    assert {"R2A", "R2B"} <= {p["ref"] for p in best["parts"]}
    bad = tmp_path / "bad.csv"
    bad.write_text("value\n1k\nfour\n", encoding="utf-8")
    design_file.write_text(design_file.read_text().replace("shelf.csv", "bad.csv"))
    result = run("design", design_file)
    assert result.exit_code == 2 and "bad.csv, line 3" in result.stderr
