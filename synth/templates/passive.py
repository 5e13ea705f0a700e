"""Designs for the everyday jobs, built in memory as design-file tables.

Each builder checks its options, returns the tables a design file would
hold (so ``--save`` can write them and ``rnsynth design`` reproduce the run),
and the caller validates them with :func:`synth.design.design_from_dict` and
runs the same engine as for any design file.
"""

from __future__ import annotations

__all__ = [
    "SENSOR_OPTIONS", "QuickSettings",
    "default_window", "design_table", "divider_tables", "free_part", "led_tables",
    "option_names", "pad_ideal", "pad_tables", "read_option", "read_span", "regulator_tables",
    "span_window", "value_range", "with_goal",
]

from dataclasses import dataclass
from typing import Any

from synth.catalog.packages import load_package_table
from synth.catalog.series import load_series
from synth.errors import DesignError
from synth.templates.packages import package_order, smallest_fit
from synth.units import (
    format_eng,
    parse_decibels,
    parse_fraction,
    parse_quantity,
    parse_resistance,
    parse_temperature,
)


@dataclass(frozen=True)
class QuickSettings:
    """Options every quick command shares (text as the user typed it)."""

    series: str = "E96"
    value_range: str | None = None
    within: str | None = None
    package: str | None = "0603"
    ambient: str = "25 C"
    margin: str = "50%"


def read_option(option: str, parse: Any, text: str, *args: Any) -> float:
    try:
        return float(parse(text, *args))
    except DesignError as exc:
        raise DesignError(f"{option}: {exc}") from None


_SPAN_EXAMPLES = {"V": '"-10 V:10 V"', "A": '"4 mA:20 mA"', "°C": '"0 C:100 C"'}


def read_span(option: str, text: str, units: tuple[str, ...]
              ) -> tuple[list[str], float, float, str]:
    """The ends of an option's range ``low:high``: as typed, as numbers, and their unit.

    ``units`` are tried in turn (``"°C"`` reads temperatures, in °C; any other
    a quantity in that unit).  Two equal ends are refused; their order is the
    caller's to judge.

    Examples
    --------
    >>> read_span("--input", "4 mA:20 mA", ("V", "A"))
    (['4 mA', '20 mA'], 0.004, 0.02, 'A')
    >>> read_span("--temperature", "-20 C:60 C", ("°C",))[1:]
    (-20.0, 60.0, '°C')
    """
    low, sep, high = text.partition(":")
    if not sep or not low.strip() or not high.strip():
        raise DesignError(f"{option} {text!r} needs two ends separated by a colon, e.g. "
                          f"{_SPAN_EXAMPLES.get(units[0], _SPAN_EXAMPLES['V'])}")
    for unit in units:
        try:
            if unit == "°C":
                ends = parse_temperature(low), parse_temperature(high)
            else:
                ends = parse_quantity(low, unit), parse_quantity(high, unit)
        except DesignError:
            continue
        if ends[0] == ends[1]:
            raise DesignError(f"{option} {text!r} has two equal ends; give a range")
        return [low.strip(), high.strip()], ends[0], ends[1], unit
    words = " or ".join(units)
    raise DesignError(f"{option} {text!r} is not a range in {words}; write it such as "
                      f"{_SPAN_EXAMPLES.get(units[0], _SPAN_EXAMPLES['V'])}")


def span_window(within: str, span: float, unit: str) -> str:
    """A relative window (``"1%"``, ``"50 ppm"``) read as that share of ``span``, in ``unit``.

    For a goal whose relative error means nothing (an end at 0 V, an error in
    °C); an absolute window is returned as it is.  A share outside the design
    file's rule for a window (above 0 % to 1000 %) is refused as ``--within``.

    Examples
    --------
    >>> span_window("1%", 20.0, "C"), span_window("0.5 C", 20.0, "C")
    ('0.2 C', '0.5 C')
    """
    text = within.strip()
    if not text.endswith(("%", "ppm")):
        return within
    share = read_option("--within", parse_fraction, text)
    if not 0 < share <= 10:
        raise DesignError(f"--within {within!r} must lie between above 0 % and 1000 %")
    return f"{share * span:.6g} {unit}"


