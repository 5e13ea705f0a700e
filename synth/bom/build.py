"""Bill of materials for a whole board: design every network, consolidate values, list parts.

Every network is designed (its pool: the best feasible candidates, up to the
board's ``pool``), then :func:`synth.consolidate.consolidate` picks one
candidate per network with the fewest distinct BOM lines.  A BOM line is one
orderable part: value, package, tolerance and TCR.  Reference designators
that clash across networks (or copies of one network) are renumbered: the
first network keeps its designators, later ones that clash take the next
free number with the same letters, in board order.
"""

from __future__ import annotations

__all__ = ["bom_of_values", "bom_parts", "build_bom", "renumber"]

import time
from collections import defaultdict
from collections.abc import Callable, Mapping, Sequence
from typing import cast

from synth.bom.consolidate import DEFAULT_WORK_LIMIT, Consolidation, Pool, consolidate
from synth.bom.lines import (
    BomLine,
    BomResult,
    LineKey,
    NetworkChoice,
    Placement,
    natural_order,
)
from synth.catalog.packages import PackageRating
from synth.catalog.series import coarsest_series
from synth.catalog.stock import StockItem, load_stock, stock_fits
from synth.checking import check
from synth.deadline import Deadline
from synth.design.board import Board
from synth.design.model import Design, Resistor
from synth.errors import DesignError, InfeasibleError
from synth.parallel import check_jobs, ordered_map
from synth.results import Candidate, CheckResult
from synth.synthesis import synthesize


def _spec(design: Design, ref: str) -> Resistor | None:
    """The position a physical part belongs to (None for a name that is no part)."""
    found = design.position_of(ref)
    return None if found is None else design.resistors[found[0]]


def _is_free(design: Design, ref: str) -> bool:
    spec = _spec(design, ref)
    return spec is not None and spec.free


def _key(value: float, resistor: Resistor) -> LineKey:
    return LineKey(value=float(f"{value:.9g}"), package=resistor.package or "",
                   tolerance=resistor.tolerance, tcr=resistor.tcr)


def _array_key(design: Design, name: str, values: dict[str, float]) -> LineKey:
    """The one line of matched array ``name``: every member's value, in member order."""
    array = next(a for a in design.arrays if a.name == name)
    members = tuple(float(f"{values[m]:.9g}") for m in array.members)
    return LineKey(value=members[0], package=array.package or "", tolerance=array.tolerance,
                   tcr=array.tcr, members=members, ratio_tolerance=array.ratio_tolerance,
                   tcr_tracking=array.tcr_tracking)


def bom_parts(design: Design, values: dict[str, float]) -> list[tuple[str, LineKey]]:
    """(reference, line) of every BOM part of one network for physical part values.

    The members of a matched array all take the array's one line (:func:`_array_key`).
    """
    out = []
    for ref, value in values.items():
        spec = _spec(design, ref)
        if spec is not None and spec.bom:
            out.append((ref, _key(value, spec) if spec.array is None
                        else _array_key(design, spec.array, values)))
    return out


def _stock_match(key: LineKey, stock: list[StockItem], packages: Mapping[str, PackageRating]
                 ) -> list[StockItem]:
    def same_package(item: StockItem) -> bool:
        if item.package is None or not key.package:
            return True
        a, b = packages.get(item.package), packages.get(key.package)
        return item.package.casefold() == key.package.casefold() or (a is not None and a is b)

    if key.is_array:  # a stock row is one resistor, never a matched array
        return []
    return [item for item in stock
            if abs(item.value - key.value) <= 1e-9 * key.value and same_package(item)
            and stock_fits(item, key.tolerance, key.tcr)]


def _passed(matches: list[StockItem]) -> tuple[tuple[str, str], ...]:
    """The stock list's own columns of the matching rows, distinct values joined by "; "."""
    values: dict[str, list[str]] = {}
    for item in matches:
        for column, text in item.extra:
            if text and text not in values.setdefault(column, []):
                values[column].append(text)
    return tuple((column, "; ".join(texts)) for column, texts in values.items())


