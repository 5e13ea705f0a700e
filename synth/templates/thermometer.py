"""The sensor front end behind ``rnsynth thermometer``: a temperature sensor in a divider whose
output follows a straight line over a temperature range.

The sensor (an IEC 60751 platinum RTD or an NTC thermistor) and RB, the
divider's other leg, share a reference ``VREF``; the output is the divider's
tap.  The sensor sits on the side that makes the output move the asked way (an
NTC on top for an output rising with temperature, an RTD at the bottom).  The
networks, by ``network``:

``divider``
    The sensor and RB only (one free part).  The output's odds
    ``v / (VREF - v)`` are RB over the sensor (or the sensor over RB), so from
    one end of the range to the other they change exactly as much as the
    sensor's resistance: RB sets where the output lies, not its span.
``parallel``
    RP across the sensor too (two free parts): both ends of the output can be
    placed, and the line between them follows.
``series-parallel``
    RS in series with the sensor and RP across both (three free parts): the
    third part lets the search bend the curve towards the line.

A design is a ``[[sensor]]`` and a ``[[linearity]]`` target over the range
(the line through the two asked ends, its error in °C on a stated grid), run
by the normal synthesis.

Notes
-----
No resistor network makes the output's odds change more than the sensor's
resistance does (a resistor in series or across a sensor only dilutes its
change), so an output whose odds ask more is refused before the search, with
the widest span a divider of that sensor reaches: RB = √(R(T1)·R(T2)) gives
``VREF·(√k - 1)/(√k + 1)``, ``k = R(T2)/R(T1)`` (common practice; it follows
from maximising ``r/(r + RB)`` between the two resistances).  An RTD's own
curve and a divider's bend the same way, so the divider's bend adds to the RTD's
own and an RTD divider's error in °C grows with the share of the reachable span it
uses; RS in series dilutes the sensor's change and with it the divider's bend (the
ideal RP then runs to the top of its range: across an RTD it only adds to the bend).
"""

from __future__ import annotations

__all__ = ["NETWORKS", "SensorOptions", "reachable_span", "thermometer_tables"]

import math
from dataclasses import dataclass
from typing import Any

from synth.design.fields import option_names
from synth.design.sensor import read_sensor
from synth.errors import DesignError
from synth.sensors.model import SensorModel, outside_valid
from synth.templates.passive import (
    SENSOR_OPTIONS,
    QuickSettings,
    default_window,
    design_table,
    free_part,
    read_option,
    read_span,
    span_window,
)
from synth.units import format_eng, parse_quantity

NETWORKS = ("divider", "parallel", "series-parallel")
"""The networks the front end can build, fewest parts first."""

_ORIGIN = "rnsynth thermometer options"
_SENSOR = "RT1"
_KIND_OPTIONS = {"rtd": ("r0", "class"),
                 "ntc": ("r25", "beta", "tolerance", "beta_tolerance", "steinhart_hart")}


@dataclass(frozen=True)
class SensorOptions:
    """The sensor as the user gave it (text as typed; None: not given).

    Attributes
    ----------
    kind : str
        ``"rtd"`` or ``"ntc"``.
    r0 : str, optional
        rtd: resistance at 0 °C, ohm (default 100, a Pt100).
    tolerance_class : str, optional
        rtd: the IEC 60751 class (default B).
    r25, beta : str, optional
        ntc, B-value model: resistance at 25 °C (ohm) and B value (K).
    tolerance, beta_tolerance : str, optional
        ntc: half-widths of R25 (or of the Steinhart–Hart resistance) and of B.
    steinhart_hart : str, optional
        ntc, instead of r25 and beta: ``"a, b, c"`` of 1/T = a + b ln R + c (ln R)³.
    """

    kind: str
    r0: str | None = None
    tolerance_class: str | None = None
    r25: str | None = None
    beta: str | None = None
    tolerance: str | None = None
    beta_tolerance: str | None = None
    steinhart_hart: str | None = None

    def given(self) -> dict[str, str]:
        """The sensor-table keys given, with their text."""
        keys = {"r0": self.r0, "class": self.tolerance_class, "r25": self.r25,
                "beta": self.beta, "tolerance": self.tolerance,
                "beta_tolerance": self.beta_tolerance, "steinhart_hart": self.steinhart_hart}
        return {key: text for key, text in keys.items() if text is not None}


def _coefficients(text: str) -> list[float]:
    parts = text.replace(",", " ").split()
    try:
        values = [float(part) for part in parts]
    except ValueError:
        values = []
    if len(values) != 3 or not all(math.isfinite(v) for v in values):
        raise DesignError(f"--steinhart-hart {text!r} must be three numbers \"a, b, c\" of "
                          "1/T = a + b ln R + c (ln R)^3 (T in K, R in ohm)")
    return values


