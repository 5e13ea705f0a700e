"""Reading and writing electrical values.

rnsynth reads the notations engineers write on schematics and in BOMs:
engineering prefixes (``4.7k``, ``4.7 kΩ``, ``50 µA``, ``100m`` for milli),
plain and exponent numbers (``4700``, ``1e3``) and the IEC 60062
letter-and-digit code, also called the RKM code (``4K7``, ``2R2``, ``R47``,
``1M0``).  It writes values in engineering notation and in that code.

Every reader returns a float in SI units (ohm, V, A, W, °C, a plain fraction
for percentages, a fraction per kelvin for TCR) and raises
:class:`~synth.errors.DesignError` with a message that says what was expected.
Callers add the file and item to that message.
"""

from __future__ import annotations

__all__ = [
    "format_eng",
    "format_percent",
    "format_rkm",
    "format_window",
    "parse_decibels",
    "parse_fraction",
    "parse_quantity",
    "parse_resistance",
    "parse_tcr",
    "parse_temperature",
]

import math
import re
from decimal import Decimal
from typing import TypeGuard

from synth.errors import DesignError

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_PREFIX_EXPONENT = {
    "p": -12,
    "n": -9,
    "u": -6,
    "µ": -6,  # micro sign U+00B5
    "μ": -6,  # Greek mu U+03BC
    "m": -3,
    "": 0,
    "k": 3,
    "K": 3,  # accepted for resistance only (IEC 60062 writes K)
    "M": 6,
    "G": 9,
    "T": 12,
}
_RKM_EXPONENT = {"L": -3, "R": 0, "K": 3, "M": 6, "G": 9, "T": 12}
_RKM = re.compile(r"^(?P<whole>\d*)(?P<letter>[LRKMGTrk])(?P<frac>\d*)$")
_OHM_SUFFIX = re.compile(r"(?:Ω|Ω|[oO][hH][mM][sS]?)$")
_PLAIN = re.compile(rf"^(?P<num>{_NUMBER})\s*(?P<prefix>[pnuµμmkKMGT]?)$")
_MEG = re.compile(rf"^(?P<num>{_NUMBER})\s*meg$", re.IGNORECASE)  # SI writes M for mega
_UNIT_NAME = {"V": "voltage", "A": "current", "W": "power", "Hz": "frequency"}


def _is_number(value: object) -> TypeGuard[int | float]:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


_MAX_TEXT = 100  # characters of a value read at all; longer text is not a value
_EXCERPT = 40  # characters of a value quoted back in a message


def _quote(text: object) -> str:
    """The value as quoted in a message: its repr, cut to a short excerpt."""
    shown = repr(text)
    if len(shown) <= _EXCERPT:
        return shown
    return shown[:_EXCERPT - 4] + ("...'" if isinstance(text, str) else "...")


def _scaled(number: str, exponent: int) -> float:
    """Return ``number × 10**exponent`` correctly rounded (so 50 µ is 5e-05 exactly).

    A number beyond the float range reads as infinity (refused by :func:`_finite`).
    """
    try:
        return float(Decimal(number).scaleb(exponent))
    except ArithmeticError:  # decimal.Overflow, or an exponent decimal cannot hold
        return math.inf


def _finite(number: float, text: object, what: str) -> float:
    if not math.isfinite(number):
        raise DesignError(f"{_quote(text)} is not a finite {what}; give an ordinary number")
    return float(number)


def _plain(text: object, what: str) -> float:
    """A TOML number (int or float) as a finite float."""
    assert _is_number(text)
    try:
        number = float(text)
    except OverflowError:  # an integer beyond the float range
        number = math.inf
    return _finite(number, text, what)


def _text(text: str, what: str) -> str:
    """The stripped text of a value, refused when far too long to be one."""
    raw = text.strip()
    if len(raw) > _MAX_TEXT:
        raise DesignError(f"{_quote(text)} ({len(raw)} characters) is not a {what}; "
                          f"a value has at most {_MAX_TEXT} characters")
    return raw