def renumber(instances: list[list[str]], every: bool = False) -> list[dict[str, str]]:
    """Per network instance, the designators that change (old to new).

    By default every designator the design files give is kept, except a repeat of one an
    earlier instance already uses: a repeated position (``R1``, or ``R1A`` and ``R1B`` of
    one combined position, together) takes the next number above every number on the board
    with the same letters.  With ``every``, each instance's positions are numbered from 1
    per letters, in board order.

    Examples
    --------
    >>> renumber([["R1", "R2"], ["R1", "R3"]])
    [{}, {'R1': 'R4'}]
    >>> renumber([["R5", "R7A", "R7B"], ["R5"]], every=True)
    [{'R5': 'R1', 'R7A': 'R2A', 'R7B': 'R2B'}, {'R5': 'R3'}]
    """
    highest: dict[str, int] = {}
    for refs in instances:
        for ref in refs:
            letters, number, _ = natural_order(ref)
            highest[letters] = max(highest.get(letters, 0), number)
    counter: dict[str, int] = {}
    taken: set[str] = set()
    out = []
    for refs in instances:
        bases: dict[tuple[str, int], list[tuple[str, str]]] = {}
        for ref in refs:
            letters, number, rest = natural_order(ref)
            bases.setdefault((letters, number), []).append((ref, rest))
        mapping = {}
        for (letters, number), members in bases.items():
            if every:
                counter[letters] = counter.get(letters, 0) + 1
                new_number = counter[letters]
            elif any(ref in taken for ref, _ in members):
                highest[letters] += 1
                new_number = highest[letters]
            else:
                new_number = number
            for ref, rest in members:
                new = f"{letters}{new_number}{rest}" if new_number != number else ref
                if new != ref:
                    mapping[ref] = new
                taken.add(new)
        out.append(mapping)
    return out


_DESIGN_SHARE = 0.6
"""Share of the build's time limit the networks' syntheses take together (at most)."""

_LEAST_DESIGN_S = 0.01
"""Seconds a stage gets however little of the limit is left (it then returns at once, cut)."""


