"""The inputs' fingerprint: SHA-256 of a manifest of the files' own SHA-256 and the options,
recomputed here with hashlib from the bytes [FIPS180-4]."""

from __future__ import annotations

import hashlib

import pytest

from synth.digest import input_digest
from synth.errors import DesignError


def _own(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def test_fingerprint_is_the_sha256_of_the_documented_manifest(tmp_path):
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_bytes(b"[design]\ntitle = 'a'\n")
    b.write_bytes("[design]\ntitle = 'b \u2126'\n".encode())
    digest = input_digest([a, b], {"seed": 1, "samples": 2000})
    # one line per file in order, then the options sorted by name [FIPS180-4]
    manifest = (f"{_own(a.read_bytes())}\n{_own(b.read_bytes())}\n"
                "option samples=2000\noption seed=1\n")
    assert digest.sha256 == hashlib.sha256(manifest.encode()).hexdigest()
    assert digest.files == ((str(a), _own(a.read_bytes())), (str(b), _own(b.read_bytes())))
    assert digest.options == (("samples", "2000"), ("seed", "1"))


def test_nothing_given_hashes_the_empty_manifest():
    # SHA-256 of the empty input [FIPS180-4]
    assert input_digest([]).sha256 == (
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855")


def test_a_file_named_twice_counts_once(tmp_path):
    a = tmp_path / "a.toml"
    a.write_bytes(b"x = 1\n")
    assert input_digest([a, str(a), tmp_path / "." / "a.toml"]) == input_digest([a])


@pytest.mark.parametrize("change", ["byte", "order", "option"])
def test_every_change_of_the_inputs_changes_the_fingerprint(tmp_path, change):
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_bytes(b"x = 1\n")
    b.write_bytes(b"y = 2\n")
    before = input_digest([a, b], {"seed": 1}).sha256
    paths, options = [a, b], {"seed": 1}
    if change == "byte":
        b.write_bytes(b"y = 3\n")
    elif change == "order":
        paths = [b, a]
    else:
        options = {"seed": 2}
    assert input_digest(paths, options).sha256 != before


def test_a_missing_file_is_refused_in_one_line(tmp_path):
    with pytest.raises(DesignError, match=r"gone\.toml: no such file; check the path"):
        input_digest([tmp_path / "gone.toml"])