def parse_resistance(text: object) -> float:
    """Read a resistance in ohm.

    Parameters
    ----------
    text : str or float
        ``4k7``, ``4.7k``, ``4K7``, ``4700``, ``4.7 kΩ``, ``4.7kohm``, ``2R2``,
        ``R47``, ``0R1``, ``1M0``, ``100m`` (milliohm), ``1e3`` or a number.

    Returns
    -------
    float
        The resistance in ohm (sign and size are not checked here).

    Raises
    ------
    DesignError
        When the text is malformed or ambiguous.

    Examples
    --------
    >>> parse_resistance("4k7"), parse_resistance("R47"), parse_resistance("100m")
    (4700.0, 0.47, 0.1)

    Notes
    -----
    The letter-and-digit code follows IEC 60062: the letter stands where the
    decimal point would and sets the multiplier (L milli, R unity, K kilo,
    M mega, G giga, T tera).  Lower-case ``m`` always means milli and upper-case
    ``M`` mega, so ``4m7`` is refused as ambiguous.
    """
    expected = "write a resistance such as 4k7, 4.7k, 4700, 2R2, R47 or 4.7 kΩ"
    if _is_number(text):
        return _plain(text, "resistance")
    if not isinstance(text, str):
        raise DesignError(f"{_quote(text)} is not a resistance; {expected}")
    raw = _text(text, "resistance")
    rkm = _RKM.match(raw)
    if rkm and (rkm["whole"] or rkm["frac"]):
        whole, frac = rkm["whole"] or "0", rkm["frac"] or "0"
        return _finite(_scaled(f"{whole}.{frac}", _RKM_EXPONENT[rkm["letter"].upper()]),
                       text, "resistance")
    if re.fullmatch(r"\d*m\d+", raw):
        raise DesignError(
            f"{text!r} is ambiguous: write {raw.replace('m', 'M')} for megohms "
            f"or {raw.replace('m', '.')}m for milliohms"
        )
    body = _OHM_SUFFIX.sub("", raw).rstrip()
    meg = _MEG.match(body)
    if meg:
        raise DesignError(f"{_quote(text)} is not a resistance; "
                          f"write M for mega ({meg['num']}M)")
    plain = _PLAIN.match(body)
    if not plain or not body:
        raise DesignError(f"{_quote(text)} is not a resistance; {expected}")
    prefix = plain["prefix"]
    if prefix and re.search(r"[eE]", plain["num"]):
        raise DesignError(
            f"{text!r} mixes an exponent and a prefix; write one of them, e.g. 4.7e3 or 4.7k"
        )
    return _finite(_scaled(plain["num"], _PREFIX_EXPONENT[prefix]), text, "resistance")


def parse_quantity(text: object, unit: str) -> float:
    """Read a voltage, current, power or frequency in SI units.

    Parameters
    ----------
    text : str or float
        A number with an optional engineering prefix and the unit symbol, e.g.
        ``"12 V"``, ``"50 uA"``, ``"50 µA"``, ``"250mW"``, ``3.3``.
    unit : {"V", "A", "W", "Hz"}
        The unit expected.

    Returns
    -------
    float
        The value in V, A, W or Hz.

    Raises
    ------
    DesignError
        When the text is malformed or names another unit.

    Examples
    --------
    >>> parse_quantity("50 uA", "A"), parse_quantity("13.8 V", "V")
    (5e-05, 13.8)
    """
    what = _UNIT_NAME.get(unit, unit)
    expected = f"write a {what} such as 3.3 {unit}, 250 m{unit} or 1.5k{unit}"
    if _is_number(text):
        return _plain(text, what)
    if not isinstance(text, str):
        raise DesignError(f"{_quote(text)} is not a {what}; {expected}")
    pattern = rf"^(?P<num>{_NUMBER})\s*(?P<prefix>[pnuµμmkMGT]?)\s*(?P<unit>[A-Za-zΩ%/°]*)$"
    match = re.match(pattern, _text(text, what))
    if not match:
        raise DesignError(f"{_quote(text)} is not a {what}; {expected}")
    prefix, symbol = match["prefix"], match["unit"]
    if symbol not in ("", unit):
        # "12 mV" parses as prefix m + unit V; anything else names the wrong unit.
        raise DesignError(f"{_quote(text)} is not a {what} (unit {symbol!r}); {expected}")
    if prefix and re.search(r"[eE]", match["num"]):
        raise DesignError(f"{_quote(text)} mixes an exponent and a prefix; write one of them")
    return _finite(_scaled(match["num"], _PREFIX_EXPONENT[prefix]), text, what)