def build_bom(board: Board, stock_only: bool = False, time_limit_s: float = 30.0,
              progress: Callable[[str], None] | None = None,
              renumber_all: bool = False,
              work_limit: float = DEFAULT_WORK_LIMIT, jobs: int = 1,
              deadline: Deadline | None = None) -> BomResult:
    """Design every network of a board, consolidate values and list the parts.

    Parameters
    ----------
    board : Board
    stock_only : bool
        Keep only candidates whose chosen parts are all in the stock list.
    time_limit_s : float
        Wall-clock limit of the whole build, s: every network's synthesis shares
        :data:`_DESIGN_SHARE` of it (each what is left over the networks left), the
        consolidation the rest (a guard; when it binds, a rerun may choose
        differently, and the notes say what it cut).
    work_limit : float
        Work limit of the consolidation in CP-SAT deterministic time units (about a
        second each); the same board with the same limit gives the same BOM.
    progress : callable, optional
        Called with each network's name as it is designed.
    deadline : Deadline, optional
        The command's deadline, already running (one of ``time_limit_s`` is
        started here when not given).
    renumber_all : bool
        Number every part afresh in board order (see :func:`renumber`); by default the
        designators of the design files are kept, repeats only renumbered.
    jobs : int
        Most processes to use: the networks are designed in parallel (one network's
        search on them all when it is the only one with free parts), and the
        consolidation solves up to ``jobs`` independent components side by side
        (:func:`synth.bom.consolidate.consolidate`'s ``workers``); 1 (the default) runs
        everything in this process, one component after another.  The BOM does not
        depend on it.

    Returns
    -------
    BomResult

    Raises
    ------
    InfeasibleError
        When a network has no feasible design (or none from stock with ``stock_only``).
    DesignError
        On a malformed stock list.
    """
    deadline = deadline or Deadline(time_limit_s)
    stock = load_stock(board.stock_path) if board.stock_path else []
    pools, options, notes = [], [], []
    jobs = check_jobs(jobs)
    designed = _designed_networks(board, progress, jobs, deadline)
    for net, (candidates, network_notes) in zip(board.networks, designed, strict=True):
        design = net.design
        notes += network_notes
        if stock_only and stock:
            def from_stock(values: dict[str, float], d: Design = design) -> bool:
                return all(_stock_match(key, stock, d.packages) for ref, key in
                           bom_parts(d, values) if _is_free(d, ref))
            candidates = [c for c in candidates if from_stock(c[1])]
            if not candidates:
                raise InfeasibleError(f"{design.origin}: network {net.name!r} has no feasible "
                                      "candidate built from stock values alone; allow buying "
                                      "(drop --stock-only) or widen the pool")
        options.append(candidates)
        pools.append(Pool(lines=[frozenset(k for _, k in bom_parts(design, c[1]))
                                 for c in candidates],
                          errors=[c[2] for c in candidates]))
    table_of = _tables(board, pools)
    in_stock = (frozenset(k for k, table in table_of.items() if _stock_match(k, stock, table))
                if stock else None)
    outcome = consolidate(pools, in_stock=in_stock,
                          time_limit_s=max(deadline.remaining(), 1e-9),
                          work_limit=work_limit, workers=jobs)
    if outcome.fallback:
        notes.append("consolidation: no cover found within the time limit; every network "
                     "keeps its own best candidate (not consolidated)")
    elif outcome.cut:
        notes.append(f"consolidation: the {outcome.cut} cut the search short "
                     f"({outcome.status}); best assignment known kept"
                     + ("; a rerun may differ" if outcome.cut == "time limit" else ""))
    before = len(set().union(*(p.lines[0] for p in pools)))
    return _listing(board, options, outcome, before, table_of, stock, notes,
                    stock_only=stock_only, renumber_all=renumber_all)


_Designed = tuple[list[tuple[int, dict[str, float], float]], list[str]]
"""A network's candidates (rank, physical part values, objective), and its notes."""


def _design_network(work: tuple[str, Design, int, int, float]) -> _Designed:
    """Design one network (name, design, pool, processes, time limit in s): its best
    ``pool`` candidates, or its own values checked."""
    name, design, pool, jobs, time_limit_s = work
    if design.free_resistors:
        result = synthesize(design, top=pool, time_limit_s=time_limit_s, jobs=jobs)
        notes = [f"network {name}: cut by the time limit: {cut}" for cut in result.cuts]
        if not result.feasible:
            raise InfeasibleError(f"{design.origin}: network {name!r} has no standard "
                                  f"values meeting every window and limit; binding: "
                                  f"{result.binding}")
        if not result.proven_optimal:
            notes.append(f"network {name}: search not proven optimal")
        return [(c.rank, dict(c.check.values), c.objective) for c in result.candidates], notes
    checked = check(design)
    if not checked.ok:
        raise InfeasibleError(f"{design.origin}: network {name!r} fails: "
                              + "; ".join(map(str, checked.problems)))
    return [(1, dict(checked.values), _objective(checked))], []


_HERE_S = 0.5
"""Seconds of designing a board spends in this process before the networks left go to
worker processes (a board designed within them would lose more to starting workers)."""


