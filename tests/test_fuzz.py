"""A property-based fuzz of the command line: no input ends in a traceback.

Mutated design files, board files and stock lists (values at the edge of the float
range, unicode, wrong types, missing and unknown keys, other encodings) and option
values, designs on standard input) are run in process; every run must exit 0, 1 or 2,
print no traceback, refuse bad input in one line, and leave no file behind: no
temporary file beside an output, and no output at all after a refusal (exit 2).  The
suite runs a bounded number of examples; ``python benchmarks/fuzz.py`` runs 10,000 and
more.
"""

from __future__ import annotations

import random

from fuzzing import PROBLEMS, board_case, design_case, option_args, outcome, stdin_case
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

FUZZ = settings(max_examples=100, deadline=None, database=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow])


@FUZZ
@given(rng=st.randoms(use_true_random=False))
def test_mutated_design_files_end_cleanly(tmp_path, rng: random.Random):
    result = outcome(design_case(rng, tmp_path))
    assert result.kind not in PROBLEMS and not result.kind.startswith("exit"), result.detail


@FUZZ
@given(rng=st.randoms(use_true_random=False))
def test_options_at_the_edge_end_cleanly(tmp_path, rng: random.Random):
    result = outcome(option_args(rng, tmp_path))
    assert result.kind not in PROBLEMS and not result.kind.startswith("exit"), result.detail


@settings(max_examples=30, deadline=None, database=None)
@given(rng=st.randoms(use_true_random=False))
def test_mutated_designs_on_standard_input_end_cleanly(rng: random.Random):
    result = outcome(*stdin_case(rng))
    assert result.kind not in PROBLEMS and not result.kind.startswith("exit"), result.detail


@settings(max_examples=20, deadline=None, database=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(rng=st.randoms(use_true_random=False))
def test_mutated_board_files_and_stock_lists_end_cleanly(tmp_path, rng: random.Random):
    result = outcome(board_case(rng, tmp_path))
    assert result.kind not in PROBLEMS and not result.kind.startswith("exit"), result.detail


def test_the_classifier_sees_a_traceback_and_a_split_message(monkeypatch):
    import synth.catalog.series

    def broken(*args, **kwargs):
        raise KeyError("boom")

    monkeypatch.setattr(synth.catalog.series, "nearest_value", broken)
    assert outcome(["series", "E96", "--nearest", "1k"]).kind == "traceback"


def test_the_classifier_sees_a_file_left_behind(tmp_path, monkeypatch):
    import synth.cli.run

    saved = tmp_path / "saved.toml"
    quick = ["divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0", "--top", "1",
             "--save", str(saved)]
    assert outcome(quick).kind == "ok" and saved.exists()
    saved.unlink()

    def careless(outputs, *, force, folder=None):  # leaves a temporary file, then refuses
        (tmp_path / ".saved.toml.12345678").write_text("x", encoding="utf-8")
        raise synth.cli.run.DesignError("refused")

    monkeypatch.setattr(synth.cli.run, "write_files", careless)
    assert outcome(quick).kind == "temporary left"
    (tmp_path / ".saved.toml.12345678").unlink()

    def half(outputs, *, force, folder=None):  # writes, then refuses
        saved.write_text("x", encoding="utf-8")
        raise synth.cli.run.DesignError("refused")

    monkeypatch.setattr(synth.cli.run, "write_files", half)
    assert outcome(quick).kind == "written on refusal"
