"""Packaging: one version number, the licence, typed-package marker and what the sdist holds.

Building and installing the sdist is slow and needs the network, so these
tests check the inputs of the build; the build itself is exercised when the
source distribution is unpacked and its suite run.
"""

from __future__ import annotations

import importlib.metadata
import re
import tomllib

import synth

from conftest import ROOT

PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def test_the_version_lives_in_pyproject_only():
    assert re.fullmatch(r"\d+\.\d+\.\d+", PYPROJECT["project"]["version"])
    for path in (ROOT / "synth").rglob("*.py"):
        assert not re.search(r"__version__\s*=\s*['\"]", path.read_text(encoding="utf-8")), path


def test_version_falls_back_when_the_distribution_is_not_installed(monkeypatch):
    def missing(name):
        raise importlib.metadata.PackageNotFoundError(name)

    monkeypatch.setattr(importlib.metadata, "version", missing)
    assert synth._installed_version() == "0+unknown"


def test_spdx_licence_and_its_file():
    assert PYPROJECT["project"]["license"] == "MIT"
    assert PYPROJECT["project"]["license-files"] == ["LICENSE"]
    text = (ROOT / "LICENSE").read_text(encoding="utf-8")
    assert text.startswith("MIT License") and "Copyright (c) 2026 the rnsynth authors" in text


def test_packages_are_discovered_and_typed():
    setuptools = PYPROJECT["tool"]["setuptools"]
    assert "packages" not in setuptools  # discovered below package-dir, never listed
    assert setuptools["package-dir"] == {"synth": "synth", "synth.catalogs": "catalogs"}
    assert "py.typed" in setuptools["package-data"]["synth"]
    assert setuptools["package-data"]["synth.schemas"] == ["*.json"]  # the JSON Schemas
    assert (ROOT / "synth" / "py.typed").is_file()
    for folder in (ROOT / "synth").rglob("*"):
        if folder.is_dir() and folder.name != "__pycache__":
            assert (folder / "__init__.py").is_file(), f"{folder} is no regular package"


def test_sdist_carries_the_suite_and_its_data():
    manifest = (ROOT / "MANIFEST.in").read_text(encoding="utf-8").split()
    for folder in ("tests", "docs", "examples", "benchmarks", "catalogs"):
        assert folder in manifest and (ROOT / folder).is_dir()
    for name in ("README.md", "DEVELOPERS.md", "LICENSE"):
        assert name in manifest and (ROOT / name).is_file()



def test_ci_runs_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    command = "pip install '.[test]' && python -m pytest -q"
    script = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert command in readme and command in script
    assert "set -euo pipefail" in script
    for gate in ("ruff check synth tests benchmarks", "mypy --strict synth",
                 "--cov=synth --cov-branch", "--cov-fail-under="):
        assert gate in script


def test_the_cluster_extra_is_in_the_test_extra():
    # the suite's cluster test runs in CI only when the test extra brings Dask distributed
    extras = PYPROJECT["project"]["optional-dependencies"]
    names = {re.split(r"[<>=!~ ]", spec)[0] for spec in extras["test"]}
    assert [re.split(r"[<>=!~ ]", spec)[0] for spec in extras["cluster"]] == ["distributed"]
    assert "distributed" in names and set(extras["cluster"]) <= set(extras["test"])
