"""The signal-range mapper behind ``rnsynth map-range``: an offset-and-scale network.

A voltage input ``VIN`` reaches the output through R1, a reference ``VREF``
through R2, and R3 ties the output to ground.  By superposition

    out = gain · VIN + offset,   gain = G1 / ΣG,   offset = VREF · G2 / ΣG,

with G = 1/R and ΣG = G1 + G2 + G3, so a passive network maps a range when
``0 < gain < 1`` and ``0 <= offset / VREF < 1 - gain``.  A current input (a
4–20 mA loop) flows into a burden RB, whose voltage reaches the output
through R1 in the same way.  The input runs over its range as a source range
(two operating points, its ends), and a transfer target holds the output at
each end.
"""

from __future__ import annotations

__all__ = ["BURDEN_RANGE", "map_range_tables"]

from typing import Any

from synth.errors import DesignError
from synth.templates.passive import (
    QuickSettings,
    default_window,
    design_table,
    free_part,
    read_span,
    span_window,
)
from synth.units import format_eng, parse_quantity

BURDEN_RANGE = "1:1k"
"""The values a loop's burden resistor is chosen from, ohm (unless ``--range`` is given)."""


def map_range_tables(input_range: str, output_range: str, settings: QuickSettings,
                     reference: str | None = None) -> dict[str, Any]:
    """The design tables of an offset-and-scale network from one range onto another.

    Parameters
    ----------
    input_range : str
        ``"low:high"`` in V (a signal) or A (a current loop, ``"4 mA:20 mA"``).
    output_range : str
        ``"low:high"`` V: the output at the input's low and high end.
    settings : QuickSettings
    reference : str, optional
        The reference voltage the offset comes from; needed unless the
        output is proportional to the input.

    Raises
    ------
    DesignError
        A range that is not two distinct values; a mapping no resistor network
        can make (an inverting one, a gain of 1 or more from a voltage, an
        offset the reference cannot give).

    Examples
    --------
    >>> t = map_range_tables("-10 V:10 V", "0.1 V:3.2 V", QuickSettings(), "3.3 V")
    >>> [r["ref"] for r in t["resistor"]], t["transfer"][0]["ends"]
    (['R1', 'R2', 'R3'], ['0.1 V', '3.2 V'])
    """
    in_text, in_low, in_high, unit = read_span("--input", input_range, ("V", "A"))
    out_text, out_low, out_high, _ = read_span("--output", output_range, ("V",))
    gain = (out_high - out_low) / (in_high - in_low)
    offset = out_low - gain * in_low
    if gain <= 0:
        raise DesignError(f"--output {output_range!r} falls as the input rises; a resistor "
                          "network cannot invert a signal, give the output's ends in the "
                          "input's order")
    if unit == "V" and gain >= 1:
        raise DesignError(f"--output {output_range!r} spans {gain:.4g} times the input; a "
                          "resistor network only scales a voltage down (gain below 1)")
    vref = None
    if reference is not None:
        try:
            vref = parse_quantity(reference, "V")
        except DesignError as exc:
            raise DesignError(f"--reference: {exc}") from None
    small = 1e-12 * max(abs(out_low), abs(out_high))
    needs_reference = abs(offset) > small
    if needs_reference:
        if vref is None or vref == 0:
            raise DesignError(f"the output's offset is {format_eng(offset, 'V', 4)}; give "
                              "--reference, a voltage of the same sign to draw it from")
        share = offset / vref
        limit = 1 - gain if unit == "V" else 1.0
        if not 0 < share < limit:
            raise DesignError(f"an offset of {format_eng(offset, 'V', 4)} from --reference "
                              f"{reference} needs offset / reference between 0 and "
                              f"{limit:.4g}; give a reference of the offset's sign, larger "
                              f"than {format_eng(abs(offset) / limit, 'V', 4)} in size")
    design = design_table(f"range {input_range} onto {output_range}", settings)
    sources: list[dict[str, Any]] = []
    resistors: list[dict[str, Any]] = []
    if unit == "V":
        sources.append({"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                        "range": in_text, "note": "the input signal"})
        node_in = "in"
    else:
        sources.append({"ref": "IIN", "kind": "current", "from": "gnd", "to": "loop",
                        "range": in_text, "note": "the loop current"})
        node_in = "loop"
        resistors.append(free_part("RB", ["loop", "gnd"], settings, BURDEN_RANGE))
    resistors.append(free_part("R1", [node_in, "out"], settings))
    if needs_reference:
        assert reference is not None
        sources.append({"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                        "value": reference, "note": "the offset's reference"})
        resistors.append(free_part("R2", ["ref", "out"], settings))
    resistors.append(free_part("R3", ["out", "gnd"], settings))
    within = default_window(settings)
    if 0.0 in (out_low, out_high):
        # an end of 0 V has no relative error: the same share of the output's span
        within = span_window(within, abs(out_high - out_low), "V")
    return {
        "design": design,
        "source": sources,
        "resistor": resistors,
        "transfer": [{"name": "signal", "input": sources[0]["ref"], "output": "out",
                      "ends": out_text, "within": within}],
    }
