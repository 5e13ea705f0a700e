"""synthesize() under a time limit: what is cut is recorded, a cut result is unproven, and
candidates are still returned, even with many free parts.

No test measures wall time (the figures are in benchmarks/limits.py): each either hands
synthesize a deadline that has already passed, or a fake clock.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.deadline import Deadline
from synth.design.reader import design_from_dict
from synth.spread.records import SpreadSettings
from synth.synthesis import _fitted_spread, synthesize

from conftest import ROOT


def divider(series="E24"):
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": series,
                      "range": ["10k", "1M"], "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": series,
                      "range": ["10k", "1M"], "package": "0603"}],
        "target": [{"voltage": "out", "equals": "3 V", "within": "2%"},
                   {"current": "V1", "at_most": "200 uA"}]})


def string(parts):
    """A reference across a string of ``parts`` free resistors, a goal at every tap."""
    nodes = [f"t{k}" for k in range(parts)] + ["gnd"]
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "t0", "minus": "gnd",
                    "value": "5 V"}],
        "resistor": [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": "E24",
                      "range": ["100", "100k"]} for k in range(parts)],
        "target": [{"voltage": f"t{k}", "equals": f"{5 * 10 ** (-1.5 * k / 20):.4f} V",
                    "within": "5%"} for k in range(1, parts)]})


def expired():
    return Deadline(1.0, start=-10.0)


def test_a_passed_deadline_still_returns_candidates_cut_and_unproven():
    # E96: 193 x 193 combinations, more than a space scored outright in one run
    result = synthesize(divider("E96"), spread=SpreadSettings(samples=20_000),
                        deadline=expired())
    assert result.candidates and result.feasible and result.candidates[0].feasible
    assert not result.proven_optimal
    stages = [c.stage for c in result.cuts]
    assert "search" in stages and "Monte Carlo" in stages
    mc = next(c for c in result.cuts if c.stage == "Monte Carlo")
    assert (mc.asked, mc.done) == (20_000, 0)
    assert result.time_limit_s == 1.0


def test_a_space_scored_outright_in_one_run_is_searched_whole_past_a_deadline():
    # E24: 49 x 49 combinations, every one scored in the search's first (and only) run,
    # as the branch and bound always runs its first round: nothing of the search is cut
    result = synthesize(divider(), spread=SpreadSettings(samples=20_000), deadline=expired())
    assert result.candidates and result.feasible
    assert "search" not in [c.stage for c in result.cuts]
    assert "Monte Carlo" in [c.stage for c in result.cuts] and not result.proven_optimal
    assert result.evaluated >= result.combinations == 49 * 49


def test_without_a_limit_nothing_is_cut_and_the_search_is_proven():
    result = synthesize(divider(), spread=SpreadSettings(samples=2_000))
    assert result.cuts == () and result.proven_optimal and result.time_limit_s is None


def test_a_cut_run_keeps_the_unlimited_best_on_a_small_space():
    # the local descent from the ideal values finds the best of an unlimited run
    free = synthesize(divider())
    cut = synthesize(divider(), deadline=expired())
    assert cut.candidates[0].objective == free.candidates[0].objective


def test_a_limited_run_on_twenty_free_parts_returns_feasible_candidates():
    design = string(20)
    result = synthesize(design, top=3, deadline=expired())
    assert result.candidates and result.feasible
    assert all(c.feasible for c in result.candidates)
    assert not result.proven_optimal and result.cuts[0].stage == "search"


class Steps:
    """A clock that reads the given times, then stays at the last."""

    def __init__(self, *times):
        self.times = list(times)

    def __call__(self):
        return self.times.pop(0) if len(self.times) > 1 else self.times[0]


def test_monte_carlo_shrinks_to_the_samples_its_pilot_says_fit():
    design = divider()
    candidate = synthesize(design, top=1).candidates[0]
    # the pilot of 1,000 samples takes 1 s by this clock: 1 ms a sample, and 4 s left of 5
    deadline = Deadline(100.0, start=0.0, clock=Steps(0.0, 1.0))
    from synth.circuit.measure import Evaluator

    settings = SpreadSettings(samples=100_000, keep_samples=False)
    shrunk = _fitted_spread(design, Evaluator(design), candidate, settings, 5.0, deadline)
    spread = shrunk.spread
    assert spread.samples_run == 4_000 and spread.settings.samples == 100_000
    assert spread.samples_cut == "time limit"
    assert [(c.stage, c.asked, c.done) for c in deadline.cuts] == [
        ("Monte Carlo", 100_000, 4_000)]
    # enough time for every sample: nothing is cut
    roomy = Deadline(100.0, start=0.0, clock=Steps(0.0, 0.001))
    whole = _fitted_spread(design, Evaluator(design), candidate,
                           replace_samples(settings, 5_000), 50.0, roomy)
    assert whole.spread.samples_run == 5_000 and whole.spread.samples_cut is None
    assert roomy.cuts == ()


def replace_samples(settings, samples):
    from dataclasses import replace

    return replace(settings, samples=samples)


def test_the_cli_reports_the_cuts_in_text_and_json():
    path = ROOT / "examples" / "vent_sensor.toml"
    done = CliRunner().invoke(cli, ["design", str(path), "--time-limit", "1e-6", "--json",
                                    "--quiet"])
    assert done.exit_code == 0, done.output
    doc = json.loads(done.stdout)
    assert doc["time_limit_s"] == 1e-6 and not doc["proven_optimal"]
    # its 49 x 49 combinations are scored in one run: only the spread is cut
    assert "Monte Carlo" in {c["stage"] for c in doc["cuts"]}
    assert doc["candidates"] and doc["feasible"]
    text = CliRunner().invoke(cli, ["design", str(path), "--time-limit", "1e-6", "--quiet"])
    assert "cut to fit the time limit of 1e-06 s:" in text.stdout
    assert "NOT proven optimal" in text.stdout
    assert "Monte Carlo: skipped: 0 of 100,000 samples run" in text.stdout


def test_bom_hands_its_time_limit_to_every_network(monkeypatch):
    # every network's synthesis gets a share of the board's limit, and the cuts it
    # reports reach the BOM's notes (recorded, not timed: a small network may finish
    # within any share on a fast or warmed-up machine)
    from dataclasses import replace

    import synth.bom.build as build
    from synth.deadline import Cut

    limits: list[float | None] = []
    real = build.synthesize

    def recording(design, **options):  # type: ignore[no-untyped-def]
        limits.append(options.get("time_limit_s"))
        result = real(design, **options)
        return replace(result, cuts=(Cut("search", "stopped after 1 of 2 rounds"),))

    monkeypatch.setattr(build, "synthesize", recording)
    board = ROOT / "examples" / "greenhouse_board.toml"
    done = CliRunner().invoke(cli, ["bom", str(board), "--format", "json", "--quiet",
                                    "--time-limit", "2", "--jobs", "1"])
    assert done.exit_code == 0, done.output
    assert limits and all(limit is not None and 0 < limit <= 2 for limit in limits), limits
    notes = json.loads(done.stdout)["notes"]
    assert any("cut by the time limit: search:" in n for n in notes), notes


def test_local_seeds_reach_the_exhaustive_best_of_a_small_case():
    # [CALC-exhaustive]: the descent's end point is the best of every combination here
    from brute import exhaustive

    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.search.ideal import ideal_values
    from synth.search.local import local_seeds
    from synth.search.problem import SearchProblem

    design = divider()
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    problem = SearchProblem(design, evaluator, choices, relaxed=False)
    seeds = local_seeds(problem, ideal_values(design, evaluator))
    ranked, _ = problem.score(seeds[:1])
    objectives, _ = exhaustive(design)
    np.testing.assert_allclose(ranked.objective, objectives[:1], rtol=1e-9, atol=1e-12)


class Ticks:
    """A clock that only the re-check moves: ``per_candidate_s`` for each candidate it
    re-checks (see :func:`slow_recheck`)."""

    def __init__(self):
        self.now = 0.0

    def __call__(self):
        return self.now


def slow_recheck(monkeypatch, clock, per_candidate_s):
    """Make every re-checked candidate cost ``per_candidate_s`` on ``clock``."""
    import synth.synthesis as synthesis

    real = synthesis._checked

    def checked(design, evaluator, choices, problem, indices, ranked_before):
        clock.now += per_candidate_s * len(indices)
        return real(design, evaluator, choices, problem, indices, ranked_before)

    monkeypatch.setattr(synthesis, "_checked", checked)


def loose_divider():
    """A divider whose window admits hundreds of E24 pairs (common practice: any pair of
    about 3:1 gives 3 V from 12 V; the window is ±20 %)."""
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["100", "1M"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
                      "range": ["100", "1M"]}],
        "target": [{"voltage": "out", "equals": "3 V", "within": "20%"}]})


def test_the_ranking_keeps_only_the_candidates_whose_re_check_fits(monkeypatch):
    unlimited = synthesize(loose_divider(), top=1000)
    assert len(unlimited.candidates) > 100  # the space has more than the limit lets through
    import synth.synthesis

    monkeypatch.setattr(synth.synthesis, "_RANKED_FREELY", 64)  # so 1,000 asked is many
    clock = Ticks()
    slow_recheck(monkeypatch, clock, 0.01)
    deadline = Deadline(10.0, start=0.0, clock=clock)
    result = synthesize(loose_divider(), top=1000, deadline=deadline)
    # the probe of 32 candidates took 0.32 s: 9.68 s left, 30 % after the search, half of
    # it for re-checking and showing at 0.02 s a candidate
    kept = int(9.68 * 0.3 * 0.5 / 0.02)
    ranking = next(c for c in result.cuts if c.stage == "ranking")
    assert (ranking.asked, ranking.done) == (1000, kept) and len(result.candidates) == kept
    assert [c.values for c in result.candidates] == [
        c.values for c in unlimited.candidates[:kept]]
    assert not result.proven_optimal


def test_a_ranking_the_search_does_not_fill_is_not_reported_as_cut(monkeypatch):
    import synth.synthesis

    monkeypatch.setattr(synth.synthesis, "_RANKED_FREELY", 64)
    clock = Ticks()
    slow_recheck(monkeypatch, clock, 1e-6)
    result = synthesize(divider(), top=1000, deadline=Deadline(10.0, start=0.0, clock=clock))
    assert "ranking" not in [c.stage for c in result.cuts] and result.proven_optimal


def test_the_re_check_stops_where_its_share_of_the_time_ends(monkeypatch):
    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.synthesis import _candidates

    clock = Ticks()
    slow_recheck(monkeypatch, clock, 1 / 64)
    design = loose_divider()
    choices = [choices_for(r) for r in design.free_resistors]
    rows = np.array([[a, b] for a in range(20) for b in range(25)], dtype=np.int64)
    deadline = Deadline(4.0, start=0.0, clock=clock)
    out = _candidates(design, Evaluator(design), choices, rows, deadline)
    # half of 4 s: a first block of 32 measures 1/64 s a candidate (0.5 s, as much again
    # kept to show them), then the 1 s left fits 32 more at 1/32 s each
    assert len(out) == 64 and [c.rank for c in out] == list(range(1, 65))
    assert [(c.stage, c.asked, c.done) for c in deadline.cuts] == [("re-check", 500, 64)]
    assert deadline.reserved_s == 1.0


def test_the_best_candidate_is_re_checked_however_late(monkeypatch):
    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.synthesis import _candidates

    design = loose_divider()
    choices = [choices_for(r) for r in design.free_resistors]
    rows = np.zeros((5, 2), dtype=np.int64)
    out = _candidates(design, Evaluator(design), choices, rows, expired())
    assert len(out) == 1 and out[0].rank == 1


def test_a_few_candidates_asked_are_ranked_without_measuring_their_re_check(monkeypatch):
    clock = Ticks()
    slow_recheck(monkeypatch, clock, 0.01)
    result = synthesize(loose_divider(), top=1000, deadline=Deadline(10.0, start=0.0,
                                                                     clock=clock))
    # no probe: the re-check alone moved the clock, by its first block of 32, then blocks
    # fitted to half of the 10 s (0.01 s to re-check a candidate, as much to show it)
    assert "ranking" not in [c.stage for c in result.cuts]
    assert len(result.candidates) == 250 and clock.now == pytest.approx(2.5)


def test_without_seeds_the_re_check_is_measured_on_the_lowest_choices(monkeypatch):
    from synth.circuit.measure import Evaluator
    from synth.search.choices import choices_for
    from synth.synthesis import _ranked_top

    clock = Ticks()
    slow_recheck(monkeypatch, clock, 0.01)
    design = loose_divider()
    choices = [choices_for(r) for r in design.free_resistors]
    deadline = Deadline(10.0, start=0.0, clock=clock)
    # 32 re-checks at 0.01 s: 9.68 s left, 30 % after the search, half for re-checking
    assert _ranked_top(design, Evaluator(design), choices, None, 5000, 64, deadline) == (
        int(9.68 * 0.3 * 0.5 / 0.02), pytest.approx(0.01))
    assert _ranked_top(design, Evaluator(design), choices, None, 5000, 64,
                       Deadline(None)) == (5000, None)
