"""Positions of several physical parts: each part judged against its own allowance.

A position filled by parts in series or parallel (R1A, R1B, ...) is compared with the
independent reference checker (``tests/refcheck``), which writes every part out as its own
resistor in the network and solves it [CALC-exhaustive], [CALC-exact-nodal]; the id of the
source in ``tests/REFERENCES.md`` stands beside each check.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner
from refcheck import ratings, scenarios
from refcheck.network import Network
from refcheck.search import Position, evaluate
from refcheck.targets import make_target

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.search.choices import choices_for
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize


@cache
def scenario(name: str) -> dict[str, Any]:
    """One reference scenario of tests/refcheck/scenarios.py, computed once per run."""
    return getattr(scenarios, name)()


def resistors(parts: Any) -> dict[str, Any]:
    return {p.ref: p for p in parts if p.kind == "resistor"}


# --------------------------------------------------------------------------- 3. series strings

def string_design(volts: str, r1_range: list[str], r2_range: list[str], package: str,
                  goal: str) -> Any:
    return design_from_dict({
        "design": {"package": package},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": volts}],
        "resistor": [
            {"ref": "R1", "nodes": ["in", "out"], "choose": "E96", "range": r1_range,
             "combine": "series"},
            {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E96", "range": r2_range}],
        "target": [{"voltage": "out", "equals": goal, "within": "0.5%"}]})


STRINGS = {
    # b. 70 V -> 5 V, R1 of two 0603 parts (each 40 V, 50 mW) [CP-margin]
    "b": ("divider_70v_to_5v", ("70 V", ["1k", "1M"], ["100", "100k"], "0603", "5 V"),
          (Network(vsources=[("V1", "in", "gnd", 70)]),
           [Position("R1", "in", "out", 1e3, 1e6, "E96", parts=2, combine="series",
                     package="0603"),
            Position("R2", "out", "gnd", 100, 100e3, "E96", package="0603")], 5.0)),
    # c. 400 V -> 2.5 V, R1 of two axial-1/2W parts (each 280 V, 250 mW) [CP-hv-divider]
    "c": ("divider_400v_to_2v5",
          ("400 V", ["100k", "10M"], ["1k", "100k"], "axial-1/2W", "2.5 V"),
          (Network(vsources=[("V1", "in", "gnd", 400)]),
           [Position("R1", "in", "out", 100e3, 10e6, "E96", parts=2, combine="series",
                     package="axial-1/2W"),
            Position("R2", "out", "gnd", 1e3, 100e3, "E96", package="axial-1/2W")], 2.5)),
}


@pytest.mark.parametrize("letter", sorted(STRINGS))
def test_series_string_reaches_the_reference_best(letter: str) -> None:
    name, spec, (base, positions, goal) = STRINGS[letter]
    ref = scenario(name)
    best_objective = ref["best"][0]
    assert best_objective == pytest.approx(0, abs=1e-9) and ref["exact_zero_count"] > 1

    result = synthesize(string_design(*spec), top=3)
    assert result.feasible and result.proven_optimal
    best = result.candidates[0]
    # several exact-zero designs tie, so the objective is compared, not the values
    assert best.objective == pytest.approx(best_objective, abs=1e-9)
    assert set(best.values) == {"R1A", "R1B", "R2"}
    assert best.positions["R1"] == pytest.approx(best.values["R1A"] + best.values["R1B"])
    package = spec[3]
    target = make_target("voltage", "out", goal=goal, within=0.005)
    for candidate in result.candidates:
        # refcheck solves the same values with each part written out: same feasibility,
        # objective and per-part stress
        ev = evaluate(base, positions, candidate.values, [target])
        assert ev.feasible
        assert candidate.objective == pytest.approx(ev.objective, abs=1e-9)
        parts = resistors(candidate.parts)
        assert set(parts) == set(ev.parts)
        for ref_name, part in parts.items():
            assert part.position == ("R1" if ref_name.startswith("R1") else "R2")
            mine = ev.parts[ref_name]
            assert part.voltage == pytest.approx(abs(mine.voltage), rel=1e-9)
            assert part.power == pytest.approx(mine.power, rel=1e-9)
            # each physical part against its own package's allowance [CP-margin]
            assert part.allowed_voltage == pytest.approx(ratings.allowed_voltage(package))
            assert part.allowed_power == pytest.approx(ratings.allowed_power(package))
            assert part.voltage <= part.allowed_voltage * (1 + 1e-9)
            assert part.power <= part.allowed_power * (1 + 1e-9)


def test_series_string_check_of_a_named_pair_matches_the_reference() -> None:
    # 442k + 432k over refcheck's R2 = 5.49k from 400 V: 201.03 V and 196.48 V, each under
    # the 280 V an axial 1/2 W part may see [HB-divider], [CP-margin].
    ref = scenario("divider_400v_to_2v5")
    assert ref["pair_feasible"] and ref["pair_r2"] == 5490.0
    by_value = {432e3: ref["pair_part_voltages"]["R1A"], 442e3: ref["pair_part_voltages"]["R1B"]}
    power_by_value = {432e3: ref["pair_part_powers"]["R1A"],
                      442e3: ref["pair_part_powers"]["R1B"]}
    assert by_value[442e3] == pytest.approx(201.03, abs=0.01)
    assert by_value[432e3] == pytest.approx(196.48, abs=0.01)
    design = string_design(*STRINGS["c"][1])
    result = check(design, values={"R1A": 442e3, "R1B": 432e3, "R2": ref["pair_r2"]})
    assert result.ok and not result.problems
    parts = resistors(result.parts)
    for name in ("R1A", "R1B"):
        part = parts[name]
        assert part.voltage == pytest.approx(by_value[part.value], rel=1e-9)
        assert part.power == pytest.approx(power_by_value[part.value], rel=1e-9)
        assert part.allowed_voltage == pytest.approx(ratings.allowed_voltage("axial-1/2W"))
        assert part.voltage_utilization == pytest.approx(by_value[part.value] / 280, rel=1e-9)
    (target,) = result.targets
    assert target.value == pytest.approx(ref["pair_vout"], rel=1e-9)
    assert target.error == pytest.approx(-ref["pair_error"], rel=1e-9)  # 2.4969 V is low


# --------------------------------------------------------------------------- 4. parallel shunt

SHUNT = """
[design]
package = "2512"
ambient = "AMBIENT"

