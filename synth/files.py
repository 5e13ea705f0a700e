"""Writing output files atomically, so a failed run never leaves a half-written output.

Every output goes through :func:`write_atomic` (or :func:`write_all` for several at
once): the content is written to a temporary file ``.NAME.XXXXXXXX`` in the destination's
folder, flushed to disk, and only then given its final name.

- The file is created with mode ``0o666`` and the kernel applies the user's umask
  (umask 022 gives ``rw-r--r--``, 077 gives ``rw-------``), as any command-line tool's
  output; the process's umask is never changed to read it.
- Without ``force`` the final name is *created exclusively*: the temporary file is
  hard-linked to it, which fails when the name exists, so of two runs writing the same
  file at once one wins and the other is refused (no check-then-rename race).  On a file
  system without hard links the final name is claimed with ``O_CREAT | O_EXCL`` and the
  temporary file renamed over the claim.
- With ``force`` the temporary file is renamed over the old file in one step.
- A device, a named pipe, a socket or a folder is never replaced, not even with
  ``force``; a symbolic link to one counts as one.
- On any failure the temporary file is removed and :class:`~synth.errors.DesignError`
  names the file and the reason in one line; an old file is left as it was.
"""

from __future__ import annotations

__all__ = ["check_destination", "write_all", "write_atomic"]

import errno
import os
import secrets
import stat
from collections.abc import Sequence
from pathlib import Path

from synth.errors import DesignError

_NEW_FILE_MODE = 0o666  # the umask takes off what the user withholds
_TEMP_ATTEMPTS = 100
# errors of a file system without hard links (FAT, some network and FUSE mounts)
_NO_LINKS = {errno.EPERM, errno.EOPNOTSUPP, errno.ENOTSUP, errno.EXDEV, errno.ENOSYS,
             errno.EMLINK}


def check_destination(path: str | Path, *, force: bool = False) -> Path:
    """Refuse a destination :func:`write_atomic` would refuse, before any work is done.

    Returns
    -------
    Path
        The destination's folder.

    Raises
    ------
    DesignError
        When ``path`` is a device, a pipe, a socket or a folder, exists and ``force`` is
        not set, or its folder is missing.
    """
    target = Path(path)
    try:
        info = os.stat(target)  # follows a symbolic link: a link to a device is a device
    except FileNotFoundError:
        info = None
    except OSError as exc:  # a name too long, a path through a file ...
        raise DesignError(f"{target}: cannot write there ({exc.strerror})") from None
    if info is not None and not stat.S_ISREG(info.st_mode):
        # a device (/dev/full, /dev/null), a pipe, a socket or a folder: never replaced
        raise DesignError(f"{target}: is not a regular file; write to a file name instead")
    if info is not None and not force:
        raise DesignError(f"{target}: already exists; pass --force to replace it")
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise DesignError(f"{target}: folder {folder} does not exist; create it first")
    return folder


def _create_temporary(target: Path, folder: Path) -> tuple[int, Path]:
    """A new, empty file ``.NAME.XXXXXXXX`` beside ``target``, opened for writing."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0) \
        | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_CLOEXEC", 0)
    for _ in range(_TEMP_ATTEMPTS):
        temp = folder / f".{target.name}.{secrets.token_hex(4)}"
        try:
            return os.open(temp, flags, _NEW_FILE_MODE), temp
        except FileExistsError:
            continue
        except OSError as exc:
            raise DesignError(f"{target}: cannot write there ({exc.strerror})") from None
    raise DesignError(f"{target}: cannot write there (no free temporary name)")


def _write_whole(handle: int, payload: bytes) -> None:
    """Write all of ``payload`` and flush it to the disk."""
    view = memoryview(payload)
    while view:
        view = view[os.write(handle, view):]
    os.fsync(handle)


def _link_exclusively(temp: Path, target: Path) -> None:
    """Give ``temp``'s content the name ``target``, failing if ``target`` exists."""
    try:
        os.link(temp, target)
    except OSError as exc:
        if isinstance(exc, FileExistsError) or exc.errno not in _NO_LINKS:
            raise
    else:
        temp.unlink()
        return
    # no hard links here: claim the name exclusively, then rename over the claim
    claim = os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL, _NEW_FILE_MODE)
    os.close(claim)
    try:
        os.replace(temp, target)
    except BaseException:
        target.unlink(missing_ok=True)  # the empty claim is ours
        raise


