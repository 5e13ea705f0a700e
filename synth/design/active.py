"""Active parts in design files: controlled sources, transistors and amplifiers.

``[[controlled]]`` tables are the four linear controlled sources.
``[[transistor]]`` and ``[[amplifier]]`` tables are expanded here into the
parts the solvers know:

* a bipolar transistor in its forward-active region becomes a base-emitter
  drop (voltage source ``REF.BE``), a collector current β × base current
  (current-controlled current source ``REF.C``) and a target ``REF active``
  that keeps |V_CE| at least ``vce_sat``;
* an ideal amplifier becomes a regulating element that drives its output
  until V(plus) = V(minus); one with a finite open-loop gain A becomes a
  voltage-controlled voltage source V(out) = A·(V(plus) − V(minus)).

References
----------
The forward-active DC model (fixed V_BE, I_C = β·I_B) and the op-amp gain
relations are those of standard electronics texts (e.g. Horowitz & Hill,
*The Art of Electronics*; Sedra & Smith, *Microelectronic Circuits*).
"""

from __future__ import annotations

__all__ = ["ActiveParts", "read_active_parts"]

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from synth.design.fields import ItemReader, item_label, node_pair, table_array
from synth.design.model import ControlledSource, Regulator, Source, Transistor
from synth.design.target import Target
from synth.errors import DesignError, nearest_name
from synth.units import parse_quantity, parse_resistance

_CONTROLLED_KEYS = ("ref", "kind", "plus", "minus", "from", "to", "control", "gain",
                    "gain_range", "note")


_TRANSISTOR_KEYS = ("ref", "type", "collector", "base", "emitter", "vbe", "beta", "vce_sat",
                    "note")


_AMPLIFIER_KEYS = ("ref", "plus", "minus", "output", "open_loop_gain", "note")


_KINDS = ("vcvs", "vccs", "ccvs", "cccs")


@dataclass(frozen=True)
class ActiveParts:
    """What the active tables of a design file expand to."""

    controlled: tuple[ControlledSource, ...]
    transistors: tuple[Transistor, ...]
    sources: tuple[Source, ...]
    regulators: tuple[Regulator, ...]
    targets: tuple[Target, ...]


def _gain(reader: ItemReader, kind: str, raw: Any, key: str) -> float:
    """A gain: V/V and A/A plain numbers, A/V in S, V/A in ohm."""
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        reader.fail(f"{key} must be a number or a text such as \"2 mS\", not "
                    f"{type(raw).__name__} {str(raw)[:40]!r}")
    try:
        if isinstance(raw, (int, float)):
            value = float(raw)
        elif kind == "ccvs":
            value = parse_resistance(raw)
        elif kind == "vccs" and isinstance(raw, str) and raw.strip().endswith("S"):
            text = raw.strip()[:-1].strip()
            value = parse_quantity(text + "A", "A")  # same prefixes: "2 mS" reads as 2 mA/V
        else:
            value = float(raw)
    except (DesignError, ValueError, TypeError, OverflowError):
        reader.fail(f"{key} {str(raw)[:40]!r} is not a gain; write a number (vccs: \"2 mS\", "
                    "ccvs: \"1k\" ohm)")
    if not math.isfinite(value):
        reader.fail(f"{key} must be finite")
    return value


def _read_controlled(origin: str, index: int, raw: Any, ground: str) -> ControlledSource:
    reader = ItemReader(origin, item_label("controlled source", index, raw), raw, _CONTROLLED_KEYS)
    ref = reader.text("ref")
    kind = reader.text("kind").lower()
    if kind not in _KINDS:
        reader.fail(f"kind {kind!r} is not known{nearest_name(kind, _KINDS)}; use one of "
                    f"{', '.join(_KINDS)}")
    if kind in ("vcvs", "ccvs"):
        pos, neg = reader.text("plus"), reader.text("minus")
    else:
        pos, neg = reader.text("to"), reader.text("from")
    if pos == neg:
        reader.fail(f"its output is between node {pos!r} and itself; name two nodes")
    control_nodes: tuple[str, str] | None = None
    control_ref: str | None = None
    if "control" not in raw:
        reader.fail('control is missing: a node pair ["a", "b"] for a voltage-controlled '
                    'source, a part reference "R3" for a current-controlled one')
    if kind in ("vcvs", "vccs"):
        control_nodes = node_pair(reader, "control", ground)
    else:
        control_ref = reader.text("control")
    if "gain" not in raw:
        reader.fail("gain is missing; add gain = ...")
    gain = _gain(reader, kind, raw.get("gain"), "gain")
    low = high = gain
    if "gain_range" in raw:
        span = raw["gain_range"]
        if not (isinstance(span, list) and len(span) == 2):
            reader.fail("gain_range must be a pair [least, greatest]")
        low, high = (_gain(reader, kind, g, "gain_range") for g in span)
        if not min(low, high) <= gain <= max(low, high) or low * gain <= 0 or high * gain <= 0:
            reader.fail("gain_range must hold the gain, with the same sign at both ends")
    return ControlledSource(ref=ref, kind=kind, pos=pos, neg=neg, control_nodes=control_nodes,
                            control_ref=control_ref, gain=gain, gain_low=low, gain_high=high)


