"""Exhaustive search over resistor positions, written out plainly.

A :class:`Position` is a place in the network between two nodes filled by one physical part
or by N >= 2 physical parts in series or in parallel. Every multi-part position is EXPANDED
into N separate resistors in the network (series: new internal nodes ``NAME.1`` ...
between them; parts are named ``NAME`` for a single part, else ``NAMEA``, ``NAMEB`` ...),
so every physical part's current, voltage and dissipation come from the network solve
itself, never from a formula for the position.

Candidates of a position of N parts (values from an E-series or a stock list over a per-part
range): every multiset (unordered, repetition allowed; parts listed in ascending value) of N
values, optionally only "all N equal", whose effective value (sum in series, reciprocal of
the summed conductances in parallel) lies in the position's range [low, high] (relative
slack 1e-9). The per-part range is the position's range for one part; in series each part
may lie from low/10 up to high, in parallel from low up to 10*high (the documented rule of
``docs/design-file.md``, ``combine``).

The search solves every element of the product of the positions' candidate lists (batched
float64 MNA, :func:`.network.solve`). A candidate is feasible when every target lies in its
window and every rated physical part is within its allowed power and allowed voltage
(:mod:`.ratings`), all compared with a relative slack of 1e-9 (a value exactly at its limit
passes). Objective: the largest relative error over targets with a goal.
"""

from __future__ import annotations

import itertools
import math
import string
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import eseries, ratings
from .network import DEFAULT_CHUNK, Network, Solution, solve
from .targets import SLACK, Target, objective, target_value, within_window

__all__ = [
    "Evaluation",
    "PartCheck",
    "Position",
    "SearchResult",
    "Target",
    "effective_value",
    "evaluate",
    "expand",
    "part_names",
    "part_range",
    "part_values",
    "position_candidates",
    "search",
]


@dataclass(frozen=True)
class Position:
    """A free resistor position between ``node_a`` and ``node_b``.

    ``low``/``high`` bound the position's effective value. Values come from ``series``
    (``"E3"`` ... ``"E192"``) or, when ``stock`` is given, from that list of ohm values.
    ``parts`` physical parts are combined by ``combine`` (``"single"`` for one part,
    ``"series"`` or ``"parallel"`` for two or more); ``equal`` keeps only all-equal sets.
    ``package`` names the package of every physical part (None: unrated).
    """

    name: str
    node_a: str
    node_b: str
    low: float
    high: float
    series: str = "E96"
    parts: int = 1
    combine: str = "single"
    equal: bool = False
    package: str | None = None
    stock: tuple[float, ...] | None = None

    def __post_init__(self) -> None:
        if self.combine not in ("single", "series", "parallel"):
            raise ValueError(f"combine must be single, series or parallel: {self.combine!r}")
        if (self.parts == 1) != (self.combine == "single"):
            raise ValueError("one part goes with combine='single', two or more with "
                             "'series' or 'parallel'")
        if self.parts < 1 or self.parts > len(string.ascii_uppercase):
            raise ValueError("parts must be 1..26")
        if not (0 < self.low <= self.high):
            raise ValueError("need 0 < low <= high")
        if self.stock is not None:
            object.__setattr__(self, "stock", tuple(float(v) for v in self.stock))


def part_names(pos: Position) -> tuple[str, ...]:
    """Physical part names: ``(NAME,)`` or ``(NAMEA, NAMEB, ...)``."""
    if pos.parts == 1:
        return (pos.name,)
    return tuple(pos.name + string.ascii_uppercase[i] for i in range(pos.parts))


def part_range(pos: Position) -> tuple[float, float]:
    """Range each physical part may take: [low, high] for one part, [low/10, high] in
    series, [low, 10*high] in parallel."""
    if pos.combine == "series":
        return pos.low / 10, pos.high
    if pos.combine == "parallel":
        return pos.low, pos.high * 10
    return pos.low, pos.high


def part_values(pos: Position) -> list[float]:
    """The values one physical part of the position may take, ascending."""
    lo, hi = part_range(pos)
    if pos.stock is not None:
        return sorted(
            {v for v in pos.stock if lo * (1 - SLACK) <= v <= hi * (1 + SLACK)}
        )
    return eseries.values(pos.series, lo, hi)


