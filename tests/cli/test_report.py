"""rnsynth report: the page written whole, exit codes that follow the verdicts, refused
input in one line with nothing written, --plots and boards."""

from __future__ import annotations

import hashlib

import pytest
from click.testing import CliRunner
from report.review.conftest import write_designs

from synth.cli import cli

from conftest import ROOT

FAST = ["--samples", "2000"]


def run(*args: str):
    return CliRunner().invoke(cli, ["report", *args])


@pytest.fixture
def designs(tmp_path):
    return dict(zip(("free", "fixed", "hot"), map(str, write_designs(tmp_path)), strict=True))


def test_a_passing_design_exits_0_and_the_page_names_version_and_fingerprint(tmp_path,
                                                                              designs):
    out = tmp_path / "review.html"
    result = run(designs["free"], "--output", str(out), *FAST)
    assert result.exit_code == 0, result.output
    page = out.read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>")
    # the fingerprint of the file's bytes and the options [FIPS180-4]
    own = hashlib.sha256(open(designs["free"], "rb").read()).hexdigest()
    assert own in page
    assert f"review page written: {out}" in result.output
    assert ": passes: the best design meets every window and limit" in result.output
    assert "rnsynth version" in page


def test_a_failing_design_exits_1_and_its_page_says_so(tmp_path, designs):
    out = tmp_path / "review.html"
    result = run(designs["free"], designs["fixed"], "--output", str(out), *FAST)
    assert result.exit_code == 1, result.output
    assert "fixed.toml: FAILS: FAILS: target tap" in result.output
    page = out.read_text(encoding="utf-8")
    assert "1 of 2 design(s) FAIL" in page
    assert page.count('<section class="design">') == 2


def test_options_change_the_fingerprint(tmp_path, designs):
    pages = []
    for seed in ("1", "2"):
        out = tmp_path / f"r{seed}.html"
        assert run(designs["fixed"], "--output", str(out), *FAST, "--seed", seed).exit_code == 1
        pages.append(out.read_text(encoding="utf-8"))
    assert "seed = 1" in pages[0] and "seed = 2" in pages[1]
    fingerprint = [p.split("inputs fingerprint", 1)[1][:200] for p in pages]
    assert fingerprint[0] != fingerprint[1]


def test_an_existing_page_is_kept_without_force(tmp_path, designs):
    out = tmp_path / "review.html"
    out.write_text("keep", encoding="utf-8")
    result = run(designs["fixed"], "--output", str(out), *FAST)
    assert result.exit_code == 2
    assert result.stderr.strip() == f"rnsynth: {out}: already exists; pass --force to replace it"
    assert out.read_text(encoding="utf-8") == "keep"
    assert run(designs["fixed"], "--output", str(out), *FAST, "--force").exit_code == 1
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")


@pytest.mark.parametrize(("extra", "fragment"), [
    (["--top", "0"], "--top 0 must be at least 1"),
    (["--time-limit", "0"], "--time-limit 0.0 must be a positive number of seconds"),
    (["--min-yield", "99%", "--require", "worst-case"], "--min-yield goes with --require yield"),
    (["--samples", "-1"], "--samples -1 must be 0 (no Monte Carlo)"),
    (["--json"], "No such option '--json'"),
])
def test_refused_options_write_nothing(tmp_path, designs, extra, fragment):
    out = tmp_path / "review.html"
    result = run(designs["free"], "--output", str(out), *extra)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and len(result.stderr.strip().splitlines()) == 1
    assert not out.exists()


def test_a_bad_design_file_is_refused_before_anything_is_written(tmp_path, designs):
    bad = tmp_path / "bad.toml"
    bad.write_text("[design]\ntitel = 'x'\n", encoding="utf-8")
    out = tmp_path / "review.html"
    result = run(designs["free"], str(bad), "--output", str(out))
    assert result.exit_code == 2
    assert "bad.toml" in result.stderr and "titel" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and not out.exists()
    assert "Traceback" not in result.output


def test_a_folder_as_output_is_refused(tmp_path, designs):
    result = run(designs["free"], "--output", str(tmp_path), *FAST)
    assert result.exit_code == 2
    assert "is not a regular file" in result.stderr or "is a directory" in result.stderr


def test_plots_are_also_written_as_files(tmp_path, designs):
    folder = tmp_path / "plots"
    result = run(designs["free"], designs["fixed"], "--output", str(tmp_path / "r.html"),
                 *FAST, "--plots", str(folder))
    assert result.exit_code == 1
    names = sorted(p.name for p in folder.iterdir())
    assert "design1-candidates.svg" in names and "design1-candidates.png" in names
    assert "design1-front.svg" in names and "design1-network.svg" in names
    assert "design2-spread-1-tap.svg" in names and "design2-derating-0603.png" in names
    assert "plot written:" in result.output


def test_a_board_file_gives_a_section_per_network_and_one_bom(tmp_path):
    out = tmp_path / "board.html"
    result = run(str(ROOT / "examples" / "greenhouse_board.toml"), "--output", str(out),
                 "--samples", "0")
    assert result.exit_code == 0, result.output
    page = out.read_text(encoding="utf-8")
    assert page.count('<section class="design">') == 3
    assert page.count('<section class="bom">') == 1
    # a board file: the page takes the board's title, each network is named
    assert "Design review: Greenhouse controller" in page
    for name in ("battery sense", "status lamp", "vent position"):
        assert f"network {name}" in page
    assert "no Monte Carlo (0 samples)" in page

