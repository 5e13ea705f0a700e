"""Files are written whole or not at all, with the user's umask, and never over a device.

A new file's mode is 0o666 less the umask, as open(2) with O_CREAT gives it [POSIX-open];
without --force the final name is created exclusively: link(2) fails with EEXIST when
the name exists [POSIX-link], so of two writers one wins; with --force the temporary
file is renamed over the old one in one step [POSIX-rename].  A failed write leaves the
old file as it was and no temporary file behind.

Devices are only ever met through a named pipe or a symbolic link inside the test's
own folder: a real device (/dev/full) is never a destination here.
"""

from __future__ import annotations

import errno
import os
import stat

import pytest

from synth import files
from synth.errors import DesignError
from synth.files import write_all, write_atomic


def names(folder):
    return sorted(p.name for p in folder.iterdir())


def enospc(*args, **kwargs):
    raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))


@pytest.fixture
def umask():
    """Set the process's umask for one test, and put the old one back."""
    old = os.umask(0o022)
    os.umask(old)
    yield lambda mask: os.umask(mask)
    os.umask(old)


def test_write_then_refuse_then_replace(tmp_path):
    target = tmp_path / "bom.csv"
    assert write_atomic(target, "a,b\n") == target
    assert target.read_text(encoding="utf-8") == "a,b\n"
    with pytest.raises(DesignError, match=r"bom\.csv: already exists; pass --force to replace it"):
        write_atomic(target, "c\n")
    assert target.read_text(encoding="utf-8") == "a,b\n"
    write_atomic(target, "c\n", force=True)
    assert target.read_text(encoding="utf-8") == "c\n"
    assert names(tmp_path) == ["bom.csv"]


def test_bytes_and_text_are_written_exactly(tmp_path):
    write_atomic(tmp_path / "plot.png", b"\x89PNG\r\n\x00")
    write_atomic(tmp_path / "bom.csv", "Ω\r\n")
    assert (tmp_path / "plot.png").read_bytes() == b"\x89PNG\r\n\x00"
    assert (tmp_path / "bom.csv").read_bytes() == "Ω\r\n".encode()  # no newline translation


@pytest.mark.parametrize(("mask", "mode"), [(0o022, 0o644), (0o002, 0o664), (0o077, 0o600),
                                            (0o027, 0o640)])
def test_a_new_file_gets_the_users_umask(tmp_path, umask, mask, mode):
    # mode = 0o666 & ~umask [POSIX-open]
    umask(mask)
    write_atomic(tmp_path / "bom.csv", "x")
    assert stat.S_IMODE(os.stat(tmp_path / "bom.csv").st_mode) == mode
    write_atomic(tmp_path / "bom.csv", "y", force=True)  # a replacement too
    assert stat.S_IMODE(os.stat(tmp_path / "bom.csv").st_mode) == mode


def test_the_umask_is_read_without_being_changed(tmp_path, umask):
    umask(0o027)
    write_atomic(tmp_path / "bom.csv", "x")
    assert os.umask(0o027) == 0o027


def test_of_two_writers_the_second_is_refused_and_leaves_no_temporary(tmp_path, monkeypatch):
    # another run creates the file after this one checked the name and while it writes;
    # creating the final name exclusively refuses it [POSIX-link]
    target = tmp_path / "bom.csv"
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        target.write_text("the other run's\n", encoding="utf-8")

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    with pytest.raises(DesignError, match=r"bom\.csv: already exists \(written by another run "
                                          r"meanwhile\); pass --force to replace it"):
        write_atomic(target, "this run's\n")
    assert target.read_text(encoding="utf-8") == "the other run's\n"
    assert names(tmp_path) == ["bom.csv"]


def test_with_force_the_last_writer_replaces(tmp_path, monkeypatch):
    target = tmp_path / "bom.csv"
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        target.write_text("the other run's\n", encoding="utf-8")

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    write_atomic(target, "this run's\n", force=True)
    assert target.read_text(encoding="utf-8") == "this run's\n"
    assert names(tmp_path) == ["bom.csv"]


@pytest.mark.parametrize("code", [errno.EPERM, errno.EOPNOTSUPP, errno.EXDEV])
def test_without_hard_links_the_name_is_still_claimed_exclusively(tmp_path, monkeypatch, code):
    def no_links(*args, **kwargs):
        raise OSError(code, os.strerror(code))

    monkeypatch.setattr(files.os, "link", no_links)
    target = tmp_path / "bom.csv"
    write_atomic(target, "first\n")
    assert target.read_text(encoding="utf-8") == "first\n" and names(tmp_path) == ["bom.csv"]
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        (tmp_path / "other.csv").write_text("the other run's\n", encoding="utf-8")

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    with pytest.raises(DesignError, match="already exists"):
        write_atomic(tmp_path / "other.csv", "this run's\n")
    assert (tmp_path / "other.csv").read_text(encoding="utf-8") == "the other run's\n"
    assert names(tmp_path) == ["bom.csv", "other.csv"]