def value_range(settings: QuickSettings, default: str = "100:10M") -> list[str]:
    text = settings.value_range or default
    low, sep, high = text.partition(":")
    if not sep:
        raise DesignError(f"--range {text!r} needs two ends separated by a colon, "
                          "e.g. 1k:1M")
    lo = read_option("--range", parse_resistance, low)
    hi = read_option("--range", parse_resistance, high)
    if lo <= 0 or hi < lo:
        raise DesignError(f"--range {text!r} is empty or not positive; give the low end "
                          "first")
    return [low.strip(), high.strip()]


def design_table(title: str, settings: QuickSettings) -> dict[str, Any]:
    read_option("--ambient", parse_temperature, settings.ambient)
    read_option("--margin", parse_fraction, settings.margin)
    table = {"title": title, "ground": "gnd", "ambient": settings.ambient,
             "max_power_use": settings.margin}
    if settings.package:
        table["package"] = settings.package
    return table


def free_part(ref: str, nodes: list[str], settings: QuickSettings,
          default_range: str = "100:10M") -> dict[str, Any]:
    return {"ref": ref, "nodes": nodes, "choose": settings.series,
            "range": value_range(settings, default_range)}


def default_window(settings: QuickSettings) -> str:
    """The window a quick command's main goal gets unless ``--within`` is given.

    The tolerance usually paired with the chosen series (E96: 1 %), so that a
    goal the limits push out of reach fails instead of passing as the nearest
    value; 1 % for a stock list.
    """
    if settings.within:
        return settings.within
    if settings.series.lower().endswith(".csv"):
        return "1%"
    try:
        tolerance = load_series(settings.series).tolerance
    except DesignError:
        return "1%"  # the design reader names the unknown series
    return f"{tolerance * 100:g}%"


def with_goal(target: dict[str, Any], goal: str, settings: QuickSettings) -> dict[str, Any]:
    target["equals"] = goal
    target["within"] = default_window(settings)
    return target


def divider_tables(input_voltage: str, output_voltage: str, settings: QuickSettings,
                   load: str | None = None, max_current: str | None = None) -> dict[str, Any]:
    """A two-resistor divider from ``input_voltage`` to ``output_voltage`` (optionally loaded).

    The divider's top resistor is R1 (in to out), its bottom R2 (out to ground);
    a load is a fixed RLOAD from out to ground; ``max_current`` bounds the supply current.
    """
    vin = read_option("--input", parse_quantity, input_voltage, "V")
    vout = read_option("--output", parse_quantity, output_voltage, "V")
    if vin == 0 or not 0 < vout / vin < 1:
        raise DesignError(f"--output {output_voltage} must lie between 0 V and the input "
                          f"{input_voltage} for a divider")
    resistors = [free_part("R1", ["in", "out"], settings),
                 free_part("R2", ["out", "gnd"], settings)]
    if load is not None:
        if read_option("--load", parse_resistance, load) <= 0:
            raise DesignError(f"--load {load!r} must be positive")
        resistors.append({"ref": "RLOAD", "nodes": ["out", "gnd"], "value": load, "bom": False,
                          "note": "the load the divider drives (a model, not a part)"})
    targets = [with_goal({"name": "output", "voltage": "out"}, output_voltage, settings)]
    if max_current is not None:
        read_option("--max-current", parse_quantity, max_current, "A")
        targets.append({"name": "supply current", "current": "VIN", "at_most": max_current})
    return {
        "design": design_table(f"Divider {input_voltage} to {output_voltage}", settings),
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": input_voltage}],
        "resistor": resistors,
        "target": targets,
    }


