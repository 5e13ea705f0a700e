"""The quick commands: divider, regulator, led, pad, bias, gain, map-range and thermometer.
"""

from __future__ import annotations

__all__ = [
    "bias_command", "divider_command", "gain_command", "given_text", "led_command",
    "map_range_command", "pad_command", "regulator_command", "thermometer_command",
]

import functools
from dataclasses import replace
from typing import TYPE_CHECKING

import click

if TYPE_CHECKING:
    pass

from synth.cli.commands import cli
from synth.cli.options import (
    CURRENT,
    DECIBELS,
    PERCENT,
    RESISTANCE,
    VOLTAGE,
    Given,
    QuickOptions,
    SearchOptions,
    SpreadOptions,
    friendly,
    quick_options,
)
from synth.cli.run import quick_run


@cli.command("divider")
@click.option("--input", "input_voltage", type=VOLTAGE, required=True,
              help='Input voltage, e.g. "12 V".')
@click.option("--output", "output_voltage", type=VOLTAGE, required=True,
              help="Wanted output voltage.")
@click.option("--load", type=RESISTANCE, default=None,
              help="Load resistance on the output, e.g. 100k.")
@click.option("--max-current", type=CURRENT, default=None,
              help="Most current the divider may draw.")
@quick_options("V")
@friendly
def divider_command(input_voltage: Given, output_voltage: Given, load: Given | None,
                    max_current: Given | None, quick: QuickOptions, search: SearchOptions,
                    spread: SpreadOptions) -> None:
    """Voltage divider: R1 from input to output, R2 from output to ground."""
    from synth.templates.passive import divider_tables

    tables = divider_tables(input_voltage=input_voltage.text, output_voltage=output_voltage.text,
                            settings=quick.settings(), load=given_text(load),
                            max_current=given_text(max_current))
    quick_run(tables, "rnsynth divider options", quick, search, spread)


def given_text(given: Given | None) -> str | None:
    return None if given is None else given.text


@cli.command("regulator")
@click.option("--style", type=click.Choice(["feedback", "adjust"]), default="feedback",
              show_default=True,
              help="feedback: reference at the divider tap (feedback-pin regulators); "
                   "adjust: reference across the top resistor (three-terminal adjustable).")
@click.option("--reference", type=VOLTAGE, required=True,
              help='Reference voltage, e.g. "0.8 V".')
@click.option("--output", "output_voltage", type=VOLTAGE, required=True,
              help="Wanted output voltage.")
@click.option("--pin-current", type=CURRENT, default="0 A", show_default=True,
              help="Feedback-pin current (into the pin) or adjust-pin current (out of it).")
@click.option("--load", type=RESISTANCE, default=None, help="Load resistance on the output.")
@click.option("--min-current", type=CURRENT, default=None,
              help="Least current in the top resistor.")
@click.option("--max-current", type=CURRENT, default=None,
              help="Most current in the top resistor.")
@quick_options("V", package="auto")
@friendly
def regulator_command(style: str, reference: Given, output_voltage: Given,
                      pin_current: Given, load: Given | None, min_current: Given | None,
                      max_current: Given | None, quick: QuickOptions, search: SearchOptions,
                      spread: SpreadOptions) -> None:
    """Regulator feedback network: RTOP from output to the tap, RBOT from tap to ground."""
    from synth.templates.passive import regulator_tables

    tables = regulator_tables(style=style, reference=reference.text,
                              output_voltage=output_voltage.text, settings=quick.settings(),
                              pin_current=pin_current.text, load=given_text(load),
                              min_current=given_text(min_current),
                              max_current=given_text(max_current))
    quick_run(tables, "rnsynth regulator options", quick, search, spread)


@cli.command("led")
@click.option("--supply", type=VOLTAGE, required=True, help='Supply voltage, e.g. "5 V".')
@click.option("--forward", type=VOLTAGE, required=True, help="Forward voltage of one LED.")
@click.option("--count", default=1, show_default=True, help="LEDs in series.")
@click.option("--current", type=CURRENT, required=True, help='LED current, e.g. "20 mA".')
@quick_options("A", package="auto")
@friendly
def led_command(supply: Given, forward: Given, count: int, current: Given, quick: QuickOptions,
                search: SearchOptions, spread: SpreadOptions) -> None:
    """LED series resistor, R = (Vsupply - count x Vforward) / I.

    The package is chosen for the resistor's dissipation and voltage unless
    --package names one (then a limit that costs the goal is named, exit 1).
    --range is refused: the resistor is searched around its ideal value.
    """
    from synth.templates.passive import led_tables

    settings = quick.settings()
    if quick.package.lower() == "auto":
        settings = replace(settings, package="0603")  # the automatic choice follows
    tables, chosen = led_tables(supply=supply.text, forward=forward.text, count=count,
                                current=current.text, settings=settings)
    if not search.as_json and quick.package.lower() != "auto":
        click.echo(f"package: {chosen}", err=quick.save == "-")
    quick_run(tables, "rnsynth led options", quick, search, spread)


