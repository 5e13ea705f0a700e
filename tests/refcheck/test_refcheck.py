"""Tests of the reference checker itself, against published values in /work/shared/FACTS.md.

Every check names its source: the FACTS section and its label ([STD], [HB], [CP], [CALC],
[LIB]) as given there.
"""

from __future__ import annotations

import itertools
import math
import random
from fractions import Fraction

import numpy as np
import pytest

from . import eseries, ratings, scenarios
from .network import Network, seen_resistance, solve, solve_exact, solve_sympy
from .search import Position, evaluate, position_candidates, search
from .spread import clopper_pearson, monte_carlo, part_extremes, worst_case
from .targets import make_target, within_window

# --------------------------------------------------------------------------- helpers


def unit_graph(edges: list[tuple[object, object]], ground: object) -> Network:
    """Unit resistors on the given edges."""
    return Network(
        resistors=[(f"R{k}", str(a), str(b), 1) for k, (a, b) in enumerate(edges)],
        ground=str(ground),
    )


def cube_edges() -> list[tuple[int, int]]:
    """Edges of the 3-cube: vertices 0..7, joined when they differ in one bit."""
    return [(a, b) for a, b in itertools.combinations(range(8), 2) if bin(a ^ b).count("1") == 1]


def petersen_edges() -> list[tuple[int, int]]:
    """Petersen graph: outer 5-cycle 0..4, spokes i - i+5, inner pentagram 5..9."""
    outer = [(i, (i + 1) % 5) for i in range(5)]
    spokes = [(i, i + 5) for i in range(5)]
    inner = [(5 + i, 5 + (i + 2) % 5) for i in range(5)]
    return outer + spokes + inner


def both_ways(net: Network, a: str, b: str) -> tuple[float, Fraction]:
    """Seen resistance by the float and the exact path."""
    return float(seen_resistance(net, a, b)[0]), seen_resistance(net, a, b, exact=True)


# --------------------------------------------------------------------------- FACTS 1


def test_eseries_counts_and_nesting() -> None:
    # FACTS 1 [STD]: E3..E192 have 3..192 members; nesting [CALC]: E96 = E192[0::2],
    # E48 = E192[0::4], E12 = E24[0::2], E6 = E12[0::2], E3 = E6[0::2].
    for name in eseries.series_names():
        assert len(eseries.mantissas(name)) == int(name[1:])
    m = eseries.mantissas
    assert m("E96") == m("E192")[0::2]
    assert m("E48") == m("E192")[0::4]
    assert m("E12") == m("E24")[0::2]
    assert m("E6") == m("E12")[0::2]
    assert m("E3") == m("E6")[0::2]
    for name in eseries.series_names():
        assert list(m(name)) == sorted(m(name)) and 1.0 <= m(name)[0] < m(name)[-1] < 10.0


def test_eseries_irregular_values() -> None:
    # FACTS 1 [CALC]: E24 i = 10-16 list 2.7 ... 4.7 where round(10^(i/24)) gives 2.6 ... 4.6;
    # i = 22 lists 8.2 for 8.3. E48 and E96 follow the formula. E192 has one exception:
    # 920 at i = 185 (formula 919).
    e24 = eseries.exact_mantissas("E24")
    assert [e24[i] for i in range(10, 17)] == [Fraction(x, 10) for x in (27, 30, 33, 36, 39,
                                                                           43, 47)]
    assert e24[22] == Fraction(82, 10)
    for name, n in (("E48", 48), ("E96", 96)):
        digits = [round(float(x) * 100) for x in eseries.exact_mantissas(name)]
        assert digits == [round(100 * 10 ** (i / n)) for i in range(n)]
    e192 = [round(float(x) * 100) for x in eseries.exact_mantissas("E192")]
    formula = [round(100 * 10 ** (i / 192)) for i in range(192)]
    assert [i for i in range(192) if e192[i] != formula[i]] == [185]
    assert e192[185] == 920 and formula[185] == 919


def test_eseries_intersection_and_nearest() -> None:
    # FACTS 1 [CALC]: E24 ∩ E96 = {1.0, 1.1, 1.3, 1.5, 2.0, 7.5}.
    inter = set(eseries.exact_mantissas("E24")) & set(eseries.exact_mantissas("E96"))
    assert inter == {Fraction(x, 10) for x in (10, 11, 13, 15, 20, 75)}
    # FACTS 1 [CALC]: 1563 ohm -> E24 1.6k, E96 1.58k, E192 1.56k; 9190 ohm -> E192 9.20k.
    assert eseries.nearest("E24", 1563) == 1600.0
    assert eseries.nearest("E96", 1563) == 1580.0
    assert eseries.nearest("E192", 1563) == 1560.0
    assert eseries.nearest("E192", 9190) == 9200.0
    # FACTS 1: log-scale midpoint of 1.0/1.1 is sqrt(1.1) = 1.0488.
    assert eseries.nearest("E24", 1.0487) == 1.0 and eseries.nearest("E24", 1.0489) == 1.1


