"""Verdicts and exit codes of synthesis: which limit binds, on which basis a design holds.

Each check is compared with the independent reference checker (``tests/refcheck``,
[CALC-exhaustive], [CALC-exact-nodal]) or with a hand formula; the id of the source in
``tests/REFERENCES.md`` stands beside it.  Searches are kept small (narrow ranges, E24/E48,
few Monte Carlo samples) so the file runs in seconds.
"""

from __future__ import annotations

import itertools
import json
import tomllib
from functools import cache
from typing import Any

import numpy as np
import pytest
from click.testing import CliRunner
from refcheck import eseries, ratings, scenarios
from refcheck.network import Network, solve
from refcheck.spread import monte_carlo, part_extremes, worst_case
from refcheck.targets import make_target

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize

NO_MC = SpreadSettings(samples=0)


@cache
def scenario(name: str) -> dict[str, Any]:
    """One reference scenario of tests/refcheck/scenarios.py, computed once per run."""
    return getattr(scenarios, name)()


def run(*args: object) -> Any:
    return CliRunner().invoke(cli, [str(a) for a in args])


def run_json(*args: object) -> tuple[int, dict[str, Any]]:
    result = run(*args, "--json")
    assert result.exit_code in (0, 1), result.output
    return result.exit_code, json.loads(result.stdout)


def resistor_parts(candidate: dict[str, Any]) -> list[dict[str, Any]]:
    return [p for p in candidate["parts"] if p["kind"] == "resistor"]


# --------------------------------------------------------------------------- 1. 48 V divider

DIVIDER_48V = ("divider", "--input", "48 V", "--output", "3.3 V", "--load", "1M")


def test_48v_divider_in_0603_fails_on_r1_voltage() -> None:
    # R1 sees 48 V - V(out); inside the ±1 % window (the E96 default window) at least
    # 48 - 3.3 * 1.01 = 44.667 V, over 0603's 50 V * 80 % = 40 V [HB-loaded-divider],
    # [CP-margin]; the exhaustive reference finds no feasible pair [CALC-exhaustive].
    ref = scenario("divider_48v_to_3v3")
    assert ref["r1_least_voltage_hand"] == pytest.approx(44.667)
    assert ref["r1_least_voltage_found"] == pytest.approx(44.667, abs=1e-3)
    assert ref["allowance_0603_v"] == 40.0 and ref["feasible_count"] == 0

    result = run(*DIVIDER_48V, "--samples", 0)
    assert result.exit_code == 1, result.output
    assert "result: NO standard values meet every window and limit" in result.output
    binding = next(line for line in result.output.splitlines() if "Binding:" in line)
    binding = binding.split("Binding:", 1)[1]
    assert "R1" in binding and "40 V" in binding

    code, doc = run_json(*DIVIDER_48V, "--samples", 0)
    assert code == 1 and doc["feasible"] is False
    assert doc["verdict"].startswith("NO standard values")
    limits = doc["binding_limits"]
    assert [(p["kind"], p["subject"]) for p in limits] == [("voltage", "R1")]
    assert limits[0]["limit"] == pytest.approx(ref["allowance_0603_v"])
    # what R1 would see: never less than the least voltage any in-window pair gives it
    assert limits[0]["value"] >= ref["r1_least_voltage_found"] * (1 - 1e-9)


