"""rnsynth bom: board files, consolidation, stock, formats and refused input."""

from __future__ import annotations

import csv
import io
import json

import pytest
from click.testing import CliRunner

from synth.bom.lines import collapse_references
from synth.cli import cli
from synth.errors import InfeasibleError

from conftest import ROOT

DIVIDER = """
[design]
title = "{name}"
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "{vin}"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "E24"
range = ["1k", "100k"]
tolerance = "1%"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
choose = "E24"
range = ["1k", "100k"]
tolerance = "1%"

[[resistor]]
ref = "RX"
nodes = ["out", "gnd"]
value = "1M"
bom = false

[[target]]
voltage = "out"
equals = "{vout}"
within = "1%"
"""


@pytest.fixture
def board(tmp_path):
    for name, vin, vout in (("a", "12 V", "3.3 V"), ("b", "5 V", "1.8 V"),
                            ("c", "24 V", "5 V")):
        (tmp_path / f"{name}.toml").write_text(
            DIVIDER.format(name=name, vin=vin, vout=vout), encoding="utf-8")
    (tmp_path / "board.toml").write_text("""
[board]
title = "bench instrument"
pool = 50

[[network]]
file = "a.toml"

[[network]]
file = "b.toml"
count = 2

[[network]]
file = "c.toml"
name = "input"
""", encoding="utf-8")
    return tmp_path


def run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def test_csv_reads_back_and_consolidation_saves_lines(board):
    result = run("bom", board / "board.toml", "--quiet")
    assert result.exit_code == 0, result.output
    assert result.stdout_bytes.startswith(b"\xef\xbb\xbfline,")  # UTF-8 byte-order mark
    rows = list(csv.DictReader(io.StringIO(result.stdout.removeprefix("\ufeff"))))
    # the columns of earlier versions come first, in their order; new ones follow
    assert rows and list(rows[0]) == [
        "line", "quantity", "references", "value", "code", "ohms", "series", "tolerance",
        "tcr_ppm_per_c", "package", "imperial", "metric", "mount", "rated_power_w",
        "in_stock", "on_hand", "to_buy", "voltage_rating_v", "technology", "description"]
    # 4 networks (b twice) x 2 BOM parts; the 1M model resistor stays off the BOM
    assert sum(int(r["quantity"]) for r in rows) == 8
    assert all(r["package"] == "0603" and r["imperial"] == "0603" and r["metric"] == "1608M"
               for r in rows)
    assert all(float(r["ohms"]) != 1e6 for r in rows)
    doc = json.loads(run("bom", board / "board.toml", "--format", "json", "--quiet").stdout)
    c = doc["consolidation"]
    assert c["optimal"] and c["lines_after"] == len(doc["lines"]) <= c["lines_before"]
    names = [n["name"] for n in doc["networks"]]
    assert names == ["a", "b", "input"]
    # designators: a keeps R1, R2; both copies of b and the input network are renumbered
    refs = [ref for row in doc["lines"] for ref in expand(row["references"])]
    assert sorted(refs, key=lambda r: int(r[1:])) == [f"R{k}" for k in range(1, 9)]
    assert doc["renumbered"]["b #1"] == {"R1": "R3", "R2": "R4"}


def expand(text):
    out = []
    for part in text.split(", "):
        if "–" in part:
            a, b = part.split("–")
            out += [f"R{k}" for k in range(int(a[1:]), int(b[1:]) + 1)]
        else:
            out.append(part)
    return out


def test_markdown_table_is_well_formed(board):
    text = run("bom", board / "board.toml", "--format", "markdown", "--quiet").stdout
    table = [line for line in text.splitlines() if line.startswith("|")]
    widths = {line.count("|") - line.count("\\|") for line in table}
    assert len(widths) == 1 and len(table) >= 3
    assert set(table[1].replace("|", "")) == {"-"}