def _designed_networks(board: Board, progress: Callable[[str], None] | None, jobs: int,
                       deadline: Deadline) -> list[_Designed]:
    """Every network designed, in board order: the first ones here, while they take less
    than :data:`_HERE_S` together, then the rest on ``jobs`` processes, one network each.

    The networks left share :data:`_DESIGN_SHARE` of the time left evenly (those on the
    workers as many at a time as there are workers)."""
    searched = sum(1 for net in board.networks if net.design.free_resistors)
    inner = jobs if searched <= 1 else 1  # a lone search gets every process itself
    designed: list[_Designed] = []
    start = time.perf_counter()
    for number, net in enumerate(board.networks):
        if jobs > 1 and searched > 1 and time.perf_counter() - start > _HERE_S:
            break
        if progress is not None:
            progress(net.name)
        left = max(sum(1 for n in board.networks[number:] if n.design.free_resistors), 1)
        limit = max(deadline.remaining() * _DESIGN_SHARE / left, _LEAST_DESIGN_S)
        designed.append(_design_network((net.name, net.design, board.pool, inner, limit)))
    rest = board.networks[len(designed):]
    if not rest:
        return designed
    left = max(sum(1 for n in rest if n.design.free_resistors), 1)
    limit = max(deadline.remaining() * _DESIGN_SHARE * min(jobs, left) / left,
                _LEAST_DESIGN_S)
    if progress is not None:
        for net in rest:
            progress(net.name)
    return designed + ordered_map(
        _design_network, [(net.name, net.design, board.pool, inner, limit) for net in rest],
        jobs)


def bom_of_values(board: Board, picks: Sequence[CheckResult | Candidate],
                  *, renumber_all: bool = False) -> BomResult:
    """The bill of materials of given values, one set per network: no search, no consolidation.

    Parameters
    ----------
    board : Board
        Its networks, in order, and its stock list (matched as by :func:`build_bom`).
    picks : sequence of CheckResult or Candidate
        Per network: a checked design, or the synthesis candidate it keeps (its
        physical parts' values, with its objective).
    renumber_all : bool
        As for :func:`build_bom`.

    Returns
    -------
    BomResult
        Its consolidation record says ``"values given"``: each network keeps its values.

    Raises
    ------
    DesignError
        When ``picks`` does not give one value set per network, or on a malformed stock list.
    """
    if len(picks) != len(board.networks):
        raise DesignError(f"{len(picks)} value sets for {len(board.networks)} networks; give "
                          "one per network")
    stock = load_stock(board.stock_path) if board.stock_path else []
    options = [[(1, dict(p.values), _objective(p)) if isinstance(p, CheckResult)
                else (p.rank, dict(p.check.values), p.objective)] for p in picks]
    pools = [Pool(lines=[frozenset(k for _, k in bom_parts(net.design, values))],
                  errors=[objective])
             for net, ((_, values, objective),) in zip(board.networks, options, strict=True)]
    table_of = _tables(board, pools)
    lines = set(table_of)
    to_buy = sum(1 for k in lines if not _stock_match(k, stock, table_of[k])) if stock else 0
    given = Consolidation(choice=(0,) * len(pools), lines=len(lines), to_buy=to_buy,
                          total_error=sum(c[0][2] for c in options), optimal=True,
                          status="values given", elapsed_s=0.0)
    return _listing(board, options, given, len(lines), table_of, stock, [],
                    stock_only=False, renumber_all=renumber_all)


def _objective(checked: CheckResult) -> float:
    """A checked design's largest goal error, as the search measures a candidate's."""
    design = checked.design
    return max((float(target.objective(report.value))
                for target, report in zip(design.targets, checked.targets, strict=True)
                if target.equals is not None), default=0.0)


def _tables(board: Board, pools: Sequence[Pool]) -> dict[LineKey, Mapping[str, PackageRating]]:
    """The package table each line is matched against: that of a network that uses it."""
    table_of: dict[LineKey, Mapping[str, PackageRating]] = {}
    for net, pool in zip(board.networks, pools, strict=True):
        for line_set in pool.lines:
            for key in line_set:
                table_of.setdefault(cast(LineKey, key), net.design.packages)
    return table_of


