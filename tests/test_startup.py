"""Start-up: the package's lazy public names, and what the quick command paths import.

The times themselves live in ``benchmarks/startup.py``; these tests check the
cause of a slow start instead: which heavy libraries a fresh process loads.
"""

from __future__ import annotations

import importlib.metadata
import json
import os
import subprocess
import sys

import pytest

import synth

HEAVY = ("scipy", "ortools", "matplotlib")

_PROBE = """
import json, sys
from synth.cli import main
sys.argv = ["rnsynth", *{args!r}]
try:
    main()
except SystemExit:
    pass
print(json.dumps(sorted(m.split(".")[0] for m in sys.modules)), file=sys.stderr)
"""


def _imported_by(args: list[str], **env: str) -> set[str]:
    """Top-level modules a fresh ``rnsynth ARGS`` process has imported."""
    done = subprocess.run([sys.executable, "-c", _PROBE.format(args=args)],
                          capture_output=True, text=True, check=False,
                          env={**os.environ, **env}, stdin=subprocess.DEVNULL)
    return set(json.loads(done.stderr.strip().splitlines()[-1]))


@pytest.mark.parametrize(("args", "env", "allowed"), [
    (["--version"], {}, ()),
    (["--help"], {}, ()),
    (["series", "E24"], {}, ("numpy",)),  # the catalogue returns numpy arrays
    ([], {"_RNSYNTH_COMPLETE": "bash_source"}, ()),
    ([], {"_RNSYNTH_COMPLETE": "bash_complete", "COMP_WORDS": "rnsynth ser",
          "COMP_CWORD": "1"}, ()),
    ([], {"_RNSYNTH_COMPLETE": "bash_complete", "COMP_WORDS": "rnsynth divider --series E1",
          "COMP_CWORD": "3"}, ("numpy",)),
], ids=["version", "help", "series", "completion-script", "complete-command",
        "complete-series"])
def test_quick_paths_import_no_heavy_library(args, env, allowed):
    imported = _imported_by(args, **env)
    assert "synth" in imported
    assert not imported & {*HEAVY, "numpy"} - set(allowed)


def test_import_synth_alone_loads_no_numeric_library():
    done = subprocess.run(
        [sys.executable, "-c", "import json, sys, synth; print(json.dumps(list(sys.modules)))"],
        capture_output=True, text=True, check=True)
    assert not {m.split(".")[0] for m in json.loads(done.stdout)} & {*HEAVY, "numpy"}


def test_every_public_name_resolves_from_its_owner():
    for name in synth.__all__:
        value = getattr(synth, name)
        if name != "__version__":
            assert value.__name__ == name
    assert set(synth.__all__) <= set(dir(synth))
    assert synth.__all__ == sorted(synth.__all__)


def test_unknown_attribute_is_refused():
    with pytest.raises(AttributeError, match="no attribute 'synthesise'"):
        synth.synthesise  # noqa: B018


def test_version_is_the_installed_distribution():
    assert synth.__version__ == importlib.metadata.version("rnsynth")


def _commands():
    from synth.cli import cli

    return sorted(cli.commands)


@pytest.mark.parametrize("command", _commands())
def test_every_command_help_loads_no_numeric_library(command):
    # option choices (series names, rankings) come from light modules, not the search
    imported = _imported_by([command, "--help"])
    assert "synth" in imported
    assert not imported & {*HEAVY, "numpy"}, command


def test_the_light_series_names_are_those_of_the_catalogue():
    from synth.catalog.names import series_names
    from synth.catalog.series import series_names as loaded_names

    assert series_names() == loaded_names()
