"""Spread: worst case, RSS, Monte Carlo and yield, against handbook formulas.

Worst-case analysis handbooks (RIAC "Worst Case Analysis"; Smith, RAMS)
[HB-wca]: EVA Δy = Σ|∂y/∂xᵢ|Δxᵢ, RSS σ² = Σ(∂y/∂xᵢ)²σᵢ²; tolerance = 3σ for a
normal spread, σ = t/√3 for a uniform one (common practice) [CP-sigma].  Check
values: the worked divider [CALC-wca-divider], vertex extremes [HB-bilinear]
and the interior dissipation peak [CALC-interior-power].
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize


def divider(tolerance="1%", tcr="0 ppm/C", within=None, temperature=None):
    target = {"voltage": "out", "equals": "5 V"}
    if within:
        target["within"] = within
    design = {"source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                          "value": "10 V"}],
              "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k",
                            "tolerance": tolerance, "tcr": tcr},
                           {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k",
                            "tolerance": tolerance, "tcr": tcr}],
              "target": [target]}
    if temperature:
        design["design"] = {"temperature": temperature}
    return design_from_dict(design)


def test_divider_worst_case_sensitivities_and_rss():
    # 10k/10k at ±1 % with 10 V: exact vertex range 4.95..5.05 V, sensitivities ±0.5,
    # EVA ±1 %, RSS ±0.707 % [HB-wca] [CALC-wca-divider]
    t = analyse_spread(divider(), settings=SpreadSettings(samples=0)).targets[0]
    assert (t.worst_low, t.worst_high) == pytest.approx((4.95, 5.05), rel=1e-12)
    assert t.low_corner == {"R1": "+", "R2": "-"} and t.high_corner == {"R1": "-", "R2": "+"}
    assert t.sensitivities == pytest.approx({"R1": -0.5, "R2": 0.5}, abs=1e-6)
    eva = sum(abs(s) * 0.01 for s in t.sensitivities.values())
    assert eva == pytest.approx(0.01, rel=1e-6)
    assert t.rss == pytest.approx(math.sqrt(2) * 0.5 * 0.01, rel=1e-6)  # 0.707 %
    assert t.exact and t.mc_values is None


@pytest.mark.parametrize(("distribution", "sigma_of_tolerance"), [
    ("uniform", 1 / math.sqrt(3)), ("normal", 1 / 3)])
def test_monte_carlo_converges_to_first_order_values(distribution, sigma_of_tolerance):
    n = 200_000
    settings = SpreadSettings(samples=n, distribution=distribution, seed=7, keep_samples=True,
                              kept_samples=n)
    s = analyse_spread(divider(), settings=settings).targets[0]
    sigma = 5.0 * 0.5 * math.sqrt(2) * 0.01 * sigma_of_tolerance  # first order: σ = |S|σ_x
    assert abs(s.mc_mean - 5.0) < 4 * sigma / math.sqrt(n) + 1e-5
    assert s.mc_std == pytest.approx(sigma, rel=4 / math.sqrt(2 * n) + 0.005)
    assert len(s.mc_values) == n
    again = analyse_spread(divider(), settings=settings).targets[0]
    np.testing.assert_array_equal(s.mc_values, again.mc_values)  # seeded: repeatable
    # the streamed mean and σ are those of the very samples [LIB-numpy-mean-std]
    assert s.mc_mean == pytest.approx(np.mean(s.mc_values), rel=1e-12)
    assert s.mc_std == pytest.approx(np.std(s.mc_values), rel=1e-9)


def test_yield_of_a_known_case():
    # I = V / R with R uniform within ±1 % and a ±0.5 % window on I: the sample is inside
    # when δ lies in [1/1.005 - 1, 1/0.995 - 1], so the yield is that width over 2 %
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k", "tolerance": "1%",
                      "tcr": "0 ppm/C"}],
        "target": [{"current": "R1", "equals": "1 mA", "within": "0.5%"}],
    })
    n = 200_000
    exact = (1 / 0.995 - 1 / 1.005) / 0.02
    result = analyse_spread(design, settings=SpreadSettings(samples=n, seed=3))
    standard_error = math.sqrt(exact * (1 - exact) / n)
    assert abs(result.yield_fraction - exact) < 4 * standard_error
    assert result.targets[0].inside == result.yield_fraction


def test_dissipation_worst_case_finds_the_interior_peak():
    # Rs = RL = 100 ohm, RL ±10 %, 10 V: 0.25 W at RL = Rs inside the box, only
    # 0.24931 W and 0.24943 W at its vertices [HB-max-power] [CALC-interior-power]
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "RS", "nodes": ["in", "out"], "value": "100", "tolerance": "0%",
                      "tcr": "0 ppm/C"},
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": "100", "tolerance": "10%",
                      "tcr": "0 ppm/C", "package": "2512"}],
    })
    rl = analyse_spread(design, settings=SpreadSettings(samples=0)).parts[1]
    vertex_powers = [10 ** 2 * r / (100 + r) ** 2 for r in (90, 110)]
    assert vertex_powers == pytest.approx([0.24931, 0.24943], abs=1e-5)
    assert rl.worst_power == pytest.approx(0.25, rel=1e-9)
    assert rl.worst_power_bound >= rl.worst_power
    # 2512: 1 W [CP-chip-ratings], full rating at 25 °C [CP-derating], 50 % margin [CP-margin]
    assert rl.allowed_power_hot == pytest.approx(1.0 * 0.5)  # 2512 at 25 °C, 50 % margin


def test_temperature_coefficient_moves_resistance_by_tcr_times_delta_t():
    # ΔR/R = TCR · ΔT (common practice) [CP-tcr]: 100 ppm/K over 25 -> 125 °C is ±1 %
    design = design_from_dict({
        "design": {"temperature": ["25 C", "125 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k", "tolerance": "0%",
                      "tcr": "100 ppm/C"}],
        "target": [{"current": "R1", "equals": "1 mA"}],
    })
    spread = analyse_spread(design, settings=SpreadSettings(samples=50_000, keep_samples=True))
    t = spread.targets[0]
    assert t.worst_low == pytest.approx(1 / (1000 * (1 + 100e-6 * 100)), rel=1e-12)
    assert t.worst_high == pytest.approx(1 / (1000 * (1 - 100e-6 * 100)), rel=1e-12)
    assert t.worst_low <= t.mc_values.min() and t.mc_values.max() <= t.worst_high


def test_source_tolerance_is_a_quantity():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": "2%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "0%",
                      "tcr": "0 ppm/C"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "0%",
                      "tcr": "0 ppm/C"}],
        "target": [{"voltage": "out", "equals": "5 V"}],
    })
    t = analyse_spread(design, settings=SpreadSettings(samples=0)).targets[0]
    assert t.sensitivities == pytest.approx({"V1": 1.0}, abs=1e-6)
    assert (t.worst_low, t.worst_high) == pytest.approx((4.9, 5.1), rel=1e-12)


def test_ranking_by_worst_case_matches_a_brute_force_over_the_catalogue():
    # divider V = 12 R2 / (R1 + R2); over ±5 % its extremes are R1(1+t), R2(1-t) and the
    # opposite corner (monotone in each resistance) [CALC-wca-divider]; the brute force
    # tries every catalogue pair [CALC-exhaustive]
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"], "tolerance": "5%", "tcr": "0 ppm/C"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["1k", "100k"], "tolerance": "1%", "tcr": "0 ppm/C"}],
        "target": [{"voltage": "out", "equals": "3.3 V"}],
    })
    result = synthesize(design, top=3, rank_by="worst-case",
                        spread=SpreadSettings(samples=0))
    from synth.catalog.series import series_values
    r1 = series_values("E24", 1e3, 1e5)[:, None]
    r2 = series_values("E12", 1e3, 1e5)[None, :]
    low = 12 * r2 * 0.99 / (r1 * 1.05 + r2 * 0.99)
    high = 12 * r2 * 1.01 / (r1 * 0.95 + r2 * 1.01)
    worst = np.maximum(np.abs(low - 3.3), np.abs(high - 3.3)) / 3.3
    best = result.candidates[0]
    assert best.spread.worst_error == pytest.approx(float(worst.min()), rel=1e-9)
    assert result.proven_optimal and result.rank_by == "worst-case"
    errors = [c.spread.worst_error for c in result.candidates]
    assert errors == sorted(errors)


def test_ranking_by_yield():
    # an exact 10k load makes large values spread less: yield order differs from nominal
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"], "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
                      "range": ["1k", "100k"], "tolerance": "1%"},
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "0%"}],
        "target": [{"voltage": "out", "equals": "3.3 V", "within": "0.8%"}],
    })

    def exact_yield(r1, r2, t=0.01, n=200_000):
        # as [CALC-yield], over R1's uniform deviation: the output 12·p/(R1 + p), p = R2‖RL,
        # is in the window exactly when R2's deviation lies in an interval [HB-loaded-divider]
        d1 = -t + (np.arange(n) + 0.5) * (2 * t / n)
        a = r1 * (1 + d1)

        def r2_giving(v):
            p = a * v / (12 - v)
            return p * 10e3 / (10e3 - p)

        lo = np.maximum(r2_giving(3.3 * 0.992) / r2 - 1, -t)
        hi = np.minimum(r2_giving(3.3 * 1.008) / r2 - 1, t)
        return float(np.mean(np.clip(hi - lo, 0, None)) / (2 * t))

    samples = 20_000
    result = synthesize(design, top=6, rank_by="yield", spread=SpreadSettings(samples=samples))
    nominal = synthesize(design, top=50)  # the nominal best: the pool the yield ranks
    yields = [c.spread.yield_fraction for c in result.candidates]
    assert yields == sorted(yields, reverse=True)
    assert [c.rank for c in result.candidates] == list(range(1, len(yields) + 1))
    for c in result.candidates:  # four standard errors [HB-sampling-error]
        exact = exact_yield(c.values["R1"], c.values["R2"])
        assert abs(c.spread.yield_fraction - exact) < 4 * math.sqrt(exact * (1 - exact)
                                                                    / samples) + 1e-4
    by_exact = sorted(nominal.candidates, key=lambda c: -exact_yield(c.values["R1"],
                                                                     c.values["R2"]))
    # the two clear leaders by exact yield (0.981, 0.950; then 0.849) come first, and
    # the best by yield is not the nominal best
    assert [c.values for c in result.candidates[:2]] == [c.values for c in by_exact[:2]]
    assert result.candidates[0].values != nominal.candidates[0].values


def test_cli_spread_json_and_plots(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text("""
[design]
temperature = ["-20 C", "60 C"]

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "10k"
package = "0603"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
choose = "E96"
range = ["1k", "100k"]
package = "0603"

