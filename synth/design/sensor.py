"""Temperature sensors in a design: ``[[sensor]]`` tables read into a model and the resistor
that stands for the sensor in the network.
"""

from __future__ import annotations

__all__ = ["SENSOR_KEYS", "Sensor", "read_sensor", "sensor_resistor"]

import math
from dataclasses import dataclass
from typing import Any

from synth.design.fields import ItemReader, item_label, read_ohms, temperature_end
from synth.design.model import Resistor
from synth.design.position import Position
from synth.errors import DesignError, nearest_name
from synth.sensors.model import SensorModel, outside_valid
from synth.sensors.ntc import BetaThermistor, SteinhartHartThermistor
from synth.sensors.rtd import PlatinumRtd
from synth.sensors.tables import rtd_classes

SENSOR_KEYS = ("ref", "kind", "nodes", "r0", "class", "r25", "beta", "beta_tolerance",
               "steinhart_hart", "tolerance", "valid", "note")

_KINDS = ("rtd", "ntc")
_KIND_KEYS = {"rtd": ("r0", "class"),
              "ntc": ("r25", "beta", "beta_tolerance", "steinhart_hart", "tolerance", "valid")}


@dataclass(frozen=True)
class Sensor:
    """A temperature sensor: a resistance that follows its model at each temperature.

    Attributes
    ----------
    ref : str
        Reference designator; the network solves it as a resistor of that name,
        left off the BOM.
    nodes : tuple of str
        Its two nodes, as a resistor's.
    model : SensorModel
        The RTD or NTC model: resistance against temperature and its inverse.
    """

    ref: str
    nodes: tuple[str, str]
    model: SensorModel

    @property
    def kind(self) -> str:
        """``"rtd"`` or ``"ntc"``."""
        return self.model.kind


def _beta(reader: ItemReader) -> float:
    raw = reader.table["beta"]
    text = raw.strip().removesuffix("K").strip() if isinstance(raw, str) else raw
    try:
        value = float(text) if not isinstance(text, bool) else math.nan
    except (TypeError, ValueError):
        value = math.nan
    if not (math.isfinite(value) and value > 0):
        reader.fail(f"beta {raw!r} must be a positive B value in kelvin, such as \"3950 K\"")
    return value


def _steinhart_hart(reader: ItemReader) -> tuple[float, float, float]:
    raw = reader.table["steinhart_hart"]
    if not (isinstance(raw, list) and len(raw) == 3
            and all(isinstance(v, int | float) and not isinstance(v, bool)
                    and math.isfinite(v) for v in raw)):
        reader.fail("steinhart_hart must be three numbers [a, b, c] of "
                    "1/T = a + b ln R + c (ln R)^3 (T in K, R in ohm)")
    a, b, c = (float(v) for v in raw)
    if not (b > 0 and c >= 0):
        reader.fail(f"steinhart_hart {raw!r} needs b > 0 and c >= 0 (resistance falling as "
                    "temperature rises); check the coefficients' order a, b, c")
    return a, b, c


def _valid_range(reader: ItemReader) -> tuple[float, float] | None:
    if not reader.has("valid"):
        return None
    span = reader.table["valid"]
    if not (isinstance(span, list) and len(span) == 2):
        reader.fail('valid must be a pair of temperatures such as ["-40 C", "125 C"]')
    low, high = (temperature_end(reader, t) for t in span)
    if not high > low:
        reader.fail(f"valid range {span[0]!r}..{span[1]!r} is empty; give the low end first")
    return low, high


def _rtd(reader: ItemReader) -> PlatinumRtd:
    r0 = reader.positive("r0", read_ohms, "100") if reader.has("r0") else 100.0
    if not reader.has("class"):
        return PlatinumRtd(r0)
    name = reader.text("class")
    if name not in rtd_classes():
        reader.fail(f"class {name!r} is not an IEC 60751 class{nearest_name(name, rtd_classes())}"
                    f"; use one of {', '.join(rtd_classes())}")
    return PlatinumRtd(r0, name)


def _ntc(reader: ItemReader) -> SensorModel:
    tolerance = reader.fraction("tolerance", "0%", upper=0.5)
    valid = _valid_range(reader)
    extra: dict[str, Any] = {"valid_c": valid} if valid is not None else {}
    if reader.has("steinhart_hart"):
        for key in ("r25", "beta", "beta_tolerance"):
            if reader.has(key):
                reader.fail(f"give either steinhart_hart or r25 with beta, not both; drop {key}")
        a, b, c = _steinhart_hart(reader)
        return SteinhartHartThermistor(a, b, c, tolerance=tolerance, **extra)
    missing = [key for key in ("r25", "beta") if not reader.has(key)]
    if missing:
        reader.fail(f"an ntc needs r25 and beta (or steinhart_hart = [a, b, c]); add "
                    f"{' and '.join(missing)}")
    r25 = reader.positive("r25", read_ohms)
    beta_tolerance = reader.fraction("beta_tolerance", "0%", upper=0.5)
    return BetaThermistor(r25, _beta(reader), tolerance=tolerance,
                          beta_tolerance=beta_tolerance, **extra)


def read_sensor(origin: str, index: int, raw: Any) -> Sensor:
    """Read one ``[[sensor]]`` table.

    Raises
    ------
    DesignError
        On an unknown kind, missing coefficients, keys of the other kind, or a
        malformed value.

    Examples
    --------
    >>> s = read_sensor("d.toml", 1, {"ref": "RT1", "kind": "rtd", "nodes": ["a", "gnd"]})
    >>> s.kind, round(float(s.model.resistance(100.0)), 4)
    ('rtd', 138.5055)
    """
    reader = ItemReader(origin, item_label("sensor", index, raw), raw, SENSOR_KEYS)
    ref = reader.text("ref")
    kind = reader.text("kind")
    if kind not in _KINDS:
        reader.fail(f"kind {kind!r} is not known{nearest_name(kind, _KINDS)}; use \"rtd\" "
                    "(IEC 60751 platinum) or \"ntc\" (thermistor)")
    for other, keys in _KIND_KEYS.items():
        for key in keys:
            if other != kind and key in raw and key not in _KIND_KEYS[kind]:
                reader.fail(f"{key} applies to an {other}, not an {kind}; drop it")
    a, b = reader.node_pair()
    model = _rtd(reader) if kind == "rtd" else _ntc(reader)
    return Sensor(ref=ref, nodes=(a, b), model=model)


def sensor_resistor(origin: str, sensor: Sensor, t_c: float, at: str = "[design] ambient"
                    ) -> Resistor:
    """The resistor that stands for ``sensor`` in the network at ``t_c`` °C.

    Left off the BOM and unrated; its tolerance is the model's half-width at
    ``t_c`` and it has no TCR of its own (the model is its temperature
    dependence).  ``at`` names where ``t_c`` comes from, for the refusal.

    Raises
    ------
    DesignError
        When ``t_c`` lies outside the model's valid range.
    """
    if outside_valid(sensor.model, t_c).any():
        low, high = sensor.model.valid_c
        raise DesignError(f"{origin}, sensor {sensor.ref}: {at} {t_c:g} °C lies outside the "
                          f"{sensor.kind} model's valid range {low:g} °C..{high:g} °C; use the "
                          "sensor inside it")
    return Resistor(ref=sensor.ref, nodes=sensor.nodes,
                    value=float(sensor.model.resistance(t_c)), choose=None, stock_path=None,
                    range=None, tolerance=float(sensor.model.tolerance_frac(t_c)), tcr=0.0,
                    package=None, position=Position(sensor.ref), bom=False)