def test_eseries_values_exact_and_inclusive() -> None:
    # FACTS 1 [STD] tables, decade-scaled: 5 decades of E96 plus the closing 10M.
    v = eseries.values("E96", 100, 10e6)
    assert len(v) == 5 * 96 + 1 and v[0] == 100.0 and v[-1] == 10e6
    assert 4990.0 in v and 49.9e3 in v and 1.02e6 in v  # exact decimals, no drift
    assert eseries.values("E24", 4.7e3, 4.7e3) == [4700.0]  # inclusive bounds
    assert eseries.values("E24", 4700 * (1 + 5e-10), 4700 * (1 + 5e-10)) == [4700.0]  # slack
    assert eseries.values("E24", 4700 * (1 + 5e-9), 5000) == []  # beyond the slack
    assert eseries.values("E12", 0.1, 1) == [0.1, 0.12, 0.15, 0.18, 0.22, 0.27, 0.33, 0.39,
                                              0.47, 0.56, 0.68, 0.82, 1.0]
    assert all(float(f) == x for f, x in zip(eseries.exact_values("E192", 1e-3, 1e9),
                                             eseries.values("E192", 1e-3, 1e9), strict=True))


# --------------------------------------------------------------------------- FACTS 3


def test_packages_table_and_allowances() -> None:
    # packages.csv (common practice); FACTS 3 margin [CP]: 50 % power, 80 % of U_max.
    table = ratings.load_packages()
    assert len(table) == 13 and "0603" in table and "axial-2W" in table
    assert ratings.allowed_power("0603") == pytest.approx(0.05)
    assert ratings.allowed_voltage("0603") == pytest.approx(40.0)
    assert ratings.get_package("1608M").name == "0603"  # FACTS 2: 0603 = 1608M
    assert ratings.exact_allowed_power("0805") == Fraction(1, 16)


def test_derating_checks() -> None:
    # FACTS 3 derating [CP], checks [CALC]: 85 °C 82.35 %, 100 °C 64.71 %, 125 °C 35.29 %;
    # full power up to 70 °C, zero at 155 °C.
    assert ratings.derating_factor("0603", 85) == pytest.approx(0.8235, abs=5e-5)
    assert ratings.derating_factor("0603", 100) == pytest.approx(0.6471, abs=5e-5)
    assert ratings.derating_factor("0603", 125) == pytest.approx(0.3529, abs=5e-5)
    assert ratings.derating_factor("0603", 25) == 1.0
    assert ratings.derating_factor("0603", 70) == 1.0
    assert ratings.derating_factor("0603", 155) == 0.0
    assert ratings.derating_factor("0603", 200) == 0.0


def test_critical_resistance() -> None:
    # FACTS 3 table, R_crit = U_max^2 / P70 [CALC].
    expected = {"0201": 12.5e3, "0402": 40e3, "0603": 25e3, "0805": 180e3, "1206": 160e3,
                "2010": 53.3e3, "2512": 40e3}
    for name, r in expected.items():
        assert ratings.critical_resistance(name) == pytest.approx(r, rel=1e-3)
    # 1210: FACTS lists 1/3 W -> 120 kohm; the table holds 0.333 W -> 120.12 kohm.
    assert ratings.critical_resistance("1210") == pytest.approx(120e3, rel=2e-3)


# --------------------------------------------------------------------------- FACTS 4


def test_divider_tolerance_vertices() -> None:
    # FACTS 4 [CALC]: 10k/10k at ±1 % with 10 V gives 4.95-5.05 V; sensitivities ±0.5;
    # EVA ±1 %, RSS ±0.707 %.
    net = Network(resistors=[("R1", "in", "out", 10e3), ("R2", "out", "gnd", 10e3)],
                  vsources=[("V1", "in", "gnd", 10)])
    t = make_target("voltage", "out", goal=5.0)
    wc = worst_case(net, {"R1": 0.01, "R2": 0.01}, [t])[t.label]
    assert wc.nominal == pytest.approx(5.0, rel=1e-12)
    assert wc.low == pytest.approx(4.95, rel=1e-12) and wc.high == pytest.approx(5.05, rel=1e-12)
    assert wc.low_corner == {"R1": "+", "R2": "-"}
    h = 1e-6
    sens = {}
    for name in ("R1", "R2"):
        up = float(solve(net, {name: 10e3 * (1 + h)}).v("out")[0])
        dn = float(solve(net, {name: 10e3 * (1 - h)}).v("out")[0])
        sens[name] = (up - dn) / (2 * h) / 5.0
    assert sens["R1"] == pytest.approx(-0.5, abs=1e-6)
    assert sens["R2"] == pytest.approx(0.5, abs=1e-6)
    eva = sum(abs(s) * 0.01 for s in sens.values())
    rss = math.sqrt(sum((s * 0.01) ** 2 for s in sens.values()))
    assert eva == pytest.approx(0.01, rel=1e-5) and rss == pytest.approx(0.00707, rel=1e-3)
    assert (wc.high - 5.0) / 5.0 == pytest.approx(eva, rel=1e-5)


# --------------------------------------------------------------------------- FACTS 5


def test_k5_effective_resistance() -> None:
    # FACTS 5 [CALC, sympy]: K5 with unit resistors, 2/5 between any two nodes.
    net = unit_graph(list(itertools.combinations(range(5), 2)), 0)
    for a, b in (("0", "1"), ("2", "4"), ("3", "1")):
        fl, ex = both_ways(net, a, b)
        assert ex == Fraction(2, 5) and fl == pytest.approx(0.4, rel=1e-12)


