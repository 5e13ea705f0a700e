"""Reading a design file from disk.
"""

from __future__ import annotations

__all__ = ["load_design"]

import tomllib
from pathlib import Path

from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.errors import DesignError


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
        When the file is missing, is not TOML, or breaks a rule of the structure.
    """
    origin = str(path)
    try:
        with open(path, "rb") as handle:
            data = tomllib.load(handle)
    except FileNotFoundError:
        raise DesignError(f"{origin}: no such file; check the path") from None
    except IsADirectoryError:
        raise DesignError(f"{origin}: is a folder; name a design file") from None
    except OSError as exc:
        raise DesignError(f"{origin}: cannot be read ({exc.strerror})") from None
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{origin}: not valid TOML ({exc}); fix the syntax there") from None
    except UnicodeDecodeError:
        raise DesignError(f"{origin}: not UTF-8 text; save it as UTF-8") from None
    return design_from_dict(data, origin)
