"""Series chains of free positions, bounded as one resistance each.

A node that touches exactly two resistors, both free single-part positions,
and that nothing else names (no source, regulator, controlled source or
target, and not ground) passes the same current through both: every target,
current and voltage elsewhere in the network depends on the two only through
their sum.  A chain of such positions is therefore bounded as one position
whose choices are the distinct sums of its members' values, in ascending
order.  The search splits boxes over those sums: an under-determined design
(a divider chain with one tap that matters) then has as many search
dimensions as the network has independent resistances, not as many as it has
parts.  Candidates are still scored part by part on the whole network; only
the bounds use the reduced one.

A box over sums bounds every candidate whose members add up to a sum inside
it: the reduced network is a linear network like any other (Bode's bilinear
theorem applies to the sum as to one resistance).  The dissipation and voltage
limits of a chain bound its hottest member by the share of an equal split
(at least 1/N of the chain's power and voltage), which holds for the largest
member allowance, so members with different allowances are kept apart.

References
----------
H. W. Bode, *Network Analysis and Feedback Amplifier Design* (1945); the
series equivalent of resistors carrying one current (Kirchhoff's current law
at a node of two branches), any circuit text, e.g. Nilsson & Riedel,
*Electric Circuits*, ch. 3.
"""

from __future__ import annotations

__all__ = ["AXIS_CAP", "SearchSpace"]

import math
from dataclasses import dataclass, replace

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design, Resistor
from synth.design.position import Position
from synth.search.choices import Choices
from synth.search.problem import SearchProblem

AXIS_CAP = 1 << 23
"""Most member combinations one chain's axis holds (about 12 bytes each); a longer chain
is bounded as several shorter ones in series."""


@dataclass(frozen=True)
class _Axis:
    """One search axis: a free position, or a chain of them by distinct sums.

    ``order`` lists the chain's member combinations (flat C-order indices over
    ``sizes``) by ascending sum and ``starts`` where each distinct sum's run
    begins (one more entry at the end); both None for a single position.
    """

    members: tuple[int, ...]
    sizes: tuple[int, ...]
    order: np.ndarray | None
    starts: np.ndarray | None


