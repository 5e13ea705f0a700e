"""Reference figures for everyday design cases.

Unless a scenario says otherwise: ratings from ``catalogs/packages.csv``, ambient 25 °C,
power use 50 % of the derated rating and voltage use 80 % of the limiting element voltage
(FACTS 3, "Margin" [CP]); E-series values from FACTS 1 [STD]; every figure from the
exhaustive search (:mod:`.search`), the MNA solve (:mod:`.network`) or the spread tools
(:mod:`.spread`) of this package, never from rnsynth. Each function returns a plain dict.
"""

from __future__ import annotations

import math
from fractions import Fraction
from typing import Any

from . import ratings
from .network import Network, solve, solve_exact
from .search import Position, evaluate, expand, part_values, position_candidates, search
from .spread import monte_carlo, part_extremes, worst_case
from .targets import SLACK, make_target


def _exact_error(
    base: Network, positions: list[Position], values: dict[str, float], node: str,
    goal: Fraction,
) -> Fraction:
    """Exact relative error of V(node) for one candidate (exact rational solve)."""
    net = expand(base, positions).with_values(values)
    return abs(solve_exact(net).v(node) - goal) / abs(goal)


def _exact_summary(
    base: Network, positions: list[Position], feasible: list[tuple[float, dict[str, float]]],
    node: str, goal: Fraction,
) -> dict[str, Any]:
    """Exact errors of the near-best feasible candidates (float objective <= 1e-12)."""
    near = [v for o, v in feasible if o <= 1e-12]
    exact = [(_exact_error(base, positions, v, node, goal), v) for v in near]
    zero = sorted((v for e, v in exact if e == 0), key=lambda v: tuple(v.values()))
    return {"exact_zero_count": len(zero), "exact_zero": zero,
            "best_exact_error": min((e for e, _ in exact), default=None)}


def divider_48v_to_3v3() -> dict[str, Any]:
    """a. Divider 48 V -> 3.3 V with a 1 Mohm load; R1 cannot hold off the voltage.

    Circuit: V1 = 48 V (in -> gnd); R1 in -> out and R2 out -> gnd, both E96 in
    100 ohm..10 Mohm, each one 0603 part; RL = 1 Mohm out -> gnd, an unrated model part.
    Target V(out) = 3.3 V within ±1 %.

    Source of truth: hand formula (R1 sees 48 - V(out), at least 48 - 3.3*1.01 V inside the
    window), the 0603 row of packages.csv (50 V * 80 % = 40 V), and exhaustive searches
    over all 481 x 481 E96 pairs.

    Returns: ``r1_least_voltage_hand`` (V), ``r1_least_voltage_found`` (least V(R1) over
    the E96 pairs meeting the window), ``allowance_0603_v`` (V), ``candidates``,
    ``window_ok`` (pairs meeting the window), ``feasible_count`` (window and all limits: 0),
    ``best_ignoring_voltage`` (objective, values, V(R1)) with the power limit kept,
    ``best_ignoring_voltage_exact_error`` (Fraction), ``best_no_limits`` (objective,
    values), ``best_r1_40v_only`` (no window, no power limit,
    only every part <= 40 V: objective, values, V(out)).
    """
    base = Network(resistors=[("RL", "out", "gnd", 1e6)], vsources=[("V1", "in", "gnd", 48)])
    pos = [Position("R1", "in", "out", 100, 10e6, "E96", package="0603"),
           Position("R2", "out", "gnd", 100, 10e6, "E96", package="0603")]
    tgt = [make_target("voltage", "out", goal=3.3, within=0.01)]
    full = search(base, pos, tgt, keep=1)
    no_v = search(base, pos, tgt, check_voltage=False, keep=1)
    assert no_v.best is not None and full.best_any is not None
    e_no_v = evaluate(base, pos, no_v.best[1], tgt, check_voltage=False)
    in_window = search(base, pos, tgt, check_power=False, check_voltage=False)
    least_v = min(evaluate(base, pos, v, tgt).parts["R1"].voltage for _, v in in_window.feasible)
    best_exact = _exact_error(base, pos, no_v.best[1], "out", Fraction(33, 10))
    only_40 = search(base, pos, tgt, check_power=False, use_windows=False, keep=1)
    assert only_40.best is not None
    e_40 = evaluate(base, pos, only_40.best[1], tgt, check_power=False, use_windows=False)
    return {
        "r1_least_voltage_hand": 48 - 3.3 * 1.01,
        "r1_least_voltage_found": least_v,
        "allowance_0603_v": ratings.allowed_voltage("0603"),
        "candidates": full.candidates,
        "window_ok": full.window_ok,
        "feasible_count": full.n_feasible,
        "best_ignoring_voltage": (no_v.best[0], no_v.best[1], e_no_v.parts["R1"].voltage),
        "best_ignoring_voltage_exact_error": best_exact,
        "best_no_limits": full.best_any,
        "best_r1_40v_only": (only_40.best[0], only_40.best[1], e_40.target_values["voltage(out)"]),
    }