def _sensor_row(sensor: SensorOptions, nodes: list[str]) -> dict[str, Any]:
    """The ``[[sensor]]`` table, after refusing options of the other kind or missing ones."""
    if sensor.kind not in _KIND_OPTIONS:
        raise DesignError(f"--sensor {sensor.kind!r} is not known; use rtd (IEC 60751 "
                          "platinum) or ntc (thermistor)")
    given: dict[str, Any] = dict(sensor.given())
    for key in given:
        if key not in _KIND_OPTIONS[sensor.kind]:
            raise DesignError(f"{SENSOR_OPTIONS[key]} applies to another kind of sensor, not "
                              f"an {sensor.kind}; drop it")
    row: dict[str, Any] = {"ref": _SENSOR, "kind": sensor.kind, "nodes": nodes}
    if sensor.kind == "ntc":
        if "steinhart_hart" in given:
            for key in ("r25", "beta", "beta_tolerance"):
                if key in given:
                    raise DesignError(f"give either --steinhart-hart or --r25 with --beta, "
                                      f"not both; drop {SENSOR_OPTIONS[key]}")
            given["steinhart_hart"] = _coefficients(given["steinhart_hart"])
        else:
            missing = [SENSOR_OPTIONS[k] for k in ("r25", "beta") if k not in given]
            if missing:
                raise DesignError(f"an ntc needs --r25 and --beta (or --steinhart-hart a,b,c); "
                                  f"add {' and '.join(missing)}")
    row.update(given)
    return row


def _model(row: dict[str, Any]) -> SensorModel:
    """The sensor's model, read as a design file's sensor (refusals name the options)."""
    names = {(f"sensor {_SENSOR}", key): option for key, option in SENSOR_OPTIONS.items()}
    with option_names(names):
        return read_sensor(_ORIGIN, 1, row).model


def reachable_span(model: SensorModel, low_c: float, high_c: float, reference_v: float
                   ) -> tuple[float, float]:
    """The most a divider of the sensor moves its output from ``low_c`` to ``high_c``, V.

    Parameters
    ----------
    model : SensorModel
    low_c, high_c : float
        The temperature range, °C.
    reference_v : float
        The divider's reference, V.

    Returns
    -------
    tuple of float
        The widest span, V, and ``k``: the larger over the smaller of the
        sensor's two resistances (the most the output's odds ``v/(VREF - v)``
        can change).

    Examples
    --------
    >>> from synth.sensors.rtd import PlatinumRtd
    >>> span, k = reachable_span(PlatinumRtd(100.0), 0.0, 100.0, 3.3)
    >>> round(span, 4), round(k, 6)
    (0.2681, 1.385055)
    """
    r_low, r_high = (float(r) for r in model.resistance([low_c, high_c]))
    k = max(r_low, r_high) / min(r_low, r_high)
    root = math.sqrt(k)
    return reference_v * (root - 1) / (root + 1), k


def _check_reach(model: SensorModel, ends_c: tuple[float, float], ends_v: tuple[float, float],
                 vref: float, output_range: str) -> None:
    """Refuse an output whose odds change more than the sensor's resistance."""
    odds = [v / (vref - v) for v in ends_v]
    asked = max(odds) / min(odds)
    span, k = reachable_span(model, *ends_c, vref)
    if asked > k * (1 + 1e-6):
        raise DesignError(
            f"--output {output_range!r} is out of reach: a divider of this {model.kind} from "
            f"{format_eng(vref, 'V', 4)} moves its output by at most "
            f"{format_eng(span, 'V', 4)} from {ends_c[0]:g} to {ends_c[1]:g} °C "
            f"(its odds v/(reference - v) change at most {k:.4g} times, this output asks "
            f"{asked:.4g}); ask for a smaller span or a wider temperature range")


def _legs(network: str, sensor_on_top: bool) -> tuple[list[str], dict[str, list[str]]]:
    """The sensor's nodes and each resistor's, by network (``ref`` on top, ``gnd`` below)."""
    top, bottom = ("ref", "out") if sensor_on_top else ("out", "gnd")
    other = ["out", "gnd"] if sensor_on_top else ["ref", "out"]
    parts = {"RB": other}
    if network == "divider":
        return [top, bottom], parts
    parts["RP"] = [top, bottom]
    if network == "parallel":
        return [top, bottom], parts
    parts["RS"] = [top, "mid"]
    return ["mid", bottom], parts


