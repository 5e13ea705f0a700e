"""Reading input files (design, board, stock and package files) safely.

Every input is a regular file of at most :data:`MAX_INPUT_BYTES`: a device, a pipe
or a socket is refused before it is opened (so ``/dev/zero`` is not read without
bound and a FIFO does not block), and so is a larger file.  Text is UTF-8, with or
without a byte-order mark; a file in another encoding is refused with the encoding
it looks like named, never decoded by guess.
"""

from __future__ import annotations

__all__ = ["MAX_INPUT_BYTES", "present", "read_input", "read_input_text", "read_toml"]

import os
import stat
import tomllib
from pathlib import Path
from typing import Any

from synth.errors import DesignError

MAX_INPUT_BYTES = 16 * 1024 * 1024  # 16 MiB: far above any design, board or stock list


def present(path: str | Path) -> bool:
    """Whether something exists at ``path``; a name too long or otherwise unusable is not.

    Examples
    --------
    >>> present("x" * 5000), present(".")
    (False, True)
    """
    try:
        os.stat(path)
    except (OSError, ValueError):  # ENAMETOOLONG, ENOENT, a NUL byte ...
        return False
    return True


def read_input(path: str | Path, what: str) -> bytes:
    """The bytes of an input file, refused unless it is a regular file of at most 16 MiB.

    Parameters
    ----------
    path : str or Path
        The file.
    what : str
        What the file should be ("design file", "stock list" ...), for messages.

    Raises
    ------
    DesignError
        When the file is missing, a folder, not a regular file, too large or unreadable.
    """
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise DesignError(f"{path}: no such file; check the path") from None
    except OSError as exc:
        raise DesignError(f"{path}: cannot be read ({exc.strerror})") from None
    if stat.S_ISDIR(info.st_mode):
        raise DesignError(f"{path}: is a folder; name a {what}")
    if not stat.S_ISREG(info.st_mode):
        raise DesignError(f"{path}: is not a regular file (a device, pipe or socket); "
                          f"name a {what} saved on disk")
    if info.st_size > MAX_INPUT_BYTES:
        raise DesignError(f"{path}: is {info.st_size:,} bytes; a {what} may have at most "
                          f"{MAX_INPUT_BYTES:,} bytes (16 MiB)")
    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_INPUT_BYTES + 1)
    except OSError as exc:
        raise DesignError(f"{path}: cannot be read ({exc.strerror})") from None
    if len(data) > MAX_INPUT_BYTES:  # grew while being read
        raise DesignError(f"{path}: a {what} may have at most {MAX_INPUT_BYTES:,} bytes (16 MiB)")
    return data


def read_input_text(path: str | Path, what: str) -> str:
    """The text of an input file: UTF-8, with or without a byte-order mark.

    Raises
    ------
    DesignError
        As :func:`read_input`, or when the text is not UTF-8 (naming Windows-1252 when
        the bytes read as that code page, as spreadsheets on Windows save them).
    """
    data = read_input(path, what)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        try:
            data.decode("cp1252")
        except UnicodeDecodeError:
            guess = ""
        else:
            guess = " (it reads as Windows-1252 / Latin-1 text)"
        raise DesignError(f"{path}, line {line}: not UTF-8 text{guess}; save it as UTF-8 "
                          "(a spreadsheet's \"CSV UTF-8\")") from None


def read_toml(path: str | Path, what: str) -> dict[str, Any]:
    """Parse an input file as TOML (see :func:`read_input_text`).

    Raises
    ------
    DesignError
        As :func:`read_input_text`, or on a TOML syntax error or nesting too deep to read.
    """
    text = read_input_text(path, what)
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{path}: not valid TOML ({exc}); fix the syntax there") from None
    except RecursionError:
        raise DesignError(f"{path}: tables or arrays are nested too deeply to read; a {what} "
                          "needs only a few levels") from None