def test_48v_divider_soft_goal_is_missed_because_of_r1() -> None:
    # Scenario a without a window: the best pair with every part at most 40 V reaches
    # +142.449 % (2.26M / 825k, V(out) = 8.0008 V); without the limit the catalogue reaches
    # 1.0326e-5 (154k / 11.5k) [CALC-exhaustive].
    ref = scenario("divider_48v_to_3v3")
    limited, _, v_out = ref["best_r1_40v_only"]
    unlimited = ref["best_no_limits"][0]
    assert limited == pytest.approx(1.42449, abs=1e-5)
    assert unlimited == pytest.approx(1.0326e-5, rel=1e-4)

    design = design_from_dict({
        "design": {"package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "48 V"}],
        "resistor": [
            {"ref": "R1", "nodes": ["in", "out"], "choose": "E96", "range": ["100", "10M"]},
            {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E96", "range": ["100", "10M"]},
            {"ref": "RL", "nodes": ["out", "gnd"], "value": "1M", "bom": False}],
        "target": [{"voltage": "out", "equals": "3.3 V"}]})
    result = synthesize(design, top=1)
    assert result.feasible  # a soft goal: the design holds, the goal does not
    best = result.candidates[0]
    (target,) = best.targets
    assert target.status == "goal missed"
    assert target.error == pytest.approx(limited, rel=1e-9)
    assert target.value == pytest.approx(v_out, rel=1e-9)
    assert target.unlimited_error == pytest.approx(unlimited, rel=1e-9)
    assert result.unlimited_objective == pytest.approx(unlimited, rel=1e-9)
    assert "R1" in (target.binding or "") and "40 V" in (target.binding or "")
    assert [(p.kind, p.subject, p.limit) for p in result.binding_limits] == [
        ("voltage", "R1", 40.0)]
    # the chosen design keeps every part within its 0603 allowance [CP-margin]
    for part in best.parts:
        if part.kind == "resistor" and part.package:
            assert part.voltage <= ratings.allowed_voltage("0603") * (1 + 1e-9)


def test_48v_divider_with_package_auto_succeeds() -> None:
    result = run(*DIVIDER_48V, "--samples", 0, "--package", "auto")
    assert result.exit_code == 0, result.output
    assert "packages chosen:" in result.output
    assert "result: the best design meets every window and limit at nominal values" \
        in result.output
    code, doc = run_json(*DIVIDER_48V, "--samples", 0, "--package", "auto")
    assert code == 0 and doc["feasible"] is True
    best = doc["candidates"][0]
    assert best["targets"][0]["status"] == "met"
    for part in resistor_parts(best):
        if part["package"] is None:
            continue  # the load is a model part
        # every rated part within the allowance of its own package [CP-margin]
        assert part["allowed_voltage"] == pytest.approx(
            ratings.allowed_voltage(part["package"]))
        assert part["voltage"] <= part["allowed_voltage"] * (1 + 1e-9)
        assert part["power"] <= ratings.allowed_power(part["package"]) * (1 + 1e-9)


# --------------------------------------------------------------------------- 2. power binds

REGULATOR_12V = ("regulator", "--style", "adjust", "--reference", "1.25V", "--output", "12V",
                 "--pin-current", "50uA", "--min-current", "5mA", "--series", "E48",
                 "--range", "100:10k", "--samples", 0)


def test_adjustable_regulator_in_0603_fails_on_rbot_power() -> None:
    # V(out) = 1.25 (1 + RBOT/RTOP) + I_adj RBOT [HB-regulator-adj]: RBOT carries
    # 1.25/RTOP + 50 µA >= 5.05 mA (the 5 mA least divider current) and sees
    # V(out) - 1.25 >= 12 * 0.98 - 1.25 = 10.51 V inside the ±2 % E48 window
    # [CP-series-tolerance], so it dissipates at least 53.08 mW, over 0603's
    # 100 mW * 50 % = 50 mW [CP-margin]: no E48 pair can pass.
    least_power = (12 * 0.98 - 1.25) * (5e-3 + 50e-6)
    assert least_power == pytest.approx(0.0530755)
    assert least_power > ratings.allowed_power("0603") == 0.05

    result = run(*REGULATOR_12V, "--package", "0603")
    assert result.exit_code == 1, result.output
    binding = next(line for line in result.output.splitlines() if "Binding:" in line)
    assert "RBOT would dissipate" in binding and "50 mW" in binding

    code, doc = run_json(*REGULATOR_12V, "--package", "0603")
    assert code == 1 and doc["feasible"] is False
    assert [(p["kind"], p["subject"]) for p in doc["binding_limits"]] == [("power", "RBOT")]
    assert doc["binding_limits"][0]["limit"] == pytest.approx(0.05)
    assert doc["binding_limits"][0]["value"] >= least_power


def test_adjustable_regulator_with_package_auto_succeeds() -> None:
    code, doc = run_json(*REGULATOR_12V, "--package", "auto")
    assert code == 0 and doc["feasible"] is True
    best = doc["candidates"][0]
    assert [t["status"] for t in best["targets"]] == ["met", "met"]
    values = {p["ref"]: p for p in resistor_parts(best)}
    rtop, rbot = values["RTOP"]["value"], values["RBOT"]["value"]
    # [HB-regulator-adj]: RBOT's dissipation from the formula, within its own package
    i_bot = 1.25 / rtop + 50e-6
    p_bot = i_bot**2 * rbot
    assert values["RBOT"]["power"] == pytest.approx(p_bot, rel=1e-9)
    for part in values.values():
        assert part["power"] <= ratings.allowed_power(part["package"]) * (1 + 1e-9)
    result = run(*REGULATOR_12V, "--package", "auto")
    assert result.exit_code == 0 and "packages chosen:" in result.output


LED_350MA = ("led", "--supply", "12V", "--forward", "3.2V", "--current", "350mA",
             "--samples", 0)


def test_led_350ma_in_0603_fails_on_power() -> None:
    # R = (12 - 3.2) / 0.35 = 25.14 ohm dissipating 8.8 * 0.35 = 3.08 W [CP-led]; inside
    # the ±1 % window at least 8.8 * 0.3465 = 3.049 W, far over 0603's 50 mW [CP-margin].
    least_power = (12 - 3.2) * 0.35 * 0.99
    result = run(*LED_350MA, "--package", "0603")
    assert result.exit_code == 1, result.output
    binding = next(line for line in result.output.splitlines() if "Binding:" in line)
    assert "R1 would dissipate" in binding and "0603 allows 50 mW" in binding
    code, doc = run_json(*LED_350MA, "--package", "0603")
    assert code == 1 and doc["feasible"] is False
    (limit,) = doc["binding_limits"]
    assert (limit["kind"], limit["subject"]) == ("power", "R1")
    assert limit["limit"] == pytest.approx(ratings.allowed_power("0603"))
    assert limit["value"] >= least_power


def test_led_350ma_with_package_auto_keeps_every_part_within_its_allowance() -> None:
    code, doc = run_json(*LED_350MA, "--package", "auto")
    assert code == 0 and doc["feasible"] is True
    best = doc["candidates"][0]
    (target,) = best["targets"]
    assert target["status"] == "met"
    current = target["value"]
    assert 0.35 * 0.99 <= current <= 0.35 * 1.01
    parts = resistor_parts(best)
    values = [p["value"] for p in parts]
    series = best["positions"]["R1"] == pytest.approx(sum(values), rel=1e-12)
    effective = sum(values) if series else 1 / sum(1 / v for v in values)
    assert best["positions"]["R1"] == pytest.approx(effective, rel=1e-12)
    # the resistor takes the supply less the forward drop: I = (12 - 3.2) / R [CP-led]
    assert current == pytest.approx((12 - 3.2) / effective, rel=1e-9)
    for part in parts:
        # each physical part's own current (the string's, or its share in parallel) and
        # P = I²R [HB-ohm], against the allowance of its own package [CP-margin]
        own = current if series else (12 - 3.2) / part["value"]
        assert part["power"] == pytest.approx(own**2 * part["value"], rel=1e-9)
        allowed = ratings.allowed_power(part["package"])
        assert part["allowed_power"] == pytest.approx(allowed)
        assert part["power"] <= allowed * (1 + 1e-9)
    assert sum(p["power"] for p in parts) == pytest.approx((12 - 3.2) * current, rel=1e-9)


# --------------------------------------------------------------------------- 7. exact limits

LIMITS_EXACT = """
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
R1_SPEC

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "100k"

[[target]]
voltage = "out"
equals = "3 V"
within = "1%"

[[target]]
current = "V1"
at_most = "30 uA"
"""


def test_limits_met_exactly_pass_check(tmp_path) -> None:
    # 12 V over 300k + 100k: V(out) = 3 V and I = 30 µA exactly, right at the bound; the
    # float solve may land an ulp either side, and a limit met exactly passes
    # [CALC-exact-nodal], [LIB-fractions].
    ref = scenario("limits_met_exactly")
    assert ref["exact_current_ok"] and ref["float_feasible_by_search"]
    assert ref["exact_current"] * 10**6 == 30 and ref["exact_vout"] == 3
    path = tmp_path / "exact.toml"
    path.write_text(LIMITS_EXACT.replace("R1_SPEC", 'value = "300k"'), encoding="utf-8")
    result = run("check", path, "--samples", 0)
    assert result.exit_code == 0, result.output
    doc = json.loads(run("check", path, "--samples", 0, "--json").stdout)
    current = next(t for t in doc["targets"] if t["kind"] == "current")
    assert current["value"] == pytest.approx(30e-6, rel=1e-12) and current["met"]


def test_limits_met_exactly_pass_synthesis(tmp_path) -> None:
    # R1 free in E24: 300k (3.0 is an E24 value [IEC60063]) is the only value meeting both
    # bounds, the current exactly at 30 µA [CALC-exact-nodal].
    path = tmp_path / "free.toml"
    path.write_text(LIMITS_EXACT.replace("R1_SPEC", 'choose = "E24"\nrange = ["100k", "1M"]'),
                    encoding="utf-8")
    result = run("design", path, "--samples", 0, "--top", 3, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["feasible"] is True
    assert [c["values"] for c in doc["candidates"]] == [{"R1": 300000.0}]
    assert doc["candidates"][0]["objective"] == pytest.approx(0, abs=1e-12)


@pytest.mark.parametrize("package", ["0805", "axial-1/8W"])
def test_power_exactly_at_the_allowance_passes(package: str) -> None:
    # 2.5 V across 100 ohm dissipates 1/16 W, exactly 50 % of 125 mW [HB-ohm],
    # [CP-margin]; refcheck lists the packages whose exact allowance equals it.
    ref = scenario("package_at_62mw5")
    assert package in ref["packages_exactly_at"]
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd",
                    "value": "2.5 V"}],
        "resistor": [{"ref": "R1", "nodes": ["a", "gnd"], "value": "100", "package": package}],
        "target": [{"voltage": "a", "equals": "2.5 V", "within": "1%"}]})
    result = check(design)
    assert result.ok and not result.problems
    (part,) = [p for p in result.parts if p.kind == "resistor"]
    assert part.power == pytest.approx(float(ref["exact_power"]), rel=1e-12)
    assert part.allowed_power == pytest.approx(0.0625, rel=1e-12)
    assert part.utilization == pytest.approx(1.0, rel=1e-9)