def test_cube_effective_resistances() -> None:
    # FACTS 5 [CALC, sympy]: cube 7/12 (edge), 3/4 (face diagonal), 5/6 (body diagonal).
    net = unit_graph(cube_edges(), 0)
    for b, expect in ((1, Fraction(7, 12)), (3, Fraction(3, 4)), (7, Fraction(5, 6))):
        fl, ex = both_ways(net, "0", str(b))
        assert ex == expect and fl == pytest.approx(float(expect), rel=1e-12)
    # the same seen from a node pair away from the network's ground
    assert seen_resistance(net, "6", "1", exact=True) == Fraction(5, 6)
    # FACTS 5 [HB] Foster 1949: sum over edges of R_eff / r = n - 1 = 7.
    total = sum(seen_resistance(net, str(a), str(b), exact=True) for a, b in cube_edges())
    assert total == 7


def test_nonplanar_effective_resistances() -> None:
    # FACTS 5 [CALC, sympy]: K3,3 5/9 across the sides, 2/3 within a side;
    # Petersen 3/5 adjacent, 4/5 otherwise.
    k33 = unit_graph([(a, b) for a in range(3) for b in range(3, 6)], 0)
    assert seen_resistance(k33, "0", "3", exact=True) == Fraction(5, 9)
    assert seen_resistance(k33, "0", "1", exact=True) == Fraction(2, 3)
    pet = unit_graph(petersen_edges(), 0)
    assert seen_resistance(pet, "0", "1", exact=True) == Fraction(3, 5)
    assert seen_resistance(pet, "0", "2", exact=True) == Fraction(4, 5)
    assert seen_resistance(pet, "0", "7", exact=True) == Fraction(4, 5)
    assert float(seen_resistance(pet, "0", "5")[0]) == pytest.approx(0.6, rel=1e-12)


def test_networkx_documented_example() -> None:
    # FACTS 7 [LIB]/[CALC]: Graph([(1,2),(1,3),(1,4),(3,4),(3,5),(4,5)]): R(1,3) = 5/8 and
    # the sum over all pairs (effective graph resistance) = 41/4.
    edges = [(1, 2), (1, 3), (1, 4), (3, 4), (3, 5), (4, 5)]
    net = unit_graph(edges, 1)
    assert seen_resistance(net, "1", "3", exact=True) == Fraction(5, 8)
    total = sum(seen_resistance(net, str(a), str(b), exact=True)
                for a, b in itertools.combinations(range(1, 6), 2))
    assert total == Fraction(41, 4)


def test_dissipation_not_vertex_bounded() -> None:
    # FACTS 5 [CALC]: Rs = RL = 100 ohm, RL ±10 %, 10 V: 0.25 W at the interior maximum,
    # 0.24931 / 0.24943 W at the vertices.
    net = Network(resistors=[("Rs", "in", "out", 100), ("RL", "out", "gnd", 100)],
                  vsources=[("V1", "in", "gnd", 10)])
    t = make_target("power", "RL")
    wc = worst_case(net, {"RL": 0.1}, [t])[t.label]
    assert wc.low == pytest.approx(0.24931, abs=5e-6)
    assert wc.high == pytest.approx(0.24943, abs=5e-6)
    ext = part_extremes(net, {"RL": 0.1})["RL"]
    assert ext.vertex_power == pytest.approx(0.24943, abs=5e-6)
    assert ext.worst_power == pytest.approx(0.25, rel=1e-9)
    assert ext.worst_power_at["RL"] == pytest.approx(100.0, rel=1e-4)


def test_interior_peak_matches_thevenin() -> None:
    # FACTS 5 [CALC] "check R = R_Thevenin": a resistor's power peaks at R = R_th, where it
    # is V_th^2 / (4 R_th). Thevenin seen by RL: V_th = 12 * 2k/3k = 8 V, R_th = 1k || 2k.
    net = Network(resistors=[("R1", "in", "out", 1e3), ("R2", "out", "gnd", 2e3),
                             ("RL", "out", "gnd", 700.0)],
                  vsources=[("V1", "in", "gnd", 12)])
    rth = float(seen_resistance(net.with_values({"RL": 1e12}), "out", "gnd")[0])
    assert rth == pytest.approx(2000 / 3, rel=1e-9)
    ext = part_extremes(net, {"RL": 0.1}, scan_points=5)["RL"]
    assert ext.worst_power == pytest.approx(8.0**2 / (4 * rth), rel=1e-9)
    assert ext.worst_power_at["RL"] == pytest.approx(rth, rel=1e-4)


# --------------------------------------------------------------------------- FACTS 6


def test_loaded_divider() -> None:
    # FACTS 6, loaded divider [HB]: 12 V with 10k/10k/10k gives 4.000 V (6 V unloaded,
    # R_th = 5 kohm).
    net = Network(resistors=[("R1", "in", "out", 10e3), ("R2", "out", "gnd", 10e3),
                             ("RL", "out", "gnd", 10e3)],
                  vsources=[("V1", "in", "gnd", 12)])
    assert float(solve(net).v("out")[0]) == pytest.approx(4.0, rel=1e-12)
    assert solve_exact(net).v("out") == 4
    unloaded = Network(resistors=net.resistors[:2], vsources=net.vsources)
    assert solve_exact(unloaded).v("out") == 6
    assert seen_resistance(unloaded, "out", "gnd", exact=True) == 5000