def parse_fraction(text: object) -> float:
    """Read a percentage (or ppm) as a plain fraction.

    Parameters
    ----------
    text : str
        ``"1%"``, ``"0.5 %"``, ``"±1%"`` or ``"50 ppm"``.  A bare number is
        refused because ``1`` could mean 1 % or 100 %.

    Returns
    -------
    float
        The fraction, e.g. 0.01 for ``"1%"``.

    Examples
    --------
    >>> parse_fraction("1%"), parse_fraction("50 ppm")
    (0.01, 5e-05)
    """
    expected = 'write a percentage with its sign, e.g. "1%" or "50 ppm"'
    if not isinstance(text, str):
        raise DesignError(f"{_quote(text)} is not a percentage; {expected}")
    match = re.match(rf"^[±]?\s*(?P<num>{_NUMBER})\s*(?P<unit>%|ppm)$",
                     _text(text, "percentage"))
    if not match:
        raise DesignError(f"{_quote(text)} is not a percentage; {expected}")
    exponent = -2 if match["unit"] == "%" else -6
    return _finite(_scaled(match["num"], exponent), text, "percentage")


def parse_tcr(text: object) -> float:
    """Read a temperature coefficient of resistance as a fraction per kelvin.

    Parameters
    ----------
    text : str
        ``"100 ppm/C"``, ``"±50 ppm/K"``, ``"25ppm/°C"`` or ``"0.01 %/K"``.

    Returns
    -------
    float
        ΔR/R per kelvin, e.g. 1e-4 for ``"100 ppm/C"``.

    Examples
    --------
    >>> parse_tcr("100 ppm/C")
    0.0001
    """
    expected = 'write a TCR with its unit, e.g. "100 ppm/C" or "25 ppm/K"'
    if not isinstance(text, str):
        raise DesignError(f"{_quote(text)} is not a TCR; {expected}")
    match = re.match(
        rf"^[±]?\s*(?P<num>{_NUMBER})\s*(?P<unit>ppm|%)\s*/\s*(?:°\s*C|°\s*K|degC|C|K)$",
        _text(text, "TCR"),
    )
    if not match:
        raise DesignError(f"{_quote(text)} is not a TCR; {expected}")
    exponent = -6 if match["unit"] == "ppm" else -2
    return _finite(_scaled(match["num"], exponent), text, "TCR")


def parse_temperature(text: object) -> float:
    """Read a temperature in °C.

    Parameters
    ----------
    text : str or float
        ``"70 C"``, ``"-20 °C"``, ``"70degC"``, ``"343.15 K"`` or a number of °C.

    Returns
    -------
    float
        The temperature in °C.

    Examples
    --------
    >>> parse_temperature("70 C"), parse_temperature("343.15 K")
    (70.0, 70.0)
    """
    expected = 'write a temperature such as "70 C" or "-20 C"'
    if _is_number(text):
        value = _plain(text, "temperature")
    elif not isinstance(text, str):
        raise DesignError(f"{_quote(text)} is not a temperature; {expected}")
    else:
        match = re.match(
            rf"^(?P<num>{_NUMBER})\s*(?P<unit>°\s*C|degC|C|K|)$", _text(text, "temperature")
        )
        if not match:
            raise DesignError(f"{_quote(text)} is not a temperature; {expected}")
        value = _finite(float(match["num"]), text, "temperature")
        if match["unit"] == "K":
            value -= 273.15
    if value < -273.15:
        raise DesignError(f"{_quote(text)} is below absolute zero (-273.15 C); {expected}")
    return value


def parse_decibels(text: object) -> float:
    """Read a level in dB, e.g. ``"6 dB"`` or ``10``.

    Examples
    --------
    >>> parse_decibels("6 dB")
    6.0
    """
    if _is_number(text):
        return _plain(text, "level in dB")
    match = re.match(rf"^(?P<num>{_NUMBER})\s*(?:dB)?$", str(text).strip()[:_MAX_TEXT + 1])
    if not isinstance(text, str) or not match:
        raise DesignError(f"{_quote(text)} is not a level in dB; write e.g. \"6 dB\"")
    return _finite(float(match["num"]), text, "level in dB")


_ENG_PREFIX = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