# --------------------------------------------------------------------------- 8. basis

TOML_LOADED = """
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "E24"
range = ["1k", "100k"]
tolerance = "1%"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
choose = "E24"
range = ["1k", "100k"]
tolerance = "1%"

[[resistor]]
ref = "RL"
nodes = ["out", "gnd"]
value = "10k"
tolerance = "5%"
bom = false

[[target]]
voltage = "out"
equals = "GOAL"
within = "1.2%"
"""


def loaded_divider(goal: str, require: dict[str, str] | None = None) -> Any:
    """10 V into R1 over R2 (E24, 1k..100k, ±1 %) with a 10k ±5 % load; a ±1.2 % window."""
    tables = tomllib.loads(TOML_LOADED.replace("GOAL", goal))
    if require:
        tables["design"] = dict(require)
    return design_from_dict(tables)


TOLERANCES = {"R1": 0.01, "R2": 0.01, "RL": 0.05}


def reference_net(r1: float, r2: float) -> Network:
    return Network(resistors=[("R1", "in", "out", r1), ("R2", "out", "gnd", r2),
                              ("RL", "out", "gnd", 10e3)],
                   vsources=[("V1", "in", "gnd", 10.0)])


def reference_box(goal: float) -> dict[str, np.ndarray]:
    """Every E24 pair's nominal error and whether its whole tolerance box meets the window.

    The output voltage is bilinear in each resistance, so its extremes over the box lie at
    vertices [HB-bilinear], [HB-wca]; every vertex of every pair is solved by refcheck's
    nodal solve [CALC-exhaustive].
    """
    vals = eseries.values("E24", 1e3, 100e3)
    pairs = np.array(list(itertools.product(vals, vals)))
    signs = np.array(list(itertools.product((-1.0, 1.0), repeat=3)))
    rows = [pairs[:, 0], pairs[:, 1], np.full(len(pairs), 10e3)]
    nominal = solve(reference_net(1, 1), np.stack(rows, axis=1)).v("out")
    low, high = goal * (1 - 0.012), goal * (1 + 0.012)
    holds = np.ones(len(pairs), dtype=bool)
    for s in signs:
        factors = 1 + s * np.array([TOLERANCES["R1"], TOLERANCES["R2"], TOLERANCES["RL"]])
        v = solve(reference_net(1, 1), np.stack(rows, axis=1) * factors).v("out")
        holds &= (v >= low * (1 - 1e-9)) & (v <= high * (1 + 1e-9))
    error = np.abs(nominal - goal) / goal
    nominal_ok = error <= 0.012 * (1 + 1e-9)
    return {"pairs": pairs, "error": error, "nominal_ok": nominal_ok, "holds": holds}