def test_quarter_bridge() -> None:
    # FACTS 6, Wheatstone bridge [HB]: V = Vs ΔR / (4R + 2ΔR); 10 V, 1 kohm, ΔR = 10 ohm gives
    # 24.876 mV. Balanced when R1 R4 = R2 R3.
    def bridge(r4: float) -> Network:
        return Network(resistors=[("R1", "top", "a", 1e3), ("R2", "a", "gnd", 1e3),
                                  ("R3", "top", "b", 1e3), ("R4", "b", "gnd", r4)],
                       vsources=[("V1", "top", "gnd", 10)])

    v = float(solve(bridge(1010)).v("b", "a")[0])
    assert v == pytest.approx(0.024876, abs=5e-7)
    assert v == pytest.approx(10 * 10 / (4 * 1000 + 2 * 10), rel=1e-12)
    assert solve_exact(bridge(1000)).v("b", "a") == 0


def pad_network(kind: str, k: float, z0: float = 50.0) -> Network:
    """A 50 ohm pad driven by 1 V at ``in`` and loaded by z0 at ``out``."""
    if kind == "T":
        rs, rp = z0 * (k - 1) / (k + 1), 2 * z0 * k / (k * k - 1)
        res = [("RA", "in", "mid", rs), ("RB", "mid", "out", rs), ("RC", "mid", "gnd", rp)]
    elif kind == "Pi":
        rp, rs = z0 * (k + 1) / (k - 1), z0 * (k * k - 1) / (2 * k)
        res = [("RA", "in", "gnd", rp), ("RB", "in", "out", rs), ("RC", "out", "gnd", rp)]
    else:  # bridged-T
        res = [("RA", "in", "mid", z0), ("RB", "mid", "out", z0),
               ("RC", "in", "out", z0 * (k - 1)), ("RD", "mid", "gnd", z0 / (k - 1))]
    return Network(resistors=[*res, ("RL", "out", "gnd", z0)],
                   vsources=[("V1", "in", "gnd", 1.0)])


@pytest.mark.parametrize(
    ("db", "t_series", "t_shunt", "pi_shunt", "pi_series"),
    [
        (3, 8.5499, 141.9262, 292.4022, 17.6148),
        (6, 16.6139, 66.9310, 150.4760, 37.3519),
        (10, 25.9747, 35.1364, 96.2475, 71.1512),
        (20, 40.9091, 10.1010, 61.1111, 247.5000),
    ],
)
def test_pad_rows(db: float, t_series: float, t_shunt: float, pi_shunt: float,
                  pi_series: float) -> None:
    # FACTS 6, pads (ITT Reference Data [MEM], rows verified [CALC]): formula values to four
    # decimals, and by network solve Zin = 50 ohm with the loss exact.
    k = 10 ** (db / 20)
    assert 50 * (k - 1) / (k + 1) == pytest.approx(t_series, abs=5e-5)
    assert 2 * 50 * k / (k * k - 1) == pytest.approx(t_shunt, abs=5e-5)
    assert 50 * (k + 1) / (k - 1) == pytest.approx(pi_shunt, abs=5e-5)
    assert 50 * (k * k - 1) / (2 * k) == pytest.approx(pi_series, abs=5e-5)
    for kind in ("T", "Pi", "bridged-T"):
        net = pad_network(kind, k)
        sol = solve(net)
        zin = 1.0 / float(sol.vsource_current["V1"][0])
        loss = 20 * math.log10(1.0 / float(sol.v("out")[0]))
        assert zin == pytest.approx(50.0, rel=1e-12), kind
        assert loss == pytest.approx(db, abs=1e-10), kind
        assert float(seen_resistance(net, "in", "gnd")[0]) == pytest.approx(0.0, abs=1e-12)