def _listing(board: Board, options: list[list[tuple[int, dict[str, float], float]]],
             outcome: Consolidation, before: int,
             table_of: dict[LineKey, Mapping[str, PackageRating]], stock: list[StockItem],
             notes: list[str], *, stock_only: bool, renumber_all: bool) -> BomResult:
    """The BOM lines, designators and placements of the chosen candidate of each network."""
    picked = [candidates[pick] for pick, candidates in zip(outcome.choice, options, strict=True)]
    instances = [[ref for ref, _ in bom_parts(net.design, values)]
                 for net, (_, values, _) in zip(board.networks, picked, strict=True)
                 for _ in range(net.count)]
    mappings = iter(renumber(instances, every=renumber_all))
    renumbered: dict[str, dict[str, str]] = {}
    refs_by_key: dict[LineKey, list[str]] = defaultdict(list)
    arrays_by_key: dict[LineKey, list[tuple[str, ...]]] = defaultdict(list)
    placed: list[tuple[str, str, str, LineKey]] = []
    chosen = []
    picked_values: dict[str, dict[str, float]] = {}
    for net, pick, candidates in zip(board.networks, outcome.choice, options, strict=True):
        rank, values, objective = candidates[pick]
        picked_values.update({net.name if net.count == 1 else f"{net.name} #{copy + 1}": values
                              for copy in range(net.count)})
        parts = bom_parts(net.design, values)
        chosen.append(NetworkChoice(name=net.name, count=net.count, rank=rank, values=values,
                                    objective=objective, pool_size=len(candidates)))
        for copy in range(net.count):
            mapping = next(mappings)
            label = net.name if net.count == 1 else f"{net.name} #{copy + 1}"
            if mapping:
                renumbered[label] = mapping
            for ref, key in parts:
                refs_by_key[key].append(mapping.get(ref, ref))
                placed.append((mapping.get(ref, ref), label, ref, key))
            for array in net.design.arrays:
                key = _array_key(net.design, array.name, values)
                arrays_by_key[key].append(tuple(mapping.get(m, m) for m in array.members))
    lines = []
    for number, key in enumerate(sorted(refs_by_key, key=lambda k: (k.value, k.package,
                                                                     k.tolerance, k.tcr)), 1):
        refs = sorted(refs_by_key[key], key=natural_order)
        packages = table_of.get(key, board.networks[0].design.packages)
        matches = _stock_match(key, stock, packages) if stock else []
        quantities = [m.quantity for m in matches]
        on_hand = (sum(q for q in quantities if q is not None)
                   if matches and any(q is not None for q in quantities) else None)
        arrays = tuple(arrays_by_key.get(key, ()))
        need = len(arrays) if key.is_array else len(refs)  # an array is one part
        shortfall = need if not matches else max(need - on_hand, 0) if on_hand is not None else 0
        series = {coarsest_series(v) for v in key.members or (key.value,)}
        lines.append(BomLine(
            number=number, key=key, series=series.pop() or "-" if len(series) == 1 else "-",
            rating=packages.get(key.package) if key.package else None, quantity=need,
            references=tuple(refs), on_hand=on_hand, in_stock=bool(matches),
            shortfall=shortfall, stock=_passed(matches), arrays=arrays,
        ))
        if stock_only and shortfall:
            notes.append(f"line {number}: {need} needed, {on_hand} on hand; {shortfall} to buy")
    number_of = {line.key: line.number for line in lines}
    placements = tuple(Placement(designator=ref, network=label, original=original,
                                 line=number_of[key],
                                 ohms=_own_value(picked_values[label], original, key))
                       for ref, label, original, key in placed)
    return BomResult(board=board, lines=tuple(lines), networks=tuple(chosen),
                     renumbered=renumbered, consolidation=outcome, lines_before=before,
                     notes=tuple(notes), placements=placements,
                     stock_columns=tuple(dict.fromkeys(c for item in stock for c, _ in item.extra)))


def _own_value(values: dict[str, float], ref: str, key: LineKey) -> float | None:
    """A matched array member's own value, ohm (None for a single resistor's line)."""
    return float(f"{values[ref]:.9g}") if key.is_array else None
