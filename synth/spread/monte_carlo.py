"""Seeded Monte Carlo of tolerances, TCR and ambient, with yield, in shards of streamed blocks.
"""

from __future__ import annotations

__all__ = [
    "LEAST_SAMPLES", "SHARD_SIZE", "YIELD_CONFIDENCE", "ShardMap", "ShardWork", "block_size",
    "monte_carlo", "run_shard", "sample_count", "shard_count", "shard_seed", "yield_interval",
]

from collections.abc import Callable, Iterable
from dataclasses import dataclass, replace
from functools import partial

import numpy as np

from synth.circuit.measure import Evaluator, SourceValues
from synth.circuit.sparse import SPARSE_ABOVE
from synth.design.model import Design
from synth.rating import exceeds
from synth.spread.binomial import YIELD_CONFIDENCE, yield_interval
from synth.spread.records import SampleHistogram, SpreadSettings, TargetSpread
from synth.spread.tally import SampleTally, histogram_range
from synth.spread.variables import REFERENCE_C, SpreadVariables, inside_windows

SHARD_SIZE = 1 << 18
"""Samples per shard (the last one may be shorter).  Fixed, whatever runs the shards: shard
``k`` draws rows ``k·SHARD_SIZE ..`` from its own seed, so a run gives the same figures
however its shards are spread over processes.  Large enough that a shard's set-up (its
generator, and the memory its blocks take again after the previous shard freed it) costs
little: 2^16 samples per shard ran a small network's Monte Carlo about 40 % slower."""

_MC_BLOCK = 1 << 15
"""Samples drawn and solved per block within a shard: arrays stay in cache; a shard's random
stream is drawn block by block in a fixed order, so a seed gives the same samples every time."""

LEAST_SAMPLES = 1000
"""Fewest samples a cut leaves (the yield interval is then about ±3 % wide at most)."""

_MC_ENTRIES = 1 << 22
"""Samples per block times the columns of a sample's results (branches and parts): a large
network takes smaller blocks (at least 256 samples) so that memory stays bounded (32 MiB
per result array)."""

ShardMap = Callable[[Callable[[int], SampleTally], Iterable[int]], Iterable[SampleTally]]
"""A map-like callable running the shard work over shard numbers and giving the tallies back
in the order of the numbers (``map``, or a process pool's ``map``)."""