@cli.command("pad")
@click.option("--impedance", type=RESISTANCE, default="50", show_default=True,
              help="Line impedance, ohm.")
@click.option("--loss", type=DECIBELS, required=True, help='Attenuation, e.g. "6 dB".')
@click.option("--shape", type=click.Choice(["T", "Pi"], case_sensitive=False), default="T",
              show_default=True, help="Pad shape.")
@quick_options("Ω")
@friendly
def pad_command(impedance: Given, loss: Given, shape: str, quick: QuickOptions,
                search: SearchOptions, spread: SpreadOptions) -> None:
    """Matched attenuator pad (T or Pi) between two terminations of the line impedance."""
    from synth.templates.passive import pad_tables

    tables = pad_tables(impedance=impedance.text, loss=loss.text, shape=shape,
                        settings=quick.settings())
    quick_run(tables, "rnsynth pad options", quick, search, spread)


@cli.command("bias")
@click.option("--supply", type=VOLTAGE, required=True, help='Supply voltage, e.g. "10 V".')
@click.option("--collector-current", type=CURRENT, required=True,
              help='Wanted collector current, e.g. "1 mA".')
@click.option("--collector-voltage", type=VOLTAGE, required=True,
              help="Wanted collector voltage.")
@click.option("--beta", default="100:50:300", show_default=True,
              help="Current gain: typical or typical:least:greatest.")
@click.option("--vbe", type=VOLTAGE, default="0.7 V", show_default=True,
              help="Base-emitter drop.")
@quick_options("A")
@friendly
def bias_command(supply: Given, collector_current: Given, collector_voltage: Given,
                 beta: str, vbe: Given, quick: QuickOptions, search: SearchOptions,
                 spread: SpreadOptions) -> None:
    """Four-resistor NPN bias: R1 supply-base, R2 base-ground, RC, RE.

    Also reports the rules of thumb for the best design: emitter voltage about
    a tenth of the supply, divider current at least ten times the base current,
    and the divider's stiffness against beta.
    """
    from synth.templates.active import bias_rules, bias_tables

    tables = bias_tables(supply=supply.text, collector_current=collector_current.text,
                         collector_voltage=collector_voltage.text, settings=quick.settings(),
                         beta=beta, vbe=vbe.text)
    _, beta_least, _ = tables["transistor"][0]["beta"]
    rules = functools.partial(bias_rules, supply_v=supply.value, beta_least=beta_least)
    quick_run(tables, "rnsynth bias options", quick, search, spread, rules)


@cli.command("gain")
@click.option("--gain", "wanted", required=True, help="Gain magnitude, e.g. 10.")
@click.option("--inverting", is_flag=True, help="Inverting stage (gain -RF/RIN).")
@click.option("--input-resistance", type=RESISTANCE, default=None,
              help="Input resistance (inverting stage).")
@click.option("--open-loop-gain", default=None, help="Finite open-loop gain (default: ideal).")
@quick_options("")
@friendly
def gain_command(wanted: str, inverting: bool, input_resistance: Given | None,
                 open_loop_gain: str | None, quick: QuickOptions, search: SearchOptions,
                 spread: SpreadOptions) -> None:
    """Amplifier gain network: non-inverting (1 + RF/RG) or inverting (-RF/RIN)."""
    from synth.templates.active import gain_tables

    tables = gain_tables(gain=wanted, settings=quick.settings(), inverting=inverting,
                         input_resistance=given_text(input_resistance),
                         open_loop_gain=open_loop_gain)
    quick_run(tables, "rnsynth gain options", quick, search, spread)


@cli.command("map-range")
@click.option("--input", "input_range", required=True,
              help='Input range low:high, a voltage ("-10 V:10 V") or a loop current '
                   '("4 mA:20 mA").')
@click.option("--output", "output_range", required=True,
              help='Output at the input\'s low and high end, e.g. "0.1 V:3.2 V".')
@click.option("--reference", type=VOLTAGE, default=None,
              help="Reference voltage the offset is drawn from (not needed for an output "
                   "proportional to the input).")