def test_min_loss_pad() -> None:
    # FACTS 6, pads [MEM]/[CALC]: minimum-loss pad 75 -> 50 ohm: 43.3013 series, 86.6025
    # shunt, 5.7195 dB. Zin from the 75 side with 50 load, from the 50 side with 75 load.
    r1, r2 = math.sqrt(75 * 25), 50 * math.sqrt(75 / 25)
    assert r1 == pytest.approx(43.3013, abs=5e-5) and r2 == pytest.approx(86.6025, abs=5e-5)
    net = Network(resistors=[("R1", "in", "out", r1), ("R2", "out", "gnd", r2),
                             ("RL", "out", "gnd", 50.0)],
                  vsources=[("V1", "in", "gnd", 1.0)])
    sol = solve(net)
    # the input resistance of the float solve against the exact (Fraction) solve of the same
    # network [CALC], and the pad built from the handbook's four-decimal values (43.3013,
    # 86.6025) against the 75 ohm it must present: rounding to 5e-5 ohm moves Zin by < 1e-6
    i_in = float(sol.vsource_current["V1"][0])
    exact_in = solve_exact(net).vsource_current["V1"]
    # the handbook's matched condition by the series and parallel rules alone [HB-ohm]:
    # R1 + R2 || 50 is the 75 ohm the pad must present (this fails if the r1, r2 formulas
    # above are wrong, whatever either solver does)
    by_hand = Fraction(r1) + Fraction(r2) * 50 / (Fraction(r2) + 50)
    assert float(by_hand) == pytest.approx(75.0, rel=1e-12)
    # each solve against that hand figure (these fail if a solver is wrong)
    assert 1.0 / i_in == pytest.approx(float(by_hand), rel=1e-12)
    assert float(1 / exact_in) == pytest.approx(float(by_hand), rel=1e-12)
    printed = Network(resistors=[("R1", "in", "out", 43.3013), ("R2", "out", "gnd", 86.6025),
                                 ("RL", "out", "gnd", 50.0)],
                      vsources=[("V1", "in", "gnd", 1.0)])
    zin_printed = 1 / solve_exact(printed).vsource_current["V1"]
    assert float(zin_printed) == pytest.approx(75.0, rel=1e-6)
    # the loss from the solved powers: in = V1 x I(V1), out = V(out)^2 / RL
    p_in, p_out = 1.0 * i_in, float(sol.v("out")[0]) ** 2 / 50
    assert 10 * math.log10(p_in / p_out) == pytest.approx(5.7195, abs=5e-5)
    back = Network(resistors=[("R1", "in", "out", r1), ("R2", "out", "gnd", r2),
                              ("RS", "in", "gnd", 75.0)])
    assert float(seen_resistance(back, "out", "gnd")[0]) == pytest.approx(50.0, rel=1e-12)


def test_led_resistor() -> None:
    # FACTS 6, LED [CP]: R = (Vs - n Vf) / If: 5 V, 2.0 V, 20 mA -> 150 ohm (60 mW);
    # 3.3 V, 2.0 V, 10 mA -> 130 ohm. The LED is a voltage source of its forward drop and
    # delivers a negative current (docs/design-file.md, [[source]]).
    for vs, r, i, p in ((5, 150, Fraction(1, 50), Fraction(3, 50)),
                        (Fraction(33, 10), 130, Fraction(1, 100), Fraction(13, 1000))):
        net = Network(resistors=[("R", "in", "a", r)],
                      vsources=[("V1", "in", "gnd", vs), ("LED", "a", "gnd", 2)])
        ex = solve_exact(net)
        assert ex.resistor_current["R"] == i and ex.resistor_power["R"] == p
        assert ex.vsource_current["LED"] == -i
        fl = solve(net)
        assert float(fl.resistor_current["R"][0]) == pytest.approx(float(i), rel=1e-12)


def test_r2r_ladder() -> None:
    # FACTS 6, R-2R [HB]: V = Vref D / 2^N, R_out = R. At 5 V: N = 4, D = 11 -> 3.4375 V;
    # N = 8, D = 255 -> 4.98046875 V.
    def ladder(bits: int, code: int) -> Network:
        res = [("RT", "n0", "gnd", 2000)]
        src = []
        for k in range(bits):  # bit k (LSB first) drives node nk through 2R
            res.append((f"RB{k}", f"b{k}", f"n{k}", 2000))
            if k < bits - 1:
                res.append((f"RS{k}", f"n{k}", f"n{k + 1}", 1000))
            src.append((f"V{k}", f"b{k}", "gnd", 5 if code >> k & 1 else 0))
        return Network(resistors=res, vsources=src)

    for bits, code, expect in ((4, 11, Fraction(34375, 10000)),
                               (8, 255, Fraction(498046875, 10**8))):
        net = ladder(bits, code)
        out = f"n{bits - 1}"
        assert solve_exact(net).v(out) == expect
        assert float(solve(net).v(out)[0]) == pytest.approx(float(expect), rel=1e-12)
        assert seen_resistance(net, out, "gnd", exact=True) == 1000


# --------------------------------------------------------------------------- solver checks


def test_sign_conventions() -> None:
    # Conventions of docs/design-file.md: a current source's amps flow from `from` to `to`
    # (into `to`); a voltage source's current is the current it delivers out of plus.
    net = Network(resistors=[("R", "a", "gnd", 1000)], isources=[("I1", "gnd", "a", 1e-3)])
    sol = solve(net)
    assert float(sol.v("a")[0]) == pytest.approx(1.0)
    assert float(sol.isource_power["I1"][0]) == pytest.approx(1e-3)
    net = Network(resistors=[("R", "gnd", "a", 1000)], vsources=[("V1", "a", "gnd", 5)])
    sol = solve(net)
    assert float(sol.vsource_current["V1"][0]) == pytest.approx(5e-3)
    assert float(sol.resistor_current["R"][0]) == pytest.approx(-5e-3)  # counted gnd -> a
    assert float(sol.resistor_power["R"][0]) == pytest.approx(25e-3)


