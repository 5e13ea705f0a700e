"""Independent reference solvers for the tests (exact, with sympy rationals).

Written separately from synth.circuit.mesh and synth.circuit.nodal: a plain
textbook nodal analysis with Kirchhoff's current law at every node
[HB-kcl-tellegen], the currents of voltage sources as extra unknowns [HB-mna]
and the four controlled sources [HB-controlled-sources]. Inputs are converted
exactly with fractions.Fraction [LIB-fractions] and the equations are solved
over the rationals by sympy.solve(..., dict=True, rational=True) [LIB-sympy].
This is the reference [CALC-exact-nodal] of tests/REFERENCES.md.
"""

from __future__ import annotations

from fractions import Fraction

import sympy


def exact_nodal(nodes, resistors, vsources=(), isources=(), controlled=()):
    """Solve a DC network exactly.

    nodes: list of names, nodes[0] is ground.
    resistors: list of (a, b, ohms); current counted a -> b.
    vsources: list of (plus, minus, volts).
    isources: list of (frm, to, amps): amps flow through the source into `to`.
    controlled: list of (kind, out_a, out_b, control, gain): kind vcvs/ccvs hold
      V(out_a) - V(out_b) = gain * control; vccs/cccs drive gain * control amperes from
      out_b to out_a (into out_a).  control is ("v", a, b) for V(a) - V(b), ("r", k) for
      the current of resistor k, or ("s", k) for the delivered current of vsource k.
    Returns (node voltage dict, resistor currents list, vsource delivered currents list),
    all as sympy Rationals.
    """
    index = {n: k for k, n in enumerate(nodes)}
    unknown_v = [sympy.Symbol(f"v_{k}") for k in range(1, len(nodes))]
    unknown_i = [sympy.Symbol(f"i_{k}") for k in range(len(vsources))]
    unknown_c = [sympy.Symbol(f"c_{k}") for k in range(len(controlled))]

    def volt(name):
        k = index[name]
        return 0 if k == 0 else unknown_v[k - 1]

    leaving = {n: 0 for n in nodes}
    for a, b, ohms in resistors:
        current = (volt(a) - volt(b)) / sympy.Rational(Fraction(ohms))
        leaving[a] += current
        leaving[b] -= current
    for k, (plus, minus, _) in enumerate(vsources):
        leaving[plus] -= unknown_i[k]  # delivered current leaves the source at plus
        leaving[minus] += unknown_i[k]
    for frm, to, amps in isources:
        value = sympy.Rational(Fraction(amps))
        leaving[to] -= value
        leaving[frm] += value
    def control_value(spec):
        if spec[0] == "v":
            return volt(spec[1]) - volt(spec[2])
        if spec[0] == "r":
            a, b, ohms = resistors[spec[1]]
            return (volt(a) - volt(b)) / sympy.Rational(Fraction(ohms))
        return unknown_i[spec[1]]

    extra = []
    for k, (kind, out_a, out_b, spec, gain) in enumerate(controlled):
        g = sympy.Rational(Fraction(gain))
        if kind in ("vcvs", "ccvs"):  # a voltage source with unknown current c_k
            leaving[out_a] -= unknown_c[k]
            leaving[out_b] += unknown_c[k]
            extra.append(sympy.Eq(volt(out_a) - volt(out_b), g * control_value(spec)))
        else:
            leaving[out_a] -= g * control_value(spec)
            leaving[out_b] += g * control_value(spec)
            extra.append(sympy.Eq(unknown_c[k], g * control_value(spec)))
    equations = [sympy.Eq(leaving[n], 0) for n in nodes[1:]] + extra
    equations += [sympy.Eq(volt(p) - volt(m), sympy.Rational(Fraction(v)))
                  for p, m, v in vsources]
    solution = sympy.solve(equations, unknown_v + unknown_i + unknown_c, dict=True,
                           rational=True)[0]
    voltages = {n: (sympy.Integer(0) if index[n] == 0 else solution[unknown_v[index[n] - 1]])
                for n in nodes}
    currents = [(voltages[a] - voltages[b]) / sympy.Rational(Fraction(r)) for a, b, r in resistors]
    delivered = [solution[i] for i in unknown_i]
    return voltages, currents, delivered