def effective_value(combine: str, values: Sequence[float]) -> float:
    """Effective resistance of parts combined in ``"series"``/``"parallel"``/``"single"``."""
    if combine == "parallel":
        return 1.0 / sum(1.0 / v for v in values)
    return float(sum(values))


def position_candidates(pos: Position) -> np.ndarray:
    """All candidate part-value sets of the position, shape (m, parts), rows ascending.

    Every multiset of ``parts`` values from :func:`part_values` (or only the all-equal ones)
    whose effective value lies in [low, high] with relative slack 1e-9.
    """
    vals = part_values(pos)
    if pos.parts == 1:
        combos: list[tuple[float, ...]] = [(v,) for v in vals]
    elif pos.equal:
        combos = [(v,) * pos.parts for v in vals]
    else:
        combos = list(itertools.combinations_with_replacement(vals, pos.parts))
    lo, hi = pos.low * (1 - SLACK), pos.high * (1 + SLACK)
    keep = [c for c in combos if lo <= effective_value(pos.combine, c) <= hi]
    return np.array(keep, dtype=float).reshape(len(keep), pos.parts)


def expand(base: Network, positions: Sequence[Position]) -> Network:
    """The base network with every position expanded into its physical parts.

    Part values are placeholders (1 ohm); the search supplies them. Resistor order: the
    base network's resistors, then each position's parts in order.
    """
    resistors = list(base.resistors)
    for pos in positions:
        names = part_names(pos)
        if pos.combine == "series":
            chain = [pos.node_a] + [f"{pos.name}.{i}" for i in range(1, pos.parts)]
            chain.append(pos.node_b)
            resistors += [(n, chain[i], chain[i + 1], 1.0) for i, n in enumerate(names)]
        else:
            resistors += [(n, pos.node_a, pos.node_b, 1.0) for n in names]
    return Network(resistors=resistors, vsources=base.vsources, isources=base.isources,
                   ground=base.ground, nodes=base.nodes)


def _groups(positions: Sequence[Position]) -> dict[str, tuple[str, tuple[str, ...]]]:
    return {p.name: (p.combine, part_names(p)) for p in positions if p.parts > 1}


def _rated(
    positions: Sequence[Position],
    part_packages: Mapping[str, str] | None,
    ambient_c: float,
    power_use: float,
    voltage_use: float,
    packages_csv: Path | str,
) -> dict[str, tuple[str, float, float]]:
    """Rated physical part -> (package, allowed power, allowed voltage)."""
    out: dict[str, str] = dict(part_packages or {})
    for pos in positions:
        if pos.package is not None:
            out.update({n: pos.package for n in part_names(pos)})
    result = {}
    for name, pkg_name in out.items():
        pkg = ratings.get_package(pkg_name, packages_csv)
        result[name] = (
            pkg.name,
            ratings.allowed_power(pkg, ambient_c, power_use),
            ratings.allowed_voltage(pkg, voltage_use),
        )
    return result


@dataclass
class _Assessment:
    target_values: list[np.ndarray]
    window_ok: np.ndarray
    limits_ok: np.ndarray
    objective: np.ndarray


def _assess(
    net: Network,
    r: np.ndarray,
    targets: Sequence[Target],
    groups: Mapping[str, tuple[str, tuple[str, ...]]],
    rated: Mapping[str, tuple[str, float, float]],
    check_power: bool,
    check_voltage: bool,
    chunk: int,
) -> tuple[Solution, _Assessment]:
    sol = solve(net, r, chunk=chunk)
    tv = [target_value(t, sol, groups) for t in targets]
    window_ok = np.ones(sol.batch, dtype=bool)
    for v, t in zip(tv, targets, strict=True):
        window_ok &= within_window(v, t)
    limits_ok = np.ones(sol.batch, dtype=bool)
    for name, (_, ap, av) in rated.items():
        if check_power:
            limits_ok &= np.abs(sol.resistor_power[name]) <= ap * (1 + SLACK)
        if check_voltage:
            limits_ok &= np.abs(sol.resistor_voltage[name]) <= av * (1 + SLACK)
    return sol, _Assessment(tv, window_ok, limits_ok, objective(tv, targets))


