"""Designs and results shared by the review page's tests.

A 12 V divider with R2 = 10k: a 4 V goal takes R1 = 20k (E24) exactly [HB-divider]; with
R1 = 10k the output is 6 V, out of a 4 V ± 1 % window.  With 100 Ω + 100 Ω each part
dissipates (6 V)² / 100 Ω = 360 mW [HB-ohm], over an 0603's 0.1 W × 50 % = 50 mW
[CP-chip-ratings] [CP-margin].
"""

from __future__ import annotations

import pytest

from synth.bom.build import bom_of_values
from synth.checking import check
from synth.design.board import load_board
from synth.digest import input_digest
from synth.report.plots import check_pictures, design_pictures
from synth.report.review import ReviewedDesign, review_html
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize

HOSTILE = '<script>alert("x")</script> & co'

DIVIDER = """
[design]
title = '{title}'
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"
tolerance = "1%"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
{r1}
tolerance = "1%"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "{r2}"
tolerance = "1%"

[[target]]
name = "tap"
voltage = "out"
equals = "{goal}"
within = "1%"
"""

SETTINGS = SpreadSettings(samples=2000, seed=1, keep_samples=True)


def write_designs(folder):
    """The three designs as files: free (passes), fixed (out of window), hot (over power)."""
    texts = {
        "free": DIVIDER.format(title=HOSTILE, r1='choose = "E24"\nrange = ["1k", "100k"]',
                               r2="10k", goal="4 V"),
        "fixed": DIVIDER.format(title="fixed divider", r1='value = "10k"', r2="10k",
                                goal="4 V"),
        "hot": DIVIDER.format(title="hot divider", r1='value = "100"', r2="100", goal="6 V"),
    }
    paths = []
    for name, text in texts.items():
        path = folder / f"{name}.toml"
        path.write_text(text, encoding="utf-8")
        paths.append(path)
    return paths


@pytest.fixture(scope="package")
def review(tmp_path_factory):
    """(page text, board, results, digest) of the three designs on one page."""
    paths = write_designs(tmp_path_factory.mktemp("review"))
    board = load_board([str(p) for p in paths])
    free, fixed, hot = (net.design for net in board.networks)
    results = [synthesize(free, top=3, spread=SETTINGS), check(fixed, spread=SETTINGS),
               check(hot, spread=SETTINGS)]
    digest = input_digest(paths, {"samples": 2000})
    bom = bom_of_values(board, [results[0].candidates[0], results[1], results[2]])
    pictures = [design_pictures(results[0]), check_pictures(results[1]),
                check_pictures(results[2])]
    page = review_html([ReviewedDesign(result=r, pictures=tuple(p))
                        for r, p in zip(results, pictures, strict=True)],
                       bom=bom, digest=digest, version="9.9.9-test")
    return page, board, results, digest