class SearchSpace:
    """The search's axes and the problem that bounds boxes over them.

    Parameters
    ----------
    problem : SearchProblem
        The design's problem (scores candidates part by part).
    chains : bool
        Bound series chains of free positions by their sums (see the module
        notes); False keeps one axis per free position.

    Attributes
    ----------
    bounds : SearchProblem
        Bounds boxes over the axes (``problem`` itself when no chain is found).
    sizes : numpy.ndarray
        Length of each axis.
    reduced : bool
        True when some axis is a chain.
    """

    def __init__(self, problem: SearchProblem, chains: bool = True):
        self.problem = problem
        choices = problem.choices
        groups = _chains(problem.design, problem.ev, choices) if chains else []
        grouped = {m for g in groups for m in g}
        firsts = {g[0]: g for g in groups}
        self.axes: list[_Axis] = []
        for p, choice in enumerate(choices):
            if p in firsts:
                self.axes.append(_chain_axis(firsts[p], choices))
            elif p not in grouped:
                self.axes.append(_Axis((p,), (len(choice),), None, None))
        self.reduced = any(a.order is not None for a in self.axes)
        self.sizes = np.array([a.sizes[0] if a.starts is None else len(a.starts) - 1
                               for a in self.axes], dtype=np.int64)
        self.bounds = _reduced_problem(problem, self.axes) if self.reduced else problem

    def places(self, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Boxes ``lo..hi`` over the axes as boxes over places in each axis's ``order``."""
        if not self.reduced:
            return lo, hi
        p_lo, p_hi = lo.copy(), hi.copy()
        for a, axis in enumerate(self.axes):
            if axis.starts is not None:
                p_lo[:, a] = axis.starts[lo[:, a]]
                p_hi[:, a] = axis.starts[hi[:, a] + 1] - 1
        return p_lo, p_hi

    def volume(self, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        """Candidates in each box ``lo..hi`` over the axes, ``(B,)`` float."""
        p_lo, p_hi = self.places(lo, hi)
        return np.prod((p_hi - p_lo + 1).astype(float), axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def candidates(self, places: np.ndarray) -> np.ndarray:
        """Choice indices ``(M, positions)`` of places ``(M, axes)`` in the axes' orders."""
        if not self.reduced:
            return places
        out = np.empty((len(places), len(self.problem.choices)), dtype=np.int64)
        for a, axis in enumerate(self.axes):
            if axis.order is None:
                out[:, axis.members[0]] = places[:, a]
                continue
            digits = np.unravel_index(axis.order[places[:, a]], axis.sizes)
            for member, digit in zip(axis.members, digits, strict=True):
                out[:, member] = digit
        return out


def _chain_axis(members: tuple[int, ...], choices: list[Choices]) -> _Axis:
    """The axis of one chain: member combinations by ascending sum, runs of equal sums."""
    sums = choices[members[0]].values
    for m in members[1:]:
        sums = np.add.outer(sums, choices[m].values).ravel()
    order = np.argsort(sums, kind="stable")
    ordered = sums[order]
    starts = np.concatenate([[0], np.flatnonzero(np.diff(ordered) != 0) + 1, [len(ordered)]])
    index_type = np.int32 if len(order) < 2**31 else np.int64
    return _Axis(members, tuple(len(choices[m]) for m in members), order.astype(index_type),
                 starts.astype(np.int64))


def _chains(design: Design, evaluator: Evaluator, choices: list[Choices]
            ) -> list[tuple[int, ...]]:
    """Groups of choice indices joined in series by unnamed two-resistor nodes, each a path
    in order along it, every group of at least two and at most :data:`AXIS_CAP` combinations."""
    network = evaluator.network
    n_r = len(network.resistor_refs)
    ends = network.branch_ends
    degree = np.bincount(ends.ravel(), minlength=len(network.nodes))
    named = {0, *network.regulator_sense.ravel().tolist()}
    blocked: set[str] = set()
    for c in network.controlled:
        named.update(c.control_nodes or ())
        if c.control_branch is not None and c.control_branch < n_r:
            blocked.add(network.resistor_refs[c.control_branch])
    for t in design.targets:
        named.update(evaluator.node_index[n] for n in t.nodes)
        blocked.update(t.without)
        if t.ref is not None:
            blocked.add(t.ref)
    position = {c.ref: p for p, c in enumerate(choices)}
    resistors = design.resistors
    if design.points:
        return []  # a chain's copies at the other points follow parts the reduction merges
    eligible = {k for k, r in enumerate(resistors)
                if r.ref in position and r.position.count == 1 and r.ref not in blocked
                and ends[k, 0] != ends[k, 1]}
    # the resistors at each unnamed node of degree two, when both are eligible
    at: dict[int, list[int]] = {}
    for k in eligible:
        for node in ends[k]:
            if degree[node] == 2 and int(node) not in named:
                at.setdefault(int(node), []).append(k)
    joints = {node: pair for node, pair in at.items() if len(pair) == 2}
    neighbours: dict[int, list[int]] = {}
    for a, b in joints.values():
        if design.allowance(resistors[a]) != design.allowance(resistors[b]):
            continue
        neighbours.setdefault(a, []).append(b)
        neighbours.setdefault(b, []).append(a)
    groups: list[tuple[int, ...]] = []
    seen: set[int] = set()
    for start in sorted(neighbours):
        if start in seen or len(neighbours[start]) == 2:
            continue  # walk each path from one of its ends
        path = [start]
        seen.add(start)
        while True:
            step = [n for n in neighbours[path[-1]] if n not in seen]
            if not step:
                break
            path.append(step[0])
            seen.add(step[0])
        groups += _capped([position[resistors[k].ref] for k in path], choices)
    return groups


def _capped(path: list[int], choices: list[Choices]) -> list[tuple[int, ...]]:
    """A path cut into consecutive runs of at most :data:`AXIS_CAP` combinations, each of two
    or more members (a lone member stays its own axis)."""
    runs: list[list[int]] = [[]]
    for p in path:
        if runs[-1] and math.prod(len(choices[m]) for m in runs[-1]) * len(choices[p]) > AXIS_CAP:
            runs.append([])
        runs[-1].append(p)
    return [tuple(sorted(run)) for run in runs if len(run) > 1]


def _reduced_problem(problem: SearchProblem, axes: list[_Axis]) -> SearchProblem:
    """The problem over the reduced network: each chain one series position of its sums."""
    design, choices = problem.design, problem.choices
    index = problem.ev.resistor_index
    network = problem.ev.network
    replaced: dict[int, Resistor] = {}
    dropped: set[int] = set()
    reduced_choices: list[Choices] = []
    for axis in axes:
        if axis.order is None:
            reduced_choices.append(choices[axis.members[0]])
            continue
        assert axis.starts is not None
        members = [index[choices[m].ref] for m in axis.members]
        ends = [n for k in members for n in network.resistor_ends[k].tolist()]
        outer = [n for n in dict.fromkeys(ends) if ends.count(n) == 1]
        first = design.resistors[members[0]]
        low = sum(choices[m].values[0] for m in axis.members)
        high = sum(choices[m].values[-1] for m in axis.members)
        position = Position(first.ref, "series", len(members))
        replaced[members[0]] = replace(first, nodes=(network.nodes[outer[0]],
                                                     network.nodes[outer[1]]),
                                       range=(float(low), float(high)), position=position)
        dropped.update(members[1:])
        sums = _sums_at(axis, choices)
        n = len(sums)
        reduced_choices.append(Choices(
            ref=first.ref, position=position, values=sums,
            parts=np.broadcast_to((sums / len(members))[:, None], (n, len(members))),
            rank=np.broadcast_to(np.zeros(1, dtype=np.int64), (n,)), label=choices[
                axis.members[0]].label))
    resistors = tuple(replaced.get(k, r) for k, r in enumerate(design.resistors)
                      if k not in dropped)
    reduced = replace(design, resistors=resistors)
    evaluator = Evaluator(reduced)
    return SearchProblem(reduced, evaluator, reduced_choices, problem.relaxed,
                         part_limits=problem.part_limits, max_supply_a=problem.max_supply_a)


def _sums_at(axis: _Axis, choices: list[Choices]) -> np.ndarray:
    """The distinct sums of a chain's axis, ascending, ohm."""
    assert axis.order is not None and axis.starts is not None
    digits = np.unravel_index(axis.order[axis.starts[:-1]], axis.sizes)
    total = np.zeros(len(axis.starts) - 1)
    for member, digit in zip(axis.members, digits, strict=True):
        total = total + choices[member].values[digit]
    return total
