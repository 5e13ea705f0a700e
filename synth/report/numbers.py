"""Small formatting helpers shared by the report modules."""

from __future__ import annotations

__all__ = ["json_number"]

import math


def json_number(value: float | None) -> float | None:
    """A float for JSON, or None for missing and non-finite values.

    Examples
    --------
    >>> json_number(float("inf")) is None, json_number(2)
    (True, 2.0)
    """
    if value is None or not math.isfinite(value):
        return None
    return float(value)
