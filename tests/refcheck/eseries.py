"""IEC 60063 E-series tables and decade-scaled values.

Source of truth: ``/work/shared/FACTS.md`` section 1 (IEC 60063:2015 tables as listed by
Wikipedia/HandWiki "E series of preferred numbers"). E3, E6, E12, E24 and E192 are typed in
from that list; E48 = E192[0::4] and E96 = E192[0::2] (0-based slices), as FACTS states.

Mantissas are held as integers (tenths for E3-E24, hundredths for E48-E192) so that every
value is an exact decimal; :func:`values` turns ``digits * 10**exponent`` into the nearest
float (correctly rounded, then rounded to 12 significant digits, which changes nothing),
and :func:`exact_values` gives the same values as :class:`fractions.Fraction`.
"""

from __future__ import annotations

import math
from fractions import Fraction

# FACTS 1 [STD]: two-digit tables, in tenths (1.0 -> 10).
_E3 = (10, 22, 47)
_E6 = (10, 15, 22, 33, 47, 68)
_E12 = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
_E24 = (
    10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
    33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91,
)  # fmt: skip
# FACTS 1 [STD]: E192 in hundredths (1.00 -> 100).
_E192 = (
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114,
    115, 117, 118, 120, 121, 123, 124, 126, 127, 129, 130, 132,
    133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152,
    154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
    178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203,
    205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234,
    237, 240, 243, 246, 249, 252, 255, 258, 261, 264, 267, 271,
    274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
    316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361,
    365, 370, 374, 379, 383, 388, 392, 397, 402, 407, 412, 417,
    422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481,
    487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
    562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642,
    649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741,
    750, 759, 768, 777, 787, 796, 806, 816, 825, 835, 845, 856,
    866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
)  # fmt: skip

#: Series name -> (integer mantissas, decimal places of those integers).
TABLES: dict[str, tuple[tuple[int, ...], int]] = {
    "E3": (_E3, 1),
    "E6": (_E6, 1),
    "E12": (_E12, 1),
    "E24": (_E24, 1),
    "E48": (_E192[0::4], 2),
    "E96": (_E192[0::2], 2),
    "E192": (_E192, 2),
}

#: Usual tolerance pairing (FACTS 1, [STD informative/CP]); not binding in IEC 60063:2015.
USUAL_TOLERANCE: dict[str, float] = {
    "E6": 0.20,
    "E12": 0.10,
    "E24": 0.05,
    "E48": 0.02,
    "E96": 0.01,
    "E192": 0.005,
}

RELATIVE_SLACK = 1e-9


def series_names() -> tuple[str, ...]:
    """The series names, coarsest first: ``("E3", "E6", ..., "E192")``."""
    return tuple(TABLES)


def _table(series: str) -> tuple[tuple[int, ...], int]:
    key = series.strip().upper()
    if key not in TABLES:
        raise ValueError(f"unknown series {series!r}; expected one of {', '.join(TABLES)}")
    return TABLES[key]


def exact_mantissas(series: str) -> tuple[Fraction, ...]:
    """The series' mantissas in [1, 10) as exact fractions, in table order."""
    digits, places = _table(series)
    return tuple(Fraction(d, 10**places) for d in digits)


def mantissas(series: str) -> tuple[float, ...]:
    """The series' mantissas in [1, 10) as floats, in table order (e.g. E6: 1.0 ... 6.8)."""
    return tuple(float(m) for m in exact_mantissas(series))


def _round12(x: float) -> float:
    """Round a positive float to 12 significant digits."""
    if x == 0.0:
        return 0.0
    return round(x, 11 - math.floor(math.log10(abs(x))))


def exact_values(series: str, low: float, high: float) -> list[Fraction]:
    """Every decade-scaled value of ``series`` in [low, high], ascending, as fractions.

    The interval is inclusive with a relative slack of 1e-9 at both ends, so a bound
    written as a float (``4.7e3``) still admits the table value it names.
    """
    if not (low > 0 and high >= low):
        raise ValueError(f"need 0 < low <= high, got low={low!r}, high={high!r}")
    digits, places = _table(series)
    lo = low * (1 - RELATIVE_SLACK)
    hi = high * (1 + RELATIVE_SLACK)
    first = math.floor(math.log10(low)) - 1
    last = math.floor(math.log10(high)) + 1
    out: list[Fraction] = []
    for exponent in range(first, last + 1):
        scale = Fraction(10) ** (exponent - places)
        for d in digits:
            v = d * scale
            if lo <= v <= hi:
                out.append(v)
    return out


def values(series: str, low: float, high: float) -> list[float]:
    """Every decade-scaled value of ``series`` in [low, high] (slack 1e-9), ascending.

    Each value is ``mantissa * 10**exponent`` computed exactly and rounded once to the
    nearest float (then to 12 significant digits), so ``4.7k`` is exactly ``4700.0``.
    """
    return [_round12(float(v)) for v in exact_values(series, low, high)]


def nearest(series: str, x: float) -> float:
    """The series value nearest to ``x`` on a log scale (FACTS 1, "Nearest value")."""
    if x <= 0:
        raise ValueError("x must be positive")
    candidates = values(series, x / 10, x * 10)
    return min(candidates, key=lambda v: (abs(math.log(v / x)), v))


def contains(series: str, x: float) -> bool:
    """True when ``x`` is a decade-scaled value of ``series`` (relative slack 1e-9)."""
    return bool(values(series, x, x))
