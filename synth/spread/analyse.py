"""Spread of every target and part stress over tolerance, temperature and supply variation.

Three methods, all through the batched mesh solve:

* **worst case** (extreme value analysis): every target of a linear network
  is linear-fractional, hence monotone, in each resistance and source, so its
  extremes over the tolerance box lie at the box's vertices; all vertices are
  solved (up to :data:`EXACT_VARIABLES` varying quantities) and the corner
  giving each extreme is reported.  With more quantities only the two
  corners the signs of the nominal sensitivities point to are solved
  (``method = "sensitivity corners"``): those values are attained in the box,
  so the true range is at least that wide, but they are exact only if every
  sensitivity keeps its sign over the whole box, which is not checked, so
  they are reported as neither exact nor a bound.  Dissipation is not monotone (it peaks
  where a resistor equals the Thevenin resistance it sees), so each vertex
  pair along a resistor's own range is also checked for that interior peak;
  a sound upper bound is given beside the attained maximum.
* **root-sum-square** from normalised sensitivities (% change of the target
  per % change of each part and source), each term the sensitivity times the
  quantity's relative half-width.
* **Monte Carlo**: seeded samples of every tolerance (uniform, or normal with
  tolerance = 3σ), each part's TCR and a shared ambient temperature; yield is
  the share of samples inside every target window and part limit.

Temperature: a part's resistance is R·(1 + δ)·(1 + a·(T − 25 °C + ΔT)) with δ its
tolerance deviation, a its temperature coefficient, anywhere within ±TCR, and ΔT
= P·Rθ its self-heating rise at the nominal operating point (first order, see
:mod:`synth.spread.heating`; zero when its package has no thermal resistance).
Each target's RSS drift terms are split into the ambient's and the self-heating's
part (:attr:`TargetSpread.self_heating_terms`).
A controlled source with a gain range (a transistor's β from least to
greatest) varies over that range; Monte Carlo draws it uniformly within it.

References
----------
Worst-case circuit analysis: extreme value analysis Δy = Σ|∂y/∂xᵢ|Δxᵢ and
root-sum-square σ_y² = Σ(∂y/∂xᵢ)²σᵢ² (RIAC Desk Reference "Worst Case
Analysis"; W. M. Smith, "Worst Case Circuit Analysis – An Overview", RAMS).
"""

from __future__ import annotations

__all__ = ["analyse_spread"]

from collections.abc import Callable
from dataclasses import replace

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.spread.common_mode import corner_of, scan_common_mode
from synth.spread.heating import part_rises, self_heating_note
from synth.spread.monte_carlo import (
    ShardMap,
    block_size,
    monte_carlo,
    sample_count,
    shard_count,
    yield_interval,
)
from synth.spread.records import PartSpread, SpreadResult, SpreadSettings, TargetSpread
from synth.spread.variables import SpreadVariables, box_corners
from synth.spread.worst_case import EXACT_VARIABLES, part_spread, worst_point_parts