def thermometer_tables(sensor: SensorOptions, temperature_range: str, output_range: str,
                       reference: str, settings: QuickSettings, network: str = "parallel",
                       grid: int = 21, max_current: str | None = None,
                       max_sensor_current: str | None = None) -> dict[str, Any]:
    """The design tables of a sensor front end whose output follows a line over a range.

    Parameters
    ----------
    sensor : SensorOptions
    temperature_range : str
        ``"low:high"`` in °C (``"0 C:100 C"``), the colder end first.
    output_range : str
        ``"low:high"`` V: the output at the colder and at the warmer end (a
        falling output gives the larger first).
    reference : str
        The divider's reference voltage, positive.
    settings : QuickSettings
        ``within`` is the largest error in °C (``"0.5 C"``); a relative window
        (the default: the series' tolerance) is that share of the temperature range.
    network : str
        ``"divider"``, ``"parallel"`` or ``"series-parallel"`` (see the module).
    grid : int
        Temperatures the line is checked at, both ends included (2 to 1000).
    max_current : str, optional
        The most current the divider may draw from the reference.
    max_sensor_current : str, optional
        The most current the sensor may carry at any temperature of the grid:
        the model has no self-heating, which a measuring current keeps small.

    Raises
    ------
    DesignError
        Naming the option: an unknown sensor kind or network, a missing or
        non-positive sensor value, a temperature range reversed, empty or outside
        the model's valid range, an output outside 0 V..reference, an output the
        sensor cannot reach, a grid outside 2..1000.

    Examples
    --------
    >>> t = thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "0 C:50 C",
    ...                        "0.6 V:2.2 V", "3.3 V", QuickSettings())
    >>> [r["ref"] for r in t["resistor"]], t["sensor"][0]["nodes"], t["linearity"][0]["within"]
    (['RB', 'RP'], ['ref', 'out'], '0.5 C')
    """
    if network not in NETWORKS:
        raise DesignError(f"--network {network!r} is not known; use {', '.join(NETWORKS)}")
    if isinstance(grid, bool) or not isinstance(grid, int) or not 2 <= grid <= 1000:
        raise DesignError(f"--grid {grid!r} must be a whole number of points from 2 (the two "
                          "ends) to 1000")
    t_text, low_c, high_c, _ = read_span("--temperature", temperature_range, ("°C",))
    if high_c < low_c:
        raise DesignError(f"--temperature {temperature_range!r} is reversed; give the colder "
                          "end first")
    v_text, v_low, v_high, _ = read_span("--output", output_range, ("V",))
    vref = read_option("--reference", parse_quantity, reference, "V")
    if not vref > 0:
        raise DesignError(f"--reference {reference!r} must be a positive voltage")
    for v in (v_low, v_high):
        if not 0 < v < vref:
            raise DesignError(f"--output {output_range!r} must lie between 0 V and the "
                              f"reference {reference}, ends excluded")
    rising = v_high > v_low
    sensor_nodes, parts = _legs(network, sensor_on_top=(sensor.kind == "ntc") == rising)
    row = _sensor_row(sensor, sensor_nodes)
    model = _model(row)
    if outside_valid(model, [low_c, high_c]).any():
        lo, hi = model.valid_c
        raise DesignError(f"--temperature {temperature_range!r} leaves the {model.kind} "
                          f"model's valid range {lo:g} °C..{hi:g} °C; keep it inside")
    _check_reach(model, (low_c, high_c), (v_low, v_high), vref, output_range)
    within = span_window(default_window(settings), high_c - low_c, "C")
    tables: dict[str, Any] = {
        "design": design_table(f"{sensor.kind.upper()} front end: {temperature_range} onto "
                               f"{output_range}", settings),
        "source": [{"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": reference, "note": "the divider's reference"}],
        "sensor": [row],
        "resistor": [free_part(ref, nodes, settings) for ref, nodes in parts.items()],
        "linearity": [{"name": "temperature", "sensor": _SENSOR, "voltage": "out",
                       "line": [[t_text[0], v_text[0]], [t_text[1], v_text[1]]],
                       "within": within, "grid": grid}],
    }
    targets = []
    if max_current is not None:
        read_option("--max-current", parse_quantity, max_current, "A")
        targets.append({"name": "supply current", "current": "VREF", "at_most": max_current})
    if max_sensor_current is not None:
        read_option("--max-sensor-current", parse_quantity, max_sensor_current, "A")
        targets.append({"name": "sensor current", "current": _SENSOR,
                        "at_most": max_sensor_current})
    if targets:
        tables["target"] = targets
    return tables
