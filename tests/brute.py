"""An exhaustive search written independently of synth.search, for the tests.

It enumerates every combination of catalogue values, solves each network by
modified nodal analysis [HB-mna] (synth.circuit.nodal, not the mesh solver),
measures the targets with its own code and applies the power limit with the
linear derating formula written out here [CP-derating] [CP-margin]. This is
the reference [CALC-exhaustive] of tests/REFERENCES.md.
"""

from __future__ import annotations

import numpy as np

from synth.catalog.series import series_values
from synth.circuit.network import build_network
from synth.circuit.nodal import nodal_solve
from synth.design.model import Design


def _choices(resistor):
    low, high = resistor.range
    if resistor.combine is None:
        values = series_values(resistor.choose, low, high)
        return values, [(v,) for v in values]
    # documented: series parts from a tenth of the low end up to the high end,
    # parallel parts from the low end up to ten times the high end
    values = series_values(resistor.choose, *((low / 10, high) if resistor.combine == "series"
                                               else (low, high * 10)))
    pairs = [(a, b) for i, a in enumerate(values) for b in values[i:]]
    eff = [a + b if resistor.combine == "series" else a * b / (a + b) for a, b in pairs]
    keep = [k for k, e in enumerate(eff)
            if resistor.range[0] * (1 - 1e-9) <= e <= resistor.range[1] * (1 + 1e-9)]
    return np.array([eff[k] for k in keep]), [pairs[k] for k in keep]


def exhaustive(design: Design, chunk: int = 200_000):
    """Return (objectives of feasible combinations sorted ascending, number of combinations)."""
    net = build_network(design)
    free = [r for r in design.resistors if r.free]
    options = [_choices(r) for r in free]
    grids = np.meshgrid(*[np.arange(len(o[0])) for o in options], indexing="ij")
    index = np.stack([g.ravel() for g in grids], axis=1)
    base = np.array([r.value or 0.0 for r in design.resistors])
    col = {r.ref: k for k, r in enumerate(design.resistors)}
    node = {n: k for k, n in enumerate(net.nodes)}
    volts = [s.value for s in design.sources if s.kind == "voltage"]
    amps = [s.value for s in design.sources if s.kind == "current"]
    volts += [0.0] * sum(1 for c in design.controlled if c.voltage_output)  # set by nodal_solve
    amps += [0.0] * sum(1 for c in design.controlled if not c.voltage_output)
    sets = [g.setpoint for g in design.regulators]
    branch = {ref: k for k, ref in enumerate(net.branch_refs)}
    found = []
    for start in range(0, len(index), chunk):
        idx = index[start:start + chunk]
        r = np.tile(base, (len(idx), 1))
        largest = {}  # the larger part of a series pair, the smaller of a parallel pair
        for p, res in enumerate(free):
            r[:, col[res.ref]] = options[p][0][idx[:, p]]
            if res.combine is not None:
                pairs = np.array(options[p][1])[idx[:, p]]
                largest[res.ref] = (pairs.max(axis=1) if res.combine == "series"
                                    else pairs.min(axis=1))
        sol = nodal_solve(net, r, volts, amps, sets)
        v, i = sol.node_voltages, sol.branch_currents
        ok = np.ones(len(idx), dtype=bool)
        worst = np.zeros(len(idx))
        for t in design.targets:
            if t.kind == "voltage":
                value = v[:, node[t.nodes[0]]] - v[:, node[t.nodes[1]]]
            elif t.kind in ("ratio", "loss"):
                value = ((v[:, node[t.nodes[0]]] - v[:, node[t.nodes[1]]])
                         / (v[:, node[t.nodes[2]]] - v[:, node[t.nodes[3]]]))
                if t.kind == "loss":  # -20 log10 of the voltage ratio [HB-pad]
                    value = -20 * np.log10(value)
            elif t.kind == "current":
                value = i[:, branch[t.ref]]
            elif t.kind == "power":
                value = i[:, branch[t.ref]] ** 2 * r[:, col[t.ref]]
            else:  # resistance: 1 A into nodes[0] with every source zeroed
                seen = r.copy()
                for left_out in t.without:  # opened: a conductance of 1e-30 S is nothing
                    seen[:, col[left_out]] = 1e30
                test = nodal_solve(net.with_test_source(t.nodes[0], t.nodes[1]), seen,
                                   np.zeros(len(volts)), np.r_[np.zeros(len(amps)), 1.0],
                                   np.zeros(len(sets)))
                value = (test.node_voltages[:, node[t.nodes[0]]]
                         - test.node_voltages[:, node[t.nodes[1]]])
            low, high = t.bounds
            ok &= (value >= low) & (value <= high)
            if t.equals is not None:
                worst = np.maximum(worst, np.abs(value - t.equals) / abs(t.equals))
        for res in design.resistors:
            rating = design.rating(res)
            if rating is None:
                continue
            # linear derating from the rated ambient to the zero-power temperature
            # [CP-derating], then the design margins [CP-margin]
            factor = min(1.0, max(0.0, (rating.zero_power_c - design.ambient_c)
                                  / (rating.zero_power_c - rating.rated_ambient_c)))
            allowed = rating.rated_power_w * factor * design.margin_frac
            k = col[res.ref]
            across = np.abs(v[:, node[res.nodes[0]]] - v[:, node[res.nodes[1]]])
            if res.combine is None:
                power = i[:, k] ** 2 * r[:, k]
            elif res.combine == "series":  # same current, the larger part dissipates most
                power = i[:, k] ** 2 * largest[res.ref]
                across = np.abs(i[:, k]) * largest[res.ref]
            else:  # same voltage, the smaller part dissipates most
                power = across ** 2 / largest[res.ref]
            ok &= (power <= allowed) & (across <= rating.limiting_voltage_v
                                        * design.voltage_margin_frac)
        found.append(worst[ok])
    objectives = np.sort(np.concatenate(found)) if found else np.zeros(0)
    return objectives, len(index)


def combinations_of(design: Design) -> int:
    free = [r for r in design.resistors if r.free]
    return int(np.prod([len(_choices(r)[0]) for r in free]))


__all__ = ["combinations_of", "exhaustive"]