def divider_70v_to_5v() -> dict[str, Any]:
    """b. Divider 70 V -> 5 V with R1 split into two 0603 parts in series.

    Circuit: V1 = 70 V (in -> gnd); position R1 in -> out of TWO 0603 parts in series (E96,
    position range 1k..1M, so each part 100 ohm..1M), R2 out -> gnd one 0603 E96 part in
    100..100k. Target V(out) = 5 V within ±0.5 %. Limits per physical part: 0.05 W, 40 V.

    Source of truth: exhaustive search of every multiset pair for R1 times every R2, each
    physical part's voltage and power from the solve.

    Returns: ``candidates``, ``feasible_count``, ``best`` (objective, values; several
    candidates have exactly zero error, so "best" is the first in float order),
    ``exact_zero_count`` / ``exact_zero`` (feasible candidates whose exact rational error is
    0), ``best_exact_error``, ``top`` (first ten feasible), ``best_parts`` (voltage and power
    of each part at the best).
    """
    base = Network(vsources=[("V1", "in", "gnd", 70)])
    pos = [Position("R1", "in", "out", 1e3, 1e6, "E96", parts=2, combine="series",
                    package="0603"),
           Position("R2", "out", "gnd", 100, 100e3, "E96", package="0603")]
    tgt = [make_target("voltage", "out", goal=5.0, within=0.005)]
    res = search(base, pos, tgt)
    out: dict[str, Any] = {"candidates": res.candidates, "feasible_count": res.n_feasible,
                           "best": res.best, "top": res.feasible[:10]}
    out.update(_exact_summary(base, pos, res.feasible, "out", Fraction(5)))
    if res.best is not None:
        ev = evaluate(base, pos, res.best[1], tgt)
        out["best_parts"] = {n: (p.voltage, p.power) for n, p in ev.parts.items()}
    return out


def divider_400v_to_2v5() -> dict[str, Any]:
    """c. Divider 400 V -> 2.5 V with R1 split into two axial 1/2 W parts in series.

    Circuit: V1 = 400 V (in -> gnd); position R1 in -> out of two axial-1/2W parts in
    series (E96, position range 100k..10M, so each part 10k..10M); R2 out -> gnd one
    axial-1/2W E96 part in 1k..100k. Target V(out) = 2.5 V within ±0.5 %. Limits per part:
    0.5 W * 50 % = 0.25 W and 350 V * 80 % = 280 V.

    Source of truth: exhaustive search; for the named pair R1 = 442k + 432k, every E96 R2 in
    1k..100k solved and the least-error one meeting the window picked.

    Returns: ``candidates``, ``feasible_count``, ``best``, ``top``, ``exact_zero_count`` /
    ``exact_zero`` (feasible candidates with exactly zero error), ``pair_r2`` (the R2 picked for
    442k + 432k), ``pair_vout``, ``pair_error``, ``pair_part_voltages`` (V by part),
    ``pair_part_powers`` (W by part), ``pair_feasible``.
    """
    base = Network(vsources=[("V1", "in", "gnd", 400)])
    pos = [Position("R1", "in", "out", 100e3, 10e6, "E96", parts=2, combine="series",
                    package="axial-1/2W"),
           Position("R2", "out", "gnd", 1e3, 100e3, "E96", package="axial-1/2W")]
    tgt = [make_target("voltage", "out", goal=2.5, within=0.005)]
    res = search(base, pos, tgt)
    out: dict[str, Any] = {"candidates": res.candidates, "feasible_count": res.n_feasible,
                           "best": res.best, "top": res.feasible[:10]}
    out.update(_exact_summary(base, pos, res.feasible, "out", Fraction(5, 2)))
    pair = {"R1A": 432e3, "R1B": 442e3}
    best_r2 = None
    for (r2,) in position_candidates(pos[1]):
        ev = evaluate(base, pos, {**pair, "R2": float(r2)}, tgt)
        if ev.feasible and (best_r2 is None or ev.objective < best_r2[0]):
            best_r2 = (ev.objective, float(r2), ev)
    assert best_r2 is not None
    _, r2, ev = best_r2
    out.update(
        pair_r2=r2,
        pair_vout=ev.target_values["voltage(out)"],
        pair_error=ev.objective,
        pair_part_voltages={n: p.voltage for n, p in ev.parts.items()},
        pair_part_powers={n: p.power for n, p in ev.parts.items()},
        pair_feasible=ev.feasible,
    )
    return out