def format_eng(value: float, unit: str = "", digits: int = 4) -> str:
    """Write a value in engineering notation.

    Parameters
    ----------
    value : float
        The value in SI units.
    unit : str
        Unit symbol appended after the prefix, e.g. ``"Ω"`` or ``"V"``.
    digits : int
        Significant digits kept; trailing zeros are dropped.

    Returns
    -------
    str
        For example ``"4.7 kΩ"`` or ``"-12.5 mA"``.

    Examples
    --------
    >>> format_eng(4700, "Ω"), format_eng(5e-5, "A")
    ('4.7 kΩ', '50 µA')
    """
    if not math.isfinite(value):
        return f"{value} {unit}".strip()
    if value == 0:
        return f"0 {unit}".strip()
    magnitude = abs(value)
    exponent = 3 * math.floor(math.log10(magnitude) / 3)
    exponent = max(-12, min(12, exponent))
    mantissa = float(f"{magnitude / 10.0 ** exponent:.{digits}g}")
    if mantissa >= 1000 and exponent < 12:
        exponent += 3
        mantissa = float(f"{magnitude / 10.0 ** exponent:.{digits}g}")
    text = f"{mantissa:.{digits}g}"
    if "e" in text:  # very small or large beyond the prefixes: keep it exact
        text = f"{mantissa:.{digits - 1}e}"
    sign = "-" if value < 0 else ""
    return f"{sign}{text} {_ENG_PREFIX[exponent]}{unit}".rstrip()


def format_rkm(ohms: float, digits: int = 3) -> str:
    """Write a resistance in the IEC 60062 letter-and-digit (RKM) code.

    Parameters
    ----------
    ohms : float
        Resistance in ohm, zero or positive.
    digits : int
        Significant digits kept (at least two are always written, as the
        code's ``1K0`` and ``R10`` show).

    Returns
    -------
    str
        ``"4K7"``, ``"470R"``, ``"R47"``, ``"47K3"``, ``"1M0"``; zero is ``"0R"``.

    Examples
    --------
    >>> format_rkm(4700), format_rkm(0.47), format_rkm(1e6), format_rkm(1e308)
    ('4K7', 'R47', '1M0', '1.00e308')
    """
    if ohms < 0 or not math.isfinite(ohms):
        raise DesignError(f"{ohms!r} ohm has no letter-and-digit code; give a value >= 0")
    if ohms == 0:
        return "0R"
    rounded = float(f"{ohms:.{digits}g}")
    if rounded >= 1e15:
        # beyond the code's largest letter (T, 10^12) the digits would run to hundreds:
        # the value is written in scientific notation instead
        return f"{rounded:.{digits - 1}e}".replace("e+", "e")
    for letter, factor in (("T", 1e12), ("G", 1e9), ("M", 1e6), ("K", 1e3), ("R", 1.0)):
        if rounded >= factor or (letter == "R" and rounded >= 1e-2):
            break
    else:
        letter, factor = "L", 1e-3
    mantissa = rounded / factor
    decimals = max(digits - 1 - math.floor(math.log10(mantissa)), 0)
    significant = f"{mantissa:.{decimals}f}".rstrip("0") if decimals else f"{mantissa:.0f}"
    whole, _, frac = significant.partition(".")
    # keep two significant digits as the code does (1K0, R10, 10K)
    sig_count = len((whole.lstrip("0") + frac).lstrip("0"))
    if sig_count < 2:
        frac = frac + "0" * (2 - sig_count) if mantissa < 10 else frac
    whole = "" if whole == "0" else whole
    return f"{whole}{letter}{frac}"


def format_percent(fraction: float, digits: int = 3) -> str:
    """Write a fraction as a percentage, e.g. ``0.0123`` as ``"1.23%"``.

    Examples
    --------
    >>> format_percent(0.01)
    '1%'
    """
    return f"{fraction * 100:.{digits}g}%"


def format_window(low: float, high: float, unit: str = "", digits: int = 6) -> str:
    """A window or band as text: ``"2.97 V .. 3.03 V"``, ``"at most 30 µA"``, ``"any value"``.

    Examples
    --------
    >>> format_window(2.97, 3.03, "V"), format_window(float("-inf"), 3e-5, "A")
    ('2.97 V .. 3.03 V', 'at most 30 µA')
    >>> format_window(0.495, 0.505)
    '0.495 .. 0.505'

    """
    def shown(value: float) -> str:
        # a ratio has no unit: a plain number reads better than an SI prefix
        return format_eng(value, unit, digits) if unit else f"{value:.{digits}g}"

    if math.isinf(low) and math.isinf(high):
        return "any value"
    if math.isinf(low):
        return f"at most {shown(high)}"
    if math.isinf(high):
        return f"at least {shown(low)}"
    return f"{shown(low)} .. {shown(high)}"