def test_without_hard_links_a_failed_rename_removes_the_claim(tmp_path, monkeypatch):
    def no_links(*args, **kwargs):
        raise OSError(errno.EPERM, os.strerror(errno.EPERM))

    monkeypatch.setattr(files.os, "link", no_links)
    monkeypatch.setattr(files.os, "replace", enospc)
    with pytest.raises(DesignError, match=r"could not be written \(No space left on device\)"):
        write_atomic(tmp_path / "bom.csv", "x")
    assert names(tmp_path) == []


def test_another_link_error_is_reported(tmp_path, monkeypatch):
    monkeypatch.setattr(files.os, "link", enospc)
    with pytest.raises(DesignError, match=r"bom\.csv: could not be written \(No space left"):
        write_atomic(tmp_path / "bom.csv", "x")
    assert names(tmp_path) == []


def test_missing_folder_is_refused(tmp_path):
    with pytest.raises(DesignError, match="does not exist; create it first"):
        write_atomic(tmp_path / "nope" / "bom.csv", "x")


def test_a_path_through_a_file_is_refused(tmp_path):
    (tmp_path / "file").write_text("x", encoding="utf-8")
    with pytest.raises(DesignError, match=r"cannot write there \(Not a directory\)"):
        write_atomic(tmp_path / "file" / "bom.csv", "x")


def test_unwritable_folder_is_refused(tmp_path, monkeypatch):
    real = files.os.open

    def refused(path, *args, **kwargs):
        if os.path.basename(path).startswith("."):
            raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))
        return real(path, *args, **kwargs)

    monkeypatch.setattr(files.os, "open", refused)
    with pytest.raises(DesignError, match=r"bom\.csv: cannot write there \(Permission denied\)"):
        write_atomic(tmp_path / "bom.csv", "x")
    assert names(tmp_path) == []


def test_a_taken_temporary_name_is_skipped(tmp_path, monkeypatch):
    draws = iter(["aaaaaaaa", "aaaaaaaa", "bbbbbbbb"])
    monkeypatch.setattr(files.secrets, "token_hex", lambda n: next(draws))
    (tmp_path / ".bom.csv.aaaaaaaa").write_text("someone's", encoding="utf-8")
    write_atomic(tmp_path / "bom.csv", "x")
    assert names(tmp_path) == [".bom.csv.aaaaaaaa", "bom.csv"]
    monkeypatch.setattr(files.secrets, "token_hex", lambda n: "aaaaaaaa")
    with pytest.raises(DesignError, match="no free temporary name"):
        write_atomic(tmp_path / "bom.csv", "y", force=True)
    assert (tmp_path / "bom.csv").read_text(encoding="utf-8") == "x"


def test_a_failed_rename_keeps_the_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    target = tmp_path / "bom.csv"
    target.write_text("old\n", encoding="utf-8")
    monkeypatch.setattr(files.os, "replace", enospc)
    with pytest.raises(DesignError, match=r"could not be written \(No space left on device\)"):
        write_atomic(target, "new\n", force=True)
    assert target.read_text(encoding="utf-8") == "old\n"
    assert names(tmp_path) == ["bom.csv"]


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EFBIG, errno.EIO])
@pytest.mark.parametrize("call", ["write", "fsync"])
def test_a_write_that_fails_says_why_and_leaves_no_temporary(tmp_path, monkeypatch, code, call):
    # a full disk, the process's file-size limit (RLIMIT_FSIZE), a failing disk
    def failing(*args, **kwargs):
        raise OSError(code, os.strerror(code))

    target = tmp_path / "bom.csv"
    target.write_text("old\n", encoding="utf-8")
    monkeypatch.setattr(files.os, call, failing)
    with pytest.raises(DesignError, match=rf"could not be written \({os.strerror(code)}\); "
                                          "nothing was written"):
        write_atomic(target, "x" * 100, force=True)
    assert names(tmp_path) == ["bom.csv"]
    assert target.read_text(encoding="utf-8") == "old\n"


def test_a_short_write_is_continued(tmp_path, monkeypatch):
    real = files.os.write
    monkeypatch.setattr(files.os, "write", lambda handle, data: real(handle, data[:3]))
    write_atomic(tmp_path / "bom.csv", "0123456789")
    assert (tmp_path / "bom.csv").read_text(encoding="utf-8") == "0123456789"


