"""Caution lines for designs that can hurt someone or something.

rnsynth is a design aid.  When a circuit carries more than extra-low voltage,
or a part runs near or over its rating, the output says so in plain words and
leaves the final word to local codes and licensed practice.
"""

from __future__ import annotations

__all__ = ["DISCLAIMER", "NOTE_ABOVE_V", "WARN_ABOVE_V", "power_cautions", "voltage_cautions"]

from synth.units import format_eng

NOTE_ABOVE_V = 60.0
"""Above this DC voltage rnsynth prints a caution: 60 V DC is the usual limit of DC that is
safe to touch (common practice)."""


WARN_ABOVE_V = 120.0
"""Above this DC voltage rnsynth prints a warning: 120 V ripple-free DC is the top of
extra-low voltage (IEC 61140)."""


DISCLAIMER = (
    "rnsynth is a design aid only, not safety certification: a circuit above extra-low "
    "voltage, connected to the mains or able to deliver high energy needs review by a "
    "qualified person under local codes and standards and licensed practice."
)


def _subject(refs: list[str], verb: str) -> tuple[str, str]:
    """The parts with their verb, and their possessive: ``("R1 uses", "its")``."""
    if len(refs) == 1:
        return f"{refs[0]} {verb}s", "its"
    return f"{', '.join(refs)} {verb}", "their"


def voltage_cautions(max_voltage: float) -> list[str]:
    """Caution lines for the largest voltage between any two nodes, V.

    Examples
    --------
    >>> voltage_cautions(12.0)
    []
    """
    if max_voltage > WARN_ABOVE_V:
        return [
            f"WARNING: {format_eng(max_voltage, 'V')} DC is above the 120 V DC extra-low-voltage "
            "limit (IEC 61140); a shock from this circuit can injure or kill. Put enough "
            "resistors in series that none sees more than its limiting element voltage, allow "
            "for values that shift with the applied voltage and for current leaking across the "
            "board, and space the conductors for creepage and clearance per IEC 60664-1. "
            + DISCLAIMER
        ]
    if max_voltage > NOTE_ABOVE_V:
        return [
            f"Caution: {format_eng(max_voltage, 'V')} DC is above 60 V DC, the usual limit of DC "
            "that is safe to touch (common practice). " + DISCLAIMER
        ]
    return []


def power_cautions(over_rating: list[str], over_margin: list[str]) -> list[str]:
    """Caution lines for parts over their derated rating, or over the share the design allows.

    Examples
    --------
    >>> power_cautions([], ["R2"])  # doctest: +NORMALIZE_WHITESPACE
    ['Caution: R2 uses more of its derated power or limiting element voltage than the design
    allows (max_power_use, max_voltage_use).']
    """
    lines = []
    if over_rating:
        parts, their = _subject(over_rating, "dissipate")
        packages = "package" if their == "its" else "packages"
        lines.append(
            f"WARNING: {parts} more than {their} {packages} can take at this ambient (the "
            "rating after derating): a resistor run past its rating can char the board, catch "
            "fire, arc or fail open. Use a larger package or share the power among more parts."
        )
    if over_margin:
        parts, their = _subject(over_margin, "use")
        lines.append(
            f"Caution: {parts} more of {their} derated power or limiting element voltage than "
            "the design allows (max_power_use, max_voltage_use)."
        )
    return lines