@dataclass
class SearchResult:
    """Outcome of :func:`search`.

    ``feasible``: (objective, {part: ohm}) of feasible candidates, best first (ties broken
    by the part values, ascending); at most ``keep`` entries when a keep was given.
    ``combinations``: product of the positions' multiset counts before the range filter.
    ``candidates``: value sets solved (product of the filtered candidate counts).
    ``window_ok``/``limits_ok``/``n_feasible``: how many candidates met every window, every
    limit, both. ``best_any``: the best objective over all candidates, feasible or not.
    """

    part_names: tuple[str, ...]
    feasible: list[tuple[float, dict[str, float]]]
    combinations: int
    candidates: int
    window_ok: int
    limits_ok: int
    n_feasible: int
    best_any: tuple[float, dict[str, float]] | None
    rated: dict[str, tuple[str, float, float]] = field(default_factory=dict)

    @property
    def best(self) -> tuple[float, dict[str, float]] | None:
        return self.feasible[0] if self.feasible else None


def _order(obj: np.ndarray, vals: np.ndarray) -> np.ndarray:
    keys = [vals[:, j] for j in reversed(range(vals.shape[1]))] + [obj]
    return np.lexsort(keys)


def search(
    base: Network,
    positions: Sequence[Position],
    targets: Sequence[Target],
    *,
    part_packages: Mapping[str, str] | None = None,
    ambient_c: float = ratings.AMBIENT_C,
    power_use: float = ratings.POWER_USE,
    voltage_use: float = ratings.VOLTAGE_USE,
    check_power: bool = True,
    check_voltage: bool = True,
    use_windows: bool = True,
    keep: int | None = None,
    chunk: int = DEFAULT_CHUNK,
    packages_csv: Path | str = ratings.PACKAGES_CSV,
) -> SearchResult:
    """Solve every candidate of the positions' product and return the feasible ones.

    ``base`` holds the sources and fixed resistors (fixed parts are unrated unless named in
    ``part_packages``). ``check_power``/``check_voltage`` switch the part limits on or off;
    ``use_windows=False`` ignores target windows (goals still set the objective).
    """
    net = expand(base, positions)
    groups = _groups(positions)
    rated = _rated(positions, part_packages, ambient_c, power_use, voltage_use, packages_csv)
    cands = [position_candidates(p) for p in positions]
    names = tuple(n for p in positions for n in part_names(p))
    combos = 1
    for p in positions:
        m = len(part_values(p))
        combos *= m if (p.parts == 1 or p.equal) else _multisets(m, p.parts)
    shape = tuple(len(c) for c in cands)
    total = int(np.prod(shape, dtype=np.int64)) if shape else 1
    base_r = np.array([float(r[3]) for r in base.resistors])
    n_base = len(base_r)
    window_count = limits_count = feasible_count = 0
    kept_obj: list[np.ndarray] = []
    kept_val: list[np.ndarray] = []
    best_any: tuple[float, np.ndarray] | None = None
    for start in range(0, total, chunk):
        flat = np.arange(start, min(start + chunk, total), dtype=np.int64)
        idx = np.unravel_index(flat, shape) if shape else ()
        free = np.concatenate([c[i] for c, i in zip(cands, idx, strict=True)], axis=1) \
            if shape else np.zeros((1, 0))
        r = np.concatenate([np.broadcast_to(base_r, (len(free), n_base)), free], axis=1)
        _, a = _assess(net, r, targets, groups, rated, check_power, check_voltage, chunk)
        w_ok = a.window_ok if use_windows else np.ones_like(a.window_ok)
        ok = w_ok & a.limits_ok
        window_count += int(w_ok.sum())
        limits_count += int(a.limits_ok.sum())
        feasible_count += int(ok.sum())
        ties = np.flatnonzero(a.objective == a.objective.min())
        o = int(ties[_order(a.objective[ties], free[ties])[0]])
        if best_any is None or (a.objective[o], tuple(free[o])) < (best_any[0],
                                                                  tuple(best_any[1])):
            best_any = (float(a.objective[o]), free[o].copy())
        if ok.any():
            kept_obj.append(a.objective[ok])
            kept_val.append(free[ok])
            if keep is not None:
                obj_all, val_all = np.concatenate(kept_obj), np.concatenate(kept_val)
                sel = _order(obj_all, val_all)[:keep]
                kept_obj, kept_val = [obj_all[sel]], [val_all[sel]]
    feasible: list[tuple[float, dict[str, float]]] = []
    if kept_obj:
        obj_all, val_all = np.concatenate(kept_obj), np.concatenate(kept_val)
        sel = _order(obj_all, val_all)
        if keep is not None:
            sel = sel[:keep]
        feasible = [
            (float(obj_all[k]), dict(zip(names, map(float, val_all[k]), strict=True)))
            for k in sel
        ]
    best = None if best_any is None or total == 0 else (
        best_any[0], dict(zip(names, map(float, best_any[1]), strict=True)))
    return SearchResult(names, feasible, combos, total, window_count, limits_count,
                        feasible_count, best, rated)


