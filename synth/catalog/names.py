"""Where the bundled catalogues live, and the names of the series they hold.

Light on purpose (no numeric library): the command line lists the series as
the choices of ``--series`` in its help and shell completion.
"""

from __future__ import annotations

__all__ = ["catalog_dir", "series_names"]

import functools
import tomllib
from pathlib import Path

from synth.errors import DesignError


def catalog_dir() -> Path:
    """Return the folder holding the bundled catalogues.

    An installed package carries them in ``synth/catalogs``; a source checkout
    has them in the top-level ``catalogs/`` folder beside ``synth/``.
    """
    package = Path(__file__).resolve().parent.parent
    for candidate in (package / "catalogs", package.parent / "catalogs"):
        if (candidate / "e_series.toml").is_file():
            return candidate
    raise DesignError(
        f"the catalogue folder was not found beside {package}; reinstall rnsynth with pip install ."
    )


@functools.cache
def series_names() -> tuple[str, ...]:
    """Names of the bundled series, coarsest first (E3 ... E192).

    Examples
    --------
    >>> series_names()[:3]
    ('E3', 'E6', 'E12')
    """
    with (catalog_dir() / "e_series.toml").open("rb") as handle:
        raw = tomllib.load(handle)
    return tuple(sorted(raw, key=lambda name: len(raw[name]["mantissas"])))
