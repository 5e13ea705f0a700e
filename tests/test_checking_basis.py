"""``rnsynth check`` judges a design on the basis it requires: at nominal values, over the
whole tolerance box (``require = "worst-case"``), or by the Monte Carlo yield's 95 %
lower bound (``require = "yield"``).

Worst case: R1 = R2 = 1M ±5 % across 78 V put 39 V on each at nominal, and
78 × 1.05 / (1.05 + 0.95) = 40.95 V on one at the corner [HB-divider] [CALC-wca-divider],
over an 0603's 50 V × 80 % = 40 V [CP-chip-ratings] [CP-margin].  Yield: the exact yield
of a 10k/10k divider at ±1 % inside ±0.5 % is an integral over one part's deviation
([CALC-yield]'s method), checked to four standard errors [HB-sampling-error].
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.spread.records import SpreadSettings


def string(require, **extra):
    return {
        "design": {"require": require, "package": "0603", "tcr": "0 ppm/C", **extra},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "78 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "1M", "tolerance": "5%"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "1M", "tolerance": "5%"}],
        "target": [{"voltage": "out", "equals": "39 V", "within": "6%"}],
    }


def test_nominal_basis_passes_what_the_worst_case_fails():
    nominal = check(design_from_dict(string("nominal")))
    assert nominal.ok and not nominal.problems
    robust = check(design_from_dict(string("worst-case")))
    assert not robust.ok
    # only the parts' voltage fails, and only at the corners; the window 36.66..41.34 V
    # holds the worst-case output 37.05..40.95 V
    assert [(p.kind, p.subject, p.basis) for p in robust.problems] == [
        ("voltage", "R1", "worst case"), ("voltage", "R2", "worst case")]
    assert robust.problems[0].value == pytest.approx(40.95, rel=1e-9)
    assert robust.problems[0].limit == pytest.approx(40.0, rel=1e-12)
    assert robust.spread.targets[0].worst_low == pytest.approx(37.05, rel=1e-9)


def test_worst_case_basis_from_the_command_line(tmp_path):
    import tomli_w

    path = tmp_path / "string.toml"
    path.write_text(tomli_w.dumps(string("worst-case")), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 1
    assert ("result: FAILS: at worst case, R1 sees 40.95 V, over its allowed 40 V; at worst "
            "case, R2 sees 40.95 V, over its allowed 40 V") in result.output


def divider(require, **extra):
    return design_from_dict({
        "design": {"require": require, "tcr": "0 ppm/C", **extra},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "1%"}],
        "target": [{"voltage": "out", "equals": "6 V", "within": "0.5%"}],
    })


def exact_yield(t=0.01, window=0.005, n=200_000):
    d1 = -t + (np.arange(n) + 0.5) * (2 * t / n)
    a = 10e3 * (1 + d1)
    low, high = 6 * (1 - window), 6 * (1 + window)
    lo = np.maximum(a * low / (12 - low) / 10e3 - 1, -t)
    hi = np.minimum(a * high / (12 - high) / 10e3 - 1, t)
    return float(np.mean(np.clip(hi - lo, 0, None)) / (2 * t))


@pytest.mark.parametrize(("min_yield", "fails"), [("99%", True), ("50%", False)])
def test_yield_basis_judges_the_lower_bound(min_yield, fails):
    samples = 20_000
    result = check(divider("yield", min_yield=min_yield),
                   spread=SpreadSettings(samples=samples, seed=2))
    spread = result.spread
    exact = exact_yield()  # about 0.75
    assert abs(spread.yield_fraction - exact) < 4 * math.sqrt(exact * (1 - exact) / samples)
    assert spread.yield_interval[0] < spread.yield_fraction < spread.yield_interval[1]
    assert (not result.ok) is fails
    if fails:
        (problem,) = result.problems
        assert (problem.kind, problem.basis, problem.limit) == ("yield", "yield", 0.99)
        assert problem.value == spread.yield_interval[0]
        assert str(problem).startswith("the Monte Carlo yield's 95 % lower bound ")
        assert str(problem).endswith(" is short of min_yield 99 %")


def test_yield_basis_from_the_command_line(tmp_path):
    import tomli_w

    data = {
        "design": {"require": "yield", "min_yield": "99%", "tcr": "0 ppm/C"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "1%"}],
        "target": [{"voltage": "out", "equals": "6 V", "within": "0.5%"}],
    }
    path = tmp_path / "divider.toml"
    path.write_text(tomli_w.dumps(data), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path), "--samples", "5000", "--json"])
    assert result.exit_code == 1
    doc = json.loads(result.output)
    assert len(doc["problems"]) == 1
    assert doc["problems"][0].endswith("is short of min_yield 99 %")
