"""Typed option values: whole counts in digits or exponent notation."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.cli.types import BadInput, Count


@pytest.mark.parametrize(("text", "count"), [
    ("100000", 100_000), ("1_000_000", 1_000_000), ("1e9", 10 ** 9), ("2.5e6", 2_500_000),
    (" 7 ", 7), ("0", 0), ("1e28", 10 ** 28), (12, 12),
])
def test_a_count_reads_digits_and_whole_exponent_notation(text, count) -> None:
    assert Count().convert(text, None, None) == count


@pytest.mark.parametrize(("text", "rule"), [
    ("1.5", "not a whole number"), ("", "not a whole number"), ("nan", "not a whole number"),
    ("inf", "not a whole number"), ("abc", "not a whole number"),
    ("1e29", "far too large"), ("1e1000000", "far too large"),
    ("1e99999999999999999999", "far too large"), ("9" * 400, "far too large"),
])
def test_a_count_refuses_fractions_words_and_huge_exponents(text, rule) -> None:
    with pytest.raises(BadInput, match=rule):
        Count().convert(text, None, None)


def test_samples_in_exponent_notation_run_and_their_refusals_are_one_line(tmp_path) -> None:
    design = tmp_path / "d.toml"
    design.write_text('[[source]]\nref = "V1"\nkind = "voltage"\nplus = "in"\n'
                      'minus = "gnd"\nvalue = "5 V"\n'
                      '[[resistor]]\nref = "R1"\nnodes = ["in", "out"]\nvalue = "10k"\n'
                      '[[resistor]]\nref = "R2"\nnodes = ["out", "gnd"]\nvalue = "10k"\n'
                      '[[target]]\nvoltage = "out"\nequals = "2.5 V"\nwithin = "2%"\n',
                      encoding="utf-8")
    ok = CliRunner().invoke(cli, ["check", str(design), "--samples", "2e3"])
    assert ok.exit_code == 0, ok.output
    assert "Monte Carlo 2,000 uniform samples" in ok.output
    for text in ("1e1000000", "2.5"):
        refused = CliRunner().invoke(cli, ["check", str(design), "--samples", text])
        assert refused.exit_code == 2
        line = refused.output.strip()
        assert "\n" not in line and "--samples" in line and "Traceback" not in line
