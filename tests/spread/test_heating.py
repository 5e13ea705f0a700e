"""Self-heating in the spread: a part's rise ΔT = P·Rθ at the nominal operating point shifts the
temperature its TCR acts on, ΔR/R = TCR·(T − 25 °C + ΔT) [HB-self-heating], [CP-tcr].

Every figure is worked by hand beside its check; the worst case, the root-sum-square, its
split into the ambient's and the self-heating's part, and the command line's JSON are all
checked against the same hand figures.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from synth import load_design
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings

NO_MC = SpreadSettings(samples=0)


def shunt(temperature=("25 C", "25 C"), package="2512"):
    """1 A through a 0.1 ohm shunt: 0.1 V, 0.1 W [HB-ohm]."""
    return {
        "design": {"temperature": list(temperature)},
        "source": [{"ref": "I1", "kind": "current", "from": "gnd", "to": "sense",
                    "value": "1 A"}],
        "resistor": [{"ref": "RS", "nodes": ["sense", "gnd"], "value": "0.1",
                      "tolerance": "0%", "tcr": "100 ppm/C", "package": package}],
        "target": [{"voltage": "sense", "equals": "0.1 V"}],
    }


def test_shunt_by_hand_at_one_temperature():
    # 0.1 W through 85 K/W (2512, [CP-thermal-resistance]): ΔT = 8.5 K [HB-self-heating];
    # ΔR/R = 100 ppm/K x 8.5 K = 8.5e-4 [CP-tcr], so V = 0.1 V x (1 ± 8.5e-4)
    spread = analyse_spread(design_from_dict(shunt()), settings=NO_MC)
    target, part = spread.targets[0], spread.parts[0]
    assert part.temperature_rise_c == pytest.approx(8.5, rel=1e-9)
    assert (target.worst_low, target.worst_high) == pytest.approx(
        (0.1 * (1 - 8.5e-4), 0.1 * (1 + 8.5e-4)), rel=1e-9)
    assert target.rss == pytest.approx(8.5e-4, rel=1e-6)
    # the ambient does not move, so all of the drift is self-heating
    assert target.drift_rss_abs == pytest.approx(8.5e-5, rel=1e-6)
    assert target.ambient_drift_rss_abs == pytest.approx(0.0, abs=1e-12)
    assert target.self_heating_share_of_drift == pytest.approx(1.0, rel=1e-9)
    assert spread.self_heating_note is None


def test_shunt_by_hand_over_a_range():
    # ambient 15..35 °C: the part runs 23.5..43.5 °C, -1.5..+18.5 K from 25 °C, so its drift
    # half-width is 100 ppm/K x 18.5 K = 1.85e-3 against 1e-3 over the ambient alone
    # [HB-self-heating]; self-heating's share of the drift variance (18.5² - 10²)/18.5²
    # [GUM-propagation]
    spread = analyse_spread(design_from_dict(shunt(("15 C", "35 C"))), settings=NO_MC)
    target = spread.targets[0]
    assert (target.worst_low, target.worst_high) == pytest.approx(
        (0.1 * (1 - 1.85e-3), 0.1 * (1 + 1.85e-3)), rel=1e-9)
    assert target.drift_rss_abs == pytest.approx(1.85e-4, rel=1e-6)
    assert target.ambient_drift_rss_abs == pytest.approx(1e-4, rel=1e-6)
    assert target.self_heating_share_of_drift == pytest.approx(
        (18.5 ** 2 - 10 ** 2) / 18.5 ** 2, rel=1e-6)
    assert target.self_heating_share_of_rss == pytest.approx(
        (18.5 ** 2 - 10 ** 2) / 18.5 ** 2, rel=1e-6)  # no tolerance: drift is all of it


def test_shunt_on_a_cold_range_drifts_less():
    # ambient 0..30 °C: the part runs 8.5..38.5 °C, -16.5..+13.5 K from 25 °C: its drift
    # half-width is 100 ppm/K x 16.5 K against 25 K over the ambient alone [HB-self-heating];
    # the rise brings the cold end nearer the reference, so self-heating's part is negative
    target = analyse_spread(design_from_dict(shunt(("0 C", "30 C"))), settings=NO_MC).targets[0]
    assert target.worst_high == pytest.approx(0.1 * (1 + 1.65e-3), rel=1e-9)
    assert target.ambient_drift_rss_abs == pytest.approx(2.5e-4, rel=1e-6)
    assert target.self_heating_share_of_drift == pytest.approx(
        (16.5 ** 2 - 25 ** 2) / 16.5 ** 2, rel=1e-6)


def test_shunt_monte_carlo_stays_within_the_self_heated_box():
    # uniform coefficients within ±100 ppm/K at the one ambient: V = 0.1 (1 + a x 8.5 K), so
    # the samples span 0.1 V x (1 ± 8.5e-4) and their σ is 8.5e-5 V/√3 [CP-sigma]
    settings = SpreadSettings(samples=20000, seed=3)
    target = analyse_spread(design_from_dict(shunt()), settings=settings).targets[0]
    assert target.mc_min >= 0.1 * (1 - 8.5e-4) * (1 - 1e-12)
    assert target.mc_max <= 0.1 * (1 + 8.5e-4) * (1 + 1e-12)
    assert target.mc_max > 0.1 * (1 + 8.0e-4)
    assert target.mc_std == pytest.approx(8.5e-5 / math.sqrt(3), rel=0.03)


def test_shunt_through_the_command_line_json(tmp_path):
    path = tmp_path / "shunt.toml"
    path.write_text("""
