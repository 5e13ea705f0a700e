"""A property-based fuzz of the command line: no input ends in a traceback.

Mutated design files, board files and stock lists (values at the edge of the float
range, unicode, wrong types, missing and unknown keys, other encodings) and option
values are run in process; every run must exit
0, 1 or 2, print no traceback, and refuse bad input in one line.  The suite runs a
bounded number of examples; ``python benchmarks/fuzz.py`` runs 10,000 and more.
"""

from __future__ import annotations

import random

from fuzzing import PROBLEMS, board_case, design_case, option_args, outcome
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
def test_options_at_the_edge_end_cleanly(rng: random.Random):
    result = outcome(option_args(rng))
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