def sample_count(ev: Evaluator, settings: SpreadSettings) -> int:
    """Samples the Monte Carlo runs: all asked for, or on a network of more than
    :data:`synth.circuit.sparse.SPARSE_ABOVE` resistors at most
    ``sample_budget // resistors`` (at least :data:`LEAST_SAMPLES`)."""
    n_r = len(ev.network.resistor_refs)
    if n_r > SPARSE_ABOVE:
        return min(settings.samples, max(settings.sample_budget // n_r, LEAST_SAMPLES))
    return settings.samples


def block_size(ev: Evaluator) -> int:
    """Samples per block for this network (see :data:`_MC_ENTRIES`)."""
    columns = len(ev.network.branch_refs) + len(ev.part_refs)
    return min(_MC_BLOCK, max(256, _MC_ENTRIES // max(columns, 1)))


def shard_count(samples: int) -> int:
    """Shards of :data:`SHARD_SIZE` samples that ``samples`` takes."""
    return -(-samples // SHARD_SIZE)


def shard_seed(seed: int, shard: int) -> np.random.SeedSequence:
    """The seed of shard ``shard``: ``numpy.random.SeedSequence(seed).spawn(n)[shard]``.

    A spawned child is the parent's entropy with spawn key ``(shard,)``, whatever ``n``, so
    any process builds it alone.

    Examples
    --------
    >>> child = np.random.SeedSequence(1).spawn(5)[3]
    >>> bool((shard_seed(1, 3).generate_state(4) == child.generate_state(4)).all())
    True
    """
    return np.random.SeedSequence(seed, spawn_key=(shard,))


@dataclass(frozen=True)
class ShardWork:
    """Everything a shard needs, picklable so that another process can run it.

    Attributes
    ----------
    design : Design
    evaluator : Evaluator
    variables : SpreadVariables
    parts0 : numpy.ndarray
        ``(parts,)`` nominal ohm of every physical part.
    sources : SourceValues
        Nominal source values.
    settings : SpreadSettings
        ``samples`` is the number of samples the whole run takes.
    ranges : tuple of (float, float) or None
        Each target's histogram range.
    """

    design: Design
    evaluator: Evaluator
    variables: SpreadVariables
    parts0: np.ndarray
    sources: SourceValues
    settings: SpreadSettings
    ranges: tuple[tuple[float, float] | None, ...]


def run_shard(work: ShardWork, shard: int) -> SampleTally:
    """The tally of shard ``shard``: samples ``shard·SHARD_SIZE`` up to the next shard's first.

    Each physical part draws its own tolerance deviation and temperature
    coefficient; the ambient is drawn once per sample over the design's
    temperature range, and each part's TCR acts on that ambient plus its own
    self-heating rise (:mod:`synth.spread.heating`).  A sample passes when every
    target lies in its window and every physical part stays within its allowance
    (taken at the design's hottest ambient, as everywhere; see :mod:`synth.rating`).
    """
    design, ev, var, settings = work.design, work.evaluator, work.variables, work.settings
    rng = np.random.default_rng(shard_seed(settings.seed, shard))
    first = shard * SHARD_SIZE
    rows = max(0, min(SHARD_SIZE, settings.samples - first))
    low_c, high_c = design.temperature_c
    gain_columns = [c for c, (group, _) in enumerate(var.kind) if group == "gain"]
    keep = settings.kept_samples - first if settings.keep_samples else 0
    tally = SampleTally(list(work.ranges), keep=max(0, min(keep, rows)))

    def draw(m: int, width: np.ndarray) -> np.ndarray:
        if settings.distribution == "normal":
            out = rng.standard_normal((m, len(width)))
            out *= width / 3
        else:
            out = rng.random((m, len(width)))
            out *= 2 * width
            out -= width
        return out

    block = block_size(ev)
    for start in range(0, rows, block):
        m = min(block, rows - start)
        temperature = (rng.uniform(low_c, high_c, m) if high_c > low_c
                       else np.full(m, low_c))
        factors = draw(m, var.tolerance)
        factors += 1.0
        for column in gain_columns:  # a gain range (a transistor's beta): uniform within it
            factors[:, column] = rng.uniform(var.low[column], var.high[column], m)
        if len(var):
            # each part's temperature coefficient lies within its ±TCR (a normal spread
            # reads the TCR limit as 3σ, like a tolerance); it acts on the part's own
            # temperature, the ambient plus its self-heating rise
            drift = draw(m, var.tcr)
            coefficient = drift.copy() if var.heat_links else drift
            drift *= (temperature - REFERENCE_C)[:, None] + var.rise_c
            for own, common, offset in var.heat_links:
                # an array member heating apart from its array's mean: the array's one
                # coefficient acts on the difference too
                drift[:, own] += coefficient[:, common] * offset
            drift += 1.0
            factors *= drift
        r, p, s = var.apply(factors, work.parts0, work.sources)
        result = ev.evaluate(r, s, part_values=p)
        inside = inside_windows(design, result.targets, result.target_noise)
        good = inside.all(axis=1)
        good &= ~np.any(exceeds(result.part_power, ev.allowed_power)
                        | exceeds(result.part_voltage, ev.allowed_voltage), axis=1)
        tally.add(result.targets, inside, good)
    return tally


def monte_carlo(design: Design, ev: Evaluator, var: SpreadVariables, parts0: np.ndarray,
                src: SourceValues, settings: SpreadSettings, targets: list[TargetSpread],
                map_shards: ShardMap | None = None, stop: Callable[[], bool] | None = None
                ) -> tuple[list[TargetSpread], float, int]:
    """Seeded Monte Carlo: each target's statistics and histogram, and the yield.

    Parameters
    ----------
    design, ev, var, parts0, src
        The design, its evaluator, varying quantities, nominal parts (ohm) and sources.
    settings : SpreadSettings
        ``samples`` samples are run.
    targets : list of TargetSpread
        The worst case of each target (it fixes the histogram ranges).
    map_shards : callable, optional
        Runs :func:`run_shard` over the shard numbers, like ``map`` (the default), and
        gives the tallies back in shard order: a process pool's ``map`` runs them
        elsewhere.  The figures do not depend on it.
    stop : callable, optional
        Asked after each shard is merged: True ends the run there (a time limit), with
        the figures of the samples run so far.

    Returns
    -------
    targets : list of TargetSpread
        With ``mc_*``, ``inside`` and ``mc_histogram`` filled in.
    yield_fraction : float
    samples_run : int
        ``settings.samples``, or fewer when ``stop`` ended the run early.

    Notes
    -----
    The run is split into :func:`shard_count` shards of :data:`SHARD_SIZE` samples;
    shard ``k`` draws from ``SeedSequence(seed).spawn(n)[k]`` and the tallies are merged
    in shard order, so a run gives the same figures whichever order or process computes
    its shards.
    """
    total = settings.samples
    work = ShardWork(design, ev, var, np.asarray(parts0, dtype=float), src, settings,
                     tuple(histogram_range(t.nominal, t.worst_low, t.worst_high)
                           for t in targets))
    runner: ShardMap = map if map_shards is None else map_shards
    tally = SampleTally(list(work.ranges),
                        keep=min(settings.kept_samples, total) if settings.keep_samples else 0)
    tallies = runner(partial(run_shard, work), range(shard_count(total)))
    for part in tallies:
        tally.merge(part)
        if stop is not None and tally.count < total and stop():
            break
    close = getattr(tallies, "close", None)
    if close is not None:  # a generator of worker processes' tallies: send no more work
        close()
    total = tally.count
    updated = []
    for j, t in enumerate(targets):
        bounds = work.ranges[j]
        histogram = None if bounds is None else SampleHistogram(
            bounds[0], bounds[1], tuple(int(c) for c in tally.histogram[j]),
            below=int(tally.below[j]), above=int(tally.above[j]),
            undefined=int(tally.undefined[j]))
        updated.append(replace(
            t, mc_mean=float(tally.mean[j]), mc_std=float(tally.std[j]),
            mc_values=tally.kept[:, j] if settings.keep_samples else None,
            mc_min=float(tally.low[j]), mc_max=float(tally.high[j]),
            inside=float(tally.inside[j] / total), mc_histogram=histogram))
    return updated, tally.passed / max(total, 1), total
