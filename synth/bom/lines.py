"""Bill-of-materials records: line keys, lines, network choices and designator ranges.
"""

from __future__ import annotations

__all__ = [
    "BomLine", "BomResult", "LineKey", "NetworkChoice", "Placement", "collapse_references",
    "list_references", "natural_order",
]

import re
from dataclasses import dataclass, field

from synth.bom.consolidate import Consolidation
from synth.catalog.packages import PackageRating
from synth.design.board import Board

_REF = re.compile(r"^([A-Za-z]+)(\d+)(.*)$")


@dataclass(frozen=True, order=True)
class LineKey:
    """What makes two parts the same orderable line.

    A matched array (:mod:`synth.design.array`) is one orderable part: its members share
    one key, whose ``members`` are their values in member order (``value`` the first),
    with the array's ratio tolerance and TCR tracking; a single resistor has no members.
    """

    value: float
    package: str
    tolerance: float
    tcr: float
    members: tuple[float, ...] = ()
    ratio_tolerance: float = 0.0
    tcr_tracking: float = 0.0

    @property
    def is_array(self) -> bool:
        """True for a matched array's line."""
        return bool(self.members)


@dataclass(frozen=True)
class BomLine:
    """One line of the bill of materials.

    Attributes
    ----------
    number : int
    key : LineKey
    series : str
        Coarsest IEC 60063 series holding the value ("-" when none).
    rating : PackageRating or None
    quantity : int
    references : tuple of str
    on_hand : int or None
        Parts in stock (None: not in stock, or quantity not given).
    in_stock : bool
    shortfall : int
        Parts to buy beyond what is on hand (all of them when not in stock).
    stock : tuple of (str, str)
        The stock list's own columns (part number, location, price, …) of the matching rows:
        column name and value, the distinct values of several rows joined by ``"; "``.
    arrays : tuple of tuple of str
        For a matched array's line: each array's members' designators, one tuple per
        array (``quantity`` counts arrays, ``references`` lists every member); empty
        otherwise.
    """

    number: int
    key: LineKey
    series: str
    rating: PackageRating | None
    quantity: int
    references: tuple[str, ...]
    on_hand: int | None
    in_stock: bool
    shortfall: int
    stock: tuple[tuple[str, str], ...] = ()
    arrays: tuple[tuple[str, ...], ...] = ()


@dataclass(frozen=True)
class NetworkChoice:
    """The design picked for one network."""

    name: str
    count: int
    rank: int
    values: dict[str, float]
    objective: float
    pool_size: int


@dataclass(frozen=True)
class Placement:
    """One part on the board: its designator, where it comes from, and its BOM line.

    Attributes
    ----------
    designator : str
        The designator on the board (after any renumbering).
    network : str
        The network instance (``"lamp #2"`` for the second copy of ``lamp``).
    original : str
        The designator the design file gives the part.
    line : int
        The number of its BOM line.
    ohms : float or None
        A matched array member's own value, ohm (its line lists every member's); None
        for a single resistor (the line's value).
    """

    designator: str
    network: str
    original: str
    line: int
    ohms: float | None = None


@dataclass(frozen=True)
class BomResult:
    """Result of :func:`build_bom`.

    Attributes
    ----------
    board : Board
    lines : tuple of BomLine
    networks : tuple of NetworkChoice
    renumbered : dict of str to dict of str to str
        Per network instance, the designators that changed (old to new).
    consolidation : Consolidation
    lines_before : int
        Distinct lines with every network at its own best candidate.
    notes : tuple of str
    placements : tuple of Placement
        Every part on the board, in board order.
    stock_columns : tuple of str
        The stock list's own columns passed to the BOM, in the list's order.
    """

    board: Board
    lines: tuple[BomLine, ...]
    networks: tuple[NetworkChoice, ...]
    renumbered: dict[str, dict[str, str]]
    consolidation: Consolidation
    lines_before: int
    notes: tuple[str, ...] = field(default=())
    placements: tuple[Placement, ...] = field(default=())
    stock_columns: tuple[str, ...] = field(default=())

    @property
    def parts(self) -> int:
        """Parts on the board."""
        return sum(line.quantity for line in self.lines)


def natural_order(ref: str) -> tuple[str, int, str]:
    match = _REF.match(ref)
    return (match[1], int(match[2]), match[3]) if match else (ref, 0, "")


def list_references(refs: list[str]) -> str:
    """Designators one by one in natural order, comma-separated.

    Examples
    --------
    >>> list_references(["R10", "R2", "R1", "R3"])
    'R1, R2, R3, R10'
    """
    return ", ".join(sorted(set(refs), key=natural_order))


def collapse_references(refs: list[str], dash: str = "–") -> str:
    """Designators as ranges: ``R1, R2, R3, R4, R7`` becomes ``R1–R4, R7``.

    Examples
    --------
    >>> collapse_references(["R7", "R2", "R1", "R3", "R4", "C1", "R10A"])
    'C1, R1–R4, R7, R10A'
    >>> collapse_references(["R1", "R2", "R3"], dash="-")
    'R1-R3'
    """
    ordered = sorted(set(refs), key=natural_order)
    out: list[str] = []
    run: list[tuple[str, int]] = []

    def flush() -> None:
        if not run:
            return
        letters = run[0][0]
        if len(run) >= 3:
            out.append(f"{letters}{run[0][1]}{dash}{letters}{run[-1][1]}")
        else:
            out.extend(f"{letters}{n}" for _, n in run)
        run.clear()

    for ref in ordered:
        letters, number, rest = natural_order(ref)
        if _REF.match(ref) and not rest:
            if run and (run[-1][0] != letters or run[-1][1] + 1 != number):
                flush()
            run.append((letters, number))
        else:
            flush()
            out.append(ref)
    flush()
    return ", ".join(out)