[design]
temperature = ["15 C", "35 C"]

[[source]]
ref = "I1"
kind = "current"
from = "gnd"
to = "sense"
value = "1 A"

[[resistor]]
ref = "RS"
nodes = ["sense", "gnd"]
value = "0.1"
tolerance = "0%"
tcr = "100 ppm/C"
package = "2512"

[[target]]
voltage = "sense"
equals = "0.1 V"
""", encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path), "--json"])
    assert result.exit_code == 0, result.output
    spread = json.loads(result.stdout)["spread"]
    # the same hand figures as above [HB-self-heating], [CP-tcr]
    assert spread["self_heating"]["modelled"] is True
    assert spread["parts"][0]["temperature_rise"] == pytest.approx(8.5, rel=1e-9)
    target = spread["targets"][0]
    assert target["worst_high"] == pytest.approx(0.1 * (1 + 1.85e-3), rel=1e-9)
    assert target["drift_rss_abs"] == pytest.approx(1.85e-4, rel=1e-6)
    assert target["ambient_drift_rss_abs"] == pytest.approx(1e-4, rel=1e-6)
    assert target["self_heating_share_of_drift"] == pytest.approx(
        (18.5 ** 2 - 10 ** 2) / 18.5 ** 2, rel=1e-6)
    text = CliRunner().invoke(cli, ["check", str(path)])
    assert "self-heating (first order" in text.output and "RS +8.5 K" in text.output
    assert "own rise" in text.output and "8.5 K" in text.output


def divider(r1, r2, package1, package2):
    """10 V over R1 + R2, the ratio out/in R2/(R1 + R2) [HB-divider]."""
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [
            {"ref": "R1", "nodes": ["in", "out"], "value": r1, "tolerance": "0%",
             "tcr": "25 ppm/C", "package": package1},
            {"ref": "R2", "nodes": ["out", "gnd"], "value": r2, "tolerance": "0%",
             "tcr": "25 ppm/C", "package": package2}],
        "target": [{"ratio": ["out", "in"], "equals": 0.5}]})


def test_divider_terms_by_hand():
    # 10 V over 1k + 1k: 25 mW each [HB-ohm]; 0603 850 K/W: 21.25 K; 1206 340 K/W: 8.5 K
    # [CP-thermal-resistance]. k = 1/2, ∂k/∂R1·R1 = -k(1 - k) = -1/4, ∂k/∂R2·R2 = +1/4 [HB-divider]
    # each part's self-heating term: (1/4)² (TCR·ΔT)² at one ambient [GUM-propagation]
    same = analyse_spread(divider("1k", "1k", "0603", "0603"), settings=NO_MC).targets[0]
    d = 25e-6 * 21.25
    assert same.self_heating_terms["R1"] == pytest.approx((0.25 * d) ** 2, rel=1e-5)
    assert same.self_heating_terms["R2"] == pytest.approx((0.25 * d) ** 2, rel=1e-5)
    mixed = analyse_spread(divider("1k", "1k", "0603", "1206"), settings=NO_MC).targets[0]
    assert mixed.self_heating_terms["R2"] == pytest.approx((0.25 * 25e-6 * 8.5) ** 2, rel=1e-5)
    # independent coefficients: the worst corner is R1 high and R2 low, whatever the heating,
    # k = (1 - d2)/((1 + d1) + (1 - d2))
    d1, d2 = d, 25e-6 * 8.5
    assert mixed.worst_low == pytest.approx((1 - d2) / ((1 + d1) + (1 - d2)), rel=1e-9)


def test_a_table_without_the_column_has_no_self_heating(tmp_path):
    (tmp_path / "house.csv").write_text(
        "name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
        "limiting_voltage_v,source\nbig,chip,2512,6332M,1,70,155,200,house table\n",
        encoding="utf-8")
    raw = shunt(package="big")
    raw["design"]["packages"] = "house.csv"
    path = tmp_path / "d.toml"
    import tomli_w
    path.write_bytes(tomli_w.dumps(raw).encode())
    spread = analyse_spread(load_design(path), settings=NO_MC)
    assert spread.parts[0].temperature_rise_c == 0.0
    assert spread.targets[0].worst_high == pytest.approx(0.1, rel=1e-12)
    assert "no thermal resistance" in (spread.self_heating_note or "")
    result = CliRunner().invoke(cli, ["check", str(path), "--json"])
    assert json.loads(result.stdout)["spread"]["self_heating"]["modelled"] is False
    text = CliRunner().invoke(cli, ["check", str(path)]).output
    assert "self-heating: not modelled; the package table gives the parts' packages no " \
           "thermal resistance" in text


def test_operating_points_take_the_largest_rise():
    # two points, 1 A and 2 A through 0.1 ohm: 0.1 W and 0.4 W, 8.5 K and 34 K
    # [HB-self-heating]; the one physical part drifts over the larger rise at both points
    raw = shunt()
    raw["point"] = [{"name": "low", "sources": {"I1": "1 A"}},
                    {"name": "high", "sources": {"I1": "2 A"}}]
    raw["target"] = [{"voltage": "sense", "at": "high", "equals": "0.2 V"}]
    spread = analyse_spread(design_from_dict(raw), settings=NO_MC)
    assert {p.ref: p.temperature_rise_c for p in spread.parts} == {"RS": pytest.approx(34.0)}
    assert spread.targets[0].worst_high == pytest.approx(0.2 * (1 + 100e-6 * 34), rel=1e-9)
    assert np.isfinite(spread.targets[0].rss)


def matched(r1, r2, package="0603"):
    """A divider of one matched array's two members, coefficients tracking exactly (τ = 0):
    the common coefficient lies within ±25 ppm/K, the members' own within ±0 [CP-matched-array]."""
    data = {
        "design": {"temperature": ["25 C", "25 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": r1, "array": "RN1"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": r2, "array": "RN1"}],
        "target": [{"name": "k", "ratio": [["out", "gnd"], ["in", "gnd"]],
                    "equals": 0.5},
                   {"current": "R1", "equals": "5 mA"}],
        "array": [{"name": "RN1", "tolerance": "0.1%", "ratio_tolerance": "0.02%",
                   "tcr": "25 ppm/C", "tcr_tracking": "0 ppm/C"}],
    }
    if package:
        data["array"][0]["package"] = package
    return design_from_dict(data)


def test_matched_members_heating_alike_keep_their_ratio():
    # 1k and 1k from 10 V: 25 mW each, 21.25 K each on 850 K/W [HB-self-heating]; one
    # coefficient a for both: Δk/k = (1 - k)·a·(ΔT2 - ΔT1) = 0 [HB-self-heating]
    heated = analyse_spread(matched("1k", "1k"), settings=NO_MC)
    cold = analyse_spread(matched("1k", "1k", package=None), settings=NO_MC)
    assert [p.temperature_rise_c for p in heated.parts] == pytest.approx([21.25, 21.25])
    k, k_cold = heated.targets[0], cold.targets[0]
    # (the unequal case below gives 1.2e-9; what is left here is rounding of the slopes)
    assert sum(k.self_heating_terms.values()) == pytest.approx(0.0, abs=1e-20)
    # the worst case moves only by the second-order product of the members' own ratio
    # deviation and the common drift, ρ/2 x 25 ppm/K x 21.25 K ~ 5e-8 (the unequal case
    # below widens by 5e-5)
    assert (k.worst_low, k.worst_high) == pytest.approx((k_cold.worst_low, k_cold.worst_high),
                                                        abs=1e-7)
    # the current sees the common coefficient over the mean rise: I = 10 V / 2k = 5 mA,
    # ∂I/∂c = -I, drift 25 ppm/K x 21.25 K [HB-self-heating], [GUM-propagation]
    current = heated.targets[1]
    assert current.self_heating_terms["RN1"] == pytest.approx((5e-3 * 25e-6 * 21.25) ** 2,
                                                              rel=1e-5)


def test_matched_members_heating_apart_drift_their_ratio_by_hand():
    # 3k over 1k from 10 V: 2.5 mA, 18.75 mW and 6.25 mW [HB-ohm], 15.9375 K and 5.3125 K
    # on 850 K/W; k = 1/4, Δk = k(1 - k)·a·(ΔT2 - ΔT1) = 0.1875 x a x (-10.625 K)
    # [HB-self-heating], a within ±25 ppm/K (τ = 0: all of the TCR is common)
    design = matched("3k", "1k")
    k = analyse_spread(design, settings=NO_MC).targets[0]
    cold = analyse_spread(matched("3k", "1k", package=None), settings=NO_MC).targets[0]
    # the worst case widens by the self-heating ratio drift, 0.1875 x 25e-6 x 10.625
    extra = 0.1875 * 25e-6 * 10.625
    assert k.worst_high - cold.worst_high == pytest.approx(extra, rel=2e-3)
    assert cold.worst_low - k.worst_low == pytest.approx(extra, rel=2e-3)
    # RSS: each member's own drift widens by 25 ppm/K x 5.3125 K (its distance from the
    # mean rise), slope ±k(1 - k) = ±0.1875 [HB-divider]
    member = (0.1875 * 25e-6 * 5.3125) ** 2
    assert k.self_heating_terms["R1"] == pytest.approx(member, rel=1e-5)
    assert k.self_heating_terms["R2"] == pytest.approx(member, rel=1e-5)
    # Monte Carlo draws the one coefficient: σ of the self-heating part 0.1875 x 10.625 K x
    # 25e-6/√3, with the own ratio parts (±1e-4 each, uniform) 0.1875 x √2 x 1e-4/√3
    # [CP-sigma], [GUM-covariance]
    sampled = analyse_spread(design, settings=SpreadSettings(samples=200_000, seed=5))
    heat = 0.1875 * 10.625 * 25e-6 / math.sqrt(3)
    own = 0.1875 * math.sqrt(2) * 1e-4 / math.sqrt(3)
    assert sampled.targets[0].mc_std == pytest.approx(math.hypot(heat, own), rel=0.01)


def test_bundled_bench_current_monitor_by_hand():
    # 2 A through 50 mOhm: 0.1 V and 0.2 W [HB-ohm]; 2512 at 85 K/W: 17 K
    # [CP-thermal-resistance]; over 15..40 °C the shunt runs 32..57 °C, at most 32 K from
    # 25 °C against 15 K for the air alone: 75 ppm/K x 32 K = 0.24 % against 0.1125 %, and
    # self-heating (32² - 15²)/32² = 78 % of the drift variance [HB-self-heating]
    from conftest import ROOT

    path = ROOT / "examples" / "bench_current_monitor.toml"
    result = CliRunner().invoke(cli, ["check", str(path), "--json", "--samples", "0"])
    assert result.exit_code in (0, 1), result.output
    spread = json.loads(result.stdout)["spread"]
    shunt_part = next(p for p in spread["parts"] if p["ref"] == "RS")
    assert shunt_part["temperature_rise"] == pytest.approx(17.0, rel=1e-9)
    reading = next(t for t in spread["targets"] if t["label"] == "shunt reading")
    assert reading["drift_rss_abs"] == pytest.approx(0.1 * 75e-6 * 32, rel=1e-6)
    assert reading["ambient_drift_rss_abs"] == pytest.approx(0.1 * 75e-6 * 15, rel=1e-6)
    assert reading["self_heating_share_of_drift"] == pytest.approx(
        (32 ** 2 - 15 ** 2) / 32 ** 2, rel=1e-6)
    # the divider's parts heat apart, so self-heating moves the readback ratio too
    ratio = next(t for t in spread["targets"] if t["label"] == "readback ratio")
    assert ratio["self_heating_share_of_drift"] > 0.5


def test_each_candidates_box_follows_its_own_rises():
    # the search's box of a candidate is the analysis's box at that candidate's rises
    from synth.circuit.measure import Evaluator
    from synth.spread.heating import part_rises
    from synth.spread.variables import SpreadVariables
    from synth.spread.worst_case import WorstCase

    for design in (design_from_dict(shunt(("15 C", "35 C"))), matched("3k", "1k")):
        ev = Evaluator(design)
        parts0 = np.array([r.value for r in design.resistors])
        nominal = ev.evaluate(parts0[None, :], part_values=parts0[None, :])
        rises = part_rises(design, ev, nominal.part_power)
        heated = SpreadVariables(design, ev, rise_c=rises[0])
        low, high = SpreadVariables(design, ev).heated_box(rises)
        assert low[0] == pytest.approx(heated.low, rel=1e-15)
        assert high[0] == pytest.approx(heated.high, rel=1e-15)
    # the shunt's ranking worst case: 0.1 V x (1 ± 1.85e-3), as by hand above
    # [HB-self-heating], and at twice the current 0.4 W, 34 K: 100 ppm/K x 44 K
    design = design_from_dict(shunt(("15 C", "35 C")))
    worst = WorstCase(design, Evaluator(design))
    r = np.array([[0.1], [0.4]])
    low, high = worst.ranges(r, r)
    assert high[:, 0] == pytest.approx([0.1 * (1 + 1.85e-3), 0.4 * (1 + 100e-6 * 44)],
                                       rel=1e-9)
    assert low[:, 0] == pytest.approx([0.1 * (1 - 1.85e-3), 0.4 * (1 - 100e-6 * 44)],
                                      rel=1e-9)


def test_a_range_curves_envelope_holds_the_rise():
    # the shunt from 0.5 A to 1.5 A: rises 2.125 K and 19.125 K at the ends, the part's one
    # rise the larger [HB-self-heating]; at 1.5 A the envelope is 0.15 V x (1 ± 100e-6 x
    # 19.125) at one ambient, as the spread's worst case there
    from synth.spread.range_curve import range_curves

    raw = shunt()
    raw["source"][0] = {"ref": "I1", "kind": "current", "from": "gnd", "to": "sense",
                        "range": ["0.5 A", "1.5 A"]}
    raw["target"] = [{"voltage": "sense", "at_least": "0 V"}]
    design = design_from_dict(raw)
    curve = range_curves(design, {}, {}, samples=3)[0]
    assert curve.worst_high[-1] == pytest.approx(0.15 * (1 + 100e-6 * 19.125), rel=1e-9)
    assert curve.worst_low[0] == pytest.approx(0.05 * (1 - 100e-6 * 19.125), rel=1e-9)
    spread = analyse_spread(design, settings=NO_MC)
    assert max(t.worst_high for t in spread.targets) == pytest.approx(curve.worst_high[-1],
                                                                      rel=1e-12)
