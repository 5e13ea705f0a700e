"""Caution lines for designs that can hurt someone or something.

rnsynth is a design aid.  Where a circuit carries more than extra-low voltage,
or a part runs near or over its rating, the output says so and defers to
local codes and licensed practice.
"""

from __future__ import annotations

__all__ = ["DISCLAIMER", "NOTE_ABOVE_V", "WARN_ABOVE_V", "power_cautions", "voltage_cautions"]

from synth.units import format_eng

NOTE_ABOVE_V = 60.0
"""Above this DC voltage a caution is shown (60 V DC: common practice for touch-safe DC)."""


WARN_ABOVE_V = 120.0
"""Above this a warning is shown: the ripple-free DC limit of extra-low voltage (IEC 61140)."""


DISCLAIMER = (
    "rnsynth is a design aid only, not safety certification: circuits above extra-low "
    "voltage, mains-connected or high-energy ones need qualified review under local codes "
    "and standards and licensed practice."
)


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
            "limit (IEC 61140): hazardous voltage. Split high-voltage strings so each resistor "
            "stays within its limiting element voltage, allow for voltage coefficient and "
            "leakage, and keep creepage and clearance per IEC 60664-1. " + DISCLAIMER
        ]
    if max_voltage > NOTE_ABOVE_V:
        return [
            f"Caution: {format_eng(max_voltage, 'V')} DC is above 60 V DC (common practice for "
            "touch-safe DC). " + DISCLAIMER
        ]
    return []


def power_cautions(over_rating: list[str], over_margin: list[str]) -> list[str]:
    """Caution lines for parts over their derated rating or over the design margin."""
    lines = []
    if over_rating:
        lines.append(
            f"WARNING: {', '.join(over_rating)} dissipate more than the derated rating of their "
            "package: an overloaded resistor can char the board, ignite, arc or fail open. "
            "Choose a larger package or spread the power."
        )
    if over_margin:
        lines.append(
            f"Caution: {', '.join(over_margin)} use more than the design margin of their derated "
            "power or limiting voltage."
        )
    return lines
