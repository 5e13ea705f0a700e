"""Targets: what is measured, its goal and its window, and the objective.

A :class:`Target` measures one of

- ``"voltage"``: ``V(a)`` (refs ``(a,)``) or ``V(a) - V(b)`` (refs ``(a, b)``);
- ``"current"``: a resistor's current (from node_a to node_b) or a voltage source's
  delivered current (refs ``(name,)``);
- ``"power"``: a resistor's dissipation (refs ``(name,)``);
- ``"ratio"``: ``(V(a) - V(b)) / (V(c) - V(d))`` (refs ``(a, b, c, d)``);
- ``"resistance"``: resistance seen between two nodes, sources zeroed (refs ``(a, b)``).

A name in ``refs`` for current/power may also be a *position* (several physical parts in
series or parallel, see :mod:`.search`): its power is the sum of its parts' powers, its
current the first part's current (series) or the sum (parallel).

``goal`` (optional) enters the objective: ``|value - goal| / |goal|`` (absolute error for a
zero goal). ``low``/``high`` (optional) make the hard window; windows are compared with a
relative slack of 1e-9 of the bound, so a value exactly at its bound passes.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from .network import Solution, seen_resistance

SLACK = 1e-9


@dataclass(frozen=True)
class Target:
    """One measured quantity with an optional goal and window (see module docstring)."""

    kind: str
    refs: tuple[str, ...]
    goal: float | None = None
    low: float | None = None
    high: float | None = None
    label: str = ""

    def __post_init__(self) -> None:
        arity = {"voltage": (1, 2), "current": (1,), "power": (1,), "ratio": (4,),
                 "resistance": (2,)}
        if self.kind not in arity:
            raise ValueError(f"unknown target kind {self.kind!r}")
        if len(self.refs) not in arity[self.kind]:
            raise ValueError(f"{self.kind} target needs {arity[self.kind]} refs")
        if not self.label:
            object.__setattr__(self, "label", f"{self.kind}({', '.join(self.refs)})")


def make_target(
    kind: str,
    *refs: str,
    goal: float | None = None,
    within: float | None = None,
    within_abs: float | None = None,
    at_least: float | None = None,
    at_most: float | None = None,
    label: str = "",
) -> Target:
    """Build a target. ``within`` is a relative window around ``goal`` (0.01 for ±1 %),
    ``within_abs`` an absolute one; ``at_least``/``at_most`` are plain bounds."""
    low, high = at_least, at_most
    if within is not None or within_abs is not None:
        if goal is None:
            raise ValueError("a window around the goal needs a goal")
        half = abs(goal) * within if within is not None else float(within_abs)  # type: ignore[arg-type]
        low, high = goal - half, goal + half
    return Target(kind, tuple(refs), goal, low, high, label)


def within_window(value: np.ndarray, target: Target) -> np.ndarray:
    """Boolean array: value inside the target's window (relative slack 1e-9 of the bound)."""
    ok = np.ones(np.shape(value), dtype=bool)
    if target.low is not None:
        ok &= value >= target.low - SLACK * abs(target.low)
    if target.high is not None:
        ok &= value <= target.high + SLACK * abs(target.high)
    return ok


def error(value: np.ndarray, target: Target) -> np.ndarray:
    """``|value - goal| / |goal|`` (absolute for a zero goal); zeros without a goal."""
    if target.goal is None:
        return np.zeros(np.shape(value))
    if target.goal == 0:
        return np.abs(value)
    return np.abs(value - target.goal) / abs(target.goal)


def objective(values: Sequence[np.ndarray], targets: Sequence[Target]) -> np.ndarray:
    """Largest error over targets that have a goal (0 when none has one)."""
    errs = [error(v, t) for v, t in zip(values, targets, strict=True) if t.goal is not None]
    if not errs:
        return np.zeros(np.shape(values[0]) if values else (1,))
    return np.max(np.stack(errs), axis=0)


def target_value(
    target: Target,
    sol: Solution,
    groups: Mapping[str, tuple[str, tuple[str, ...]]] | None = None,
) -> np.ndarray:
    """The measured value for every row of the solution batch.

    ``groups`` maps a position name to ``(combine, part names)`` for position refs.
    """
    groups = groups or {}
    k, refs = target.kind, target.refs
    if k == "voltage":
        return sol.v(refs[0], refs[1] if len(refs) == 2 else None)
    if k == "ratio":
        return sol.v(refs[0], refs[1]) / sol.v(refs[2], refs[3])
    if k == "resistance":
        return seen_resistance(sol.network, refs[0], refs[1], sol.resistances)
    name = refs[0]
    if k == "current":
        if name in sol.resistor_current:
            return sol.resistor_current[name]
        if name in sol.vsource_current:
            return sol.vsource_current[name]
        if name in groups:
            combine, parts = groups[name]
            if combine == "parallel":
                return np.sum([sol.resistor_current[p] for p in parts], axis=0)
            return sol.resistor_current[parts[0]]
        raise KeyError(f"no resistor, source or position {name!r}")
    if name in sol.resistor_power:
        return sol.resistor_power[name]
    if name in groups:
        return np.sum([sol.resistor_power[p] for p in groups[name][1]], axis=0)
    raise KeyError(f"no resistor or position {name!r}")
