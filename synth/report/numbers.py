"""Small formatting helpers shared by the report modules."""

from __future__ import annotations

__all__ = ["NOISE_FRACTION", "json_number"]

import math

from synth.rating import NOISE_FRACTION  # relative errors below it are shown as 0 %


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