[[source]]
ref = "I1"
kind = "current"
from = "gnd"
to = "a"
value = "20 A"

[[resistor]]
ref = "R1"
nodes = ["a", "gnd"]
value = ["4.3m", "4.3m"]
combine = "parallel"
tolerance = "1%"

[[target]]
voltage = "a"
at_most = "50 mV"
"""


def shunt(tmp_path: Path, ambient: str = "25 C") -> tuple[Path, Any]:
    import tomllib

    path = tmp_path / "shunt.toml"
    text = SHUNT.replace("AMBIENT", ambient)
    path.write_text(text, encoding="utf-8")
    return path, design_from_dict(tomllib.loads(text), origin=str(path))


@pytest.mark.parametrize(("ambient", "key"), [("25 C", "part_use_25c"),
                                              ("70 C", "part_use_70c")])
def test_parallel_shunt_parts_each_use_their_own_allowance(tmp_path, ambient, key) -> None:
    # 20 A through two 4.3 mohm parts: 10 A and 0.43 W each; a 2512 part may dissipate
    # 1 W * 50 % = 0.5 W up to its 70 °C knee, so each uses 0.86, not the whole
    # position's 0.86 W against one part's allowance (1.72) [CP-derating], [CP-margin].
    ref = scenario("shunt_20a")
    assert ref[key] == pytest.approx({"R1A": 0.86, "R1B": 0.86})
    assert ref["wrong_position_use"] == pytest.approx(1.72)
    _, design = shunt(tmp_path, ambient)
    result = check(design)
    assert result.ok and not result.problems
    parts = resistors(result.parts)
    assert set(parts) == {"R1A", "R1B"}
    for name, part in parts.items():
        assert part.position == "R1"
        assert part.current == pytest.approx(10.0, rel=1e-12)
        assert part.power == pytest.approx(ref["part_nominal_power"][name], rel=1e-12)
        assert part.utilization == pytest.approx(ref[key][name], rel=1e-12)
    assert not [c for c in result.cautions if "R1" in c]


def test_parallel_shunt_cli_shows_no_over_allowance_caution(tmp_path) -> None:
    path, _ = shunt(tmp_path)
    result = CliRunner().invoke(cli, ["check", str(path), "--samples", "0"])
    assert result.exit_code == 0, result.output
    assert "result: all targets met, all parts within their allowance" in result.output
    assert "Caution" not in result.output and "WARNING" not in result.output
    assert "86%" in result.output and "172%" not in result.output


def _shunt_with_tcr(tmp_path: Path, tcr: str) -> Any:
    import tomllib

    text = SHUNT.replace("AMBIENT", "25 C").replace(
        'tolerance = "1%"', f'tolerance = "1%"\ntcr = "{tcr}"')
    return design_from_dict(tomllib.loads(text), origin=str(tmp_path / "shunt.toml"))


def test_parallel_shunt_yield_is_judged_per_part(tmp_path) -> None:
    # Each part's worst dissipation over its ±1 % box is 0.4343 W, under 0.5 W, so every
    # Monte Carlo sample passes: refcheck's seeded yield is 1 [CALC-yield].  The
    # reference checker has no self-heating, so the parts here have no TCR.
    ref = scenario("shunt_20a")
    assert ref["mc_yield"] == 1.0
    design = _shunt_with_tcr(tmp_path, "0 ppm/C")
    result = check(design, spread=SpreadSettings(samples=4000, seed=5))
    spread = result.spread
    assert spread is not None and spread.yield_interval is not None
    assert spread.yield_fraction == pytest.approx(ref["mc_yield"])
    # all 4000 pass: the 95 % lower bound is 0.025**(1/4000) [HB-clopper-pearson]
    assert spread.yield_interval[0] == pytest.approx(0.025 ** (1 / 4000), rel=1e-6)
    by_ref = {p.ref: p for p in spread.parts}
    for name in ("R1A", "R1B"):
        assert by_ref[name].worst_power == pytest.approx(ref["part_worst_power"][name],
                                                         rel=1e-9)
        assert by_ref[name].utilization == pytest.approx(
            ref["part_worst_power"][name] / ref["allowance_25c"], rel=1e-9)


def test_parallel_shunt_worst_power_takes_each_parts_self_heating(tmp_path) -> None:
    # With a TCR, each part's worst resistance also drifts over its own rise
    # dT = P * Rth = 0.43 W * 85 K/W [HB-self-heating] [CP-thermal-resistance], so under
    # the 20 A source (P = I^2 R [HB-ohm]) its worst dissipation is refcheck's box worst
    # times 1 + TCR * dT.
    ref = scenario("shunt_20a")
    rise_k = ref["part_nominal_power"]["R1A"] * 85.0
    design = _shunt_with_tcr(tmp_path, "100 ppm/C")
    result = check(design, spread=SpreadSettings(samples=0))
    assert result.spread is not None
    by_ref = {p.ref: p for p in result.spread.parts}
    for name in ("R1A", "R1B"):
        assert by_ref[name].worst_power == pytest.approx(
            ref["part_worst_power"][name] * (1 + 100e-6 * rise_k), rel=1e-9)


# --------------------------------------------------------------------------- 5. stock shelf

def test_stock_series_position_offers_the_reference_sums(tmp_path) -> None:
    # Shelf 4.7k, 10k, 22k; a series position 10k..20k lets each part lie in 1k..20k (22k
    # out) and offers 4.7k + 10k = 14.7k and 10k + 10k = 20k (9.4k is below the range)
    # [CALC-exhaustive].
    ref = scenario("stock_series_offer")
    assert ref["effective_values"] == [14700.0, 20000.0]
    (tmp_path / "shelf.csv").write_text("value\n4.7k\n10k\n22k\n", encoding="utf-8")
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "shelf.csv",
                      "range": ["10k", "20k"], "combine": "series"}]},
        origin=str(tmp_path / "design.toml"))
    choices = choices_for(design.resistors[0], design.origin)
    assert choices.values.tolist() == pytest.approx(ref["effective_values"])
    assert 14700.0 in choices.values.tolist()
    offers = sorted((float(v), tuple(sorted(p.tolist())))
                    for v, p in zip(choices.values, choices.parts, strict=True))
    assert offers == sorted(ref["offers"])


# --------------------------------------------------------------------------- 6. check names

def test_check_refuses_a_name_the_design_lacks() -> None:
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "70 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E96",
                      "range": ["1k", "1M"], "combine": "series"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "100k"}],
        "target": [{"voltage": "out", "equals": "5 V"}]})
    with pytest.raises(DesignError, match="R9"):
        check(design, values={"R9": 1000})
    with pytest.raises(DesignError, match="R1B"):
        check(design, values={"R1A": 1000})
    # every part of the position, or its effective value, is accepted
    both = check(design, values={"R1A": 650e3, "R1B": 650e3})
    effective = check(design, values={"R1": 1.3e6})
    assert both.values == effective.values == {"R1A": 650e3, "R1B": 650e3, "R2": 100e3}
    # 70 V * 100k / 1.4M = 5 V [HB-divider]
    assert both.targets[0].value == pytest.approx(5.0, rel=1e-12)


def test_check_refuses_a_part_name_on_a_single_part_position() -> None:
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "300k"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "100k"}]})
    with pytest.raises(DesignError, match="R9"):
        check(design, values={"R9": 1000})
    with pytest.raises(DesignError, match="R1A"):
        check(design, values={"R1A": 1000})