def _read_transistor(origin: str, index: int, raw: Any, ground: str
                     ) -> tuple[Transistor, Source, ControlledSource, Target]:
    reader = ItemReader(origin, item_label("transistor", index, raw), raw, _TRANSISTOR_KEYS)
    ref = reader.text("ref")
    polarity = reader.text("type").lower()
    if polarity not in ("npn", "pnp"):
        reader.fail(f"type {polarity!r} is not known; use \"npn\" or \"pnp\"")
    c, b, e = reader.text("collector"), reader.text("base"), reader.text("emitter")
    if len({c, b, e}) < 3:
        reader.fail("collector, base and emitter must be three different nodes")
    vbe = reader.positive("vbe", lambda t: parse_quantity(t, "V"), "0.7 V")
    vce_sat = reader.parsed("vce_sat", lambda t: parse_quantity(t, "V"), "0.2 V")
    raw_beta = raw.get("beta", 100)
    if isinstance(raw_beta, list):
        if len(raw_beta) != 3:
            reader.fail("beta must be a number or [typical, least, greatest]")
        values = [_gain(reader, "cccs", v, "beta") for v in raw_beta]
        beta, low, high = values
    else:
        beta = low = high = _gain(reader, "cccs", raw_beta, "beta")
    if not (0 < low <= beta <= high):
        reader.fail("beta must be positive with least <= typical <= greatest")
    transistor = Transistor(ref=ref, polarity=polarity, collector=c, base=b, emitter=e,
                            vbe=vbe, beta=beta, beta_low=low, beta_high=high, vce_sat=vce_sat)
    junction = f"{ref}.BE"
    if polarity == "npn":
        drop = Source(ref=junction, kind="voltage", pos=b, neg=e, value=vbe, tolerance=0.0)
        # the base current flows into the junction's plus terminal: it is minus the
        # current the drop delivers, and beta times it flows from collector to emitter
        collector = ControlledSource(ref=f"{ref}.C", kind="cccs", pos=e, neg=c,
                                     control_nodes=None, control_ref=junction, gain=-beta,
                                     gain_low=-high, gain_high=-low)
        active = (c, e)
    else:
        drop = Source(ref=junction, kind="voltage", pos=e, neg=b, value=vbe, tolerance=0.0)
        collector = ControlledSource(ref=f"{ref}.C", kind="cccs", pos=c, neg=e,
                                     control_nodes=None, control_ref=junction, gain=-beta,
                                     gain_low=-high, gain_high=-low)
        active = (e, c)
    target = Target(label=f"{ref} active", kind="voltage", nodes=active, ref=None, equals=None,
                    within_abs=None, within_rel=None, at_least=vce_sat, at_most=None, unit="V")
    return transistor, drop, collector, target


def _read_amplifier(origin: str, index: int, raw: Any, ground: str
                    ) -> Regulator | ControlledSource:
    reader = ItemReader(origin, item_label("amplifier", index, raw), raw, _AMPLIFIER_KEYS)
    ref = reader.text("ref")
    plus, minus, output = reader.text("plus"), reader.text("minus"), reader.text("output")
    if plus == minus:
        reader.fail("plus and minus must be different nodes")
    if "open_loop_gain" not in raw:
        return Regulator(ref=ref, output=output, sense=plus, reference=minus, setpoint=0.0,
                         tolerance=0.0)
    gain = _gain(reader, "vcvs", raw["open_loop_gain"], "open_loop_gain")
    if gain <= 0:
        reader.fail("open_loop_gain must be positive")
    return ControlledSource(ref=ref, kind="vcvs", pos=output, neg=ground,
                            control_nodes=(plus, minus), control_ref=None, gain=gain,
                            gain_low=gain, gain_high=gain)


def read_active_parts(origin: str, data: Mapping[str, Any], ground: str) -> ActiveParts:
    """Read and expand the ``[[controlled]]``, ``[[transistor]]`` and ``[[amplifier]]`` tables."""
    controlled = [_read_controlled(origin, i, raw, ground)
                  for i, raw in enumerate(table_array(origin, data, "controlled"), 1)]
    transistors: list[Transistor] = []
    sources: list[Source] = []
    targets: list[Target] = []
    regulators: list[Regulator] = []
    for i, raw in enumerate(table_array(origin, data, "transistor"), 1):
        transistor, drop, collector, target = _read_transistor(origin, i, raw, ground)
        transistors.append(transistor)
        sources.append(drop)
        controlled.append(collector)
        targets.append(target)
    for i, raw in enumerate(table_array(origin, data, "amplifier"), 1):
        part = _read_amplifier(origin, i, raw, ground)
        if isinstance(part, Regulator):
            regulators.append(part)
        else:
            controlled.append(part)
    return ActiveParts(controlled=tuple(controlled), transistors=tuple(transistors),
                       sources=tuple(sources), regulators=tuple(regulators),
                       targets=tuple(targets))
