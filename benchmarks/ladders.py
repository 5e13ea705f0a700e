"""The resistor ladder the benchmarks measure: in -> RS0 -> n1 -> RS1 -> ... with RPk to ground.

A ladder of k sections has k independent loops; series arms are 1 kΩ, shunt
arms 2 kΩ, driven by a 5 V source.
"""

from __future__ import annotations

from typing import Any


def ladder_tables(loops: int, **resistor_keys: Any) -> dict[str, Any]:
    """Design-file tables of a ``loops``-section ladder; extra keys go on every resistor."""
    nodes = ["in"] + [f"n{k}" for k in range(1, loops + 1)]
    resistors = []
    for k in range(loops):
        resistors.append({"ref": f"RS{k}", "nodes": [nodes[k], nodes[k + 1]], "value": "1k",
                          **resistor_keys})
        resistors.append({"ref": f"RP{k}", "nodes": [nodes[k + 1], "gnd"], "value": "2k",
                          **resistor_keys})
    return {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "5 V"}],
        "resistor": resistors,
    }
