"""Boards: several networks designed together for one bill of materials.

A board file is TOML with a ``[board]`` table and ``[[network]]`` tables::

    [board]
    title = "Greenhouse controller"
    stock = "shelf.csv"        # optional house stock list
    pool = 200                 # candidates kept per network for consolidation

    [[network]]
    file = "probe.toml"        # a design file, relative to the board file
    name = "probe"             # optional; default: the file's stem
    count = 2                  # optional; copies of this network on the board

Design files can also be given directly; each is then one network.  Board and design
files end in ``.toml`` and a stock list in ``.csv``; a name with another suffix is
refused before it is looked for.  A board or design read from standard input is named
``<stdin>`` and the files it names are read relative to the current folder.
"""

from __future__ import annotations

__all__ = ["DEFAULT_POOL", "Board", "BoardNetwork", "load_board"]

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import IO, Any

from synth.design.load import load_design
from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.errors import DesignError, nearest_name
from synth.inputs import (
    STDIN,
    decode_input,
    parse_toml,
    present,
    read_stream,
    read_toml,
    require_suffix,
)

_BOARD_KEYS = ("title", "stock", "pool", "notes")


_NETWORK_KEYS = ("file", "name", "count", "note")


DEFAULT_POOL = 200
MAX_COUNT = 1_000_000  # copies of one network on a board


@dataclass(frozen=True)
class BoardNetwork:
    """One network of a board.

    Attributes
    ----------
    name : str
        Unique name (reports and reference renumbering use it).
    design : Design
    count : int
        Copies of this network on the board.
    """

    name: str
    design: Design
    count: int


@dataclass(frozen=True)
class Board:
    """A board: its networks, stock list and pool size.

    Attributes
    ----------
    title : str
    networks : tuple of BoardNetwork
    stock_path : Path or None
    pool : int
        Feasible candidates kept per network (the consolidation's room).
    """

    title: str
    networks: tuple[BoardNetwork, ...]
    stock_path: Path | None
    pool: int


_WHAT = "design or board file"


def _read_toml(path: Path) -> dict[str, Any]:
    require_suffix(path, _WHAT)
    return read_toml(path, _WHAT)


def _board_file(path: Path, data: dict[str, Any]) -> tuple[str, list[BoardNetwork],
                                                          Path | None, int]:
    for key in data:
        if key not in ("board", "network"):
            raise DesignError(f"{path}: unknown table {key!r}"
                              f"{nearest_name(key, ('board', 'network'))}; a board file has "
                              "[board] and [[network]] tables")
    board = data.get("board", {})
    if not isinstance(board, dict):
        raise DesignError(f"{path}: board must be a [board] table, not "
                          f"{type(board).__name__}; write [board] with title = ...")
    for key in board:
        if key not in _BOARD_KEYS:
            raise DesignError(f"{path}, [board]: unknown key {key!r}"
                              f"{nearest_name(key, _BOARD_KEYS)} (allowed: "
                              f"{', '.join(_BOARD_KEYS)})")
    pool = board.get("pool", DEFAULT_POOL)
    if not isinstance(pool, int) or isinstance(pool, bool) or pool < 1:
        raise DesignError(f"{path}, [board]: pool {pool!r} must be a whole number of at least 1")
    stock = None
    if "stock" in board:
        if not isinstance(board["stock"], str) or not board["stock"].strip():
            raise DesignError(f"{path}, [board]: stock must be the name of a CSV file, not "
                              f"{type(board['stock']).__name__} {str(board['stock'])[:40]!r}")
        require_suffix(board["stock"], "stock list", f"{path}, [board]")
        stock = path.parent / board["stock"]
        if not present(stock):
            raise DesignError(f"{path}, [board]: stock file {board['stock']!r} was not found; "
                              "check the path")
    networks = []
    entries = data.get("network", [])
    if not isinstance(entries, list):
        raise DesignError(f"{path}: network must be [[network]] tables, not "
                          f"{type(entries).__name__}; write each as [[network]] with "
                          "file = \"design.toml\"")
    if not entries:
        raise DesignError(f"{path}: the board lists no networks; add [[network]] tables with "
                          "file = \"design.toml\"")
    for index, entry in enumerate(entries, start=1):
        item = f"{path}, network #{index}"
        if not isinstance(entry, dict):
            raise DesignError(f"{item}: write it as a [[network]] table")
        for key in entry:
            if key not in _NETWORK_KEYS:
                raise DesignError(f"{item}: unknown key {key!r}{nearest_name(key, _NETWORK_KEYS)}"
                                  f" (allowed: {', '.join(_NETWORK_KEYS)})")
        if not isinstance(entry.get("file"), str):
            raise DesignError(f"{item}: file is missing; add file = \"design.toml\"")
        require_suffix(entry["file"], "design file", item)
        design_path = path.parent / entry["file"]
        if not present(design_path):
            raise DesignError(f"{item}: design file {entry['file']!r} was not found; check the "
                              "path (it is read relative to the board file)")
        count = entry.get("count", 1)
        if not isinstance(count, int) or isinstance(count, bool) or not 1 <= count <= MAX_COUNT:
            raise DesignError(f"{item}: count {str(count)[:40]} must be a whole number from 1 "
                              f"to {MAX_COUNT:,}")
        name = entry.get("name", design_path.stem)
        if not isinstance(name, str) or not name.strip():
            raise DesignError(f"{item}: name must be a non-empty text")
        networks.append(BoardNetwork(name=name.strip(), design=load_design(design_path),
                                     count=count))
    return str(board.get("title", path.stem)), networks, stock, pool


