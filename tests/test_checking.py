"""check(): part stress, derating, targets and cautions."""

from __future__ import annotations

import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.report.check import check_text

from conftest import divider


def test_divider_stress_and_allowance():
    result = check(divider("10k", "10k", "10 V"), verify=True)
    assert result.nodes["out"] == pytest.approx(5.0, rel=1e-14)
    r1 = result.parts[0]
    assert r1.current == pytest.approx(0.5e-3) and r1.power == pytest.approx(2.5e-3)
    # 0603: 1/10 W at 70 °C [CP-chip-ratings], full rating at 25 °C [CP-derating],
    # 50 % margin [CP-margin]
    assert r1.allowed_power == pytest.approx(0.05) and r1.utilization == pytest.approx(0.05)
    assert r1.allowed_voltage == pytest.approx(50 * 0.8)
    assert result.supply_current == pytest.approx(0.5e-3)
    assert result.verify_difference is not None and result.verify_difference < 1e-12
    assert result.ok and not result.cautions


def test_derated_allowance_at_high_ambient():
    # linear derating 70 -> 155 °C [CP-derating]: 85 °C leaves 82.35 % [CALC-derating]
    result = check(divider(ambient="85 C", max_power_use="60%"))
    assert result.parts[0].allowed_power == pytest.approx(0.1 * (70 / 85) * 0.6)


def test_overload_is_a_problem_with_a_warning():
    result = check(divider("100", "100", "10 V"))
    assert not result.ok
    assert any(p.kind == "power" and p.subject == "R1" and p.value == pytest.approx(0.25)
               and p.limit == pytest.approx(0.05) for p in result.problems)
    assert any("can char the board" in c for c in result.cautions)
    assert any(c.startswith("WARNING: R1, R2 dissipate more than their packages can take")
               for c in result.cautions)


def test_over_margin_only_is_a_caution():
    # 60 mW in a 0603: over the 50 mW allowance, under the 100 mW rating
    result = check(divider("1.5k", "1.5k", "19 V"))
    assert not result.ok
    assert any("R1, R2 use more of their derated power or limiting element voltage than the "
               "design allows (max_power_use, max_voltage_use)" in c for c in result.cautions)


def test_limiting_voltage():
    # 45 V across a 0603 (limiting element voltage 50 V [CP-chip-ratings], 80 % margin
    # [CP-margin]: 40 V)
    result = check(divider("1M", "10M", "49.5 V"))
    assert any(p.kind == "voltage" and p.subject == "R2" and p.value == pytest.approx(45)
               and p.limit == pytest.approx(40) for p in result.problems)


@pytest.mark.parametrize(("supply", "fragment"), [
    # the project's thresholds [CP-touch-dc]; the 120 V DC limit of IEC 61140 [IEC61140-ELV]
    ("48 V", None),
    ("100 V", "Caution: 100 V DC is above 60 V DC"),
    ("230 V", "WARNING: 230 V DC is above the 120 V DC extra-low-voltage limit (IEC 61140)"),
])
def test_voltage_cautions(supply, fragment):
    result = check(divider("10M", "10M", supply))
    text = " ".join(result.cautions)
    if fragment is None:
        assert "60 V" not in text
    else:
        assert fragment in text
        assert "local codes" in text and "licensed practice" in text


def test_targets_met_and_missed():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "20k"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "4 V", "within": "1%"},
                   {"current": "V1", "at_most": "0.3 mA"},
                   {"ratio": ["out", "in"], "equals": 0.3},
                   {"power": "R2", "at_least": "2 mW"}],
    })
    result = check(design)
    voltage, current, ratio, power = result.targets
    assert voltage.met and voltage.error == pytest.approx(0.0, abs=1e-14)
    assert not current.met and current.value == pytest.approx(0.4e-3)
    assert ratio.met and ratio.error == pytest.approx((1 / 3 - 0.3) / 0.3)
    assert not power.met
    assert len(result.problems) == 2


def test_free_part_without_value_is_named():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    })
    with pytest.raises(DesignError, match="R1 still need a value"):
        check(design)  # no target, so no ideal value either
    assert check(design, values={"R1": 20e3}).nodes["out"] == pytest.approx(4.0)
    with_target = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "3 V"}],
    })
    result = check(with_target)
    # ideal: 12 V * 10k / (R1 + 10k) = 3 V  ->  R1 = 30k (divider formula) [HB-divider]
    assert result.filled["R1"] == pytest.approx(30e3, rel=1e-6)
    assert result.nodes["out"] == pytest.approx(3.0, rel=1e-6)
    with pytest.raises(DesignError, match="still need a value"):
        check(with_target, fill_ideal=False)


def test_check_report_leads_with_the_verdict_and_ends_with_the_nodes():
    # the order of the job: verdict, targets, each part's stress, node voltages last
    design = design_from_dict({
        "design": {"title": "divider", "max_power_use": "50%"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "100 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "20k", "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "4 V", "within": "1%"}],
    })
    result = check(design, verify=True)
    lines = check_text(result).splitlines()

    def where(start: str) -> int:
        return next(k for k, line in enumerate(lines) if line.startswith(start))

    assert where("result: FAILS: ") == 4 and "R1" in lines[4] and "voltage at out" in lines[4]
    assert where("Caution: 100 V DC is above 60 V DC") == 5
    assert where("WARNING: R1 dissipates more than its package can take") == 6
    assert (where("result:") < where("target ") < where("voltage at out")
            < where("part ") < where("R1 ") < where("note: parts without a package")
            < where("supply current:") < where("verify:") < where("node ")
            < where("gnd ") < where("in ") < where("out "))
    assert lines[-1].split() == ["out", "33.3333", "V"]
    # everything is still there
    assert lines[2] == ("ambient 25 °C; a part may use up to 50 % of its derated power and "
                        "80 % of its limiting element voltage")
    assert any(line.startswith("gnd ") for line in lines)


def test_a_monte_carlo_stopped_by_the_deadline_says_it_was_cut(monkeypatch) -> None:
    # the final run of a time-limited Monte Carlo stops after the shard during which the
    # limit passed (here: at once), and check reports the samples run as a cut
    import synth.checking as checking
    from synth.deadline import Deadline
    from synth.spread.monte_carlo import SHARD_SIZE
    from synth.spread.records import SpreadSettings

    class Passed(Deadline):
        def expired(self) -> bool:
            return True

    def whole_run(run, asked, seconds, clock, reserve_s=0.0):
        return run(asked, True), asked  # the pilots' estimate: every sample fits

    monkeypatch.setattr(checking, "fitted_run", whole_run)
    design = divider(supply="12 V")
    asked = 3 * SHARD_SIZE
    result = check(design, spread=SpreadSettings(samples=asked, seed=2),
                   deadline=Passed(1e6))
    assert result.spread is not None
    assert result.spread.samples_run == SHARD_SIZE
    assert result.spread.samples_cut == "time limit"
    assert result.spread.settings.samples == asked
    free = check(design, spread=SpreadSettings(samples=asked, seed=2), deadline=Deadline(1e6))
    assert free.spread is not None and free.spread.samples_run == asked
    assert free.spread.samples_cut is None