def shunt_20a(samples: int = 20_000, seed: int = 20240601) -> dict[str, Any]:
    """d. A 20 A current shunt of two 4.3 mohm 2512 parts in parallel, 1 % each.

    Circuit: current source I1 = 20 A from gnd into node ``a``; R1A and R1B, 4.3 mohm each,
    both a -> gnd (a parallel position, 2.15 mohm effective). Package 2512 (1 W at 70 °C,
    zero at 155 °C): allowance 0.5 W at 25 °C and also 0.5 W at 70 °C (the knee). Tolerance
    ±1 % each, ambient up to 70 °C.

    Source of truth: the MNA solve (each part carries its own current, 10 A nominal, so
    0.43 W each), the 2512 row, the spread tools (vertices plus interior scan) and a seeded
    Monte Carlo where the only limits are each part's power allowance at 25 °C.

    Returns: ``part_nominal_power`` (W by part), ``allowance_25c``/``allowance_70c`` (W),
    ``part_use_25c``/``part_use_70c`` (each part's power / its own allowance),
    ``wrong_position_use`` (the whole position's power against ONE part's allowance, shown
    as the mistake to avoid), ``part_worst_power`` (W, over the ±1 % box),
    ``mc_yield``, ``mc_ci`` (95 % Clopper-Pearson), ``mc_samples``.
    """
    net = Network(resistors=[("R1A", "a", "gnd", 4.3e-3), ("R1B", "a", "gnd", 4.3e-3)],
                  isources=[("I1", "gnd", "a", 20.0)])
    sol = solve(net)
    p = {n: float(sol.resistor_power[n][0]) for n in net.resistor_names}
    a25 = ratings.allowed_power("2512", 25.0)
    a70 = ratings.allowed_power("2512", 70.0)
    tol = {"R1A": 0.01, "R1B": 0.01}
    ext = part_extremes(net, tol)
    mc = monte_carlo(net, tol, [], {"R1A": "2512", "R1B": "2512"}, samples=samples,
                     seed=seed, ambient_c=25.0, check_voltage=False)
    mc70 = monte_carlo(net, tol, [], {"R1A": "2512", "R1B": "2512"}, samples=samples,
                       seed=seed, ambient_c=70.0, check_voltage=False)
    return {
        "part_nominal_power": p,
        "allowance_25c": a25,
        "allowance_70c": a70,
        "part_use_25c": {n: v / a25 for n, v in p.items()},
        "part_use_70c": {n: v / a70 for n, v in p.items()},
        "wrong_position_use": sum(p.values()) / a25,
        "part_worst_power": {n: e.worst_power for n, e in ext.items()},
        "part_worst_use_70c": {n: e.worst_power / a70 for n, e in ext.items()},
        "mc_yield": mc.yield_,
        "mc_ci": (mc.ci_low, mc.ci_high),
        "mc_samples": mc.samples,
        "mc_yield_70c": mc70.yield_,
    }


def limits_met_exactly() -> dict[str, Any]:
    """e. Limits met exactly: a value exactly at its bound must pass.

    Circuit: V1 = 12 V (in -> gnd), R1 = 300k in -> out, R2 = 100k out -> gnd. Targets:
    V(out) = 3 V within 1 % and the supply current (delivered by V1) at most 30 µA. Exactly:
    V(out) = 12 * 100/400 = 3 V and I = 12 / 400k = 30 µA, right at the bound.

    Source of truth: exact rational solve (fractions and the float solve with the 1e-9
    relative slack of the targets).

    Returns: ``float_vout``, ``float_current``, ``float_vout_ok``, ``float_current_ok``
    (slack 1e-9), ``float_current_ok_strict`` (plain ``<=`` without slack),
    ``float_current_ulps_from_limit`` (float result minus the bound, in units in the last
    place: the float solve may land a few ulps either side of an exact bound),
    ``exact_vout``, ``exact_current`` (Fractions), ``exact_current_ok``.
    """
    net = Network(resistors=[("R1", "in", "out", 300e3), ("R2", "out", "gnd", 100e3)],
                  vsources=[("V1", "in", "gnd", 12)])
    t_v = make_target("voltage", "out", goal=3.0, within=0.01)
    t_i = make_target("current", "V1", at_most=30e-6)
    res = search(net, [], [t_v, t_i])
    sol = solve(net)
    vout, cur = float(sol.v("out")[0]), float(sol.vsource_current["V1"][0])
    ex = solve_exact(net, {"R1": 300_000, "R2": 100_000, "V1": 12})
    return {
        "float_vout": vout,
        "float_current": cur,
        "float_vout_ok": bool(t_v.low - SLACK * abs(t_v.low) <= vout
                              <= t_v.high + SLACK * abs(t_v.high)),
        "float_current_ok": bool(cur <= 30e-6 * (1 + SLACK)),
        "float_current_ok_strict": bool(cur <= 30e-6),
        "float_current_ulps_from_limit": round((cur - 30e-6) / math.ulp(30e-6)),
        "float_feasible_by_search": res.n_feasible == 1,
        "exact_vout": ex.v("out"),
        "exact_current": ex.vsource_current["V1"],
        "exact_current_ok": ex.vsource_current["V1"] <= Fraction(30, 10**6),
    }