def regulator_tables(style: str, reference: str, output_voltage: str, settings: QuickSettings,
                     pin_current: str = "0 A", load: str | None = None,
                     min_current: str | None = None, max_current: str | None = None
                     ) -> dict[str, Any]:
    """A regulator's feedback network.

    ``style = "feedback"``: the reference sits at the divider tap (feedback-pin
    regulators), V = Vref (1 + RTOP/RBOT) + I RTOP with I the current into the pin.
    ``style = "adjust"``: the reference sits across the top resistor
    (three-terminal adjustable regulators), V = Vref (1 + RBOT/RTOP) + I RBOT with I
    the current out of the adjust pin.  ``min_current``/``max_current`` bound the
    current in the top resistor.
    """
    vref = read_option("--reference", parse_quantity, reference, "V")
    vout = read_option("--output", parse_quantity, output_voltage, "V")
    read_option("--pin-current", parse_quantity, pin_current, "A")
    if vref <= 0 or vout <= vref:
        raise DesignError(f"--output {output_voltage} must exceed the reference {reference}, "
                          "both positive")
    tap = "fb" if style == "feedback" else "adj"
    if style == "feedback":
        regulator = {"ref": "U1", "output": "out", "sense": "fb", "reference": "gnd",
                     "setpoint": reference}
        pin = {"ref": "IPIN", "kind": "current", "from": "fb", "to": "gnd",
               "value": pin_current, "note": "current into the feedback pin"}
    elif style == "adjust":
        regulator = {"ref": "U1", "output": "out", "sense": "out", "reference": "adj",
                     "setpoint": reference}
        pin = {"ref": "IPIN", "kind": "current", "from": "gnd", "to": "adj",
               "value": pin_current, "note": "current out of the adjust pin"}
    else:
        raise DesignError(f"--style {style!r} is not known; use feedback or adjust")
    resistors = [free_part("RTOP", ["out", tap], settings),
                 free_part("RBOT", [tap, "gnd"], settings)]
    if load is not None:
        resistors.append({"ref": "RLOAD", "nodes": ["out", "gnd"], "value": load, "bom": False,
                          "note": "the load the regulator drives (a model, not a part)"})
    targets = [with_goal({"name": "output", "voltage": "out"}, output_voltage, settings)]
    bound: dict[str, Any] = {"name": "divider current", "current": "RTOP"}
    if min_current is not None:
        read_option("--min-current", parse_quantity, min_current, "A")
        bound["at_least"] = min_current
    if max_current is not None:
        read_option("--max-current", parse_quantity, max_current, "A")
        bound["at_most"] = max_current
    if len(bound) > 2:
        targets.append(bound)
    kind = "feedback-pin" if style == "feedback" else "adjustable"
    return {
        "design": design_table(f"{kind.capitalize()} regulator set to {output_voltage}",
                                settings),
        "regulator": [regulator],
        "source": [pin],
        "resistor": resistors,
        "target": targets,
    }


def led_tables(supply: str, forward: str, count: int, current: str,
               settings: QuickSettings) -> tuple[dict[str, Any], str]:
    """An LED string's series resistor, R = (Vs - n Vf) / I.

    Returns the tables and the package chosen: ``settings.package``, or (when
    that is None) the smallest bundled chip package whose derated allowance
    covers the ideal resistor's dissipation I²R.
    """
    if settings.value_range:
        raise DesignError("--range does not apply to led: the resistor is searched around its "
                          "ideal value (a third to three times it); drop --range")
    vs = read_option("--supply", parse_quantity, supply, "V")
    vf = read_option("--forward", parse_quantity, forward, "V")
    amps = read_option("--current", parse_quantity, current, "A")
    if count < 1:
        raise DesignError(f"--count {count} must be at least 1")
    if amps <= 0 or vf <= 0:
        raise DesignError("--current and --forward must be positive")
    headroom = vs - count * vf
    if headroom <= 0:
        raise DesignError(f"--supply {supply} does not exceed {count} x {forward}; use fewer "
                          "LEDs in the string or a higher supply")
    ideal = headroom / amps
    package = settings.package
    if package is None:
        power = amps * amps * ideal
        chips = [p for p in package_order(load_package_table()) if p.mount == "chip"]
        fit = smallest_fit(chips, power, 0.0, ambient_c=parse_temperature(settings.ambient),
                           max_power_use=parse_fraction(settings.margin), max_voltage_use=1.0)
        if fit is None:
            raise DesignError(f"the resistor dissipates {format_eng(power, 'W')}, more than any "
                              "chip package allows; give --package for a larger part")
        package = chips[fit].name
    low, high = ideal / 3, ideal * 3
    free = {"ref": "R1", "nodes": ["supply", "a1"], "choose": settings.series,
            "range": [f"{low:.6g}", f"{high:.6g}"], "package": package}
    leds = [{"ref": f"D{k}", "kind": "voltage", "plus": f"a{k}",
             "minus": f"a{k + 1}" if k < count else "gnd", "value": forward,
             "note": "LED forward drop"} for k in range(1, count + 1)]
    table = design_table(f"LED string: {count} x {forward} at {current} from {supply}",
                          settings)
    table.pop("package", None)
    target = with_goal({"name": "LED current", "current": "R1"}, current, settings)
    return ({
        "design": table,
        "source": [{"ref": "VS", "kind": "voltage", "plus": "supply", "minus": "gnd",
                    "value": supply}, *leds],
        "resistor": [free],
        "target": [target],
    }, package)


