"""Writing files atomically, so a failed run never leaves a half-written output."""

from __future__ import annotations

__all__ = ["write_atomic"]

import os
import tempfile
from pathlib import Path

from synth.errors import DesignError


def write_atomic(path: str | Path, text: str | bytes, *, force: bool = False) -> Path:
    """Write ``text`` to ``path`` through a temporary file renamed into place.

    Parameters
    ----------
    path : str or Path
        Destination file.
    text : str or bytes
        Content: text is written as UTF-8, bytes as they are (a PNG, an SVG).
    force : bool
        Replace an existing file; without it an existing file is refused.

    Returns
    -------
    Path
        The destination.

    Raises
    ------
    DesignError
        When the file exists and ``force`` is not set, the path is a device, a pipe or a
        folder (never replaced, even with ``force``), the folder is missing or
        not writable, or the write fails (a full disk, the file-size limit); the
        temporary file is then removed.
    """
    target = Path(path)
    if target.exists() and not target.is_file():
        # a device (/dev/full, /dev/null), a pipe or a folder: never replaced
        raise DesignError(f"{target}: is not a regular file; write to a file name instead")
    if target.exists() and not force:
        raise DesignError(f"{target}: already exists; pass --force to replace it")
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise DesignError(f"{target}: folder {folder} does not exist; create it first")
    try:
        handle, temp = tempfile.mkstemp(prefix=f".{target.name}.", dir=folder)
    except OSError as exc:
        raise DesignError(f"{target}: cannot write there ({exc.strerror})") from None
    try:
        if isinstance(text, bytes):
            with os.fdopen(handle, "wb") as binary:
                binary.write(text)
        else:
            with os.fdopen(handle, "w", encoding="utf-8", newline="") as stream:
                stream.write(text)
        os.replace(temp, target)
    except OSError as exc:  # a full disk, the file-size limit, a folder gone read-only
        Path(temp).unlink(missing_ok=True)
        raise DesignError(f"{target}: could not be written ({exc.strerror or exc}); nothing "
                          "was written") from None
    except BaseException:
        Path(temp).unlink(missing_ok=True)
        raise
    return target