def test_output_file_is_atomic_and_not_overwritten(board):
    target = board / "bom.csv"
    first = run("bom", board / "board.toml", "--output", target)
    assert first.exit_code == 0 and "BOM written" in first.output and target.exists()
    before = target.read_text()
    again = run("bom", board / "board.toml", "--output", target)
    assert again.exit_code == 2 and "already exists; pass --force" in again.stderr
    assert target.read_text() == before
    assert run("bom", board / "board.toml", "--output", target, "--force").exit_code == 0
    assert not [p for p in board.iterdir() if p.name.startswith(".bom.csv")]


def test_stock_marks_lines_and_shortfalls(board):
    stock = board / "shelf.csv"
    doc = json.loads(run("bom", board / "board.toml", "--format", "json", "--quiet").stdout)
    first = doc["lines"][0]
    stock.write_text(f"value,package,tolerance,quantity\n{first['code']},0603,1%,1\n",
                     encoding="utf-8")
    doc = json.loads(run("bom", board / "board.toml", "--format", "json", "--quiet",
                         "--stock", stock).stdout)
    line = next(r for r in doc["lines"] if r["code"] == first["code"])
    assert line["in_stock"] is True and line["on_hand"] == 1
    assert line["to_buy"] == line["quantity"] - 1
    others = [r for r in doc["lines"] if r["code"] != first["code"]]
    assert all(r["in_stock"] is False and r["to_buy"] == r["quantity"] for r in others)


def test_stock_only_restricts_picks(board):
    from synth.catalog.series import series_values
    from synth.units import format_rkm

    stock = board / "shelf.csv"
    shelf = [v for k, v in enumerate(series_values("E24", 1e3, 1e5)) if k % 2 == 0]  # E12
    stock.write_text("value,package,tolerance,quantity\n" + "".join(
        f"{format_rkm(v)},0603,1%,100\n" for v in shelf), encoding="utf-8")
    result = run("bom", board / "board.toml", "--stock", stock, "--stock-only",
                 "--format", "json", "--quiet")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert all(r["in_stock"] is True and r["to_buy"] == 0 for r in doc["lines"])
    assert all(r["ohms"] in shelf for r in doc["lines"])
    stock.write_text("value,package,tolerance,quantity\n1k,0603,1%,100\n", encoding="utf-8")
    result = run("bom", board / "board.toml", "--stock", stock, "--stock-only", "--quiet")
    assert result.exit_code == 1 and "from stock values alone" in result.stderr


@pytest.mark.parametrize(("setup", "fragment"), [
    ("missing", "no such file; check the path"),
    ("stock", "shelf.csv, line 3: 'lots' is not a resistance"),
    ("board", "unknown key 'pools'; did you mean 'pool'?"),
    ("network", "design file 'nope.toml' was not found"),
])
def test_refused_input(board, setup, fragment):
    args = ["bom"]
    if setup == "missing":
        args.append(board / "absent.toml")
    elif setup == "stock":
        (board / "shelf.csv").write_text("value,quantity\n1k,3\nlots,2\n", encoding="utf-8")
        args += [board / "board.toml", "--stock", board / "shelf.csv"]
    elif setup == "board":
        (board / "bad.toml").write_text("[board]\npools = 3\n[[network]]\nfile = 'a.toml'\n")
        args.append(board / "bad.toml")
    else:
        (board / "bad.toml").write_text("[[network]]\nfile = 'nope.toml'\n")
        args.append(board / "bad.toml")
    target = board / "out.csv"
    result = run(*args, "--output", target)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "Traceback" not in result.stderr
    assert not target.exists()


def test_collapse_references():
    assert collapse_references(["R1", "R2", "R3", "R4", "R7"]) == "R1–R4, R7"
    assert collapse_references(["R2", "R1"]) == "R1, R2"
    assert collapse_references(["R10", "R9", "R11", "R3A"]) == "R3A, R9–R11"


def test_bundled_board_example():
    result = run("bom", ROOT / "examples" / "greenhouse_board.toml", "--format", "json",
                 "--quiet")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    lamp = next(n for n in doc["networks"] if n["name"] == "status lamp")
    assert lamp["count"] == 2


HOUSE_TABLE = ("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
               "limiting_voltage_v,source\nbig,chip,2512,6332M,1.5,70,155,300,house table\n")