def _replace(temp: Path, target: Path) -> None:
    """Rename ``temp`` over ``target``, refusing once more if a non-regular file appeared."""
    try:
        info = os.stat(target)
    except FileNotFoundError:
        pass
    else:
        if not stat.S_ISREG(info.st_mode):
            raise DesignError(f"{target}: is not a regular file; write to a file name instead")
    os.replace(temp, target)


def _sync_folder(folder: Path) -> None:
    """Flush the folder's entry of the new name to disk where the system allows it."""
    try:
        handle = os.open(folder, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except OSError:
        return
    try:
        os.fsync(handle)
    except OSError:
        pass  # not every file system (nor Windows) syncs a folder
    finally:
        os.close(handle)


def write_atomic(path: str | Path, data: str | bytes, *, force: bool = False) -> Path:
    """Write ``data`` to ``path`` through a temporary file given the final name at the end.

    Parameters
    ----------
    path : str or Path
        Destination file.
    data : str or bytes
        Content; text is written as UTF-8, exactly as given (no newline translation).
    force : bool
        Replace an existing regular file; without it an existing file is refused, also
        one another process creates while this one writes.

    Returns
    -------
    Path
        The destination.

    Raises
    ------
    DesignError
        When the file exists and ``force`` is not set, the path is a device, a pipe, a
        socket or a folder (never replaced, even with ``force``), the folder is missing
        or not writable, or the write fails (a full disk, the file-size limit); the
        temporary file is then removed and an old file left as it was.

    Examples
    --------
    >>> import os, tempfile
    >>> folder = tempfile.TemporaryDirectory()
    >>> path = write_atomic(os.path.join(folder.name, "bom.csv"), "value\\n4k7\\n")
    >>> open(path, encoding="utf-8").read()
    'value\\n4k7\\n'
    >>> try:
    ...     write_atomic(path, "other")
    ... except DesignError as exc:
    ...     print(str(exc).split(": ", 1)[1])
    already exists; pass --force to replace it
    >>> folder.cleanup()

    Notes
    -----
    The exclusive create relies on link(2) failing with EEXIST, the atomic replace on
    rename(2) (POSIX.1-2017); the mode of a new file is 0o666 less the umask, as for
    open(2) with O_CREAT.
    """
    target = Path(path)
    folder = check_destination(target, force=force)
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    handle, temp = _create_temporary(target, folder)
    try:
        try:
            _write_whole(handle, payload)
        finally:
            os.close(handle)
        if force:
            _replace(temp, target)
        else:
            _link_exclusively(temp, target)
    except FileExistsError:
        temp.unlink(missing_ok=True)
        raise DesignError(f"{target}: already exists (written by another run meanwhile); "
                          "pass --force to replace it") from None
    except OSError as exc:  # a full disk, the file-size limit, a folder gone read-only
        temp.unlink(missing_ok=True)
        raise DesignError(f"{target}: could not be written ({exc.strerror or exc}); nothing "
                          "was written") from None
    except BaseException:
        temp.unlink(missing_ok=True)
        raise
    _sync_folder(folder)
    return target


def write_all(outputs: Sequence[tuple[str | Path, str | bytes]], *,
              force: bool = False) -> list[Path]:
    """Write several files as one output: all of them, or none that this call created.

    Every destination is checked (see :func:`write_atomic`) before the first is written;
    when a later write fails, the files this call created are removed again (a file it
    replaced with ``force`` cannot be put back).

    Parameters
    ----------
    outputs : sequence of (path, data)
        Destinations and their contents.
    force : bool
        Replace existing regular files.

    Returns
    -------
    list of Path
        The destinations, in order.

    Raises
    ------
    DesignError
        As :func:`write_atomic`, or when one destination is named twice.
    """
    targets = [Path(path) for path, _ in outputs]
    seen: set[Path] = set()
    for target in targets:
        if target in seen:
            raise DesignError(f"{target}: is named twice among the outputs; give each its "
                              "own name")
        seen.add(target)
        check_destination(target, force=force)
    created: list[Path] = []
    try:
        for target, (_, data) in zip(targets, outputs, strict=True):
            existed = os.path.lexists(target)
            write_atomic(target, data, force=force)
            if not existed:
                created.append(target)
    except BaseException:
        for target in created:
            target.unlink(missing_ok=True)
        raise
    return targets