def load_board(paths: Sequence[str | Path], stock: str | Path | None = None,
               pool: int | None = None, *, stdin: IO[bytes] | None = None) -> Board:
    """Read a board from board files and design files.

    Parameters
    ----------
    paths : sequence of str or Path
        Board files (with a ``[board]`` or ``[[network]]`` table) and design files.
    stock : str or Path, optional
        A house stock list; overrides a board file's ``stock``.
    pool : int, optional
        Candidates kept per network; overrides a board file's ``pool``.
    stdin : binary stream, optional
        What a path of ``-`` reads (the command line hands it standard input): a board
        or design file named ``<stdin>``, whose files are read relative to the current
        folder, and whose network is named ``stdin``.  Without it ``-`` is refused.

    Raises
    ------
    DesignError
        On a missing or malformed file, a name without its suffix (``.toml``, a stock
        list ``.csv``), ``-`` given twice or without ``stdin``, or two networks with the
        same name.
    """
    if not paths:
        raise DesignError("no design or board file given; name at least one")
    title, networks, stock_path, board_pool = "", [], None, DEFAULT_POOL
    if sum(str(raw) == "-" for raw in paths) > 1:
        raise DesignError("-: standard input is named twice; it can be read once")
    for raw in paths:
        if str(raw) == "-":
            if stdin is None:
                raise DesignError("-: no standard input to read here; name a file")
            path = Path(STDIN)
            data = parse_toml(decode_input(read_stream(stdin, _WHAT), STDIN), STDIN, _WHAT)
        else:
            path = Path(raw)
            data = _read_toml(path)
        if "board" in data or "network" in data:
            t, nets, s, p = _board_file(path, data)
            title = title or t
            networks += nets
            stock_path = stock_path or s
            board_pool = p
        else:  # a design file, read once
            name = "stdin" if str(raw) == "-" else path.stem
            networks.append(BoardNetwork(name=name, design=design_from_dict(data, str(path)),
                                         count=1))
    seen: dict[str, int] = {}
    for net in networks:
        if net.name in seen:
            raise DesignError(f"{net.design.origin}: network name {net.name!r} is used twice on "
                              "the board; give each network its own name")
        seen[net.name] = 1
    if stock is not None:
        require_suffix(stock, "stock list")
        stock_path = Path(stock)
        if not present(stock_path):
            raise DesignError(f"{stock_path}: stock file not found; check the path")
    if pool is not None and pool < 1:
        raise DesignError(f"--pool {pool} must be at least 1")
    return Board(title=title or "board", networks=tuple(networks), stock_path=stock_path,
                 pool=pool or board_pool)