def random_network(rng: random.Random) -> Network:
    """A random connected network with integer-ish values (exact as decimals)."""
    n = rng.randint(2, 6)
    nodes = ["gnd"] + [f"n{i}" for i in range(n)]
    res = []
    for i in range(1, len(nodes)):  # spanning tree
        res.append((f"T{i}", nodes[i], nodes[rng.randrange(i)], rng.choice([47, 100, 220,
                                                                            1000, 3300])))
    for k in range(rng.randint(0, 6)):
        a, b = rng.sample(nodes, 2)
        res.append((f"X{k}", a, b, rng.choice([10, 68, 150, 4700, 10000])))
    vs = [(f"V{k}", node, "gnd", rng.choice([-5, 1.5, 3.3, 12]))
          for k, node in enumerate(rng.sample(nodes[1:], rng.randint(0, min(2, n))))]
    isrc = []
    for k in range(rng.randint(0, 2)):
        a, b = rng.sample(nodes, 2)
        isrc.append((f"I{k}", a, b, rng.choice([1e-3, -2.5e-3, 0.01])))
    return Network(resistors=res, vsources=vs, isources=isrc)


def test_float_exact_and_sympy_agree() -> None:
    # Independent paths must agree: numpy float64, fractions Gauss-Jordan, SymPy LUsolve.
    rng = random.Random(7)
    for _ in range(40):
        net = random_network(rng)
        fl, ex = solve(net), solve_exact(net)
        for node, v in ex.node_voltage.items():
            assert float(fl.node_voltage[node][0]) == pytest.approx(float(v), rel=1e-9,
                                                                    abs=1e-12)
        for name, p in ex.resistor_power.items():
            assert float(fl.resistor_power[name][0]) == pytest.approx(float(p), rel=1e-9,
                                                                      abs=1e-15)
        for name, i in ex.vsource_current.items():
            assert float(fl.vsource_current[name][0]) == pytest.approx(float(i), rel=1e-9,
                                                                       abs=1e-15)
    for _ in range(8):
        net = random_network(rng)
        ex, sy = solve_exact(net), solve_sympy(net)
        assert ex.node_voltage == sy.node_voltage
        assert ex.vsource_current == sy.vsource_current


def test_batch_equals_one_by_one() -> None:
    # A stacked solve must give the same numbers as solving each value set alone.
    rng = np.random.default_rng(3)
    net = Network(resistors=[("R1", "in", "a", 1), ("R2", "a", "gnd", 1), ("R3", "a", "b", 1),
                             ("R4", "b", "gnd", 1)],
                  vsources=[("V1", "in", "gnd", 9)], isources=[("I1", "gnd", "b", 1e-3)])
    r = rng.uniform(100, 10e3, size=(50, 4))
    batch = solve(net, r, chunk=7)
    for k in range(50):
        one = solve(net, r[k])
        assert float(one.v("b")[0]) == pytest.approx(float(batch.v("b")[k]), rel=1e-12)
        ex = solve_exact(net, dict(zip(net.resistor_names, map(float, r[k]), strict=True)))
        assert float(ex.v("b")) == pytest.approx(float(batch.v("b")[k]), rel=1e-9)


# --------------------------------------------------------------------------- search checks


def test_search_matches_plain_enumeration() -> None:
    # The search against a loop written separately here: candidates built from the
    # documented range rule (series: low/10..high per part; parallel: low..10*high), the
    # network expanded by hand, one solve per candidate, limits per physical part.
    e6 = eseries.values("E6", 10, 1e6)
    e3 = eseries.values("E3", 10, 1e6)

    def multisets(vals: list[float], lo: float, hi: float, kind: str) -> list[tuple]:
        out = []
        for c in itertools.combinations_with_replacement(vals, 2):
            eff = sum(c) if kind == "series" else 1 / (1 / c[0] + 1 / c[1])
            if lo * (1 - 1e-9) <= eff <= hi * (1 + 1e-9):
                out.append(c)
        return out

    r1 = multisets([v for v in e6 if 1e3 <= v <= 1e6], 10e3, 1e6, "series")
    r2 = multisets([v for v in e3 if 1e3 <= v <= 50e3], 1e3, 5e3, "parallel")
    r3 = [(v,) for v in e6 if 10e3 <= v <= 100e3]
    ap, av = ratings.allowed_power("0402"), ratings.allowed_voltage("0402")
    plain = []
    for a, b, c in itertools.product(r1, r2, r3):
        net = Network(resistors=[("R1A", "in", "m1", a[0]), ("R1B", "m1", "mid", a[1]),
                                 ("R2A", "mid", "out", b[0]), ("R2B", "mid", "out", b[1]),
                                 ("R3", "out", "gnd", c[0])],
                      vsources=[("V1", "in", "gnd", 100)])
        sol = solve(net)
        vout = float(sol.v("out")[0])
        ok = abs(vout - 20) <= 0.05 * 20 * (1 + 1e-9)
        for name in ("R1A", "R1B", "R3"):  # R2 parts unrated
            ok &= float(sol.resistor_power[name][0]) <= ap * (1 + 1e-9)
            ok &= abs(float(sol.resistor_voltage[name][0])) <= av * (1 + 1e-9)
        if ok:
            plain.append((abs(vout - 20) / 20, (*a, *b, *c)))
    base = Network(vsources=[("V1", "in", "gnd", 100)])
    pos = [Position("R1", "in", "mid", 10e3, 1e6, "E6", parts=2, combine="series",
                    package="0402"),
           Position("R2", "mid", "out", 1e3, 5e3, "E3", parts=2, combine="parallel"),
           Position("R3", "out", "gnd", 10e3, 100e3, "E6", package="0402")]
    res = search(base, pos, [make_target("voltage", "out", goal=20, within=0.05)], chunk=500)
    assert res.candidates == len(r1) * len(r2) * len(r3)
    assert res.n_feasible == len(plain) > 0
    assert res.window_ok > res.n_feasible  # the part limits do bite
    got = sorted(tuple(v.values()) for _, v in res.feasible)
    assert got == sorted(p[1] for p in plain)
    assert res.feasible[0][0] == pytest.approx(min(p[0] for p in plain), abs=1e-15)
    objectives = [o for o, _ in res.feasible]
    assert objectives == sorted(objectives)