def test_require_worst_case_keeps_only_designs_whose_box_meets_the_window() -> None:
    ref = reference_box(6.2)
    nominal_best = int(np.argmin(np.where(ref["nominal_ok"], ref["error"], np.inf)))
    robust_best = int(np.argmin(np.where(ref["holds"], ref["error"], np.inf)))
    # the nominal best (2.2k / 5.6k) breaks the window somewhere in its box; a different
    # pair is the best that holds everywhere [CALC-exhaustive]
    assert not ref["holds"][nominal_best]
    assert tuple(ref["pairs"][robust_best]) != tuple(ref["pairs"][nominal_best])

    design = loaded_divider("6.2 V")
    nominal = synthesize(design, top=1)
    assert nominal.feasible and nominal.require == "nominal"
    assert nominal.candidates[0].objective == pytest.approx(ref["error"][nominal_best],
                                                            rel=1e-9)
    robust = synthesize(design, top=5, require="worst-case", spread=NO_MC)
    assert robust.feasible and robust.require == "worst-case"
    assert robust.candidates[0].values != nominal.candidates[0].values
    assert robust.candidates[0].objective == pytest.approx(ref["error"][robust_best],
                                                           rel=1e-9)
    target = make_target("voltage", "out", goal=6.2, within=0.012)
    for candidate in robust.candidates:
        # each returned candidate's box lies inside the window [HB-wca]
        wc = worst_case(reference_net(candidate.values["R1"], candidate.values["R2"]),
                        TOLERANCES, [target])["voltage(out)"]
        assert target.low * (1 - 1e-9) <= wc.low and wc.high <= target.high * (1 + 1e-9)
        assert candidate.spread is not None
        (spread,) = candidate.spread.targets
        assert spread.worst_low == pytest.approx(wc.low, rel=1e-9)
        assert spread.worst_high == pytest.approx(wc.high, rel=1e-9)


