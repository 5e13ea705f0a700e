"""Quick designs around active parts: a transistor's four-resistor bias, an amplifier's gain.

Like :mod:`synth.quick`, each builder returns design-file tables; the same
engine designs them.
"""

from __future__ import annotations

__all__ = ["bias_rules", "bias_tables", "gain_tables"]

from typing import Any

from synth.errors import DesignError
from synth.results import Candidate
from synth.templates.passive import QuickSettings, design_table, free_part, read_option, with_goal
from synth.units import format_eng, parse_quantity, parse_resistance


def _beta(text: str) -> list[float]:
    parts = [p.strip() for p in text.split(":")]
    try:
        values = [float(p) for p in parts]
    except ValueError:
        raise DesignError(f"--beta {text!r} must be a number or typical:least:greatest, "
                          "e.g. 100:50:300") from None
    if len(values) == 1:
        values = values * 3
    if len(values) != 3 or not (0 < values[1] <= values[0] <= values[2]):
        raise DesignError(f"--beta {text!r} must be typical:least:greatest with "
                          "0 < least <= typical <= greatest")
    return values


def bias_tables(supply: str, collector_current: str, collector_voltage: str,
                settings: QuickSettings, beta: str = "100:50:300", vbe: str = "0.7 V"
                ) -> dict[str, Any]:
    """A four-resistor (divider and emitter resistor) bias of an NPN transistor.

    R1 from the supply to the base, R2 from the base to ground, RC from the
    supply to the collector, RE from the emitter to ground.  Targets: the
    collector current and voltage; the emitter voltage at a tenth of the
    supply (rule of thumb); the divider current at least ten times the base
    current at the least β (rule of thumb).
    """
    vcc = read_option("--supply", parse_quantity, supply, "V")
    ic = read_option("--collector-current", parse_quantity, collector_current, "A")
    vc = read_option("--collector-voltage", parse_quantity, collector_voltage, "V")
    drop = read_option("--vbe", parse_quantity, vbe, "V")
    typical, least, greatest = _beta(beta)
    if not (vcc > 0 and ic > 0 and 0.1 * vcc < vc < vcc):
        raise DesignError("--collector-voltage must lie between a tenth of the supply and the "
                          "supply, with a positive supply and collector current")
    if drop <= 0 or drop >= 0.1 * vcc + 0.5 * vcc:
        raise DesignError(f"--vbe {vbe} must be positive and well below the supply")
    span = "100:1M"
    return {
        "design": design_table(f"NPN bias: {collector_current} at {collector_voltage} from "
                                f"{supply}", settings),
        "source": [{"ref": "VCC", "kind": "voltage", "plus": "vcc", "minus": "gnd",
                    "value": supply}],
        "transistor": [{"ref": "Q1", "type": "npn", "collector": "c", "base": "b",
                        "emitter": "e", "vbe": vbe, "beta": [typical, least, greatest]}],
        "resistor": [free_part("R1", ["vcc", "b"], settings, span),
                     free_part("R2", ["b", "gnd"], settings, span),
                     free_part("RC", ["vcc", "c"], settings, span),
                     free_part("RE", ["e", "gnd"], settings, span)],
        "target": [
            with_goal({"name": "collector current", "current": "RC"}, collector_current,
                    settings),
            with_goal({"name": "collector voltage", "voltage": "c"}, collector_voltage,
                    settings),
            {"name": "emitter voltage (a tenth of the supply)", "voltage": "e",
             "equals": f"{0.1 * vcc:.6g} V"},
            {"name": "divider current (>= 10 x base current)", "current": "R2",
             "at_least": f"{10 * ic / least:.6g} A"},
        ],
    }