def pad_ideal(impedance_ohm: float, loss_db: float, shape: str) -> tuple[float, float]:
    """Published matched-pad formulas, K = 10^(dB/20), ohm.

    T pad: series arms Z0 (K-1)/(K+1), shunt arm 2 Z0 K/(K²-1).
    Pi pad: shunt arms Z0 (K+1)/(K-1), series arm Z0 (K²-1)/(2K).
    Returns (arm, middle): for T (series arm, shunt), for Pi (shunt arm, series).
    """
    k = 10 ** (loss_db / 20)
    if shape == "T":
        return impedance_ohm * (k - 1) / (k + 1), 2 * impedance_ohm * k / (k * k - 1)
    return impedance_ohm * (k + 1) / (k - 1), impedance_ohm * (k * k - 1) / (2 * k)


def pad_tables(impedance: str, loss: str, shape: str, settings: QuickSettings
               ) -> dict[str, Any]:
    """A matched attenuator pad between two terminations of ``impedance``.

    The pad sits between a source termination RS and a load termination RL,
    both fixed at the impedance (model parts, unrated and off the BOM), and is
    driven by a test current.  Targets: each port's match, the resistance the
    pad presents there with the far port terminated (measured with the port's
    own termination left out), equals the impedance; the loss, -20 log10 of
    V(out)/V(in), equals the asked loss in dB.
    """
    z0 = read_option("--impedance", parse_resistance, impedance)
    db = read_option("--loss", parse_decibels, loss)
    if z0 <= 0 or db <= 0:
        raise DesignError("--impedance and --loss must be positive")
    shape = shape.upper() if shape.upper() == "T" else "Pi"
    span = f"{z0 / 100:.6g}:{z0 * 100:.6g}"
    nodes = ([["in", "mid"], ["mid", "gnd"], ["mid", "out"]] if shape == "T"
             else [["in", "gnd"], ["in", "out"], ["out", "gnd"]])
    pad = [free_part(f"R{k}", pair, settings, span) for k, pair in enumerate(nodes, start=1)]
    line = f"{z0:.12g}"
    return {
        "design": design_table(f"{shape} pad, {loss} in a {impedance} ohm line", settings),
        "source": [{"ref": "ITEST", "kind": "current", "from": "gnd", "to": "in",
                    "value": "1 mA", "note": "test drive; the pad's response is linear"}],
        "resistor": [
            {"ref": "RS", "nodes": ["in", "gnd"], "value": impedance, "bom": False,
             "note": "source termination (a model, not a part)"},
            *pad,
            {"ref": "RL", "nodes": ["out", "gnd"], "value": impedance, "bom": False,
             "note": "load termination (a model, not a part)"},
        ],
        "target": [
            with_goal({"name": "input match", "resistance": ["in", "gnd"],
                       "without": ["RS"]}, line, settings),
            with_goal({"name": "output match", "resistance": ["out", "gnd"],
                       "without": ["RL"]}, line, settings),
            with_goal({"name": "loss", "loss": [["out", "gnd"], ["in", "gnd"]]},
                      f"{db:.12g} dB", settings),
        ],
    }