def test_rating_columns_come_from_each_networks_own_package_table(tmp_path):
    # network "a" uses the bundled table, network "b" its own with a package "big":
    # b's lines carry big's rating whatever order the files are given in
    (tmp_path / "house.csv").write_text(HOUSE_TABLE, encoding="utf-8")
    (tmp_path / "a.toml").write_text(DIVIDER.format(name="a", vin="12 V", vout="3.3 V"),
                                     encoding="utf-8")
    own = DIVIDER.format(name="b", vin="5 V", vout="1.8 V").replace(
        'package = "0603"', 'package = "big"\npackages = "house.csv"')
    (tmp_path / "b.toml").write_text(own, encoding="utf-8")
    for order in (["a.toml", "b.toml"], ["b.toml", "a.toml"]):
        result = CliRunner().invoke(cli, ["bom", *[str(tmp_path / f) for f in order],
                                          "--format", "json", "--quiet"])
        assert result.exit_code == 0, result.output
        lines = json.loads(result.output)["lines"]
        big = [line for line in lines if line["package"] == "big"]
        assert big and all(line["rated_power_w"] == 1.5 for line in big)
        small = [line for line in lines if line["package"] == "0603"]
        assert small and all(line["rated_power_w"] == 0.1 for line in small)


@pytest.mark.parametrize("work", ["20", "0.01"])
def test_three_runs_of_one_board_write_the_same_bytes(board, work):
    # the wall clock no longer decides: CSV repeats whole, JSON all but its measured time
    # (common practice: a build is reproducible when the same inputs give the same bytes)
    csvs = {run("bom", board / "board.toml", "--quiet", "--work-limit", work).stdout_bytes
            for _ in range(3)}
    assert len(csvs) == 1
    docs = []
    for _ in range(3):
        doc = json.loads(run("bom", board / "board.toml", "--quiet", "--format", "json",
                             "--work-limit", work).stdout)
        assert doc["consolidation"].pop("elapsed_s") >= 0
        docs.append(json.dumps(doc, sort_keys=True))
    assert len(set(docs)) == 1
    stages = json.loads(docs[0])["consolidation"]["stages"]
    assert [s["name"] for s in stages] == ["lines", "error"]
    assert all(s["work"] <= float(work) + 0.1 for s in stages)


def test_a_time_limit_too_short_for_any_cover_keeps_each_networks_best(board):
    # the consolidation has no time at all.  Each network's small search gets a least
    # share, so it usually runs whole and the BOM falls back to every network's own best;
    # on a slow machine the limit cuts a network to one candidate, which the BOM says.
    # Either way nothing is consolidated and nothing unproven is called proven.
    result = run("bom", board / "board.toml", "--format", "json", "--time-limit", "1e-9")
    assert result.exit_code == 0, result.output
    assert "Traceback" not in result.output
    doc = json.loads(result.stdout)
    c = doc["consolidation"]
    assert c["lines_after"] == c["lines_before"] and not c["optimal"]
    cut = [n["name"] for n in doc["networks"]
           if f"network {n['name']}: search not proven optimal" in doc["notes"]]
    assert all(n["pool"] == 1 for n in doc["networks"] if n["name"] in cut)
    if any(n["pool"] > 1 for n in doc["networks"]):  # a choice was left to consolidate
        assert c["fallback"] and c["cut"] == "time limit"
        assert not any(s["proven"] for s in c["stages"])
        assert ("consolidation: no cover found within the time limit; every network keeps "
                "its own best candidate (not consolidated)") in doc["notes"]
        assert "not consolidated: no cover found within the time limit" in result.stderr
    else:  # every network cut to one candidate: nothing to choose, each one unproven
        assert sorted(cut) == sorted(n["name"] for n in doc["networks"])


@pytest.mark.parametrize("value", ["0", "-1", "inf", "nan"])
def test_a_work_limit_must_be_positive_and_finite(board, value):
    result = run("bom", board / "board.toml", "--work-limit", value)
    assert result.exit_code == 2
    assert f"--work-limit {float(value)} must be a positive number of work units" in result.output


