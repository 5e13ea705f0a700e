"""Refused options, interruptions and solver failures on the command line (synth.cli)."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.cli import cli

DIVIDER = ["divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0"]


def run(*args: str):
    return CliRunner().invoke(cli, list(args))


@pytest.mark.parametrize(("extra", "fragment"), [
    (["--time-limit", "0"], "--time-limit 0.0 must be a positive number of seconds"),
    (["--time-limit", "-3"], "must be a positive number of seconds"),
    (["--time-limit", "nan"], "must be a positive number of seconds"),
    (["--min-yield", "99%", "--require", "worst-case"], "--min-yield goes with --require yield"),
])
def test_search_options_that_cannot_hold_are_refused(extra, fragment):
    result = run(*DIVIDER, *extra)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "Traceback" not in result.output
    assert len(result.stderr.strip().splitlines()) == 1


def test_led_refuses_the_range_it_would_ignore():
    result = run("led", "--supply", "5 V", "--forward", "2 V", "--current", "20 mA",
                 "--range", "1k:2k")
    assert result.exit_code == 2
    assert "--range does not apply to led" in result.stderr


def test_a_bare_number_as_a_window_is_refused(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text('''
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"
[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "E24"
range = ["1k", "100k"]
[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
[[target]]
voltage = "out"
equals = "4 V"
within = 1
''', encoding="utf-8")
    result = run("design", str(path))
    assert result.exit_code == 2
    assert "within 1 has no unit" in result.stderr and 'such as within = "10 mV"' in result.stderr


def test_ctrl_c_during_a_search_exits_130_and_writes_nothing(monkeypatch, tmp_path):
    import synth.synthesis

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(synth.synthesis, "synthesize", interrupted)
    saved = tmp_path / "saved.toml"
    result = run(*DIVIDER, "--save", str(saved))
    assert result.exit_code == 130
    assert result.stderr.strip() == "rnsynth: interrupted; nothing was written"
    # the design file is written with the other outputs, after the search: nothing is
    # written, not even a temporary file
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("error", [RuntimeError("CP-SAT: MODEL_INVALID"),
                                   ValueError("array is too big"),
                                   ArithmeticError("overflow")])
def test_a_solver_failure_is_one_line_and_exit_two(monkeypatch, error):
    import synth.synthesis

    def failing(*args, **kwargs):
        raise error

    monkeypatch.setattr(synth.synthesis, "synthesize", failing)
    result = run(*DIVIDER)
    assert result.exit_code == 2 and "Traceback" not in result.output
    assert result.stderr.startswith("rnsynth: the calculation could not be completed (")
    assert str(error) in result.stderr and len(result.stderr.strip().splitlines()) == 1


@pytest.mark.parametrize("command", [DIVIDER, ["design", "examples/greenhouse_probe.toml"],
                                     ["check", "examples/greenhouse_probe.toml"]],
                         ids=["quick", "design", "check"])
@pytest.mark.parametrize("jobs", ["0", "-2", "2.5", "two", " "])
def test_a_bad_process_count_is_one_line_and_exit_two(command, jobs):
    result = run(*command, "--jobs", jobs)
    assert result.exit_code == 2, result.output
    assert result.stderr.strip().splitlines() == [
        f"rnsynth: --jobs {jobs!r} must be a whole number of processes, 1 or more (1 runs "
        "everything in this process)"]


@pytest.mark.parametrize("command", [DIVIDER, ["design", "examples/greenhouse_probe.toml",
                                               "--samples", "0"]], ids=["quick", "design"])
def test_the_process_count_reaches_the_search(command, monkeypatch):
    import synth.synthesis
    from synth.parallel import available_cores

    asked = []
    real = synth.synthesis.synthesize

    def counting(*args, **kwargs):
        asked.append(kwargs["jobs"])
        return real(*args, **kwargs)

    monkeypatch.setattr(synth.synthesis, "synthesize", counting)
    assert run(*command, "--jobs", "3").exit_code == 0
    assert run(*command).exit_code == 0
    assert asked == [3, available_cores()]


@pytest.mark.parametrize("command", [
    ["check", "examples/greenhouse_probe.toml"],
    ["design", "examples/greenhouse_probe.toml", "--top", "1"],
    ["divider", "--input", "12 V", "--output", "3.3 V", "--top", "1"],
], ids=["check", "design", "quick"])
def test_monte_carlo_figures_do_not_depend_on_the_process_count(command, monkeypatch):
    # 3 seeded shards (the last one short), the two after the first run on worker
    # processes with --jobs 2: the JSON spread figures are those of --jobs 1, bit for bit
    import json

    import synth.spread.shard_map as shard_map
    from synth.spread.monte_carlo import SHARD_SIZE

    monkeypatch.setattr(shard_map, "PARALLEL_FROM_S", 0.0)
    sent = []
    real = shard_map.ordered_map

    def counting(function, items, jobs=1, **kwargs):
        sent.append(jobs)
        return real(function, items, jobs, **kwargs)

    monkeypatch.setattr(shard_map, "ordered_map", counting)
    spreads = []
    for jobs in ("1", "2"):
        result = run(*command, "--json", "--seed", "7", "--samples",
                     str(2 * SHARD_SIZE + 999), "--jobs", jobs)
        assert result.exit_code in (0, 1), result.output
        document = json.loads(result.stdout)
        spread = (document["spread"] if command[0] == "check"
                  else document["candidates"][0]["spread"])
        assert spread["shards"] == 3 and spread["samples_run"] == 2 * SHARD_SIZE + 999
        spreads.append(spread)
    assert sent == [2]  # the run with --jobs 2 sent its shards to the workers
    assert spreads[0] == spreads[1]