def _multisets(m: int, n: int) -> int:
    """Number of multisets of size n from m values: C(m + n - 1, n)."""
    return math.comb(m + n - 1, n)


@dataclass
class PartCheck:
    """One physical part's figures from the solve and its allowance (None when unrated)."""

    current: float
    voltage: float
    power: float
    package: str | None
    allowed_power: float | None
    allowed_voltage: float | None
    power_share: float | None
    voltage_share: float | None
    ok: bool


@dataclass
class Evaluation:
    """Outcome of :func:`evaluate` for one value set."""

    values: dict[str, float]
    target_values: dict[str, float]
    target_ok: dict[str, bool]
    objective: float
    parts: dict[str, PartCheck]
    node_voltage: dict[str, float]
    feasible: bool


def evaluate(
    base: Network,
    positions: Sequence[Position],
    values: Mapping[str, float],
    targets: Sequence[Target],
    *,
    part_packages: Mapping[str, str] | None = None,
    ambient_c: float = ratings.AMBIENT_C,
    power_use: float = ratings.POWER_USE,
    voltage_use: float = ratings.VOLTAGE_USE,
    check_power: bool = True,
    check_voltage: bool = True,
    use_windows: bool = True,
    packages_csv: Path | str = ratings.PACKAGES_CSV,
) -> Evaluation:
    """Solve one value set (``values``: ohm by physical part name) and report everything."""
    net = expand(base, positions)
    names = [n for p in positions for n in part_names(p)]
    missing = set(names) - set(values)
    if missing:
        raise KeyError(f"missing values for {sorted(missing)}")
    rated = _rated(positions, part_packages, ambient_c, power_use, voltage_use, packages_csv)
    r = np.array([[float(values.get(n, v)) for n, _, _, v in net.resistors]])
    sol, a = _assess(net, r, targets, _groups(positions), rated, check_power, check_voltage,
                     DEFAULT_CHUNK)
    parts = {}
    for name in net.resistor_names:
        i = float(sol.resistor_current[name][0])
        v = float(sol.resistor_voltage[name][0])
        p = float(sol.resistor_power[name][0])
        if name in rated:
            pkg, ap, av = rated[name]
            ok = (not check_power or p <= ap * (1 + SLACK)) and (
                not check_voltage or abs(v) <= av * (1 + SLACK))
            parts[name] = PartCheck(i, v, p, pkg, ap, av, p / ap if ap else float("inf"),
                                    abs(v) / av, ok)
        else:
            parts[name] = PartCheck(i, v, p, None, None, None, None, None, True)
    tv = {t.label: float(v[0]) for t, v in zip(targets, a.target_values, strict=True)}
    tok = {t.label: bool(within_window(v, t)[0])
           for t, v in zip(targets, a.target_values, strict=True)}
    w_ok = all(tok.values()) if use_windows else True
    return Evaluation(
        values={n: float(x) for n, x in zip(net.resistor_names, r[0], strict=True)},
        target_values=tv,
        target_ok=tok,
        objective=float(a.objective[0]),
        parts=parts,
        node_voltage={k: float(v[0]) for k, v in sol.node_voltage.items()},
        feasible=bool(w_ok and a.limits_ok[0]),
    )