def test_the_command_default_work_limit_is_the_librarys():
    from synth.bom.consolidate import DEFAULT_WORK_LIMIT
    from synth.cli.commands import BOM_WORK_LIMIT

    assert BOM_WORK_LIMIT == DEFAULT_WORK_LIMIT


def test_the_bom_is_the_same_on_two_processes(board, monkeypatch):
    from synth.bom import build
    from synth.design.board import load_board
    from synth.report.bom import render_bom

    loaded = load_board([str(board / "board.toml")])
    workers = []

    def consolidate(*args, **kwargs):
        workers.append(kwargs["workers"])
        return real(*args, **kwargs)

    real = build.consolidate
    monkeypatch.setattr(build, "consolidate", consolidate)
    one = build.build_bom(loaded, jobs=1)
    monkeypatch.setattr(build, "_HERE_S", -1.0)  # every network on the workers
    named = []
    two = build.build_bom(loaded, jobs=2, progress=named.append)
    assert named == ["a", "b", "input"]
    assert workers == [1, 2]  # the consolidation's components side by side too
    for form in ("csv", "per-designator", "markdown"):
        assert render_bom(one, form) == render_bom(two, form)
    assert one.consolidation.choice == two.consolidation.choice
    # the first network that fails is named, as one process names it
    (board / "b.toml").write_text(DIVIDER.format(name="b", vin="1 V", vout="3.3 V"),
                                  encoding="utf-8")
    failing = load_board([str(board / "board.toml")])
    with pytest.raises(InfeasibleError) as on_two:
        build.build_bom(failing, jobs=2)
    with pytest.raises(InfeasibleError) as on_one:
        build.build_bom(failing, jobs=1)
    assert str(on_two.value) == str(on_one.value) and "'b'" in str(on_one.value)


@pytest.mark.parametrize("jobs", ["0", "-1", "1.5", "all"])
def test_bom_refuses_a_bad_process_count(board, jobs):
    result = run("bom", board / "board.toml", "--jobs", jobs)
    assert result.exit_code == 2
    assert result.stderr.strip().splitlines() == [
        f"rnsynth: --jobs '{jobs}' must be a whole number of processes, 1 or more (1 runs "
        "everything in this process)"]


def test_the_bom_is_byte_for_byte_the_same_for_one_and_two_jobs(tmp_path, monkeypatch):
    import threading

    from synth.bom import consolidate

    # two groups of dividers in packages of their own: two components of the
    # consolidation, solved side by side on two jobs
    networks = []
    for package, ratios in (("0603", ("12 V", "3.3 V", "5 V", "1.8 V", "24 V", "5 V")),
                            ("0805", ("15 V", "2.5 V", "9 V", "3.3 V", "12 V", "1.2 V"))):
        for k in range(3):
            name = f"{package}-{k}"
            vin, vout = ratios[2 * k], ratios[2 * k + 1]
            (tmp_path / f"{name}.toml").write_text(
                DIVIDER.format(name=name, vin=vin, vout=vout).replace('"0603"', f'"{package}"'),
                encoding="utf-8")
            networks.append(f'[[network]]\nfile = "{name}.toml"\n')
    (tmp_path / "board.toml").write_text('[board]\ntitle = "two groups"\npool = 40\n\n'
                                         + "\n".join(networks), encoding="utf-8")
    threads = []
    real = consolidate._solve_part

    def solve_part(*args, **kwargs):
        threads.append(threading.current_thread() is threading.main_thread())
        return real(*args, **kwargs)

    monkeypatch.setattr(consolidate, "_solve_part", solve_part)
    outputs = {}
    for jobs in ("1", "2"):
        threads.clear()
        result = run("bom", tmp_path / "board.toml", "--quiet", "--jobs", jobs)
        assert result.exit_code == 0, result.output
        outputs[jobs] = result.stdout_bytes
        assert len(threads) == 2 and all(threads) == (jobs == "1")
    assert outputs["1"] == outputs["2"]
