"""``rnsynth map-range``: the offset-and-scale network against its closed form.

By superposition [HB-superposition] out = VIN·G1/ΣG + VREF·G2/ΣG: gain G1/ΣG and offset
VREF·G2/ΣG.  With R3 fixed the two ends give two linear equations in G1 and G2, solved
here exactly by sympy over the rationals [LIB-sympy] as the reference.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.synthesis import synthesize
from synth.templates.passive import QuickSettings
from synth.templates.ranges import map_range_tables


def exact_r1_r2(r3, ends=((-10, Fraction(1, 10)), (10, Fraction(16, 5))), vref=Fraction(33, 10)):
    """R1 and R2 that put both ends exactly, with R3 given [HB-superposition] [LIB-sympy]."""
    g1, g2 = sympy.symbols("g1 g2", positive=True)
    g3 = 1 / sympy.Rational(Fraction(r3))
    equations = [sympy.Eq((vin * g1 + vref * g2) / (g1 + g2 + g3), out) for vin, out in ends]
    solution = sympy.solve(equations, [g1, g2], dict=True, rational=True)[0]
    return float(1 / solution[g1]), float(1 / solution[g2])


def test_the_ideal_network_meets_the_closed_form():
    design = design_from_dict(map_range_tables("-10 V:10 V", "0.1 V:3.2 V", QuickSettings(),
                                               "3.3 V"))
    result = synthesize(design, top=1)
    ideal = result.ideal
    r1, r2 = exact_r1_r2(ideal["R3"])
    assert ideal["R1"] == pytest.approx(r1, rel=1e-6)
    assert ideal["R2"] == pytest.approx(r2, rel=1e-6)
    # the best standard design's ends, by superposition
    best = result.candidates[0]
    g1, g2, g3 = (1 / best.values[k] for k in ("R1", "R2", "R3"))
    for name, vin in (("VIN low", -10.0), ("VIN high", 10.0)):
        assert best.check.nodes[f"out@{name}"] == pytest.approx(
            (vin * g1 + 3.3 * g2) / (g1 + g2 + g3), rel=1e-12)
    assert result.proven_optimal and result.feasible


def test_a_loop_current_goes_through_a_burden():
    tables = map_range_tables("4 mA:20 mA", "0.6 V:3.0 V", QuickSettings())
    assert [r["ref"] for r in tables["resistor"]] == ["RB", "R1", "R3"]
    best = synthesize(design_from_dict(tables), top=1).candidates[0]
    rb, r1, r3 = (best.values[k] for k in ("RB", "R1", "R3"))
    transfer = rb * (r1 + r3) / (rb + r1 + r3) * r3 / (r1 + r3)  # [HB-loaded-divider]
    assert best.check.nodes["out@IIN low"] == pytest.approx(4e-3 * transfer, rel=1e-12)
    assert abs(best.check.nodes["out@IIN high"] / 3.0 - 1) <= 0.01


def test_an_end_at_zero_gets_an_absolute_window():
    tables = map_range_tables("0 V:10 V", "0 V:2 V", QuickSettings())
    assert tables["transfer"][0]["within"] == "0.02 V"
    assert "VREF" not in {s["ref"] for s in tables["source"]}


@pytest.mark.parametrize("args, fragment", [
    (("-10 V", "0.1 V:3.2 V", "3.3 V"), "needs two ends separated by a colon"),
    (("1 V:1 V", "0.1 V:3.2 V", "3.3 V"), "has two equal ends"),
    (("1 W:2 W", "0.1 V:3.2 V", "3.3 V"), "is not a range in V or A"),
    (("0 V:10 V", "3 V:0 V", None), "cannot invert"),
    (("0 V:1 V", "0 V:2 V", None), "only scales a voltage down"),
    (("-10 V:10 V", "0.1 V:3.2 V", None), "give --reference"),
    (("-10 V:10 V", "0.1 V:3.2 V", "-3.3 V"), "offset / reference between 0 and"),
    (("-10 V:10 V", "0.1 V:3.2 V", "x"), "--reference:"),
])
def test_impossible_mappings_are_refused(args, fragment):
    with pytest.raises(DesignError) as caught:
        map_range_tables(args[0], args[1], QuickSettings(), args[2])
    assert fragment in str(caught.value)


def test_the_command_runs_and_saves_a_design_that_reads_back(tmp_path):
    saved = tmp_path / "mapper.toml"
    result = CliRunner().invoke(cli, ["map-range", "--input", "-10 V:10 V", "--output",
                                      "0.1 V:3.2 V", "--reference", "3.3 V", "--samples", "0",
                                      "--top", "1", "--save", str(saved)])
    assert result.exit_code == 0, result.output
    assert "signal output @ VIN high" in result.output
    assert "proven optimal" in result.output
    again = CliRunner().invoke(cli, ["design", str(saved), "--samples", "0", "--top", "1"])
    assert again.exit_code == 0
    refused = CliRunner().invoke(cli, ["map-range", "--input", "0 V:1 V", "--output",
                                       "1 V:0 V"])
    assert refused.exit_code == 2 and "cannot invert" in refused.output
