"""A fingerprint of a run's inputs: SHA-256 of every input file and of the options.

A review page carries it so that a reader can tell whether the page was made from
the files in front of them.  The fingerprint is the SHA-256 (FIPS 180-4) of a short
manifest text, one line per input file in the order given (the file's own SHA-256
in lowercase hexadecimal), then one line ``option NAME=VALUE`` per option that
changes the result, sorted by name.  It can be recomputed with standard tools::

    (sha256sum a.toml b.toml | cut -c1-64; printf 'option samples=100000\\n') | sha256sum
"""

from __future__ import annotations

__all__ = ["InputDigest", "input_digest"]

import hashlib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from synth.inputs import read_input


@dataclass(frozen=True)
class InputDigest:
    """The fingerprint of a run's inputs.

    Attributes
    ----------
    sha256 : str
        SHA-256 of the manifest (lowercase hexadecimal, 64 digits).
    files : tuple of (str, str)
        Each input file as given and its own SHA-256.
    options : tuple of (str, str)
        The options that entered the manifest, sorted by name.
    """

    sha256: str
    files: tuple[tuple[str, str], ...]
    options: tuple[tuple[str, str], ...]


def input_digest(paths: Sequence[str | Path], options: Mapping[str, object] | None = None
                 ) -> InputDigest:
    """Fingerprint input files and options.

    Parameters
    ----------
    paths : sequence of str or Path
        The input files (design, board, package table, stock list), in order; a
        file named twice counts once, where it first appears.
    options : mapping, optional
        Options that change the result, by name; values are written with ``str``.

    Returns
    -------
    InputDigest

    Raises
    ------
    DesignError
        When a file cannot be read (see :func:`synth.inputs.read_input`).

    Examples
    --------
    >>> import hashlib, os, tempfile
    >>> folder = tempfile.mkdtemp()
    >>> path = os.path.join(folder, "a.toml")
    >>> _ = open(path, "wb").write(b"x = 1\\n")
    >>> digest = input_digest([path], {"seed": 1})
    >>> own = hashlib.sha256(b"x = 1\\n").hexdigest()
    >>> digest.sha256 == hashlib.sha256(f"{own}\\noption seed=1\\n".encode()).hexdigest()
    True
    """
    files: list[tuple[str, str]] = []
    seen: set[Path] = set()
    for path in paths:
        resolved = Path(path).resolve()
        if resolved in seen:
            continue
        seen.add(resolved)
        files.append((str(path), hashlib.sha256(read_input(path, "input file")).hexdigest()))
    chosen = tuple(sorted((name, str(value)) for name, value in (options or {}).items()))
    manifest = "".join(f"{own}\n" for _, own in files)
    manifest += "".join(f"option {name}={value}\n" for name, value in chosen)
    return InputDigest(sha256=hashlib.sha256(manifest.encode("utf-8")).hexdigest(),
                       files=tuple(files), options=chosen)
