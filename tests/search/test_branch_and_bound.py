"""The branch-and-bound search gives the same optimum as an independent exhaustive search.

The brute force (tests/brute.py) [CALC-exhaustive] enumerates every
combination and solves each by nodal analysis [HB-mna]; objectives are
compared with a small tolerance since several designs can be exact and their
order is then the documented tie-break.
"""

from __future__ import annotations

import numpy as np
import pytest
from brute import combinations_of, exhaustive

from synth.design.reader import design_from_dict
from synth.synthesis import synthesize
from synth.templates.passive import QuickSettings, pad_tables, regulator_tables


def supply(value="12 V"):
    return [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd", "value": value}]


def free(ref, nodes, series, low, high, **extra):
    return {"ref": ref, "nodes": nodes, "choose": series, "range": [low, high], **extra}


PROBLEMS = {
    "unloaded divider": {
        "source": supply(),
        "resistor": [free("R1", ["in", "out"], "E96", "1k", "100k", package="0603"),
                     free("R2", ["out", "gnd"], "E96", "1k", "100k", package="0603")],
        "target": [{"voltage": "out", "equals": "3.3 V", "within": "1%"}],
    },
    "loaded divider": {
        "source": supply("24 V"),
        "resistor": [free("R1", ["in", "out"], "E96", "100", "100k"),
                     free("R2", ["out", "gnd"], "E96", "100", "100k"),
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": "4k7"}],
        "target": [{"voltage": "out", "equals": "5 V"},
                   {"current": "V1", "at_most": "6 mA"}],
    },
    "two-tap chain with a current budget": {
        "source": supply(),
        "resistor": [free("R1", ["in", "t1"], "E24", "1k", "100k", package="0402"),
                     free("R2", ["t1", "t2"], "E24", "1k", "100k", package="0402"),
                     free("R3", ["t2", "gnd"], "E24", "1k", "100k", package="0402")],
        "target": [{"voltage": "t1", "equals": "5 V"}, {"voltage": "t2", "equals": "1.8 V"},
                   {"current": "V1", "at_most": "0.5 mA"}],
    },
    "five-resistor bridge": {
        "source": supply("5 V"),
        "resistor": [free("R1", ["in", "a"], "E6", "100", "10k"),
                     free("R2", ["in", "b"], "E6", "100", "10k"),
                     free("R3", ["a", "gnd"], "E6", "100", "10k"),
                     free("R4", ["b", "gnd"], "E6", "100", "10k"),
                     free("R5", ["a", "b"], "E6", "100", "10k")],
        "target": [{"voltage": ["a", "b"], "equals": "0.8 V"},
                   {"voltage": "a", "equals": "2.9 V"},
                   {"current": "R5", "at_least": "50 uA"}],
    },
    "series-combined position": {
        "source": supply("10 V"),
        "resistor": [free("R1", ["in", "out"], "E12", "1k", "22k", combine="series"),
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "3.14 V"}],
    },
}


def quick_problems():
    settings = QuickSettings(series="E96", value_range="1k:100k")
    feedback = regulator_tables("feedback", "0.6 V", "3.3 V", settings, pin_current="1 uA",
                                max_current="200 uA")
    # 0805: an 0603 RBOT would have to dissipate about 54 mW against its 50 mW allowance
    adjust = regulator_tables("adjust", "1.25 V", "12 V", QuickSettings(
        series="E48", value_range="100:10k", package="0805"), pin_current="50 uA",
        min_current="5 mA")
    pad = pad_tables("50", "6 dB", "T", QuickSettings(series="E48", value_range="10:1k"))
    return {"feedback regulator with pin current": feedback,
            "adjustable regulator with adjust current": adjust, "T pad": pad}


ALL = {**PROBLEMS, **quick_problems()}


@pytest.mark.parametrize("name", list(ALL))
def test_same_optimum_as_exhaustive_search(name):
    design = design_from_dict(ALL[name], origin=name)
    result = synthesize(design, top=5)
    # the independent exhaustive search, objectives to rtol 1e-9 [CALC-exhaustive]
    objectives, total = exhaustive(design)
    assert total == result.combinations == combinations_of(design)
    assert result.proven_optimal
    assert len(objectives) > 0 and result.feasible
    got = [c.objective for c in result.candidates]
    want = objectives[: len(got)]
    np.testing.assert_allclose(got, want, rtol=1e-9, atol=1e-12)
    assert len(got) == min(5, len(objectives))
    assert all(c.feasible for c in result.candidates)
    # far fewer candidates solved than the catalogue product holds (for the larger spaces)
    if total > 100_000:
        assert result.evaluated < total / 3


def test_millions_of_combinations():
    # the T pad over E96 from 10 to 1k: 193^3 = 7.2 million combinations [CALC-exhaustive];
    # exhaustive check by the published T-pad relations [HB-pad] (independent of any
    # network solve): with both ports terminated in Z0, Rin = R1 + R2 || (R3 + Z0),
    # Rout = R3 + R2 || (R1 + Z0),
    # V(out)/V(in) = [R2 || (R3 + Z0)] / [R1 + R2 || (R3 + Z0)] * Z0 / (R3 + Z0).
    design = design_from_dict(pad_tables("50", "10 dB", "T", QuickSettings(
        series="E96", value_range="10:1k")), origin="pad")
    result = synthesize(design, top=3)
    from synth.catalog.series import series_values
    values = series_values("E96", 10, 1000)
    r1, r2, r3 = np.meshgrid(values, values, values, indexing="ij", sparse=True)
    z0 = 50.0

    def par(a, b):
        return a * b / (a + b)

    rin = r1 + par(r2, r3 + z0)
    rout = r3 + par(r2, r1 + z0)
    gain = par(r2, r3 + z0) / rin * z0 / (r3 + z0)
    # the ports' match is the resistance the pad presents (its own termination left
    # out), the loss -20 log10 of the voltage ratio, in dB
    loss_db = -20 * np.log10(gain)
    err = np.maximum(np.maximum(np.abs(rin - z0) / z0, np.abs(rout - z0) / z0),
                     np.abs(loss_db - 10) / 10)
    assert result.combinations == err.size == 193 ** 3
    assert result.proven_optimal
    assert result.candidates[0].objective == pytest.approx(float(err.min()), rel=1e-9)
    assert result.evaluated < err.size / 100


def test_ranking_is_deterministic():
    design = design_from_dict(PROBLEMS["two-tap chain with a current budget"])
    first = [c.values for c in synthesize(design).candidates]
    second = [c.values for c in synthesize(design).candidates]
    assert first == second and len(first) == 10


def test_tie_break_prefers_fewer_values_then_coarser_series_then_lower_supply_current():
    # 12 V to 6 V: every R1 = R2 is exact; one distinct value beats two, values of the
    # coarsest series (E3: 1.0 2.2 4.7) come first, and among those the lowest supply
    # current (the largest value) first
    design = design_from_dict({
        "source": supply(),
        "resistor": [free("R1", ["in", "out"], "E12", "1k", "10k"),
                     free("R2", ["out", "gnd"], "E12", "1k", "10k")],
        "target": [{"voltage": "out", "equals": "6 V"}],
    })
    ranked = synthesize(design, top=4).candidates
    assert [c.values for c in ranked] == [
        {"R1": 10e3, "R2": 10e3}, {"R1": 4.7e3, "R2": 4.7e3}, {"R1": 2.2e3, "R2": 2.2e3},
        {"R1": 1e3, "R2": 1e3}]
    assert all(c.objective == pytest.approx(0, abs=1e-15) for c in ranked)


def test_bounds_solved_in_small_runs_equal_those_solved_at_once(monkeypatch):
    # the vertex extremes are joined run by run: any run length gives the same bounds
    import synth.search.problem as problem_module
    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.search.problem import SearchProblem

    design = design_from_dict(ALL["five-resistor bridge"], origin="bridge")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    problem = SearchProblem(design, Evaluator(design), choices, relaxed=False)
    rng = np.random.default_rng(3)
    sizes = np.array([len(c) for c in choices])
    a, b = (rng.integers(0, sizes, size=(40, len(sizes))) for _ in range(2))
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    whole = problem.box_bounds(lo, hi)
    monkeypatch.setattr(problem_module, "SOLVE_ROWS", 8)  # 32 vertices a box: runs of 8
    runs = problem.box_bounds(lo, hi)
    np.testing.assert_array_equal(whole[0], runs[0])
    np.testing.assert_array_equal(whole[1], runs[1])


def test_candidates_scored_in_small_runs_give_the_same_optimum(monkeypatch):
    import synth.search.enumerate as enumerate_module

    design = design_from_dict(ALL["two-tap chain with a current budget"], origin="chain")
    want = synthesize(design, top=5)
    monkeypatch.setattr(enumerate_module, "SOLVE_ROWS", 7)
    got = synthesize(design, top=5)
    assert got.proven_optimal
    assert [c.values for c in got.candidates] == [c.values for c in want.candidates]


def test_a_full_store_of_open_boxes_stops_the_search_unproven(monkeypatch):
    import synth.search.branch_and_bound as bb
    from synth.circuit.measure import Evaluator
    from synth.search.branch_and_bound import search
    from synth.search.choices import choices_for

    design = design_from_dict(ALL["five-resistor bridge"], origin="bridge")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    monkeypatch.setattr(bb, "_OPEN_BYTES", 0)
    monkeypatch.setattr(bb, "_BATCH_BOXES", 2)  # at most 4 x 2 open boxes
    outcome = search(design, Evaluator(design), choices, top=3)
    assert not outcome.proven and outcome.stopped == "memory"
    assert outcome.settled < 1.0


def test_a_search_out_of_time_inside_its_first_box_is_unproven():
    from synth.circuit.measure import Evaluator
    from synth.search.branch_and_bound import search
    from synth.search.choices import choices_for

    design = design_from_dict(ALL["five-resistor bridge"], origin="bridge")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    outcome = search(design, Evaluator(design), choices, top=3, time_limit_s=0.0)
    assert not outcome.proven and outcome.stopped == "time limit"
