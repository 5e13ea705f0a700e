"""Reading input files (design, board, stock and package files) safely.

Every input is a regular file of at most :data:`MAX_INPUT_BYTES`: a device, a pipe
or a socket is refused before it is opened (so ``/dev/zero`` is not read without
bound and a FIFO does not block), and so is a larger file.  Text is UTF-8, with or
without a byte-order mark; a file in another encoding is refused with the encoding
it looks like named, never decoded by guess.

Each kind of input has its suffix (:data:`SUFFIXES`): design and board files end in
``.toml``, package tables and stock lists in ``.csv`` (in any case).  A name with
another suffix is refused before the file is opened, or even looked for, so a design
that names ``/etc/hostname`` as its package table neither reads it nor has a line of
it quoted back in an error.  A design read from standard input (:func:`read_stream`)
is named ``<stdin>`` (:data:`STDIN`) and has no suffix to check.
"""

from __future__ import annotations

__all__ = [
    "MAX_INPUT_BYTES", "STDIN", "SUFFIXES", "decode_input", "parse_toml", "present",
    "read_input", "read_input_text", "read_stream", "read_toml", "require_suffix",
]

import os
import stat
import tomllib
from pathlib import Path
from typing import IO, Any

from synth.errors import DesignError

MAX_INPUT_BYTES = 16 * 1024 * 1024  # 16 MiB: far above any design, board or stock list

STDIN = "<stdin>"
"""The name messages give to an input read from standard input."""

SUFFIXES = {
    "design file": ".toml",
    "board file": ".toml",
    "design or board file": ".toml",
    "package table": ".csv",
    "stock list": ".csv",
    "class table": ".csv",
}
"""The suffix each kind of input file must have (compared without regard to case)."""


def require_suffix(path: str | Path, what: str, item: str | None = None) -> None:
    """Refuse ``path`` unless its suffix is that of a ``what`` (see :data:`SUFFIXES`).

    Parameters
    ----------
    path : str or Path
        The file's name, as given.
    what : str
        A key of :data:`SUFFIXES`.
    item : str, optional
        Where the name was found (``"board.toml, [board]"``), for the message; by
        default the message starts with the name itself.

    Raises
    ------
    DesignError
        When the suffix differs; nothing is opened or looked for.

    Examples
    --------
    >>> require_suffix("shelf.CSV", "stock list")
    >>> try:
    ...     require_suffix("/etc/hostname", "package table", "probe.toml, [design]")
    ... except DesignError as exc:
    ...     print(exc)
    probe.toml, [design]: package table '/etc/hostname' is not a .csv file; name a file
    ending in .csv
    """
    suffix = SUFFIXES[what]
    if str(path) == STDIN or Path(path).suffix.lower() == suffix:
        return
    if item is None:
        raise DesignError(f"{path}: a {what} must be a {suffix} file; name a file ending "
                          f"in {suffix}")
    raise DesignError(f"{item}: {what} {str(path)[:80]!r} is not a {suffix} file; name a "
                      f"file ending in {suffix}")


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


def read_stream(stream: IO[bytes], what: str, name: str = STDIN) -> bytes:
    """The bytes of an input read from a stream (standard input), at most 16 MiB.

    Parameters
    ----------
    stream : binary stream
        Read to its end.
    what : str
        What the input should be ("design file" ...), for messages.
    name : str
        The input's name in messages.

    Raises
    ------
    DesignError
        When the stream holds more than 16 MiB (the rest is not read) or cannot be read.
    """
    try:
        data = stream.read(MAX_INPUT_BYTES + 1)
    except OSError as exc:
        raise DesignError(f"{name}: cannot be read ({exc.strerror or exc})") from None
    if len(data) > MAX_INPUT_BYTES:
        raise DesignError(f"{name}: a {what} may have at most {MAX_INPUT_BYTES:,} bytes "
                          "(16 MiB)")
    return bytes(data)


def decode_input(data: bytes, name: str) -> str:
    """An input's bytes as text: UTF-8, with or without a byte-order mark.

    Raises
    ------
    DesignError
        When the text is not UTF-8 (naming Windows-1252 when the bytes read as that code
        page, as spreadsheets on Windows save them).
    """
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
        raise DesignError(f"{name}, line {line}: not UTF-8 text{guess}; save it as UTF-8 "
                          "(a spreadsheet's \"CSV UTF-8\")") from None


def parse_toml(text: str, name: str, what: str) -> dict[str, Any]:
    """An input's text parsed as TOML.

    Raises
    ------
    DesignError
        On a TOML syntax error (its line and column named, no line quoted) or nesting too
        deep to read.
    """
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{name}: not valid TOML ({exc}); fix the syntax there") from None
    except RecursionError:
        raise DesignError(f"{name}: tables or arrays are nested too deeply to read; a {what} "
                          "needs only a few levels") from None


def read_input_text(path: str | Path, what: str) -> str:
    """The text of an input file: UTF-8, with or without a byte-order mark.

    Raises
    ------
    DesignError
        As :func:`read_input` and :func:`decode_input`.
    """
    return decode_input(read_input(path, what), str(path))


def read_toml(path: str | Path, what: str) -> dict[str, Any]:
    """Parse an input file as TOML (see :func:`read_input_text`).

    Raises
    ------
    DesignError
        As :func:`read_input_text` and :func:`parse_toml`.
    """
    return parse_toml(read_input_text(path, what), str(path), what)
