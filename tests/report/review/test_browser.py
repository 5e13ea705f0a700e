"""The review page in a real browser: headless Chromium prints it to PDF (A4 and letter)
and takes a PNG screenshot; the page logs nothing to the console, nothing is wider than
170 mm, and the key numbers are in the printed text.

Skipped, with the reason, only where Chromium (or poppler's pdftotext) is missing; .ci/run
installs both and sets RNSYNTH_REQUIRE_BROWSER=1, which turns the skip into a failure.
Paper sizes [ISO216-letter], print rules [CSS-print], file signatures [ISO32000-PNG].
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from synth.report.review.section import verdict_lines

CHROMIUM = shutil.which("chromium")
PDFTOTEXT = shutil.which("pdftotext")
_MISSING = [name for name, found in (("chromium", CHROMIUM), ("pdftotext", PDFTOTEXT))
            if found is None]
if _MISSING and os.environ.get("RNSYNTH_REQUIRE_BROWSER") == "1":
    raise RuntimeError(f"RNSYNTH_REQUIRE_BROWSER=1 but {' and '.join(_MISSING)} is missing; "
                       "install chromium and poppler-utils")
pytestmark = pytest.mark.skipif(
    bool(_MISSING), reason=f"{' and '.join(_MISSING)} not installed (Debian: apt-get install "
                           "chromium poppler-utils; .ci/run installs them)")

FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--enable-logging=stderr", "--v=0", "--no-pdf-header-footer",
         "--hide-scrollbars"]
_CONSOLE = re.compile(r":CONSOLE[:(]\d+\)?\] (.*)$")

MM = 96 / 25.4  # CSS px per millimetre (96 px per inch) [ISO216-letter]
_MEASURE = """<script>
addEventListener("load", () => {
  const wide = [...document.querySelectorAll("body *")].filter(
    e => e.getBoundingClientRect().right > innerWidth + 0.5).map(e => e.tagName);
  document.body.setAttribute("data-overflow",
    String(document.documentElement.scrollWidth - innerWidth) + " " + wide.slice(0, 5));
});
</script>"""


def _start(folder: Path, name: str, page: Path, *args: str) -> tuple[subprocess.Popen, Path]:
    """Start one headless Chromium run on ``page``; its stderr goes to a log file."""
    log = folder / f"{name}.log"
    process = subprocess.Popen(
        [CHROMIUM, *FLAGS, f"--user-data-dir={folder / ('profile-' + name)}", *args,
         page.as_uri()], stdout=subprocess.PIPE, stderr=log.open("w"), text=True)
    return process, log


def _finish(run: tuple[subprocess.Popen, Path]) -> tuple[str, list[str]]:
    """(stdout, console messages) of a run."""
    process, log = run
    out, _ = process.communicate(timeout=120)
    assert process.returncode == 0, log.read_text()
    return out, [m.group(1) for line in log.read_text().splitlines()
                 if (m := _CONSOLE.search(line))]


def _with(page: str, extra: str) -> str:
    return page.replace("</head>", f"{extra}</head>", 1)


def _pdf_text(path: Path) -> str:
    """The printed text, rows kept on their lines (``-layout``), without any white space
    (the layout spreads a row's cells with spaces and may drop the space in ``4 V``)."""
    done = subprocess.run([PDFTOTEXT, "-layout", "-enc", "UTF-8", str(path), "-"],
                          capture_output=True, text=True, check=True)
    return re.sub(r"\s+", "", done.stdout)


def _printed(needle: str, text: str) -> bool:
    return re.sub(r"\s+", "", needle) in text


def _pages(path: Path) -> list[tuple[float, float]]:
    """Each page's MediaBox width and height, PDF points."""
    data = path.read_bytes()
    return [(float(m[2]) - float(m[0]), float(m[3]) - float(m[1])) for m in
            re.findall(rb"/MediaBox\s*\[\s*([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s*\]",
                       data)]


@pytest.fixture(scope="module")
def rendered(review, tmp_path_factory):
    """Render the page four ways at once: letter and A4 PDFs, a screenshot, a 170 mm width."""
    page_text = review[0]
    folder = tmp_path_factory.mktemp("browser")
    pages = {"letter": _with(page_text, "<style>@page { size: letter; }</style>"),
             "a4": _with(page_text, "<style>@page { size: A4; }</style>"),
             "shot": page_text,
             "narrow": _with(page_text, _MEASURE)}
    paths = {}
    for name, text in pages.items():
        paths[name] = folder / f"{name}.html"
        paths[name].write_text(text, encoding="utf-8")
    runs = {
        "letter": _start(folder, "letter", paths["letter"],
                         f"--print-to-pdf={folder / 'letter.pdf'}"),
        "a4": _start(folder, "a4", paths["a4"], f"--print-to-pdf={folder / 'a4.pdf'}"),
        "shot": _start(folder, "shot", paths["shot"], f"--screenshot={folder / 'shot.png'}",
                       "--window-size=900,1400"),
        "narrow": _start(folder, "narrow", paths["narrow"], "--dump-dom",
                         f"--window-size={round(170 * MM)},1000"),
    }
    outputs = {name: _finish(run) for name, run in runs.items()}
    return folder, outputs


def test_no_console_messages_in_any_render(rendered):
    _, outputs = rendered
    for name in ("letter", "a4", "shot"):
        assert outputs[name][1] == [], name


def test_the_console_check_catches_a_script_error(tmp_path):
    # the check above can fail: a page with a deliberate error logs it
    page = tmp_path / "broken.html"
    page.write_text("<!DOCTYPE html><html><body><p>x</p><script>notDefined();</script>"
                    "</body></html>", encoding="utf-8")
    _, messages = _finish(_start(tmp_path, "broken", page, "--dump-dom"))
    assert any("notDefined is not defined" in m for m in messages), messages


def test_pdf_prints_on_a4_and_letter(rendered):
    folder, _ = rendered
    for name, size in (("a4", (595, 842)), ("letter", (612, 792))):
        path = folder / f"{name}.pdf"
        assert path.read_bytes().startswith(b"%PDF-")  # [ISO32000-PNG]
        pages = _pages(path)
        assert len(pages) >= 2
        assert all(abs(w - size[0]) < 1 and abs(h - size[1]) < 1 for w, h in pages), pages


def test_key_numbers_and_verdicts_are_in_the_printed_text(rendered, review):
    folder, _ = rendered
    results = review[2]
    for name in ("a4", "letter"):
        text = _pdf_text(folder / f"{name}.pdf")
        # the chosen value and its target's value [HB-divider]; the failing one's value
        assert _printed("R1 20 kΩ 20K E24", text)
        assert _printed("tap 4 V 4 V 0% 3.96 V .. 4.04 V met", text)
        assert _printed("tap 6 V 4 V +50% 3.96 V .. 4.04 V OUT of its window", text)
        assert _printed("2 of 3 design(s) FAIL", text)
        for result in results:
            head = verdict_lines(result)[0]
            assert _printed(head[:50], text), head


def test_nothing_is_wider_than_170_mm(rendered):
    _, outputs = rendered
    dom = outputs["narrow"][0]
    found = re.search(r'data-overflow="(-?\d+) ([^"]*)"', dom)
    assert found is not None, dom[-500:]
    assert int(found[1]) <= 0 and found[2] == "", found[0]


def test_screenshot_is_a_picture_of_the_page(rendered):
    from PIL import Image

    folder, _ = rendered
    path = folder / "shot.png"
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # [ISO32000-PNG]
    with Image.open(path) as image:
        grey = image.convert("L")
        assert grey.size == (900, 1400)
        low, high = grey.getextrema()
        dark = sum(grey.histogram()[:128]) / (grey.size[0] * grey.size[1])
    assert low < 64 and high > 192  # black text on a white page, not one flat colour
    assert 0.01 < dark < 0.5
