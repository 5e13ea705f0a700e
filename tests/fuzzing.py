"""Mutated inputs for the fuzz tests: design and board files and option values.

Each case is drawn from a ``random.Random``, so the property test (hypothesis hands it
one) and ``benchmarks/fuzz.py`` (a seeded generator, many more cases) share it.  A case
runs the command line in process and is classified by :func:`outcome`.
"""

from __future__ import annotations

import copy
import random
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import tomli_w
from click.testing import CliRunner

from synth.cli import cli

ROOT = Path(__file__).resolve().parent.parent
SEEDS = [ROOT / "examples" / name for name in
         ("vent_sensor.toml", "greenhouse_probe.toml", "fixture_pad.toml")]

NUMBERS: list[Any] = [
    0, -1, 1, 2 ** 63 - 1, -(2 ** 63), 10 ** 400, 1e308, -1e308, 5e-324, float("nan"),
    float("inf"), -float("inf"), 0.0, -0.0, 1e-300, True, False,
]
TEXTS = [
    "1e1000000", "1e99999999999999999999", "9" * 400, "9" * 400 + "R", "1e-1000000", "",
    " ", "nan", "inf", "-inf", "4k7", "0", "-4k7", "1%", "-1%", "1e400 V", "1e-400 V",
    "-300 C", "-1 K", "100 ppm/C", "12 V", "50 µA", "$x^2$", "a\nb", "\x00", "ü" * 50,
    "R", "4m7", "1e3k", "E96", "E999", "stock.csv", "/etc/hostname", "x" * 5000,
    "100:10M", "1:1e1000000", "10M:100", "auto", "0603", "series", "parallel", "yield",
]
SHAPES: list[Any] = [[], {}, [[]], {"a": 1}, ["gnd", "gnd"], ["a"], ["10k", "1M", "2M"]]


def wild(rng: random.Random) -> Any:
    """A value at an edge: a number, a text, a shape of the wrong type."""
    pool = rng.choice((NUMBERS, TEXTS, SHAPES))
    return copy.deepcopy(rng.choice(pool))


def _mutate(rng: random.Random, data: dict[str, Any]) -> None:
    """Change, drop or add one key of one table, or one element of a list."""
    tables: list[dict[str, Any]] = []
    for value in data.values():
        if isinstance(value, dict):
            tables.append(value)
        elif isinstance(value, list):
            tables += [item for item in value if isinstance(item, dict)]
    if not tables or rng.random() < 0.05:
        data[rng.choice(["design", "source", "resistor", "target", "x", "amplifier"])] = \
            wild(rng)
        return
    table = rng.choice(tables)
    action = rng.random()
    if table and action < 0.15:
        del table[rng.choice(sorted(table))]
    elif action < 0.25:
        table[rng.choice(["gain", "count", "bom", "parts", "within", "unknown", "combine",
                          "equal_parts", "temperature", "require", "min_yield"])] = wild(rng)
    elif table:
        key = rng.choice(sorted(table))
        if isinstance(table[key], list) and table[key] and rng.random() < 0.5:
            table[key][rng.randrange(len(table[key]))] = wild(rng)
        else:
            table[key] = wild(rng)


def design_text(rng: random.Random) -> str:
    """A seed design with one to three mutations, as TOML text."""
    data = tomllib.loads(rng.choice(SEEDS).read_text(encoding="utf-8"))
    for _ in range(rng.randint(1, 3)):
        _mutate(rng, data)
    try:
        return tomli_w.dumps(data)
    except (TypeError, ValueError):  # a shape TOML cannot write: keep the text plain
        return "[design]\ntitle = 1\n"


