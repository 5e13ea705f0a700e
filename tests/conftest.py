"""Shared test helpers: designs built in memory."""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import settings

from synth.design.reader import design_from_dict

# property tests draw the same examples on every run (and write no example database),
# so a run in a clean clone repeats the one here; a wider search is a separate run
settings.register_profile("repeatable", derandomize=True, database=None)
settings.load_profile("repeatable")

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted(p for p in (ROOT / "examples").glob("*.toml") if not p.stem.endswith("board"))
BOARDS = sorted((ROOT / "examples").glob("*board.toml"))


def divider(top="10k", bottom="10k", supply="10 V", **extra_design):
    """A two-resistor divider design."""
    return design_from_dict({
        "design": {"title": "divider", **extra_design},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": supply}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": top, "package": "0603"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": bottom,
                      "package": "0603"}],
    })


def balanced_bridge(target, free=False, **design):
    """±3.3 V through 4.7k and 4.7k with 1k to ground: the midpoint is 0 V exactly
    [HB-divider]; ``free`` lets R2 be chosen from E12 between 1k and 10k."""
    r2 = {"ref": "R2", "nodes": ["out", "b"], "value": "4.7k"}
    if free:
        r2.update(choose="E12", range=["1k", "10k"])
    return design_from_dict({
        "design": design,
        "source": [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd",
                    "value": "3.3 V"},
                   {"ref": "V2", "kind": "voltage", "plus": "gnd", "minus": "b",
                    "value": "3.3 V"}],
        "resistor": [{"ref": "R1", "nodes": ["a", "out"], "value": "4.7k"}, r2,
                     {"ref": "R3", "nodes": ["out", "gnd"], "value": "1k"}],
        "target": [target],
    })


@pytest.fixture
def tmp_design(tmp_path):
    """Write design text to a file and return its path."""

    def write(text: str, name: str = "design.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return write