@quick_options("V")
@friendly
def map_range_command(input_range: str, output_range: str, reference: Given | None,
                      quick: QuickOptions, search: SearchOptions,
                      spread: SpreadOptions) -> None:
    """Offset-and-scale network mapping one signal range onto another.

    A voltage input reaches OUT through R1, the reference through R2, and R3
    ties OUT to ground; a loop current flows into the burden RB first.  The
    output is held at each end of the input's range (two operating points).
    """
    from synth.templates.ranges import map_range_tables

    tables = map_range_tables(input_range=input_range, output_range=output_range,
                              settings=quick.settings(), reference=given_text(reference))
    quick_run(tables, "rnsynth map-range options", quick, search, spread)


@cli.command("thermometer")
@click.option("--sensor", "kind", type=click.Choice(["rtd", "ntc"]), required=True,
              help="rtd: an IEC 60751 platinum thermometer; ntc: a thermistor.")
@click.option("--temperature", "temperature_range", required=True,
              help='Temperature range low:high, the colder end first, e.g. "0 C:100 C".')
@click.option("--output", "output_range", required=True,
              help='Output at the colder and the warmer end, e.g. "0.5 V:2.5 V" (the larger '
                   "first for an output that falls as it warms).")
@click.option("--reference", type=VOLTAGE, required=True,
              help="Reference voltage the divider runs from.")
@click.option("--network", type=click.Choice(["divider", "parallel", "series-parallel"]),
              default="parallel", show_default=True,
              help="divider: the sensor and RB; parallel: RP across the sensor too; "
                   "series-parallel: RS in series with the sensor, RP across both.")
@click.option("--r0", type=RESISTANCE, default=None,
              help="rtd: resistance at 0 °C [default: 100, a Pt100; 1k a Pt1000].")
@click.option("--class", "tolerance_class", type=click.Choice(["AA", "A", "B", "C"]),
              default=None, help="rtd: IEC 60751 tolerance class [default: B].")
@click.option("--r25", type=RESISTANCE, default=None, help="ntc: resistance at 25 °C.")
@click.option("--beta", default=None, help='ntc: B value, e.g. "3950 K".')
@click.option("--tolerance", type=PERCENT, default=None,
              help="ntc: tolerance of R25 (of the resistance, with --steinhart-hart) "
                   "[default: 0%].")
@click.option("--beta-tolerance", type=PERCENT, default=None,
              help="ntc: tolerance of B [default: 0%].")
@click.option("--steinhart-hart", default=None, metavar="A,B,C",
              help="ntc, instead of --r25 and --beta: 1/T = A + B ln R + C (ln R)^3.")
@click.option("--grid", default=21, show_default=True,
              help="Temperatures the line is checked at, both ends included (2 to 1000).")
@click.option("--max-current", type=CURRENT, default=None,
              help="Most current the divider may draw from the reference.")
@click.option("--max-sensor-current", type=CURRENT, default=None,
              help="Most current the sensor may carry (its self-heating is not modelled).")
@quick_options("°C")
@friendly
def thermometer_command(kind: str, temperature_range: str, output_range: str,
                        reference: Given, network: str, r0: Given | None,
                        tolerance_class: str | None, r25: Given | None, beta: str | None,
                        tolerance: Given | None, beta_tolerance: Given | None,
                        steinhart_hart: str | None, grid: int, max_current: Given | None,
                        max_sensor_current: Given | None, quick: QuickOptions,
                        search: SearchOptions, spread: SpreadOptions) -> None:
    """Temperature sensor front end: an RTD or NTC in a divider whose output follows a line.

    The output follows the straight line through the two --output ends over
    --temperature within --within (in °C; a percentage is that share of the
    range, by default the series' tolerance), checked on --grid temperatures
    and refined near the largest error.
    """
    from synth.templates.thermometer import SensorOptions, thermometer_tables

    sensor = SensorOptions(kind=kind, r0=given_text(r0), tolerance_class=tolerance_class,
                           r25=given_text(r25), beta=beta, tolerance=given_text(tolerance),
                           beta_tolerance=given_text(beta_tolerance),
                           steinhart_hart=steinhart_hart)
    tables = thermometer_tables(sensor, temperature_range=temperature_range,
                                output_range=output_range, reference=reference.text,
                                settings=quick.settings(), network=network, grid=grid,
                                max_current=given_text(max_current),
                                max_sensor_current=given_text(max_sensor_current))
    quick_run(tables, "rnsynth thermometer options", quick, search, spread)