def analyse_spread(design: Design, values: dict[str, float] | None = None,
                   settings: SpreadSettings | None = None,
                   evaluator: Evaluator | None = None, *,
                   part_values: np.ndarray | None = None,
                   map_shards: ShardMap | None = None,
                   stop: Callable[[], bool] | None = None) -> SpreadResult:
    """Worst case, root-sum-square and Monte Carlo spread of a design.

    Parameters
    ----------
    design : Design
    values : dict of str to float, optional
        Resistance of each resistor position by reference (ohm); the design's
        own values by default.
    settings : SpreadSettings, optional
    evaluator : Evaluator, optional
        Reused when given.
    part_values : numpy.ndarray, optional
        ``(parts,)`` ohm of every physical part (derived from ``values`` by default).
    map_shards : callable, optional
        Runs the Monte Carlo shards, like ``map`` (the default); a process pool's ``map``
        spreads them over processes with the same figures
        (:func:`synth.spread.monte_carlo.monte_carlo`).
    stop : callable, optional
        Asked after each Monte Carlo shard: True ends the run there (a time limit); the
        result's ``samples_run`` says how many samples ran.

    Returns
    -------
    SpreadResult

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tcr": "0 ppm/C"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tcr": "0 ppm/C"}],
    ...     "target": [{"voltage": "out", "equals": "5 V"}]})
    >>> s = analyse_spread(d, settings=SpreadSettings(samples=0)).targets[0]
    >>> round(s.worst_low, 4), round(s.worst_high, 4), round(s.rss, 5)
    (4.95, 5.05, 0.00707)
    """
    settings = settings or SpreadSettings()
    ev = evaluator or Evaluator(design)
    given = dict(values or {})
    r0 = np.array([given.get(r.ref, r.value if r.value is not None else np.nan)
                   for r in design.resistors], dtype=float)
    r0 = ev.follow(r0)[0]  # operating points' copies at their leader's value
    parts0 = (ev.part_values(r0[None, :])[0] if part_values is None
              else np.asarray(part_values, dtype=float))
    src = ev.nominal_sources
    nominal = ev.evaluate(r0[None, :], part_values=parts0[None, :])
    rises = part_rises(design, ev, nominal.part_power[0])
    var = SpreadVariables(design, ev, rise_c=rises)
    n = len(var)
    nominal_targets = nominal.targets[0]

    # sensitivities by central differences, in blocks whose memory stays bounded
    step = 1e-6
    if n:
        probe = np.empty((2 * n, len(design.targets)))
        pairs = max(1, block_size(ev) // 2)
        for first in range(0, n, pairs):
            count = min(pairs, n - first)
            factors = np.ones((2 * count, n))
            rows = np.arange(count)
            factors[2 * rows, first + rows] += step
            factors[2 * rows + 1, first + rows] -= step
            r_s, p_s, s_s = var.apply(factors, parts0, src)
            probe[2 * first:2 * (first + count)] = ev.evaluate(r_s, s_s, part_values=p_s,
                                                                parts=False).targets
        with np.errstate(all="ignore"):
            slope = (probe[0::2] - probe[1::2]) / (2 * step)  # d y / (d x / x)
            sens = slope / nominal_targets[None, :]
    else:
        sens = np.zeros((0, len(design.targets)))
        slope = sens

    # worst case over the vertices (or sensitivity-sign corners when too many); with matched
    # arrays, the vertices of the own deviations at every scanned common deviation
    commons = sum(1 for group, _ in var.kind if group == "array")
    exact = n - commons <= EXACT_VARIABLES
    scan = None
    if exact and commons:
        scan = scan_common_mode(design, ev, var, parts0, src, nominal)
        bits = scan.bits
    elif exact:
        bits = box_corners(n)
    else:
        up = np.nan_to_num(sens) >= 0
        bits = np.concatenate([up.T, ~up.T]) if len(design.targets) else np.zeros((0, n), bool)
    if scan is None:
        vertex_factors = np.where(bits, var.high[None, :], var.low[None, :])
        r_v, p_v, s_v = var.apply(vertex_factors, parts0, src)
        vertices = ev.evaluate(r_v, s_v, part_values=p_v)
        solved, solved_noise = vertices.targets, vertices.target_noise
    else:
        solved = scan.targets.reshape(-1, len(design.targets))
        solved_noise = scan.noise.reshape(-1, len(design.targets))

    targets = []
    for j, t in enumerate(design.targets):
        column = solved[:, j]
        known = np.isfinite(column)
        # a target undefined at every vertex keeps NaN extremes (and the first corner)
        lo_at = int(np.nanargmin(np.where(known, column, np.inf))) if known.any() else 0
        hi_at = int(np.nanargmax(np.where(known, column, -np.inf))) if known.any() else 0

        def corner(at: int) -> dict[str, str]:
            if scan is not None:
                point, row = divmod(at, len(bits))
                return corner_of(scan, var.names, row, point)
            return {name: "+" if bits[at, i] else "-" for i, name in enumerate(var.names)}

        if scan is None:
            method = "vertices" if exact else "sensitivity corners"
        else:
            method = ("vertices, common mode monotone" if scan.monotone[j]
                      else "vertices, common mode scanned")

        widths = np.concatenate([var.tolerance, var.drift])
        both = np.concatenate([sens[:, j], sens[:, j]]) if n else np.zeros(0)
        with np.errstate(invalid="ignore"):
            rss = float(np.sqrt(np.nansum((both * widths) ** 2))) if n else 0.0
        slopes = np.concatenate([slope[:, j], slope[:, j]]) if n else np.zeros(0)
        rss_abs = float(np.sqrt(np.nansum((slopes * widths) ** 2))) if n else 0.0
        # each quantity's terms of rss_abs ** 2: its tolerance, then its TCR drift
        with np.errstate(invalid="ignore"):
            tol_terms = np.nan_to_num((slope[:, j] * var.tolerance) ** 2, nan=0.0,
                                      posinf=np.inf) if n else np.zeros(0)
            drift_terms = np.nan_to_num((slope[:, j] * var.drift) ** 2, nan=0.0,
                                        posinf=np.inf) if n else np.zeros(0)
            # the self-heating part of each drift term: the drift over the part's own
            # temperature range less the drift over the ambient range alone
            heat_terms = np.nan_to_num(slope[:, j] ** 2 * (var.drift ** 2 - var.ambient_drift ** 2),
                                       nan=0.0, posinf=np.inf) if n else np.zeros(0)
        terms = {name: (float(tol_terms[i]), float(drift_terms[i]))
                 for i, name in enumerate(var.names)}
        targets.append(TargetSpread(
            label=t.label, goal=t.equals, nominal=float(nominal_targets[j]),
            worst_low=float(min(column[lo_at], nominal_targets[j])),
            worst_high=float(max(column[hi_at], nominal_targets[j])),
            low_corner=corner(lo_at), high_corner=corner(hi_at),
            exact=exact and (scan is None or bool(scan.monotone[j])), rss=rss, method=method,
            sensitivities={name: float(sens[i, j]) for i, name in enumerate(var.names)},
            mc_mean=None, mc_std=None, mc_values=None, inside=None, rss_abs=rss_abs,
            rss_terms=terms,
            self_heating_terms={name: float(heat_terms[i]) for i, name in enumerate(var.names)},
            noise=float(max(np.max(solved_noise[:, j], initial=0.0),
                            nominal.target_noise[0, j])),
        ))

    parts = (scan.parts if scan is not None
             else part_spread(design, ev, var, bits if exact else None, vertices, nominal, p_v))
    parts = [replace(p, temperature_rise_c=float(rises[c])) for c, p in enumerate(parts)]
    targets = _with_power_peaks(design, ev, targets, parts)
    if design.points:
        parts = worst_point_parts(parts)
    yield_fraction = None
    interval = None
    run = shards = None
    kept = 0
    if settings.samples > 0:
        run = sample_count(ev, settings)
        targets, yield_fraction, run = monte_carlo(design, ev, var, parts0, src,
                                                   replace(settings, samples=run), targets,
                                                   map_shards=map_shards, stop=stop)
        interval = yield_interval(round(yield_fraction * run), run)
        shards = shard_count(run)
        kept = len(targets[0].mc_values) if targets and targets[0].mc_values is not None else 0
    return SpreadResult(variables=var.names, targets=tuple(targets), parts=tuple(parts),
                        yield_fraction=yield_fraction, settings=settings,
                        temperature_c=design.temperature_c, yield_interval=interval,
                        samples_run=run, shards=shards, samples_kept=kept,
                        self_heating_note=self_heating_note(design))


def _with_power_peaks(design: Design, ev: Evaluator, targets: list[TargetSpread],
                      parts: list[PartSpread]) -> list[TargetSpread]:
    """A power target's worst high includes its part's interior peak (maximum power transfer)."""
    out = []
    for target, spread in zip(design.targets, targets, strict=True):
        if target.kind == "power":
            k = ev.resistor_index[target.ref or ""]
            cols = ev.part_columns[k]
            peak = sum(parts[c].worst_power for c in range(cols.start, cols.stop))
            if cols.stop - cols.start == 1 and peak > spread.worst_high:
                spread = replace(spread, worst_high=peak)
        out.append(spread)
    return out