def test_position_equal_and_parallel_rules() -> None:
    # docs/design-file.md `combine`: parallel parts from low up to 10*high; `equal` keeps
    # only all-equal sets.
    pos = Position("R", "a", "b", 1e3, 2e3, "E12", parts=2, combine="parallel", equal=True)
    rows = position_candidates(pos)
    assert [tuple(r) for r in rows] == [(2200.0, 2200.0), (2700.0, 2700.0), (3300.0, 3300.0),
                                        (3900.0, 3900.0)]
    pos3 = Position("R", "a", "b", 10e3, 10e3, "E3", parts=3, combine="series")
    assert [tuple(r) for r in position_candidates(pos3)] == []  # no E3 triple sums to 10k
    pos3 = Position("R", "a", "b", 3e3, 3e3, "E3", parts=3, combine="series", stock=(1e3,))
    assert [tuple(r) for r in position_candidates(pos3)] == [(1e3, 1e3, 1e3)]


def test_window_slack() -> None:
    # Brief: limits compared with a relative slack of 1e-9; a value exactly at (or a few
    # ulps past) its bound passes, one 2e-9 past it fails.
    t = make_target("current", "V1", at_most=30e-6)
    vals = np.array([30e-6, np.nextafter(30e-6, 1.0), 30e-6 * (1 + 0.9e-9), 30e-6 * (1 + 2e-9)])
    assert list(within_window(vals, t)) == [True, True, True, False]
    t = make_target("voltage", "out", goal=3.0, within=0.01)
    assert list(within_window(np.array([2.97, 3.03, 2.969, 3.031]), t)) == [True, True,
                                                                            False, False]


def test_scenario_h_stock_series() -> None:
    # Brief scenario h: shelf 4.7k, 10k, 22k; two in series, range 10k..20k -> 14.7k, 20k.
    h = scenarios.stock_series_offer()
    assert h["effective_values"] == [14700.0, 20000.0]


def test_scenario_e_limits_met_exactly() -> None:
    # Brief scenario e: 12 V, R1 = 300k, R2 = 100k: exactly 3 V and 30 µA; at the bound passes.
    e = scenarios.limits_met_exactly()
    assert e["exact_vout"] == 3 and e["exact_current"] == Fraction(3, 100000)
    assert e["exact_current_ok"] and e["float_vout_ok"] and e["float_current_ok"]
    assert e["float_feasible_by_search"]


def test_scenario_f_package_at_limit() -> None:
    # Brief scenario f: 100 ohm across 2.5 V is exactly 62.5 mW; allowances 0.125 W * 1/2.
    f = scenarios.package_at_62mw5()
    assert f["exact_power"] == Fraction(1, 16)
    assert f["packages_exactly_at"] == ["0805", "axial-1/8W"]
    assert all(f["float_passes"].values())


def test_scenario_g_max_power_transfer() -> None:
    # Brief scenario g, maximum power transfer theorem: P <= V^2 / (4 Rs); with Rs = 90 ohm
    # and RL able to equal it the box maximum is 10^2 / (4 * 90) W (a vertex, here).
    g = scenarios.max_power_transfer()
    assert g["true_max"] == pytest.approx(100 / 360, rel=1e-12)
    assert g["vertex_max"] == pytest.approx(100 / 360, rel=1e-12)
    assert g["fixed_rs_true_max"] == pytest.approx(0.25, rel=1e-9)  # FACTS 5 [CALC]


def test_scenario_a_divider_48v() -> None:
    # Brief scenario a: R1 must hold at least 48 - 3.3*1.01 = 44.667 V > 40 V (0603 * 80 %).
    a = scenarios.divider_48v_to_3v3()
    assert a["r1_least_voltage_hand"] == pytest.approx(44.667, abs=1e-9)
    assert a["allowance_0603_v"] == pytest.approx(40.0)
    assert a["feasible_count"] == 0 and a["window_ok"] > 0
    assert a["r1_least_voltage_found"] >= a["r1_least_voltage_hand"] - 1e-9
    obj, _, v_r1 = a["best_ignoring_voltage"]
    assert v_r1 >= a["r1_least_voltage_hand"] - 1e-9 and obj < 0.01
    obj40, _, vout40 = a["best_r1_40v_only"]
    assert vout40 >= 8.0 - 1e-9 and obj40 >= (8.0 - 3.3) / 3.3 - 1e-12