def test_require_worst_case_from_the_design_file_and_the_cli(tmp_path) -> None:
    from_file = synthesize(loaded_divider("6.2 V", {"require": "worst-case"}), top=1,
                           spread=NO_MC)
    by_argument = synthesize(loaded_divider("6.2 V"), top=1, require="worst-case",
                             spread=NO_MC)
    assert from_file.require == "worst-case" and from_file.feasible
    assert from_file.candidates[0].values == by_argument.candidates[0].values
    path = tmp_path / "robust.toml"
    path.write_text(TOML_LOADED.replace("GOAL", "6.2 V"), encoding="utf-8")
    result = run("design", path, "--samples", 0, "--top", 3, "--require", "worst-case")
    assert result.exit_code == 0, result.output
    assert ("result: the best design meets every window and limit over the whole tolerance "
            "box (worst case)") in result.output
    assert "targets of the best design:" in result.output


def test_require_worst_case_refuses_when_no_box_fits(tmp_path) -> None:
    # 6.1 V: the nominal search finds designs, but no E24 pair keeps its whole box inside
    # the ±1.2 % window [CALC-exhaustive]
    ref = reference_box(6.1)
    assert ref["nominal_ok"].any() and not ref["holds"].any()
    design = loaded_divider("6.1 V")
    assert synthesize(design, top=1).feasible
    robust = synthesize(design, top=3, require="worst-case", spread=NO_MC)
    assert robust.feasible is False and robust.binding
    path = tmp_path / "robust.toml"
    path.write_text(TOML_LOADED.replace("GOAL", "6.1 V"), encoding="utf-8")
    result = run("design", path, "--samples", 0, "--top", 3, "--require", "worst-case")
    assert result.exit_code == 1, result.output
    assert ("result: NO standard values meet every window and limit over the whole tolerance "
            "box (worst case)") in result.output