def test_an_interrupted_write_leaves_no_temporary(tmp_path, monkeypatch):
    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(files.os, "fsync", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_atomic(tmp_path / "bom.csv", "x")
    assert names(tmp_path) == []


def test_a_folder_that_cannot_be_synced_is_no_failure(tmp_path, monkeypatch):
    real_open, real_fsync = files.os.open, files.os.fsync
    folder_handles = []

    def open_(path, flags, *args):
        if os.path.isdir(path):
            if folder_handles:  # the second time: the folder cannot be opened at all
                raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))
            folder_handles.append(handle := real_open(path, flags, *args))
            return handle
        return real_open(path, flags, *args)

    def fsync(handle):
        if stat.S_ISDIR(os.fstat(handle).st_mode):
            raise OSError(errno.EINVAL, os.strerror(errno.EINVAL))
        real_fsync(handle)

    monkeypatch.setattr(files.os, "open", open_)
    monkeypatch.setattr(files.os, "fsync", fsync)
    write_atomic(tmp_path / "a.csv", "x")
    write_atomic(tmp_path / "b.csv", "y")
    assert names(tmp_path) == ["a.csv", "b.csv"] and folder_handles


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
@pytest.mark.parametrize("force", [False, True])
def test_a_pipe_is_never_replaced_even_with_force(tmp_path, force):
    fifo = tmp_path / "bom.csv"
    os.mkfifo(fifo)
    with pytest.raises(DesignError, match=r"bom\.csv: is not a regular file; write to a file "
                                          "name instead"):
        write_atomic(fifo, "x", force=force)
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode) and names(tmp_path) == ["bom.csv"]


@pytest.mark.skipif(not os.path.exists(os.devnull) or os.name != "posix",
                    reason="needs a POSIX null device")
@pytest.mark.parametrize("force", [False, True])
def test_a_link_to_a_device_is_never_replaced_even_with_force(tmp_path, force):
    link = tmp_path / "bom.csv"
    link.symlink_to(os.devnull)  # the device is only read through the link's stat
    with pytest.raises(DesignError, match="is not a regular file"):
        write_atomic(link, "x", force=force)
    assert link.is_symlink() and names(tmp_path) == ["bom.csv"]
    assert stat.S_ISCHR(os.stat(os.devnull).st_mode)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_pipe_appearing_before_the_replace_is_not_replaced(tmp_path, monkeypatch):
    target = tmp_path / "bom.csv"
    target.write_text("old\n", encoding="utf-8")
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        target.unlink()
        os.mkfifo(target)

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    with pytest.raises(DesignError, match="is not a regular file"):
        write_atomic(target, "new\n", force=True)
    assert stat.S_ISFIFO(os.lstat(target).st_mode) and names(tmp_path) == ["bom.csv"]


def test_a_folder_is_never_replaced(tmp_path):
    (tmp_path / "out").mkdir()
    with pytest.raises(DesignError, match="is not a regular file"):
        write_atomic(tmp_path / "out", "x", force=True)
    assert (tmp_path / "out").is_dir()


def test_write_all_checks_every_destination_before_writing_any(tmp_path):
    (tmp_path / "b.svg").write_text("old", encoding="utf-8")
    with pytest.raises(DesignError, match=r"b\.svg: already exists"):
        write_all([(tmp_path / "a.png", b"a"), (tmp_path / "b.svg", "b")])
    assert names(tmp_path) == ["b.svg"]
    assert write_all([(tmp_path / "a.png", b"a"), (tmp_path / "b.svg", "b")], force=True) \
        == [tmp_path / "a.png", tmp_path / "b.svg"]
    assert (tmp_path / "b.svg").read_text(encoding="utf-8") == "b"


def test_write_all_removes_what_it_created_when_a_later_write_fails(tmp_path, monkeypatch):
    (tmp_path / "a.png").write_text("old", encoding="utf-8")
    real = files.write_atomic

    def third_fails(path, data, *, force=False):
        if path.name == "c.png":
            raise DesignError(f"{path}: could not be written (No space left on device)")
        return real(path, data, force=force)

    monkeypatch.setattr(files, "write_atomic", third_fails)
    with pytest.raises(DesignError, match=r"c\.png: could not be written"):
        write_all([(tmp_path / n, n) for n in ("a.png", "b.png", "c.png")], force=True)
    # the new file is gone; the one replaced with force keeps its new content
    assert names(tmp_path) == ["a.png"]
    assert (tmp_path / "a.png").read_text(encoding="utf-8") == "a.png"


def test_write_all_refuses_a_name_given_twice(tmp_path):
    with pytest.raises(DesignError, match=r"a\.png: is named twice among the outputs"):
        write_all([(tmp_path / "a.png", b"a"), (tmp_path / "a.png", b"b")])
    assert names(tmp_path) == []


def test_bytes_are_written_as_they_are(tmp_path):
    # a PNG's first bytes (ISO/IEC 15948) must not pass through a text encoding
    data = b"\x89PNG\r\n\x1a\n\x00\xff"
    target = write_atomic(tmp_path / "picture.png", data)
    assert target.read_bytes() == data
    assert write_atomic(target, b"<svg/>", force=True).read_bytes() == b"<svg/>"
