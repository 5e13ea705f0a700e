"""Files are written whole or not at all: through a temporary file renamed into place.

An existing file is replaced only when asked; a failed write leaves the old file as it
was and no temporary file behind.  (A rename within one folder replaces the target in
one step: the POSIX rename(2) and Windows MoveFileEx semantics that os.replace uses,
common practice for atomic output.)
"""

from __future__ import annotations

import errno
import os

import pytest

from synth import files
from synth.errors import DesignError
from synth.files import write_atomic


def test_write_then_refuse_then_replace(tmp_path):
    target = tmp_path / "bom.csv"
    assert write_atomic(target, "a,b\n") == target
    assert target.read_text(encoding="utf-8") == "a,b\n"
    with pytest.raises(DesignError, match=r"bom\.csv: already exists; pass --force to replace it"):
        write_atomic(target, "c\n")
    write_atomic(target, "c\n", force=True)
    assert target.read_text(encoding="utf-8") == "c\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bom.csv"]


def test_missing_folder_is_refused(tmp_path):
    with pytest.raises(DesignError, match="does not exist; create it first"):
        write_atomic(tmp_path / "nope" / "bom.csv", "x")


def test_unwritable_folder_is_refused(tmp_path, monkeypatch):
    def refused(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(files.tempfile, "mkstemp", refused)
    with pytest.raises(DesignError, match=r"bom\.csv: cannot write there \(Permission denied\)"):
        write_atomic(tmp_path / "bom.csv", "x")


def test_a_failed_rename_keeps_the_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    target = tmp_path / "bom.csv"
    target.write_text("old\n", encoding="utf-8")

    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(files.os, "replace", full)
    with pytest.raises(DesignError, match=r"could not be written \(No space left on device\)"):
        write_atomic(target, "new\n", force=True)
    assert target.read_text(encoding="utf-8") == "old\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bom.csv"]


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EFBIG])
def test_a_write_that_fails_says_why_and_leaves_no_temporary(tmp_path, monkeypatch, code):
    # a full disk, or the process's file-size limit (RLIMIT_FSIZE), while writing
    real = files.os.fdopen

    class Failing:
        def __init__(self, *args, **kwargs):
            self.stream = real(*args, **kwargs)

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.stream.close()

        def write(self, text):
            raise OSError(code, os.strerror(code))

    monkeypatch.setattr(files.os, "fdopen", Failing)
    with pytest.raises(DesignError, match=rf"could not be written \({os.strerror(code)}\)"):
        write_atomic(tmp_path / "bom.csv", "x" * 100)
    assert list(tmp_path.iterdir()) == []


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="needs /dev/full")
def test_a_device_is_refused():
    # without --force only: a regression must not replace a real device while testing
    with pytest.raises(DesignError, match="/dev/full: is not a regular file"):
        write_atomic("/dev/full", "x")


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_pipe_is_never_replaced_even_with_force(tmp_path):
    fifo = tmp_path / "bom.csv"
    os.mkfifo(fifo)
    with pytest.raises(DesignError, match="is not a regular file"):
        write_atomic(fifo, "x", force=True)
    assert not fifo.is_file() and fifo.exists()


def test_a_folder_is_never_replaced(tmp_path):
    (tmp_path / "out").mkdir()
    with pytest.raises(DesignError, match="is not a regular file"):
        write_atomic(tmp_path / "out", "x", force=True)


def test_bytes_are_written_as_they_are(tmp_path):
    # a PNG's first bytes (ISO/IEC 15948) must not pass through a text encoding
    data = b"\x89PNG\r\n\x1a\n\x00\xff"
    target = write_atomic(tmp_path / "picture.png", data)
    assert target.read_bytes() == data
    assert write_atomic(target, b"<svg/>", force=True).read_bytes() == b"<svg/>"
