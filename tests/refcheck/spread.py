"""Spread of a network with fixed values over its tolerance box.

- :func:`worst_case`: every target's extremes by solving every vertex of the tolerance box
  (each toleranced resistor and source at ``value * (1 ± tolerance)``). A node voltage is
  bilinear, hence monotone, in each resistance and linear in each source (FACTS 5, "Vertex
  extremes"), so the vertex extremes are the box extremes for voltages, currents and ratios.
- :func:`part_extremes`: each resistor's worst dissipation, voltage and current. Dissipation
  is NOT vertex-bounded (FACTS 5): a resistor's power peaks where it equals the Thevenin
  resistance it sees. For each resistor its power is scanned along its own range on a fine
  grid at every vertex of the other quantities, and the best grid point is refined by
  golden-section search. (At fixed own value the part's current is monotone in every other
  resistance and linear in every source, so its power there is largest at a vertex of the
  others; along its own value ``P = Vth² R / (Rth + R)²`` is unimodal.)
- :func:`monte_carlo`: seeded Monte Carlo yield (each toleranced value uniform within its
  tolerance): share of samples with every target in its window and every rated physical
  part within its allowed power and voltage; with a 95 % Clopper-Pearson interval.
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy import stats

from . import ratings
from .network import Network, Solution, solve
from .targets import SLACK, Target, target_value, within_window

MAX_VERTEX_QUANTITIES = 16
GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


def _toleranced(net: Network, tolerances: Mapping[str, float]) -> list[str]:
    """Names of elements with a non-zero tolerance, in network order."""
    order = net.resistor_names + net.vsource_names + net.isource_names
    unknown = set(tolerances) - set(order)
    if unknown:
        raise KeyError(f"unknown elements {sorted(unknown)}")
    return [n for n in order if tolerances.get(n, 0.0) != 0.0]


def vertex_signs(n: int) -> np.ndarray:
    """All 2**n sign patterns, shape (2**n, n), entries -1.0 / +1.0."""
    if n == 0:
        return np.zeros((1, 0))
    return np.array(list(itertools.product((-1.0, 1.0), repeat=n)))


def _values_for(
    net: Network, names: Sequence[str], factors: np.ndarray
) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray], dict[str, np.ndarray]]:
    """Override mappings for :func:`solve` with ``value * factors[:, j]`` for names[j]."""
    base = {n: float(v) for n, _, _, v in net.resistors + net.vsources + net.isources}
    r: dict[str, np.ndarray] = {}
    e: dict[str, np.ndarray] = {}
    i: dict[str, np.ndarray] = {}
    for j, n in enumerate(names):
        col = base[n] * factors[:, j]
        if n in net.resistor_names:
            r[n] = col
        elif n in net.vsource_names:
            e[n] = col
        else:
            i[n] = col
    return r, e, i


def _solve_factors(net: Network, names: Sequence[str], factors: np.ndarray) -> Solution:
    r, e, i = _values_for(net, names, factors)
    batch = factors.shape[0]
    # make every override a full batch so that the solution has `batch` rows
    if not r and not e and not i:
        r = {net.resistor_names[0]: np.full(batch, float(net.resistors[0][3]))}
    return solve(net, r or None, e or None, i or None)


@dataclass
class TargetSpread:
    """Extremes of one target over the tolerance box (every vertex solved)."""

    label: str
    nominal: float
    low: float
    high: float
    low_corner: dict[str, str]
    high_corner: dict[str, str]


def worst_case(
    net: Network,
    tolerances: Mapping[str, float],
    targets: Sequence[Target],
    groups: Mapping[str, tuple[str, tuple[str, ...]]] | None = None,
) -> dict[str, TargetSpread]:
    """Every target's nominal value and extremes over all vertices of the tolerance box.

    ``tolerances``: relative tolerance by element name (resistor or source). The corners
    give each quantity's end (``"+"``/``"-"``) at the extreme.
    """
    names = _toleranced(net, tolerances)
    if len(names) > MAX_VERTEX_QUANTITIES:
        raise ValueError(f"more than {MAX_VERTEX_QUANTITIES} toleranced quantities")
    signs = vertex_signs(len(names))
    tol = np.array([tolerances[n] for n in names])
    factors = np.vstack([np.ones((1, len(names))), 1.0 + signs * tol])
    sol = _solve_factors(net, names, factors)
    out = {}
    for t in targets:
        v = target_value(t, sol, groups)
        nominal, vert = float(v[0]), v[1:]
        lo, hi = int(np.argmin(vert)), int(np.argmax(vert))

        def corner(k: int) -> dict[str, str]:
            return {n: "+" if signs[k, j] > 0 else "-" for j, n in enumerate(names)}

        out[t.label] = TargetSpread(t.label, nominal, float(vert[lo]), float(vert[hi]),
                                    corner(lo), corner(hi))
    return out


@dataclass
class PartSpread:
    """One resistor's extremes over the tolerance box.

    ``vertex_power``: largest power at a vertex. ``worst_power``: largest power over the
    box, interior peaks included, with ``worst_power_at`` the values (ohm, V, A by element
    name) where it occurs. ``worst_voltage``/``worst_current``: largest magnitudes (vertex).
    """

    nominal_power: float
    vertex_power: float
    worst_power: float
    worst_power_at: dict[str, float]
    worst_voltage: float
    worst_current: float


def part_extremes(
    net: Network,
    tolerances: Mapping[str, float],
    scan_points: int = 201,
    golden_iterations: int = 80,
) -> dict[str, PartSpread]:
    """Each resistor's nominal and worst dissipation, worst voltage and current.

    Power: for each resistor, a ``scan_points`` grid along its own tolerance range at every
    vertex of the other toleranced quantities, then golden-section refinement around the
    best grid point (``golden_iterations`` steps); vertices included.
    """
    names = _toleranced(net, tolerances)
    if len(names) > MAX_VERTEX_QUANTITIES:
        raise ValueError(f"more than {MAX_VERTEX_QUANTITIES} toleranced quantities")
    tol = np.array([tolerances[n] for n in names])
    signs = vertex_signs(len(names))
    factors = np.vstack([np.ones((1, len(names))), 1.0 + signs * tol])
    vsol = _solve_factors(net, names, factors)
    base = {n: float(v) for n, _, _, v in net.resistors + net.vsources + net.isources}
    out = {}
    for rname in net.resistor_names:
        p_vert = vsol.resistor_power[rname]
        nominal = float(p_vert[0])
        k_vert = int(np.argmax(p_vert[1:])) + 1
        best_p = float(p_vert[k_vert])
        best_at = {n: base[n] * float(factors[k_vert, j]) for j, n in enumerate(names)}
        if rname in names:
            j = names.index(rname)
            others = [n for n in names if n != rname]
            o_tol = np.array([tolerances[n] for n in others])
            o_fac = 1.0 + vertex_signs(len(others)) * o_tol  # (nv, n-1)
            nv = o_fac.shape[0]
            grid = np.linspace(1.0 - tol[j], 1.0 + tol[j], scan_points)

            def power(own: np.ndarray, of: np.ndarray = o_fac, oth: list = others,
                      rn: str = rname) -> np.ndarray:
                """Power of `rn` for own factors `own` (one per row of `of`)."""
                fac = np.concatenate([of, own[:, None]], axis=1)
                return _solve_factors(net, [*oth, rn], fac).resistor_power[rn]

            g_all = np.tile(grid, nv)
            of_all = np.repeat(o_fac, scan_points, axis=0)
            p_grid = power(g_all, of_all).reshape(nv, scan_points)
            ig = np.argmax(p_grid, axis=1)
            a = grid[np.maximum(ig - 1, 0)]
            b = grid[np.minimum(ig + 1, scan_points - 1)]
            c = b - GOLDEN * (b - a)
            d = a + GOLDEN * (b - a)
            fc, fd = power(c), power(d)
            for _ in range(golden_iterations):
                left = fc >= fd  # keep [a, d] when f(c) >= f(d), else [c, b]
                a_new = np.where(left, a, c)
                b_new = np.where(left, d, b)
                c_new = np.where(left, b_new - GOLDEN * (b_new - a_new), d)
                d_new = np.where(left, c, a_new + GOLDEN * (b_new - a_new))
                f_new = power(np.where(left, c_new, d_new))
                fc, fd = np.where(left, f_new, fd), np.where(left, fc, f_new)
                a, b, c, d = a_new, b_new, c_new, d_new
            x_best = (a + b) / 2.0
            p_best = power(x_best)
            cand_p = np.concatenate([p_grid.max(axis=1), p_best])
            cand_x = np.concatenate([grid[ig], x_best])
            cand_v = np.concatenate([np.arange(nv), np.arange(nv)])
            m = int(np.argmax(cand_p))
            if cand_p[m] > best_p * (1 + 1e-12):  # ignore rounding-level "gains"
                best_p = float(cand_p[m])
                best_at = {n: base[n] * float(o_fac[cand_v[m], q])
                           for q, n in enumerate(others)}
                best_at[rname] = base[rname] * float(cand_x[m])
        out[rname] = PartSpread(
            nominal_power=nominal,
            vertex_power=float(p_vert[1:].max()),
            worst_power=best_p,
            worst_power_at=best_at,
            worst_voltage=float(np.abs(vsol.resistor_voltage[rname][1:]).max()),
            worst_current=float(np.abs(vsol.resistor_current[rname][1:]).max()),
        )
    return out


def clopper_pearson(
    successes: int, samples: int, confidence: float = 0.95
) -> tuple[float, float]:
    """Exact (Clopper-Pearson) binomial interval for ``successes`` out of ``samples``."""
    alpha = 1.0 - confidence
    k, n = successes, samples
    lo = 0.0 if k == 0 else float(stats.beta.ppf(alpha / 2, k, n - k + 1))
    hi = 1.0 if k == n else float(stats.beta.ppf(1 - alpha / 2, k + 1, n - k))
    return lo, hi


@dataclass
class YieldResult:
    """Monte Carlo outcome: ``yield_`` = successes / samples, its 95 % Clopper-Pearson
    interval, and per-target shares inside their windows."""

    yield_: float
    successes: int
    samples: int
    ci_low: float
    ci_high: float
    inside: dict[str, float]
    seed: int


def monte_carlo(
    net: Network,
    tolerances: Mapping[str, float],
    targets: Sequence[Target],
    part_packages: Mapping[str, str] | None = None,
    *,
    samples: int = 20_000,
    seed: int = 20240601,
    ambient_c: float = ratings.AMBIENT_C,
    power_use: float = ratings.POWER_USE,
    voltage_use: float = ratings.VOLTAGE_USE,
    check_power: bool = True,
    check_voltage: bool = True,
    use_windows: bool = True,
    groups: Mapping[str, tuple[str, tuple[str, ...]]] | None = None,
    confidence: float = 0.95,
    packages_csv: Path | str = ratings.PACKAGES_CSV,
) -> YieldResult:
    """Seeded Monte Carlo yield, every toleranced value uniform in ``value * (1 ± tol)``.

    A sample succeeds when every target is in its window (unless ``use_windows`` is False)
    and every part named in ``part_packages`` is within its allowed power and voltage (each
    switchable) at ``ambient_c``; limits compared with relative slack 1e-9.
    """
    names = _toleranced(net, tolerances)
    tol = np.array([tolerances[n] for n in names])
    rng = np.random.default_rng(seed)
    u = rng.uniform(-1.0, 1.0, size=(samples, len(names)))
    factors = 1.0 + u * tol if names else np.ones((samples, 0))
    sol = _solve_factors(net, names, factors)
    ok = np.ones(samples, dtype=bool)
    inside = {}
    for t in targets:
        w = within_window(target_value(t, sol, groups), t)
        inside[t.label] = float(w.mean())
        if use_windows:
            ok &= w
    for part, pkg_name in (part_packages or {}).items():
        pkg = ratings.get_package(pkg_name, packages_csv)
        if check_power:
            ap = ratings.allowed_power(pkg, ambient_c, power_use)
            ok &= sol.resistor_power[part] <= ap * (1 + SLACK)
        if check_voltage:
            av = ratings.allowed_voltage(pkg, voltage_use)
            ok &= np.abs(sol.resistor_voltage[part]) <= av * (1 + SLACK)
    k = int(ok.sum())
    lo, hi = clopper_pearson(k, samples, confidence)
    return YieldResult(k / samples, k, samples, lo, hi, inside, seed)
