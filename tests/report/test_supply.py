"""A design without a voltage source or regulator has no supply current: the reports say
so (check), leave the column out (design, review page) and give null in JSON, instead of
a "0 A" that reads as a measured current."""

from __future__ import annotations

import json

from click.testing import CliRunner

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.report.check import check_json, check_text
from synth.report.synthesis import design_json, design_text
from synth.synthesis import synthesize

from conftest import divider


def driven_by_current(free=False):
    """1 mA into 1k || 1k (common practice: 0.5 V across 500 ohm)."""
    second = ({"ref": "R2", "nodes": ["in", "gnd"], "choose": "E24", "range": ["100", "10k"]}
              if free else {"ref": "R2", "nodes": ["in", "gnd"], "value": "1k"})
    return design_from_dict({
        "source": [{"ref": "I1", "kind": "current", "from": "gnd", "to": "in",
                    "value": "1 mA"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k"}, second],
        "target": [{"voltage": "in", "equals": "0.5 V", "within": "5%"}]})


def test_only_voltage_sources_and_regulators_supply_a_design():
    assert divider().has_supply
    assert not driven_by_current().has_supply


def test_check_says_there_is_no_supply_current_and_json_gives_null():
    result = check(driven_by_current())
    text = check_text(result)
    assert "no supply current (no voltage source or regulator)" in text
    assert "supply current: 0 A" not in text
    assert check_json(result)["supply_current"] is None
    supplied = check(divider())
    assert "supply current: 500 µA" in check_text(supplied)
    assert check_json(supplied)["supply_current"] == 0.0005


def test_design_leaves_the_supply_column_out_and_json_gives_null():
    result = synthesize(driven_by_current(free=True), top=3)
    header = next(line for line in design_text(result).splitlines()
                  if line.startswith("rank"))
    assert "hottest" in header and "supply" not in header
    assert all(c["supply_current"] is None for c in design_json(result)["candidates"])


def test_the_pad_command_prints_no_supply_current():
    done = CliRunner().invoke(cli, ["pad", "--impedance", "50", "--loss", "6 dB",
                                    "--samples", "0", "--series", "E24", "--json"])
    assert done.exit_code == 0, done.output
    assert json.loads(done.stdout)["candidates"][0]["supply_current"] is None


def test_a_sweep_of_a_design_without_a_supply_gives_no_supply_current():
    from synth.report.sweep import sweep_text
    from synth.sweep import sweep

    tables = {"source": [{"ref": "I1", "kind": "current", "from": "gnd", "to": "in",
                          "value": "1 mA"}],
              "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k"},
                           {"ref": "R2", "nodes": ["in", "gnd"], "choose": "E24",
                            "range": ["100", "10k"]}],
              "target": [{"voltage": "in", "equals": "0.5 V", "within": "5%"}]}
    for check_only in (True, False):
        result = sweep(tables, ["resistor.R1.value=1k:2k:2"], check_only=check_only, jobs=1,
                       origin="current.toml")
        assert [p.supply_current for p in result.points] == [None, None]
        assert "0 A" not in sweep_text(result)


def test_the_review_page_leaves_the_supply_out(tmp_path):
    path = tmp_path / "current.toml"
    path.write_text('[[source]]\nref = "I1"\nkind = "current"\nfrom = "gnd"\nto = "in"\n'
                    'value = "1 mA"\n\n[[resistor]]\nref = "R1"\nnodes = ["in", "gnd"]\n'
                    'choose = "E24"\nrange = ["100", "10k"]\n\n[[resistor]]\nref = "R2"\n'
                    'nodes = ["in", "gnd"]\nvalue = "1k"\n\n[[target]]\nvoltage = "in"\n'
                    'equals = "0.5 V"\nwithin = "5%"\n', encoding="utf-8")
    page = tmp_path / "review.html"
    done = CliRunner().invoke(cli, ["report", str(path), "--output", str(page),
                                    "--samples", "0", "--quiet"])
    assert done.exit_code in (0, 1), done.output
    html = page.read_text(encoding="utf-8")
    assert "No supply current (no voltage source or regulator)" in html
    assert "Supply current 0" not in html and "<th>supply</th>" not in html