def test_require_worst_case_binding_names_the_target() -> None:
    # 6.1 V +-1.2 % from 10 V (E24 1k..100k, +-1 %, 10k +-5 % load): no pair's box fits
    robust = synthesize(loaded_divider("6.1 V"), top=3, require="worst-case", spread=NO_MC)
    assert robust.feasible is False
    assert "voltage at out" in (robust.binding or "")


def test_require_worst_case_best_target_is_out_of_band() -> None:
    robust = synthesize(loaded_divider("6.1 V"), top=3, require="worst-case", spread=NO_MC)
    assert robust.feasible is False
    best = robust.candidates[0]
    target = make_target("voltage", "out", goal=6.1, within=0.012)
    wc = worst_case(reference_net(best.values["R1"], best.values["R2"]), TOLERANCES,
                    [target])["voltage(out)"]
    assert wc.low < target.low or wc.high > target.high  # broken over its box [HB-wca]
    assert best.targets[0].met  # ... though met at nominal values
    assert best.targets[0].status == "out of band"


def test_require_yield_keeps_a_best_whose_lower_bound_reaches_min_yield() -> None:
    design = loaded_divider("6.2 V")
    result = synthesize(design, top=3, require="yield", min_yield=0.99,
                        spread=SpreadSettings(samples=2000, seed=7))
    assert result.feasible and result.require == "yield" and result.min_yield == 0.99
    best = result.candidates[0]
    assert best.spread is not None and best.spread.yield_interval is not None
    assert best.spread.yield_interval[0] >= 0.99
    # refcheck's own Monte Carlo of the same design (a different generator) agrees:
    # yield 1 within sampling error [HB-sampling-error], [HB-clopper-pearson]
    target = make_target("voltage", "out", goal=6.2, within=0.012)
    mc = monte_carlo(reference_net(best.values["R1"], best.values["R2"]), TOLERANCES,
                     [target], samples=5000, seed=11)
    assert mc.ci_low >= 0.99
    assert best.spread.yield_fraction == pytest.approx(mc.yield_, abs=0.01)


def test_require_yield_out_of_reach_is_infeasible_and_names_yield(tmp_path) -> None:
    # With n samples the 95 % Clopper-Pearson lower bound is at most 0.025**(1/n):
    # 0.998157 for n = 2000 [HB-clopper-pearson], so 99.99 % cannot be shown.
    assert 0.025 ** (1 / 2000) == pytest.approx(0.998157, abs=1e-6)
    design = loaded_divider("6.2 V")
    result = synthesize(design, top=3, require="yield", min_yield=0.9999,
                        spread=SpreadSettings(samples=2000, seed=7))
    assert result.feasible is False
    assert "yield" in (result.binding or "") and "99.99 %" in (result.binding or "")
    path = tmp_path / "yield.toml"
    path.write_text(TOML_LOADED.replace("GOAL", "6.2 V"), encoding="utf-8")
    out = run("design", path, "--samples", 2000, "--top", 3, "--require", "yield",
              "--min-yield", "99.99%")
    assert out.exit_code == 1, out.output
    assert ("result: NO standard values meet every window and limit with a Monte Carlo "
            "yield of at least 99.99 %") in out.output
    ok = run("design", path, "--samples", 2000, "--top", 3, "--require", "yield",
             "--min-yield", "99%")
    assert ok.exit_code == 0, ok.output
    assert ("result: the best design meets every window and limit with a Monte Carlo "
            "yield of at least 99 %") in ok.output


