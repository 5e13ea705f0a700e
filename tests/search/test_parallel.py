"""The search cut in slices gives the same ranked candidates as one search, and the
exhaustive search's objectives [CALC-exhaustive].

Most checks run the slices in this process (the slicing, the seeds moved into each
slice, the shared bar and the merge are what is checked); two run them on two worker
processes.  The trial is cut to one round so that small designs take the sliced path.
"""

from __future__ import annotations

import numpy as np
import pytest
from brute import exhaustive

import synth.search.parallel as sliced
from search.test_branch_and_bound import PROBLEMS, free, supply
from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.search.branch_and_bound import search as one_search
from synth.search.choices import choices_for
from synth.synthesis import synthesize


@pytest.fixture
def cut_at_once(monkeypatch):
    """Every search with jobs > 1 is cut in slices after its first round."""
    monkeypatch.setattr(sliced, "TRIAL_S", 1e-9)


@pytest.fixture
def slices_here(monkeypatch, cut_at_once):
    """The slices run one after another in this process (no worker started)."""
    def in_order(function, items, jobs, done=None):
        out = []
        for k, item in enumerate(items):
            out.append(function(item))
            if done is not None:
                done(k)
        return out

    monkeypatch.setattr(sliced, "ordered_map", in_order)


def _space(name):
    design = design_from_dict(PROBLEMS[name], origin=name)
    return design, Evaluator(design), [choices_for(r) for r in design.free_resistors]


def _same(a, b):
    np.testing.assert_array_equal(a.ranked.indices, b.ranked.indices)
    np.testing.assert_array_equal(a.ranked.objective, b.ranked.objective)
    np.testing.assert_array_equal(a.ranked.supply, b.ranked.supply)


@pytest.mark.parametrize("name", list(PROBLEMS))
@pytest.mark.parametrize("top", [1, 7])
def test_slices_rank_as_one_search_and_as_exhaustive(name, top, slices_here):
    design, ev, choices = _space(name)
    whole = one_search(design, ev, choices, top=top)
    cut = sliced.search(design, ev, choices, top=top, jobs=3)
    assert whole.proven and cut.proven
    _same(whole, cut)
    objectives, total = exhaustive(design)
    assert cut.combinations == total
    np.testing.assert_allclose(cut.ranked.objective, objectives[:top], rtol=1e-9, atol=1e-12)


def test_relaxed_and_supply_first_rankings_survive_the_cut(slices_here):
    design, ev, choices = _space("two-tap chain with a current budget")
    for options in ({"relaxed": True}, {"supply_first": True}, {"part_limits": False},
                    {"chains": False}):
        _same(one_search(design, ev, choices, top=6, **options),
              sliced.search(design, ev, choices, top=6, jobs=2, **options))


def test_ties_are_broken_as_one_search_breaks_them(slices_here):
    # 12 V to 6 V: every R1 = R2 is exact, so the order is the tie-break's alone
    design = design_from_dict({
        "source": supply(),
        "resistor": [free("R1", ["in", "out"], "E24", "1k", "100k"),
                     free("R2", ["out", "gnd"], "E24", "1k", "100k")],
        "target": [{"voltage": "out", "equals": "6 V"}],
    })
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    whole = one_search(design, ev, choices, top=12)
    _same(whole, sliced.search(design, ev, choices, top=12, jobs=4))
    assert np.all(whole.ranked.objective < 1e-12)


def test_synthesis_on_two_processes_equals_one(cut_at_once):
    design = design_from_dict(PROBLEMS["five-resistor bridge"], origin="bridge")
    one = synthesize(design, top=5, jobs=1)
    two = synthesize(design, top=5, jobs=2)
    assert one.proven_optimal and two.proven_optimal
    assert [c.values for c in one.candidates] == [c.values for c in two.candidates]
    assert [c.objective for c in one.candidates] == [c.objective for c in two.candidates]


def test_a_slice_cut_short_leaves_the_result_unproven(slices_here):
    design, ev, choices = _space("five-resistor bridge")
    cut = sliced.search(design, ev, choices, top=3, jobs=2, time_limit_s=1e-6)
    assert not cut.proven


@pytest.mark.parametrize("jobs", [0, -2, 1.5, True, "2"])
def test_bad_process_counts_are_refused(jobs):
    design, ev, choices = _space("unloaded divider")
    with pytest.raises(DesignError, match="whole number of processes"):
        sliced.search(design, ev, choices, jobs=jobs)
    with pytest.raises(DesignError, match="whole number of processes"):
        synthesize(design, jobs=jobs)
