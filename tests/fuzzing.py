"""Mutated inputs for the fuzz tests: design and board files and option values.

Each case is drawn from a ``random.Random``, so the property test (hypothesis hands it
one) and ``benchmarks/fuzz.py`` (a seeded generator, many more cases) share it.  A case
runs the command line in process and is classified by :func:`outcome`, which also
looks at the output files the case asks for (``--output``, ``--save``, ``--plots``):
none may exist after a refusal (exit 2), and no temporary file ``.NAME.XXXXXXXX`` may
be left beside them whatever the outcome; a JSON report (``--json``, ``--format json``)
must be JSON, without ``NaN`` or ``Infinity``.
"""

from __future__ import annotations

import copy
import itertools
import json
import random
import shutil
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import tomli_w
from click.testing import CliRunner

from synth.cli import cli

ROOT = Path(__file__).resolve().parent.parent
SEEDS = [ROOT / "examples" / name for name in
         ("vent_sensor.toml", "greenhouse_probe.toml", "fixture_pad.toml",
          "scale_bridge_matched.toml")]

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
    (["check", str(ROOT / "examples" / "vent_sensor.toml"), "--samples", "0"],
     ["--samples", "--seed", "--distribution", "--time-limit", "--jobs"]),
    (["design", str(ROOT / "examples" / "vent_sensor.toml"), "--samples", "0",
      "--time-limit", "0.5", "--quiet"],
     ["--top", "--time-limit", "--rank-by", "--require", "--min-yield", "--samples", "--seed",
      "--plot-x", "--jobs"]),
]


OUTPUT_OPTIONS = ("--save", "--plots")  # and bom's --output (the quick commands' is a voltage)


def _fresh(*paths: Path) -> None:
    """Remove the outputs of an earlier case, so each case starts without them."""
    for path in paths:
        if path.is_dir():
            shutil.rmtree(path)
        else:
            path.unlink(missing_ok=True)


def option_args(rng: random.Random, folder: Path | None = None) -> list[str]:
    """A quick command, ``series``, ``check`` or ``design`` with one or two option values at
    an edge.

    With a ``folder``, a quick command sometimes also saves its design and plots there.
    """
    base, options = rng.choice(OPTION_CASES)
    args = list(base)
    for _ in range(rng.randint(1, 2)):
        value = wild(rng)
        args += [rng.choice(options), value if isinstance(value, str) else repr(value)]
    if folder is not None and base[0] not in ("series", "check", "design") and rng.random() < 0.3:
        _fresh(folder / "saved.toml", folder / "plots")
        args += ["--save", str(folder / "saved.toml")]
        if rng.random() < 0.2:
            args += ["--plots", str(folder / "plots")]
    return args


@dataclass(frozen=True)
class Outcome:
    kind: str  # "ok", "fails", "refused", or a problem: "traceback", "exit N", "lines",
    #            "temporary left" (a .NAME.XXXXXXXX file), "written on refusal",
    #            "invalid JSON" (not JSON, or NaN / Infinity in it)
    detail: str


def _outputs(args: list[str]) -> list[Path]:
    """The output files and folders ``args`` name (standard output, ``-``, aside)."""
    options = (*OUTPUT_OPTIONS, "--output") if args[:1] == ["bom"] else OUTPUT_OPTIONS
    return [Path(value) for option, value in itertools.pairwise(args)
            if option in options and value != "-"]


def _left_behind(outputs: list[Path]) -> list[str]:
    """Temporary files ``.NAME.XXXXXXXX`` beside an output, or any in a plot folder."""
    found = [item for p in outputs if p.parent.is_dir() for item in p.parent.iterdir()
             if item.name.startswith(f".{p.name}.")]
    found += [item for p in outputs if p.is_dir() for item in p.iterdir()
              if item.name.startswith(".")]
    return sorted(map(str, found))


def outcome(args: list[str], stdin: bytes | None = None) -> Outcome:
    """Run ``rnsynth ARGS`` in process (``stdin`` on its standard input) and classify it."""
    outputs = _outputs(args)
    before = {p for p in outputs if p.exists()}
    result = CliRunner().invoke(cli, args, input=stdin)
    text = result.output + result.stderr
    if _left_behind(outputs):
        return Outcome("temporary left", ", ".join(_left_behind(outputs)))
    if result.exit_code == 2 and any(p.exists() for p in outputs if p not in before):
        return Outcome("written on refusal", ", ".join(
            str(p) for p in outputs if p.exists() and p not in before))
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
    report = _json_report(args, result.stdout)
    if report is not None:
        try:
            json.loads(report, parse_constant=_not_json)
        except ValueError as error:
            return Outcome("invalid JSON", f"{error}: {report[:200]}")
    return Outcome("ok" if result.exit_code == 0 else "fails", "")


def _json_report(args: list[str], stdout: str) -> str | None:
    """The JSON report a run asked for (standard output, or bom's ``--output`` file)."""
    if "--json" in args:
        return stdout
    if ("--format", "json") not in itertools.pairwise(args):
        return None
    files = [path for path in _outputs(args) if path.suffix == ".csv"]  # bom --output
    return files[0].read_text(encoding="utf-8") if files and files[0].is_file() else stdout


def _not_json(name: str) -> None:
    """Refuse ``NaN`` and ``Infinity``, which Python writes but JSON does not have."""
    raise ValueError(f"{name} is not JSON")


def _plots(rng: random.Random, folder: Path, share: float) -> list[str]:
    """Sometimes (``share`` of the cases) ``--plots`` into a fresh folder."""
    _fresh(folder / "plots")
    return ["--plots", str(folder / "plots")] if rng.random() < share else []


def design_case(rng: random.Random, folder: Path) -> list[str]:
    """Write a mutated design into ``folder`` and return the ``check`` command for it."""
    path = folder / "fuzz.toml"
    path.write_text(design_text(rng), encoding="utf-8")
    if rng.random() < 0.2:
        return ["design", str(path), "--samples", "0", "--time-limit", "0.3", "--quiet",
                *rng.choice([[], ["--json"], ["--require", "worst-case"]]),
                *_plots(rng, folder, 0.03)]
    samples = rng.choice(["0", "50"])
    return ["check", str(path), "--samples", samples,
            *rng.choice([[], ["--json"], ["--verify"]]),
            *(_plots(rng, folder, 0.05) if samples != "0" else [])]


def stdin_case(rng: random.Random) -> tuple[list[str], bytes]:
    """A mutated design on standard input: the command (``check -``) and its input."""
    command = rng.choice([["check", "-", "--samples", "0"],
                          ["design", "-", "--samples", "0", "--time-limit", "0.3", "--quiet"]])
    return command, design_text(rng).encode("utf-8")


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
    _fresh(folder / "bom.csv")
    return ["bom", str(folder / "board.toml"), "--quiet", "--time-limit", "1",
            *rng.choice([[], ["--stock", str(folder / "stock.csv")],
                         ["--stock", str(folder / "stock.csv"), "--stock-only"],
                         ["--format", "json"]]),
            *(["--output", str(folder / "bom.csv")] if rng.random() < 0.5 else [])]


PROBLEMS = ("traceback", "lines", "temporary left", "written on refusal", "invalid JSON")