OPTION_CASES: list[tuple[list[str], list[str]]] = [
    (["series", "E96"], ["--nearest", "--range"]),
    (["divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0",
      "--time-limit", "0.5", "--series", "E6"],
     ["--input", "--output", "--within", "--ambient", "--margin", "--range", "--package",
      "--samples", "--seed", "--time-limit", "--top"]),
    (["pad", "--impedance", "50", "--loss", "6 dB", "--samples", "0", "--time-limit", "0.5",
      "--series", "E6"],
     ["--impedance", "--loss", "--within", "--ambient", "--package", "--samples", "--seed"]),
]


def option_args(rng: random.Random) -> list[str]:
    """A quick command or ``series`` with one or two option values at an edge."""
    base, options = rng.choice(OPTION_CASES)
    args = list(base)
    for _ in range(rng.randint(1, 2)):
        value = wild(rng)
        args += [rng.choice(options), value if isinstance(value, str) else repr(value)]
    return args


@dataclass(frozen=True)
class Outcome:
    kind: str  # "ok", "fails", "refused", or a problem: "traceback", "exit N", "lines"
    detail: str


def outcome(args: list[str]) -> Outcome:
    """Run ``rnsynth ARGS`` in process and classify what happened."""
    result = CliRunner().invoke(cli, args)
    text = result.output + result.stderr
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        return Outcome("traceback", f"{type(result.exception).__name__}: {result.exception}")
    if "Traceback" in text:
        return Outcome("traceback", text[-300:])
    if result.exit_code not in (0, 1, 2):
        return Outcome(f"exit {result.exit_code}", text[-300:])
    if result.exit_code == 2:
        lines = result.stderr.strip().splitlines()
        if len(lines) != 1:
            return Outcome("lines", result.stderr[:300])
        return Outcome("refused", lines[0])
    return Outcome("ok" if result.exit_code == 0 else "fails", "")


def design_case(rng: random.Random, folder: Path) -> list[str]:
    """Write a mutated design into ``folder`` and return the ``check`` command for it."""
    path = folder / "fuzz.toml"
    path.write_text(design_text(rng), encoding="utf-8")
    if rng.random() < 0.2:
        return ["design", str(path), "--samples", "0", "--time-limit", "0.3", "--quiet",
                *rng.choice([[], ["--json"], ["--require", "worst-case"]])]
    return ["check", str(path), "--samples", rng.choice(["0", "50"]),
            *rng.choice([[], ["--json"], ["--verify"]])]


BOARD = ROOT / "examples" / "greenhouse_board.toml"


def _cell(rng: random.Random) -> str:
    value = wild(rng)
    return value if isinstance(value, str) else repr(value)


def board_case(rng: random.Random, folder: Path) -> list[str]:
    """Write a mutated board file and stock list into ``folder``; return the ``bom`` command."""
    data = tomllib.loads(BOARD.read_text(encoding="utf-8"))
    for network in data["network"]:
        (folder / network["file"]).write_bytes((BOARD.parent / network["file"]).read_bytes())
    data["board"]["pool"] = 3
    for _ in range(rng.randint(0, 2)):
        _mutate(rng, data)
    try:
        text = tomli_w.dumps(data)
    except (TypeError, ValueError):
        text = "board = 1\n"
    (folder / "board.toml").write_text(text, encoding="utf-8")
    rows = ["value,package,tolerance,quantity", "4k7,0603,1%,10", "10k,0603,,"]
    for _ in range(rng.randint(0, 3)):
        rows.insert(rng.randint(1, len(rows)),
                    ",".join(_cell(rng) for _ in range(rng.choice([1, 4, 4, 6]))))
    encoding = rng.choice(["utf-8", "utf-8-sig", "cp1252", "utf-16"])
    (folder / "stock.csv").write_bytes("\n".join(rows).encode(encoding, errors="replace"))
    return ["bom", str(folder / "board.toml"), "--quiet", "--time-limit", "1",
            *rng.choice([[], ["--stock", str(folder / "stock.csv")],
                         ["--stock", str(folder / "stock.csv"), "--stock-only"],
                         ["--format", "json"]])]


PROBLEMS = ("traceback", "lines")
