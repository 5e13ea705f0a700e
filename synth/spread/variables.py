"""The varying quantities of a design (tolerance, TCR drift, source tolerance, gain range) and their
box.
"""

from __future__ import annotations

__all__ = ["REFERENCE_C", "SpreadVariables", "box_corners", "inside_windows"]

from typing import Any

import numpy as np

from synth.circuit.measure import Evaluator, SourceValues
from synth.design.model import Design
from synth.rating import exceeds, falls_short
from synth.spread.heating import REFERENCE_C, drift_half_width, thermal_resistances


class SpreadVariables:
    """The varying quantities of a design and their relative half-widths.

    Every physical part with a tolerance or a TCR is its own variable (the
    two parts of ``R1`` are ``R1A`` and ``R1B``, each with its own deviation),
    then each controlled source with a gain range, then each toleranced
    source and setpoint.  A source toleranced absolutely (``"10 uA"``) varies
    by addition, so it may span zero; its sensitivity is per its whole
    tolerance rather than per per cent.

    A matched array's member (:mod:`synth.design.array`) varies by its own
    share (±ρ/2 and ±τ/2) and, after every other variable, each array has one common
    variable named after it (±(A − ρ/2) and ±(TCR − τ/2)), kind ``("array",
    index)``; a member's factor is ``1 + (own - 1) + (common - 1)``: the two
    deviations add.

    A part's TCR drift is taken over its own temperature: the ambient range
    shifted up by its self-heating rise ``rise_c`` (``(parts,)`` K, by part
    column; none by default), see :mod:`synth.spread.heating`.  With
    ``per_candidate`` every part that may heat itself (a TCR and a package with a
    thermal resistance) is a variable even when its box is empty at no rise, so
    that :meth:`heated_box` can give each candidate its own.  An array's common
    coefficient acts on its members' mean rise, and a member's difference from that
    mean, times the common TCR, widens the member's own drift (a box holding the true
    set, so the worst case stays a bound): members heating alike drift their ratio by
    their own tracking share only.
    """

    def __init__(self, design: Design, evaluator: Evaluator,
                 rise_c: np.ndarray | None = None, *, per_candidate: bool = False):
        low_c, high_c = design.temperature_c
        self.span_c = max(abs(low_c - REFERENCE_C), abs(high_c - REFERENCE_C))
        rises = (np.zeros(len(design.part_refs)) if rise_c is None
                 else np.asarray(rise_c, dtype=float))
        rise: list[float] = []
        self.evaluator = evaluator
        names: list[str] = []
        low: list[float] = []
        high: list[float] = []
        tol: list[float] = []
        drift: list[float] = []
        tcr: list[float] = []
        self.kind: list[tuple[str, int]] = []
        self.tied: list[tuple[str, int, int]] = []
        """``(group, index, variable column)``: an operating point's copy of a part or source,
        varied by its leader's variable (one physical part, one deviation at every point)."""
        leader_of: dict[tuple[str, str], int] = {}  # (group, physical name) -> column
        copies: list[tuple[str, str, int]] = []
        arrays = {a.name: a for a in design.arrays}
        members: list[tuple[str, int]] = []  # (array, part column) of every member's part
        mean_rise = {a.name: _mean_rise(design, evaluator, rises, a.name) for a in design.arrays}
        links: list[tuple[int, str, float]] = []  # (own column, array, rise - its mean rise)
        theta = thermal_resistances(design, evaluator) if per_candidate else None
        self._heated: list[tuple[int, int, float, float, str | None]] = []
        """``(variable column, part column, TCR, tolerance, array)`` of every part variable:
        how its box follows the part's rise (:meth:`heated_box`)."""
        column = 0
        for r in design.resistors:
            own_tolerance, own_tcr = r.tolerance, r.tcr
            if r.array is not None:  # a member varies by its own share; the common one follows
                own_tolerance = arrays[r.array].member_tolerance
                own_tcr = arrays[r.array].member_tcr
                members.append((r.array, column))
            if r.copy_of is not None:
                leader = next(x for x in design.resistors if x.ref == r.copy_of)
                for ref, own in zip(leader.part_refs, range(column, column + r.position.count),
                                    strict=True):
                    copies.append(("part", ref, own))
                column += r.position.count
                continue
            for ref in r.part_refs:
                d = float(drift_half_width(own_tcr, rises[column], design.temperature_c))
                offset = 0.0
                if r.array is not None:
                    # the common coefficient acts on the array's mean rise; this member's
                    # difference from it joins the member's own drift
                    offset = float(rises[column]) - mean_rise[r.array]
                    d += arrays[r.array].common_tcr * abs(offset)
                warms = theta is not None and theta[column] > 0 and (
                    own_tcr != 0 or (r.array is not None and arrays[r.array].common_tcr != 0))
                if own_tolerance != 0 or d != 0 or warms:
                    if offset and r.array is not None:
                        links.append((len(names), r.array, offset))
                    leader_of[("part", ref)] = len(names)
                    names.append(ref)
                    low.append((1 - own_tolerance) * (1 - d))
                    high.append((1 + own_tolerance) * (1 + d))
                    tol.append(own_tolerance)
                    drift.append(d)
                    tcr.append(own_tcr)
                    rise.append(float(rises[column]))
                    self._heated.append((len(names) - 1, column, own_tcr, own_tolerance,
                                         r.array))
                    self.kind.append(("part", column))
                column += 1
        groups: tuple[tuple[str, list[Any]], ...] = (
            ("voltage", [s for s in design.sources if s.kind == "voltage"]),
            ("current", [s for s in design.sources if s.kind == "current"]),
            ("setpoint", list(design.regulators)))
        for k, c in enumerate(design.controlled):
            if c.gain_low == c.gain_high:
                continue
            if c.copy_of is not None and ("gain", c.copy_of) in leader_of:
                copies.append(("gain", c.copy_of, k))
                continue
            if c.copy_of is not None:
                leader_of[("gain", c.copy_of)] = len(names)
            names.append(c.copy_of or c.ref)
            ends = sorted((c.gain_low / c.gain, c.gain_high / c.gain))
            low.append(ends[0])
            high.append(ends[1])
            tol.append((c.gain_high - c.gain_low) / (2 * abs(c.gain)))
            drift.append(0.0)
            tcr.append(0.0)
            rise.append(0.0)
            self.kind.append(("gain", k))
        self.offset: dict[int, float] = {}
        """Variable column -> half-width (V or A) of an absolutely toleranced source: its
        factor f gives nominal + (f - 1) x half-width, f from 0 to 2."""
        for group, items in groups:
            for k, item in enumerate(items):
                absolute = getattr(item, "tolerance_abs", None)
                if item.tolerance == 0 and not absolute:
                    continue
                physical = getattr(item, "copy_of", None)
                if physical is not None:
                    if (group, physical) in leader_of:
                        copies.append((group, physical, k))
                        continue
                    leader_of[(group, physical)] = len(names)
                    names.append(physical)
                else:
                    names.append(item.ref)
                if absolute:
                    self.offset[len(names) - 1] = absolute
                    low.append(0.0)
                    high.append(2.0)
                    tol.append(1.0)
                else:
                    low.append(1 - item.tolerance)
                    high.append(1 + item.tolerance)
                    tol.append(item.tolerance)
                drift.append(0.0)
                tcr.append(0.0)
                rise.append(0.0)
                self.kind.append((group, k))
        self.common_of: dict[int, int] = {}
        """Part column of every matched array member -> its array's common variable column:
        the member's factor is its own plus the common one's deviation (see :meth:`apply`)."""
        common_column: dict[str, int] = {}
        for k, array in enumerate(design.arrays):
            d = float(drift_half_width(array.common_tcr, mean_rise[array.name],
                                       design.temperature_c))
            warms = theta is not None and array.common_tcr != 0 and bool(
                np.any(theta[_member_columns(design, evaluator, array.name)] > 0))
            if array.common_tolerance == 0 and d == 0 and not warms:
                continue
            common = common_column[array.name] = len(names)
            rise.append(mean_rise[array.name])
            names.append(array.name)
            low.append((1 - array.common_tolerance) * (1 - d))
            high.append((1 + array.common_tolerance) * (1 + d))
            tol.append(array.common_tolerance)
            drift.append(d)
            tcr.append(array.common_tcr)
            self.kind.append(("array", k))
            self.common_of.update({part: common for name, part in members
                                   if name == array.name})
        for group, physical, k in copies:
            if (group, physical) in leader_of:
                self.tied.append((group, k, leader_of[(group, physical)]))
        self.heat_links = [(own, common_column[name], offset) for own, name, offset in links
                           if name in common_column]
        self._commons = [(common_column[a.name], a.name, a.common_tcr, a.common_tolerance)
                         for a in design.arrays if a.name in common_column]
        self._members = {a.name: _member_columns(design, evaluator, a.name)
                         for a in design.arrays}
        self._common_tcr = {a.name: a.common_tcr for a in design.arrays}
        self._temperature_c = design.temperature_c
        """``(own column, common column, K)``: a matched array member whose rise differs from
        its array's mean rise by K; the common coefficient times K adds to its own drift (the
        Monte Carlo adds it exactly, with the one coefficient drawn for the array)."""
        self.names = tuple(names)
        self.low, self.high = np.array(low), np.array(high)
        self.tolerance, self.drift = np.array(tol), np.array(drift)
        self.tcr = np.array(tcr)
        """Temperature coefficient of each variable, 1/K (0 for sources and gains)."""
        self.rise_c = np.array(rise)
        """Self-heating rise of each variable's part at the nominal operating point, K (0 for
        sources and gains)."""
        self.ambient_drift = self.tcr * self.span_c
        """Each variable's TCR drift half-width over the ambient range alone (no
        self-heating), relative."""

    def __len__(self) -> int:
        return len(self.names)

    def heated_box(self, rises: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Each candidate's box with its own parts' self-heating rises.

        Parameters
        ----------
        rises : numpy.ndarray
            ``(M, parts)`` each candidate's rise of every physical part at its nominal
            operating point, K (:func:`synth.spread.heating.part_rises`).

        Returns
        -------
        low, high : numpy.ndarray
            ``(M, variables)`` factors: the parts' and arrays' ends as the constructor
            gives them for one set of rises, the sources' as they are.
        """
        m = len(rises)
        low, high = np.tile(self.low, (m, 1)), np.tile(self.high, (m, 1))
        means = {name: (rises[:, cols].mean(axis=1) if cols else np.zeros(m))
                 for name, cols in self._members.items()}
        for column, part, tcr, tolerance, array in self._heated:
            d = drift_half_width(tcr, rises[:, part], self._temperature_c)
            if array is not None:
                d = d + self._common_tcr[array] * np.abs(rises[:, part] - means[array])
            low[:, column] = (1 - tolerance) * (1 - d)
            high[:, column] = (1 + tolerance) * (1 + d)
        for column, array, tcr, tolerance in self._commons:
            d = drift_half_width(tcr, means[array], self._temperature_c)
            low[:, column] = (1 - tolerance) * (1 - d)
            high[:, column] = (1 + tolerance) * (1 + d)
        return low, high

    def column_of_part(self) -> dict[int, int]:
        """Variable column of each physical part that varies, by part column."""
        out = {k: c for c, (group, k) in enumerate(self.kind) if group == "part"}
        out.update({k: c for group, k, c in self.tied if group == "part"})
        return out

    def apply(self, factors: np.ndarray, parts0: np.ndarray, src: SourceValues,
              base: np.ndarray | None = None
              ) -> tuple[np.ndarray, np.ndarray, SourceValues]:
        """Positions, parts and source values for ``(M, variables)`` multiplicative factors.

        Parameters
        ----------
        factors : numpy.ndarray
            ``(M, variables)``: each variable's value over its nominal.
        parts0 : numpy.ndarray
            ``(parts,)`` nominal ohm of every physical part.
        src : SourceValues
            Nominal source values.
        base : numpy.ndarray, optional
            ``(M, parts)`` per-row nominal part values instead of ``parts0``.

        Returns
        -------
        positions : numpy.ndarray
            ``(M, resistors)`` effective ohm.
        parts : numpy.ndarray
            ``(M, parts)`` ohm.
        sources : SourceValues
        """
        m = len(factors)
        parts = np.tile(parts0, (m, 1)) if base is None else base.copy()
        gains = src.gains if src.gains is not None else np.zeros(0)
        values = {"voltage": np.tile(src.voltages, (m, 1)),
                  "current": np.tile(src.currents, (m, 1)),
                  "setpoint": np.tile(src.setpoints, (m, 1)),
                  "gain": np.tile(gains, (m, 1))}
        own = {k: column for column, (group, k) in enumerate(self.kind) if group == "part"}
        own.update({k: column for group, k, column in self.tied if group == "part"})
        for part, common in self.common_of.items():
            # a matched array's member deviates by its own deviation plus the common one
            if part in own:
                parts[:, part] *= factors[:, own.pop(part)] + factors[:, common] - 1.0
            else:
                parts[:, part] *= factors[:, common]
        for k, column in own.items():
            parts[:, k] *= factors[:, column]
        for column, (group, k) in enumerate(self.kind):
            if group in ("part", "array"):
                continue
            if column in self.offset:
                values[group][:, k] += (factors[:, column] - 1.0) * self.offset[column]
            else:
                values[group][:, k] *= factors[:, column]
        for group, k, column in self.tied:
            if group == "part":
                continue
            if column in self.offset:
                values[group][:, k] += (factors[:, column] - 1.0) * self.offset[column]
            else:
                values[group][:, k] *= factors[:, column]
        return (self.evaluator.effective(parts), parts,
                SourceValues(values["voltage"], values["current"], values["setpoint"],
                             values["gain"] if src.gains is not None else None))


def _member_columns(design: Design, evaluator: Evaluator, array: str) -> list[int]:
    """Part columns of a matched array's members (the physical ones, not later points')."""
    return [c for k, r in enumerate(design.resistors)
            if r.array == array and r.copy_of is None
            for c in range(evaluator.part_columns[k].start, evaluator.part_columns[k].stop)]


def _mean_rise(design: Design, evaluator: Evaluator, rises: np.ndarray, array: str) -> float:
    """The mean self-heating rise of a matched array's member parts, K."""
    columns = _member_columns(design, evaluator, array)
    return float(np.mean(rises[columns])) if columns else 0.0


def box_corners(n: int) -> np.ndarray:
    """``(2**n, n)`` booleans: every vertex of an n-variable box (True: the high end)."""
    return ((np.arange(2 ** n)[:, None] >> np.arange(n)[None, :]) & 1).astype(bool)


def inside_windows(design: Design, values: np.ndarray, noise: np.ndarray | float = 0.0
                   ) -> np.ndarray:
    """``(M, targets)`` True where each target lies in its window (edges and slack included).

    ``noise`` is each value's noise floor, ``(M, targets)``
    (:attr:`synth.circuit.measure.Evaluation.target_noise`).
    """
    inside = np.ones(values.shape, dtype=bool)
    floor = np.broadcast_to(np.asarray(noise, dtype=float), values.shape)
    for j, t in enumerate(design.targets):
        low, high = t.bounds
        inside[:, j] = (np.isfinite(values[:, j]) & ~falls_short(values[:, j], low, floor[:, j])
                        & ~exceeds(values[:, j], high, floor[:, j]))
    return inside