_ITEM_OPTIONS = {
    ("[design]", "ambient"): "--ambient", ("[design]", "max_power_use"): "--margin",
    ("[design]", "package"): "--package",
    ("resistor RLOAD", "value"): "--load", ("resistor RS", "value"): "--impedance",
    ("resistor RL", "value"): "--impedance", ("resistor RIN", "value"): "--input-resistance",
    ("source VIN", "value"): "--input", ("source VS", "value"): "--supply",
    ("source VCC", "value"): "--supply", ("source IPIN", "value"): "--pin-current",
    ("regulator U1", "setpoint"): "--reference",
    ("transistor Q1", "beta"): "--beta", ("transistor Q1", "vbe"): "--vbe",
    ("amplifier U1", "open_loop_gain"): "--open-loop-gain",
}
"""The option behind each fixed item a quick command writes, by (item, key)."""

_TARGET_OPTIONS = {
    ("output", "equals"): "--output", ("supply current", "at_most"): "--max-current",
    ("divider current", "at_least"): "--min-current",
    ("divider current", "at_most"): "--max-current", ("LED current", "equals"): "--current",
    ("input match", "equals"): "--impedance", ("output match", "equals"): "--impedance",
    ("loss", "equals"): "--loss", ("collector current", "equals"): "--collector-current",
    ("collector voltage", "equals"): "--collector-voltage", ("gain", "equals"): "--gain",
    ("input resistance", "equals"): "--input-resistance",
    ("sensor current", "at_most"): "--max-sensor-current",
}
"""The option behind each target a quick command writes, by (target name, key)."""

SENSOR_OPTIONS = {"kind": "--sensor", "r0": "--r0", "class": "--class", "r25": "--r25",
                  "beta": "--beta", "tolerance": "--tolerance",
                  "beta_tolerance": "--beta-tolerance", "steinhart_hart": "--steinhart-hart"}
"""The option behind each key of a ``[[sensor]]`` table a quick command writes."""


def option_names(tables: dict[str, Any]) -> dict[tuple[str, str], str]:
    """The command-line option behind each ``(item, key)`` of a quick command's tables.

    Handed to :func:`synth.design.reader.design_from_dict`, so that a value
    the reader refuses is named by the option the user typed (``--load``),
    not by the item the command built (``resistor RLOAD``).

    Examples
    --------
    >>> names = option_names(divider_tables("12 V", "3 V", QuickSettings(), load="10k"))
    >>> names[("resistor RLOAD", "value")], names[("target 'output'", "within")]
    ('--load', '--within')
    >>> names[("resistor R1", "choose")], names[("[design]", "max_power_use")]
    ('--series', '--margin')
    """
    names = dict(_ITEM_OPTIONS)
    for row in tables.get("resistor", []):
        if "choose" in row:
            item = f"resistor {row['ref']}"
            names.update({(item, "choose"): "--series", (item, "range"): "--range",
                          (item, "package"): "--package"})
    for row in tables.get("source", []):
        if str(row.get("ref", "")).startswith("D") and row.get("note") == "LED forward drop":
            names[(f"source {row['ref']}", "value")] = "--forward"
    for row in tables.get("sensor", []):
        item = f"sensor {row.get('ref', '')}"
        names.update({(item, key): option for key, option in SENSOR_OPTIONS.items()})
    for row in tables.get("linearity", []):
        item = f"linearity {row.get('name', '')!r}"
        names.update({(item, "within"): "--within", (item, "grid"): "--grid",
                      (item, "line"): "--output"})
    for row in tables.get("target", []):
        name = row.get("name", "")
        item = f"target {name!r}"
        for key in ("equals", "at_least", "at_most"):
            if (name, key) in _TARGET_OPTIONS:
                names[(item, key)] = _TARGET_OPTIONS[(name, key)]
        if name != "input resistance":  # its 5 % window is the command's own
            names[(item, "within")] = "--within"
    return names
