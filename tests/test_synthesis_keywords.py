"""synthesize() refuses unknown keywords and values with the accepted ones named, from the
library as from the command line (exit code 2, one line)."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.synthesis import synthesize

from conftest import EXAMPLES

DESIGN = {
    "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd", "value": "12 V"}],
    "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24", "range": ["1k", "100k"]},
                 {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    "target": [{"voltage": "out", "equals": "4 V"}],
}


@pytest.mark.parametrize(("keywords", "message"), [
    ({"rank_by": "best"}, "rank_by 'best' is not known; use one of nominal, worst-case, yield"),
    ({"require": "always"},
     "require 'always' is not known; use one of nominal, worst-case, yield"),
    ({"require": "yield"}, '<design>: require = "yield" needs min_yield, such as 99%'),
    ({"time_limit_s": 0}, "time limit 0 s must be a positive number of seconds"),
    ({"time_limit_s": -1.5}, "time limit -1.5 s must be a positive number of seconds"),
])
def test_refused_keywords(keywords, message):
    with pytest.raises(DesignError) as raised:
        synthesize(design_from_dict(DESIGN), **keywords)
    assert str(raised.value) == message


def test_accepted_keywords_give_the_exact_design():
    # 12 V x 10k / (20k + 10k) = 4 V [HB-divider]
    best = synthesize(design_from_dict(DESIGN), top=1, time_limit_s=60, rank_by="nominal",
                      require="nominal").candidates[0]
    assert best.values == {"R1": 20e3} and best.objective == 0.0


@pytest.mark.parametrize(("options", "fragment"), [
    (["--time-limit", "0"], "--time-limit 0.0 must be a positive number of seconds"),
    (["--require", "yield", "--samples", "100"], 'require = "yield" needs min_yield'),
])
def test_refused_from_the_command_line(options, fragment):
    path = next(p for p in EXAMPLES if p.name == "railway_signal.toml")
    result = CliRunner().invoke(cli, ["design", str(path), *options])
    assert result.exit_code == 2
    assert fragment in result.stderr and len(result.stderr.strip().splitlines()) == 1