def test_scenario_d_shunt() -> None:
    # Brief scenario d: 20 A through 2 x 4.3 mohm in parallel: 10 A and 0.43 W per part;
    # 2512 allowance 0.5 W at 25 °C and at 70 °C (FACTS 3 derating knee at 70 °C).
    d = scenarios.shunt_20a(samples=4000)
    assert all(p == pytest.approx(0.43, rel=1e-12) for p in d["part_nominal_power"].values())
    assert d["allowance_25c"] == pytest.approx(0.5) and d["allowance_70c"] == pytest.approx(0.5)
    assert all(u == pytest.approx(0.86, rel=1e-12) for u in d["part_use_25c"].values())
    # worst over ±1 %: P_A = 400 RA RB^2/(RA+RB)^2 <= 100 RB, at RA = RB = 4.343 mohm
    assert all(p == pytest.approx(0.4343, rel=1e-9) for p in d["part_worst_power"].values())
    assert d["mc_yield"] == 1.0


@pytest.fixture(scope="module")
def scenario_b() -> dict:
    return scenarios.divider_70v_to_5v()


@pytest.fixture(scope="module")
def scenario_c() -> dict:
    return scenarios.divider_400v_to_2v5()


def test_scenario_b_divider_70v(scenario_b: dict) -> None:
    # Brief scenario b: exact ratio 70/5 = 14 is reachable, e.g. (22.1k + 22.1k) / 3.4k = 13.
    b = scenario_b
    assert b["feasible_count"] == 1166 and b["exact_zero_count"] == 35
    assert b["best_exact_error"] == 0
    assert {"R1A": 22100.0, "R1B": 22100.0, "R2": 3400.0} in b["exact_zero"]
    for v, p in b["best_parts"].values():
        assert abs(v) <= 40 * (1 + 1e-9) and p <= 0.05 * (1 + 1e-9)


def test_scenario_c_divider_400v(scenario_c: dict) -> None:
    # Brief scenario c: 442k + 432k needs R2 = 5.49k (E96) for 2.5 V within 0.5 %.
    c = scenario_c
    assert c["feasible_count"] == 2029 and c["exact_zero_count"] == 10
    assert c["pair_r2"] == 5490.0 and c["pair_feasible"]
    i = 400 / (442e3 + 432e3 + 5.49e3)
    assert c["pair_part_voltages"]["R1B"] == pytest.approx(442e3 * i, rel=1e-12)
    assert c["pair_part_voltages"]["R1A"] == pytest.approx(432e3 * i, rel=1e-12)


def test_evaluate_reports_each_part() -> None:
    # Each physical part of a series position carries its own voltage (same current).
    base = Network(vsources=[("V1", "in", "gnd", 100)])
    pos = [Position("R1", "in", "gnd", 1e3, 1e6, "E24", parts=2, combine="series",
                    package="0603")]
    ev = evaluate(base, pos, {"R1A": 100e3, "R1B": 300e3}, [])
    assert ev.parts["R1A"].voltage == pytest.approx(25.0)
    assert ev.parts["R1B"].voltage == pytest.approx(75.0)
    assert not ev.parts["R1B"].ok and ev.parts["R1A"].ok and not ev.feasible


# --------------------------------------------------------------------------- statistics


def test_clopper_pearson_closed_forms() -> None:
    # Clopper & Pearson (1934) [HB]: for k = 0 the upper bound is 1 - (α/2)^(1/n); for
    # k = n the lower bound is (α/2)^(1/n).
    n = 20000
    lo, hi = clopper_pearson(0, n)
    assert lo == 0.0 and hi == pytest.approx(1 - 0.025 ** (1 / n), rel=1e-9)
    lo, hi = clopper_pearson(n, n)
    assert hi == 1.0 and lo == pytest.approx(0.025 ** (1 / n), rel=1e-9)
    lo, hi = clopper_pearson(50, 100)
    assert lo < 0.5 < hi and hi - 0.5 == pytest.approx(0.5 - lo, rel=1e-9)


def test_monte_carlo_inside_vertex_box() -> None:
    # FACTS 5 vertex extremes [HB]: no sample may leave the vertex range; the seeded run is
    # reproducible. Uniform ±1 % on 10k/10k: V(out) in 4.95..5.05.
    net = Network(resistors=[("R1", "in", "out", 10e3), ("R2", "out", "gnd", 10e3)],
                  vsources=[("V1", "in", "gnd", 10)])
    tol = {"R1": 0.01, "R2": 0.01}
    wide = make_target("voltage", "out", goal=5.0, within=0.01)
    assert monte_carlo(net, tol, [wide], samples=5000).yield_ == 1.0
    narrow = make_target("voltage", "out", goal=5.0, within=0.005)
    y1 = monte_carlo(net, tol, [narrow], samples=5000, seed=1)
    y2 = monte_carlo(net, tol, [narrow], samples=5000, seed=1)
    assert y1 == y2 and 0.0 < y1.yield_ < 1.0
    # exact share for u1, u2 uniform on [-1, 1]: |V/5 - 1| <= 0.005 <=> |u2 - u1| <~ 1:
    # probability 3/4 to first order; allow the sampling spread and the small curvature.
    assert y1.ci_low < 0.75 + 0.01 and y1.ci_high > 0.75 - 0.01
