"""Monte Carlo (synth.spread.monte_carlo): the yield interval against scipy's beta quantiles,
and shards that give the same figures however they are run."""

from __future__ import annotations

import random
from concurrent.futures import ProcessPoolExecutor
from dataclasses import replace

import numpy as np
import pytest
from scipy.stats import beta, binomtest

from synth.circuit.measure import Evaluator
from synth.spread.analyse import analyse_spread
from synth.spread.monte_carlo import (
    SHARD_SIZE,
    ShardWork,
    run_shard,
    shard_seed,
    yield_interval,
)
from synth.spread.records import SpreadSettings
from synth.spread.tally import histogram_range
from synth.spread.variables import SpreadVariables


@pytest.mark.parametrize(("passed", "samples"), [
    (50, 100), (0, 10), (10, 10), (7, 20), (1999, 2000), (1, 100_000), (32_760, 100_000),
    (99_990, 100_000),
])
def test_clopper_pearson_interval_matches_the_beta_quantiles(passed, samples):
    # Clopper-Pearson: the ends are beta quantiles [HB-clopper-pearson], here from
    # scipy.stats.beta, a reference written apart from rnsynth [LIB-scipy-binomtest]
    low, high = yield_interval(passed, samples)
    want_low = 0.0 if passed == 0 else beta.ppf(0.025, passed, samples - passed + 1)
    want_high = 1.0 if passed == samples else beta.ppf(0.975, passed + 1, samples - passed)
    assert low == pytest.approx(want_low, rel=1e-8, abs=1e-15)
    assert high == pytest.approx(want_high, rel=1e-8, abs=1e-15)


def test_interval_is_the_exact_binomial_one():
    # the same interval as scipy's exact binomial test [LIB-scipy-binomtest]
    ci = binomtest(37, 50).proportion_ci(confidence_level=0.95, method="exact")
    low, high = yield_interval(37, 50)
    assert (low, high) == pytest.approx((ci.low, ci.high), rel=1e-9)


# --- shards -------------------------------------------------------------------------------

def _divider(samples: int, **settings):
    from synth.design.reader import design_from_dict

    design = design_from_dict({
        "design": {"temperature": ["-20 C", "70 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": "1%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "1%",
                      "tcr": "100 ppm/C"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k",
                      "tolerance": "1%", "tcr": "100 ppm/C"}],
        "target": [{"voltage": "out", "equals": "5 V", "within": "1%"},
                    {"current": "R2", "equals": "0.5 mA", "within": "2%"}]})
    return design, SpreadSettings(samples=samples, seed=11, **settings)


def _figures(spread):
    """Every Monte Carlo figure of a spread, for exact comparison."""
    return (spread.yield_fraction, spread.yield_interval, spread.samples_run, spread.shards,
            [(t.mc_mean, t.mc_std, t.mc_min, t.mc_max, t.inside, t.mc_histogram,
              None if t.mc_values is None else t.mc_values.tolist()) for t in spread.targets])


def _shuffled_map(function, shards):
    """Runs the shards in a shuffled order, gives the tallies back in shard order."""
    order = list(shards)
    random.Random(5).shuffle(order)
    done = {k: function(k) for k in order}
    return [done[k] for k in sorted(done)]


def test_a_shard_seed_is_the_spawned_child():
    # SeedSequence(seed).spawn(n)[k] is the child with spawn key (k,) [LIB-numpy-seedsequence]
    for n, k in ((1, 0), (7, 3), (40, 39)):
        child = np.random.SeedSequence(11).spawn(n)[k]
        np.testing.assert_array_equal(shard_seed(11, k).generate_state(8),
                                      child.generate_state(8))


def test_shards_one_at_a_time_shuffled_or_in_processes_give_the_same_figures():
    # a run in 3 shards (the last one short): its figures are the merge, in shard order,
    # of shards computed alone, in a shuffled order or on two worker processes
    samples = 2 * SHARD_SIZE + 1234
    design, settings = _divider(samples, keep_samples=True, kept_samples=SHARD_SIZE + 10)
    one = analyse_spread(design, settings=settings)
    assert one.shards == 3 and one.samples_kept == SHARD_SIZE + 10
    shuffled = analyse_spread(design, settings=settings, map_shards=_shuffled_map)
    with ProcessPoolExecutor(max_workers=2) as pool:
        pooled = analyse_spread(design, settings=settings, map_shards=pool.map)
    assert _figures(shuffled) == _figures(one)
    assert _figures(pooled) == _figures(one)
    # the samples themselves: shard k's first rows are drawn from its own child seed
    ev = Evaluator(design)
    var = SpreadVariables(design, ev)
    parts0 = ev.part_values(np.array([[1e4, 1e4]]))[0]
    targets = list(one.targets)
    work = ShardWork(design, ev, var, parts0, ev.nominal_sources, settings,
                     tuple(histogram_range(t.nominal, t.worst_low, t.worst_high)
                           for t in targets))
    tallies = [run_shard(work, k) for k in range(3)]
    assert [t.count for t in tallies] == [SHARD_SIZE, SHARD_SIZE, 1234]
    kept = np.concatenate([tallies[0].kept, tallies[1].kept])
    np.testing.assert_array_equal(kept[:, 0], one.targets[0].mc_values)
    assert sum(t.passed for t in tallies) == round(one.yield_fraction * samples)


def test_the_figures_do_not_depend_on_keeping_samples():
    design, settings = _divider(5000)
    plain = analyse_spread(design, settings=settings)
    kept = analyse_spread(design, settings=replace(settings, keep_samples=True))
    assert plain.samples_kept == 0 and plain.targets[0].mc_values is None
    assert kept.samples_kept == 5000
    assert _figures(plain)[:4] == _figures(kept)[:4]
    assert [f[:6] for f in _figures(plain)[4]] == [f[:6] for f in _figures(kept)[4]]
    # and the kept samples are the run's: mean, σ, extremes and histogram agree
    # [LIB-numpy-mean-std] [LIB-numpy-histogram]
    for t in kept.targets:
        assert t.mc_mean == pytest.approx(np.mean(t.mc_values), rel=1e-12)
        assert t.mc_std == pytest.approx(np.std(t.mc_values), rel=1e-9)
        assert (t.mc_min, t.mc_max) == (t.mc_values.min(), t.mc_values.max())
        h = t.mc_histogram
        want, _ = np.histogram(t.mc_values, bins=len(h.counts), range=(h.low, h.high))
        assert h.counts == tuple(want) and h.below == h.above == 0


def test_a_run_told_to_stop_keeps_the_figures_of_the_shards_it_ran():
    # stop is asked after each merged shard; told to stop after the second, the run has
    # the figures of a run asked for those two shards' samples (the same seeded shards)
    design, settings = _divider(4 * SHARD_SIZE + 99)
    asked = []

    def stop():
        asked.append(True)
        return len(asked) >= 2

    stopped = analyse_spread(design, settings=settings, stop=stop)
    assert len(asked) == 2
    assert stopped.samples_run == 2 * SHARD_SIZE and stopped.shards == 2
    two = analyse_spread(design, settings=replace(settings, samples=2 * SHARD_SIZE))
    assert _figures(stopped) == _figures(two)
    # never told to stop: the whole run, stop asked once per shard but the last
    asked.clear()
    whole = analyse_spread(design, settings=settings, stop=lambda: asked.append(1) or False)
    assert whole.samples_run == 4 * SHARD_SIZE + 99 and len(asked) == 4
