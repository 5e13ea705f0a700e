"""Reading a design file from disk.
"""

from __future__ import annotations

__all__ = ["load_design"]

from pathlib import Path

from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.inputs import read_toml


def load_design(path: str | Path) -> Design:
    """Read and validate a design file.

    Parameters
    ----------
    path : str or Path
        A TOML design file.

    Returns
    -------
    Design

    Raises
    ------
    DesignError
        When the file is missing, not a regular file, over 16 MiB, not UTF-8, not TOML,
        or breaks a rule of the structure.
    """
    return design_from_dict(read_toml(path, "design file"), str(path))
