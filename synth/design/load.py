"""Reading a design file from disk, or a design from a stream (standard input).
"""

from __future__ import annotations

__all__ = ["load_design", "load_design_stream"]

from pathlib import Path
from typing import IO

from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.inputs import (
    STDIN,
    decode_input,
    parse_toml,
    read_stream,
    read_toml,
    require_suffix,
)


def load_design(path: str | Path) -> Design:
    """Read and validate a design file.

    Parameters
    ----------
    path : str or Path
        A TOML design file, its name ending in ``.toml``.

    Returns
    -------
    Design

    Raises
    ------
    DesignError
        When the name does not end in ``.toml``, the file is missing, not a regular file,
        over 16 MiB, not UTF-8, not TOML, or breaks a rule of the structure.
    """
    require_suffix(path, "design file")
    return design_from_dict(read_toml(path, "design file"), str(path))


def load_design_stream(stream: IO[bytes], name: str = STDIN) -> Design:
    """Read and validate a design from a binary stream, such as standard input.

    Parameters
    ----------
    stream : binary stream
        The design's TOML text (UTF-8), read to its end.
    name : str
        The design's name in messages and reports (``<stdin>``).  A name in angle
        brackets has no folder: a package table the design names is read relative to
        the current folder.

    Returns
    -------
    Design

    Raises
    ------
    DesignError
        As :func:`load_design`.

    Examples
    --------
    >>> import io
    >>> text = b'''
    ... [[source]]
    ... ref = "V1"
    ... kind = "voltage"
    ... plus = "in"
    ... minus = "gnd"
    ... value = "10 V"
    ... [[resistor]]
    ... ref = "R1"
    ... nodes = ["in", "gnd"]
    ... value = "1k"
    ... '''
    >>> load_design_stream(io.BytesIO(text)).origin
    '<stdin>'
    """
    text = decode_input(read_stream(stream, "design file", name), name)
    return design_from_dict(parse_toml(text, name, "design file"), name)