def package_at_62mw5() -> dict[str, Any]:
    """f. 100 ohm across 2.5 V dissipates exactly 62.5 mW; which packages allow exactly that?

    Circuit: V1 = 2.5 V across R = 100 ohm. P = 2.5² / 100 = 1/16 W.

    Source of truth: exact solve and exact allowances from the table's decimal text at
    25 °C with 50 % use (P_rated * 1 * 1/2 = 1/16 W means P_rated = 0.125 W).

    Returns: ``exact_power`` (Fraction), ``float_power``, ``packages_exactly_at`` (names
    whose exact allowance equals the power), ``float_passes`` (each of those passes the
    float check with slack 1e-9).
    """
    net = Network(resistors=[("R", "a", "gnd", 100)], vsources=[("V1", "a", "gnd", 2.5)])
    p_exact = solve_exact(net).resistor_power["R"]
    p_float = float(solve(net).resistor_power["R"][0])
    names = [n for n in ratings.load_packages()
             if ratings.exact_allowed_power(n, 25, Fraction(1, 2)) == p_exact]
    return {
        "exact_power": p_exact,
        "float_power": p_float,
        "packages_exactly_at": names,
        "float_passes": {n: p_float <= ratings.allowed_power(n, 25.0, 0.5) * (1 + SLACK)
                         for n in names},
    }


def max_power_transfer() -> dict[str, Any]:
    """g. Maximum power transfer: the load's power over the tolerance box.

    Circuit: V1 = 10 V (in -> gnd), Rs = 100 ohm ±10 % (in -> out), RL = 100 ohm ±10 %
    (out -> gnd); the target is RL's dissipation P = V² RL / (Rs + RL)².

    Source of truth: the maximum power transfer theorem (P is largest at RL = Rs, giving
    V² / (4 Rs)); with Rs at its low end 90 ohm and RL able to equal it: 10² / (4 * 90) W.
    Also the FACTS 5 variant [CALC] with Rs fixed at 100 ohm and only RL ±10 %: 0.25 W
    inside, 0.24931 / 0.24943 W at the vertices.

    Returns: ``vertex_max``, ``true_max`` (vertices plus interior scan), ``theorem_max``
    (10²/(4*90)), ``true_max_at`` (values), and ``fixed_rs_vertex_powers``,
    ``fixed_rs_true_max``.
    """
    net = Network(resistors=[("Rs", "in", "out", 100), ("RL", "out", "gnd", 100)],
                  vsources=[("V1", "in", "gnd", 10)])
    both = part_extremes(net, {"Rs": 0.1, "RL": 0.1})["RL"]
    only = part_extremes(net, {"RL": 0.1})["RL"]
    wc = worst_case(net, {"RL": 0.1}, [make_target("power", "RL")])["power(RL)"]
    return {
        "vertex_max": both.vertex_power,
        "true_max": both.worst_power,
        "theorem_max": 10.0**2 / (4 * 90.0),
        "true_max_at": both.worst_power_at,
        "fixed_rs_vertex_powers": (wc.low, wc.high),
        "fixed_rs_true_max": only.worst_power,
    }


def stock_series_offer() -> dict[str, Any]:
    """h. What a stock shelf offers for a two-part series position.

    Shelf: 4.7k, 10k, 22k. Position: two parts in series, range 10k..20k, so each part may
    lie in 1k..20k (22k is out); multisets {4.7k+4.7k = 9.4k (below range), 4.7k+10k,
    10k+10k}.

    Source of truth: the documented range rule and plain enumeration.

    Returns: ``part_values`` (shelf values a part may take), ``offers`` (list of
    (effective ohm, part values)), ``effective_values``.
    """
    pos = Position("R1", "a", "b", 10e3, 20e3, parts=2, combine="series",
                   stock=(4.7e3, 10e3, 22e3))
    rows = position_candidates(pos)
    offers = [(float(sum(r)), tuple(float(x) for x in r)) for r in rows]
    return {
        "part_values": part_values(pos),
        "offers": offers,
        "effective_values": sorted(o[0] for o in offers),
    }


def all_scenarios() -> dict[str, dict[str, Any]]:
    """Every scenario's figures by letter."""
    return {
        "a": divider_48v_to_3v3(),
        "b": divider_70v_to_5v(),
        "c": divider_400v_to_2v5(),
        "d": shunt_20a(),
        "e": limits_met_exactly(),
        "f": package_at_62mw5(),
        "g": max_power_transfer(),
        "h": stock_series_offer(),
    }