def bias_rules(candidate: Candidate, supply_v: float, beta_least: float) -> list[str]:
    """The rules of thumb of a bias design, checked on one candidate.

    The emitter sits at about a tenth of the supply; R2 carries at least ten
    times the base current; the divider's source resistance R1 ∥ R2 stays below
    β·RE/10 (the bias holds as β varies) or β·RE/100 (β barely matters), taken
    at the least β.
    """
    v = candidate.values
    r1, r2, re = v["R1"], v["R2"], v["RE"]
    nodes = candidate.check.nodes
    base_current = next(p.current for p in candidate.parts if p.ref == "Q1.BE")
    divider = next(p.current for p in candidate.parts if p.ref == "R2")
    source = r1 * r2 / (r1 + r2)
    holds, barely = 0.1 * beta_least * re, 0.01 * beta_least * re
    verdict = ("under both, so β barely moves the bias" if source <= barely
               else "under the first only, so the bias holds as β varies" if source <= holds
               else "OVER both, so the bias follows β (lower R1 and R2)")
    return [
        f"emitter at {format_eng(nodes['e'], 'V')}, {nodes['e'] / supply_v * 100:.3g}% of the "
        "supply (aim for about 10%)",
        f"R2 carries {format_eng(divider, 'A')}, "
        f"{divider / max(abs(base_current), 1e-30):.3g} times the base current "
        "(aim for at least 10)",
        f"the base is fed from R1 ∥ R2 = {format_eng(source, 'Ω')}, against "
        f"β·RE/10 = {format_eng(holds, 'Ω')} and β·RE/100 = {format_eng(barely, 'Ω')} at the "
        f"least β {beta_least:g}: {verdict}",
    ]


def gain_tables(gain: str, settings: QuickSettings, inverting: bool = False,
                input_resistance: str | None = None, open_loop_gain: str | None = None
                ) -> dict[str, Any]:
    """An amplifier's gain network.

    Non-inverting: RF from the output to the inverting input, RG from there to
    ground; gain 1 + RF/RG.  Inverting: RIN from the input to the inverting
    input, RF to the output; gain −RF/RIN and input resistance RIN (the
    inverting input is a virtual ground).  The amplifier is ideal unless an
    open-loop gain is given.
    """
    try:
        wanted = float(gain)
    except ValueError:
        raise DesignError(f"--gain {gain!r} must be a plain number such as 10") from None
    if inverting and wanted <= 0:
        raise DesignError("--gain must be positive; --inverting makes the stage invert it")
    if not inverting and wanted <= 1:
        raise DesignError("a non-inverting stage has a gain above 1; use --inverting or a "
                          "larger --gain")
    amplifier: dict[str, Any] = {"ref": "U1", "output": "out"}
    if open_loop_gain is not None:
        try:
            amplifier["open_loop_gain"] = float(open_loop_gain)
        except ValueError:
            raise DesignError(f"--open-loop-gain {open_loop_gain!r} must be a number") from None
    span = "100:10M"
    if inverting:
        amplifier.update(plus="gnd", minus="m")
        tables: dict[str, Any] = {
            "source": [{"ref": "ITEST", "kind": "current", "from": "gnd", "to": "in",
                        "value": "10 uA", "note": "test drive; the response is linear"}],
            "resistor": [free_part("RIN", ["in", "m"], settings, span),
                         free_part("RF", ["m", "out"], settings, span)],
            "target": [with_goal({"name": "gain", "ratio": [["out", "gnd"], ["in", "gnd"]]},
                               f"{-wanted:.12g}", settings)],
        }
        if input_resistance is not None:
            if read_option("--input-resistance", parse_resistance, input_resistance) <= 0:
                raise DesignError("--input-resistance must be positive")
            tables["target"].append({"name": "input resistance", "resistance": ["in", "gnd"],
                                     "equals": input_resistance, "within": "5%"})
    else:
        if input_resistance is not None:
            raise DesignError("a non-inverting stage's input resistance is the amplifier's "
                              "own; drop --input-resistance or use --inverting")
        amplifier.update(plus="in", minus="fb")
        tables = {
            "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                        "value": "100 mV", "note": "test input; the response is linear"}],
            "resistor": [free_part("RF", ["out", "fb"], settings, span),
                         free_part("RG", ["fb", "gnd"], settings, span)],
            "target": [with_goal({"name": "gain", "ratio": [["out", "gnd"], ["in", "gnd"]]},
                               f"{wanted:.12g}", settings)],
        }
    shape = "inverting" if inverting else "non-inverting"
    return {"design": design_table(f"{shape.capitalize()} gain of {gain}", settings),
            "amplifier": [amplifier], **tables}