[[target]]
voltage = "out"
equals = "5 V"
within = "2%"
""", encoding="utf-8")
    runner = CliRunner()
    result = runner.invoke(cli, ["check", str(path), "--json", "--samples", "5000"])
    doc = json.loads(result.output)
    spread = doc["spread"]
    assert spread["samples"] == 5000 and 0 <= spread["yield"] <= 1
    target = spread["targets"][0]
    assert target["worst_low"] < target["nominal"] < target["worst_high"]
    assert set(target["sensitivities"]) == {"R1", "R2"}
    plots = tmp_path / "plots"
    result = runner.invoke(cli, ["design", str(path), "--samples", "5000", "--plots",
                                 str(plots), "--distribution", "normal"])
    assert result.exit_code == 0, result.output
    assert "worst-case error" in result.output and "yield" in result.output
    names = sorted(p.name for p in plots.iterdir())
    assert "candidates.png" in names and "candidates.svg" in names
    assert any(n.startswith("spread-1-") and n.endswith(".png") for n in names)
    png = (plots / "candidates.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert "<svg" in (plots / "candidates.svg").read_text(encoding="utf-8")
    doc = json.loads(runner.invoke(cli, ["design", str(path), "--json", "--samples",
                                         "2000"]).output)
    assert "spread" in doc["candidates"][0] and doc["rank_by"] == "nominal"


def test_negative_samples_refused():
    runner = CliRunner()
    from conftest import EXAMPLES
    result = runner.invoke(cli, ["check", str(EXAMPLES[0]), "--samples", "-1"])
    assert result.exit_code == 2 and "--samples -1 must be 0" in result.stderr


def _grid(resistors):
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
    from large_network import grid_tables

    return design_from_dict(grid_tables(resistors))


def test_large_network_cuts_monte_carlo_and_says_so():
    # a grid above the sparse threshold: 5,000 samples asked, a budget of 1,500 per
    # resistor runs 1,500; the yield interval is the exact binomial one of the samples run
    # [HB-clopper-pearson] [LIB-scipy-binomtest]
    from scipy.stats import binomtest

    from synth.report.spread import spread_json, spread_text

    design = _grid(80)
    n_r = len(design.resistors)
    settings = SpreadSettings(samples=5000, sample_budget=1500 * n_r, keep_samples=False)
    spread = analyse_spread(design, settings=settings)
    assert spread.samples_run == 1500
    passed = round(spread.yield_fraction * 1500)
    exact = binomtest(passed, 1500).proportion_ci(confidence_level=0.95, method="exact")
    assert spread.yield_interval == pytest.approx((exact.low, exact.high), abs=1e-9)
    text = spread_text(spread, [t.unit for t in design.targets])
    assert "Monte Carlo 1,500 uniform samples" in text
    assert "cut from 5,000 to 1,500 samples" in text
    record = spread_json(spread)
    assert record["samples"] == 5000 and record["samples_run"] == 1500
    # asked within the budget: nothing is cut, nothing said
    small = analyse_spread(design, settings=SpreadSettings(samples=1200, keep_samples=False))
    assert small.samples_run == 1200
    assert "cut from" not in spread_text(small, [t.unit for t in design.targets])


def test_worst_case_names_its_method():
    # every vertex solved for few quantities [HB-bilinear]; with many, the sensitivity
    # corners are reported as neither exact nor a bound [HB-wca]
    from synth.report.spread import spread_json, spread_text

    few = analyse_spread(divider(), settings=SpreadSettings(samples=0))
    assert few.targets[0].method == "vertices" and few.targets[0].exact
    assert spread_json(few)["targets"][0]["worst_case_method"] == "vertices"
    design = _grid(80)
    many = analyse_spread(design, settings=SpreadSettings(samples=0))
    assert all(t.method == "sensitivity corners" and not t.exact for t in many.targets)
    assert spread_json(many)["targets"][0]["worst_case_method"] == "sensitivity corners"
    text = spread_text(many, [t.unit for t in design.targets])
    assert "neither exact nor a bound" in text
    # no sound dissipation bound is claimed
    assert all(p.worst_power_bound == math.inf for p in many.parts)


def test_sensitivity_corner_values_are_attained_in_the_box():
    # the reported worst value is the solve at the reported corner, a point of the box
    # [HB-bilinear]: re-solve that corner by the dense loop solve and compare
    from synth.circuit.measure import Evaluator
    from synth.spread.heating import part_rises
    from synth.spread.variables import SpreadVariables

    design = _grid(80)
    spread = analyse_spread(design, settings=SpreadSettings(samples=0))
    ev = Evaluator(design)
    parts0 = np.array([r.value for r in design.resistors])
    # the box of the parts' own temperatures: each drift over its self-heating rise too
    nominal = ev.evaluate(parts0[None, :], part_values=parts0[None, :])
    var = SpreadVariables(design, ev, rise_c=part_rises(design, ev, nominal.part_power[0]))
    target = spread.targets[0]
    factors = np.array([[var.high[i] if target.low_corner[name] == "+" else var.low[i]
                         for i, name in enumerate(var.names)]])
    r, p, s = var.apply(factors, parts0, ev.nominal_sources)
    dense = Evaluator(design)
    from synth.circuit.mesh import MeshSolver

    dense.solver = MeshSolver(dense.network, parts0)
    value = dense.evaluate(r, s, part_values=p).targets[0, 0]
    assert value == pytest.approx(target.worst_low, rel=1e-9)
    assert target.worst_low <= target.nominal <= target.worst_high