# --------------------------------------------------------------------------- 9. rank by yield

def test_rank_by_yield_best_does_not_depend_on_top() -> None:
    # Yield is estimated over the same pool of nominal best candidates whatever --top is,
    # with the same seed, so the best and the count considered agree.
    args = ("divider", "--input", "10V", "--output", "6.2V", "--load", "10k", "--series",
            "E24", "--range", "1k:100k", "--within", "1.2%", "--rank-by", "yield",
            "--samples", 2000, "--seed", 3)
    _, one = run_json(*args, "--top", 1)
    _, five = run_json(*args, "--top", 5)
    assert one["rank_by"] == five["rank_by"] == "yield"
    assert len(one["candidates"]) == 1 and len(five["candidates"]) == 5
    assert one["candidates"][0]["values"] == five["candidates"][0]["values"]
    assert one["candidates"][0]["spread"]["yield"] == five["candidates"][0]["spread"]["yield"]
    assert one["considered"] == five["considered"] > 5
    yields = [c["spread"]["yield"] for c in five["candidates"]]
    assert yields == sorted(yields, reverse=True)


# --------------------------------------------------------------------------- 10. interior peak

def max_power_design(load: str) -> Any:
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "RS", "nodes": ["in", "out"], "value": "100", "tolerance": "0%"},
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": load,
                      "tolerance": "10%"}],
        "target": [{"power": "RL", "at_most": "1 W"}]})


def test_power_target_worst_high_is_the_interior_peak() -> None:
    # Rs = 100 ohm exact, RL = 100 ohm ±10 %, 10 V: P(RL) peaks at RL = Rs with
    # V²/(4 Rs) = 0.25 W, above both vertices 0.24931 W and 0.24943 W [HB-max-power],
    # [CALC-interior-power].
    ref = scenario("max_power_transfer")
    assert ref["fixed_rs_true_max"] == pytest.approx(0.25, rel=1e-12)
    assert ref["fixed_rs_vertex_powers"] == pytest.approx((0.249307, 0.249433), abs=1e-6)
    result = check(max_power_design("100"), spread=NO_MC)
    assert result.spread is not None
    (power,) = result.spread.targets
    assert power.worst_high == pytest.approx(ref["fixed_rs_true_max"], rel=1e-9)
    assert power.worst_high > max(ref["fixed_rs_vertex_powers"]) * (1 + 1e-4)
    assert power.worst_low == pytest.approx(ref["fixed_rs_vertex_powers"][0], rel=1e-9)


def test_power_target_interior_peak_away_from_the_nominal() -> None:
    # RL = 105 ohm ±10 % spans 94.5..115.5 ohm and so still holds RL = Rs: the peak
    # 0.25 W lies inside the box, not at the nominal 0.249851 W nor at a vertex
    # [HB-max-power]; refcheck's scan of the box finds the same [CALC-interior-power].
    net = Network(resistors=[("RS", "in", "out", 100), ("RL", "out", "gnd", 105)],
                  vsources=[("V1", "in", "gnd", 10)])
    peak = part_extremes(net, {"RL": 0.1})["RL"]
    assert peak.worst_power == pytest.approx(0.25, rel=1e-9)
    assert peak.vertex_power < 0.2499
    result = check(max_power_design("105"), spread=NO_MC)
    assert result.spread is not None
    (power,) = result.spread.targets
    assert power.nominal == pytest.approx(100 * 105 / 205**2, rel=1e-12)
    assert power.worst_high == pytest.approx(peak.worst_power, rel=1e-9)


def test_led_and_regulator_choose_their_packages_by_default() -> None:
    # with no --package the LED and regulator commands choose for power and voltage:
    # the 350 mA LED and the 12 V regulator that an 0603 cannot carry succeed
    for args in (LED_350MA, REGULATOR_12V):
        result = run(*args)
        assert result.exit_code == 0, result.output
        assert "packages chosen:" in result.output
