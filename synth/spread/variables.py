"""The varying quantities of a design (tolerance, TCR drift, source tolerance, gain range) and their
box.
"""

from __future__ import annotations

__all__ = ["REFERENCE_C", "SpreadVariables", "box_corners", "inside_windows"]

from typing import Any

import numpy as np

from synth.circuit.measure import Evaluator, SourceValues
from synth.design.model import Design

REFERENCE_C = 25.0
"""Temperature at which nominal values hold, °C (the usual TCR reference)."""


class SpreadVariables:
    """The varying quantities of a design and their relative half-widths."""

    def __init__(self, design: Design, evaluator: Evaluator):
        low_c, high_c = design.temperature_c
        self.span_c = max(abs(low_c - REFERENCE_C), abs(high_c - REFERENCE_C))
        names, low, high, tol, drift = [], [], [], [], []
        self.kind: list[tuple[str, int]] = []
        for k, r in enumerate(design.resistors):
            d = r.tcr * self.span_c
            if r.tolerance == 0 and d == 0:
                continue
            names.append(r.ref)
            low.append((1 - r.tolerance) * (1 - d))
            high.append((1 + r.tolerance) * (1 + d))
            tol.append(r.tolerance)
            drift.append(d)
            self.kind.append(("resistor", k))
        groups: tuple[tuple[str, list[Any]], ...] = (
            ("voltage", [s for s in design.sources if s.kind == "voltage"]),
                  ("current", [s for s in design.sources if s.kind == "current"]),
                  ("setpoint", list(design.regulators)))
        for k, c in enumerate(design.controlled):
            if c.gain_low == c.gain_high:
                continue
            names.append(c.ref)
            ends = sorted((c.gain_low / c.gain, c.gain_high / c.gain))
            low.append(ends[0])
            high.append(ends[1])
            tol.append((c.gain_high - c.gain_low) / (2 * abs(c.gain)))
            drift.append(0.0)
            self.kind.append(("gain", k))
        for group, items in groups:
            for k, item in enumerate(items):
                if item.tolerance == 0:
                    continue
                names.append(item.ref)
                low.append(1 - item.tolerance)
                high.append(1 + item.tolerance)
                tol.append(item.tolerance)
                drift.append(0.0)
                self.kind.append((group, k))
        self.names = tuple(names)
        self.low, self.high = np.array(low), np.array(high)
        self.tolerance, self.drift = np.array(tol), np.array(drift)

    def __len__(self) -> int:
        return len(self.names)

    def apply(self, factors: np.ndarray, r0: np.ndarray, src: SourceValues,
              base: np.ndarray | None = None) -> tuple[np.ndarray, SourceValues]:
        """Resistances and source values for ``(M, variables)`` multiplicative factors.

        ``base`` gives per-row nominal resistances ``(M, resistors)`` instead of ``r0``.
        """
        m = len(factors)
        r = np.tile(r0, (m, 1)) if base is None else base.copy()
        gains = src.gains if src.gains is not None else np.zeros(0)
        values = {"voltage": np.tile(src.voltages, (m, 1)),
                  "current": np.tile(src.currents, (m, 1)),
                  "setpoint": np.tile(src.setpoints, (m, 1)),
                  "gain": np.tile(gains, (m, 1))}
        for column, (group, k) in enumerate(self.kind):
            if group == "resistor":
                r[:, k] *= factors[:, column]
            else:
                values[group][:, k] *= factors[:, column]
        return r, SourceValues(values["voltage"], values["current"], values["setpoint"],
                               values["gain"] if src.gains is not None else None)


def box_corners(n: int) -> np.ndarray:
    return ((np.arange(2 ** n)[:, None] >> np.arange(n)[None, :]) & 1).astype(bool)


def inside_windows(design: Design, values: np.ndarray) -> np.ndarray:
    inside = np.ones(values.shape, dtype=bool)
    for j, t in enumerate(design.targets):
        low, high = t.bounds
        inside[:, j] = (values[:, j] >= low) & (values[:, j] <= high)
    return inside
