"""JSON Schemas of the JSON documents rnsynth writes: ``check``, ``design``, ``bom`` and
``sweep``."""

from __future__ import annotations

__all__ = ["schema_path"]

from pathlib import Path


def schema_path(name: str) -> Path:
    """The schema file of one output (``"check"``, ``"design"``, ``"bom"`` or ``"sweep"``).

    Examples
    --------
    >>> schema_path("bom").name
    'bom.schema.json'
    """
    return Path(__file__).with_name(f"{name}.schema.json")
