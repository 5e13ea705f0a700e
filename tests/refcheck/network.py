"""Exact DC solver written from scratch: modified nodal analysis (MNA).

A network is a plain description (:class:`Network`):

- ``resistors``: ``(name, node_a, node_b, ohms)``; a resistor's current is counted from
  ``node_a`` to ``node_b``, its voltage is ``V(node_a) - V(node_b)``.
- ``vsources``: ``(name, plus, minus, volts)``, holding ``V(plus) - V(minus) = volts``. Its
  *delivered* current is the current leaving ``plus`` into the external circuit.
- ``isources``: ``(name, from_node, to_node, amps)``: ``amps`` flow through the source from
  ``from_node`` to ``to_node``, i.e. ``amps`` are injected into ``to_node``.
- ``ground``: the reference node (0 V).

Unknowns are the non-ground node voltages and the delivered current ``j`` of every voltage
source. Kirchhoff's current law at node n (currents leaving through resistors equal currents
injected by sources) and one constraint row per voltage source give::

    [ G   -B ] [v]   [i_inj]        G: conductance (Laplacian) matrix of the resistors
    [ B^T  0 ] [j] = [e    ]        B[n, k] = +1 if n is plus of source k, -1 if minus

Three paths solve it: :func:`solve` (numpy float64, batched: a stack of matrices, one per
candidate value set, handed to ``numpy.linalg.solve``), :func:`solve_exact` (fractions,
Gauss-Jordan elimination) and :func:`solve_sympy` (SymPy Rationals, ``Matrix.LUsolve``).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import numpy as np
import sympy

Element = tuple[str, str, str, Any]
"""``(name, node, node, value)``: the shape of every element description."""

DEFAULT_CHUNK = 200_000


def _as_elements(items: Iterable[Sequence[Any]]) -> tuple[Element, ...]:
    out = []
    for item in items:
        name, a, b, value = item
        out.append((str(name), str(a), str(b), value))
    return tuple(out)


@dataclass(frozen=True)
class Network:
    """A DC network of resistors and independent sources (see the module docstring)."""

    resistors: tuple[Element, ...] = ()
    vsources: tuple[Element, ...] = ()
    isources: tuple[Element, ...] = ()
    ground: str = "gnd"
    nodes: tuple[str, ...] = ()
    node_order: tuple[str, ...] = field(init=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "resistors", _as_elements(self.resistors))
        object.__setattr__(self, "vsources", _as_elements(self.vsources))
        object.__setattr__(self, "isources", _as_elements(self.isources))
        names = [e[0] for e in self.resistors + self.vsources + self.isources]
        if len(set(names)) != len(names):
            raise ValueError(f"element names must be unique: {names}")
        order: list[str] = []
        seen = {self.ground}
        for n in list(self.nodes) + [
            x for e in self.resistors + self.vsources + self.isources for x in (e[1], e[2])
        ]:
            if n not in seen:
                seen.add(n)
                order.append(n)
        object.__setattr__(self, "nodes", tuple(self.nodes))
        object.__setattr__(self, "node_order", tuple(order))

    @property
    def resistor_names(self) -> tuple[str, ...]:
        return tuple(r[0] for r in self.resistors)

    @property
    def vsource_names(self) -> tuple[str, ...]:
        return tuple(s[0] for s in self.vsources)

    @property
    def isource_names(self) -> tuple[str, ...]:
        return tuple(s[0] for s in self.isources)

    def with_values(self, values: Mapping[str, Any]) -> Network:
        """A copy with some element values replaced (by element name)."""
        unknown = set(values) - set(
            self.resistor_names + self.vsource_names + self.isource_names
        )
        if unknown:
            raise KeyError(f"unknown elements {sorted(unknown)}")

        def repl(items: tuple[Element, ...]) -> tuple[Element, ...]:
            return tuple((n, a, b, values.get(n, v)) for n, a, b, v in items)

        return Network(
            resistors=repl(self.resistors),
            vsources=repl(self.vsources),
            isources=repl(self.isources),
            ground=self.ground,
            nodes=self.nodes,
        )


# --------------------------------------------------------------------------- float path


def _value_matrix(
    names: tuple[str, ...], defaults: Sequence[Any], override: Any
) -> np.ndarray:
    """Element values as a (batch, k) float array.

    ``override`` may be None (the network's values), an array of shape (k,) or (batch, k)
    in element order, or a mapping name -> scalar or (batch,) array for some elements.
    """
    k = len(names)
    base = np.array([float(v) for v in defaults], dtype=float).reshape(1, k)
    if override is None:
        return base
    if isinstance(override, Mapping):
        unknown = set(override) - set(names)
        if unknown:
            raise KeyError(f"unknown elements {sorted(unknown)}")
        columns = [np.asarray(override.get(n, base[0, i]), dtype=float) for i, n in
                   enumerate(names)]
        batch = max([c.size for c in columns if c.ndim > 0] + [1])
        return np.stack([np.broadcast_to(c.reshape(-1), (batch,)) if c.ndim else
                         np.full(batch, float(c)) for c in columns], axis=1).reshape(batch, k)
    arr = np.asarray(override, dtype=float)
    if arr.ndim == 1:
        arr = arr.reshape(1, -1)
    if arr.ndim != 2 or arr.shape[1] != k:
        raise ValueError(f"expected values of shape (batch, {k}), got {arr.shape}")
    return arr


@dataclass
class Solution:
    """Float solution for a batch of value sets; every array has shape (batch,).

    ``node_voltage`` includes the ground node (zeros). ``resistor_current`` flows from
    ``node_a`` to ``node_b``; ``resistor_voltage`` is ``V(node_a) - V(node_b)``;
    ``resistor_power`` is current x voltage (>= 0). ``vsource_current`` is the delivered
    current (out of plus into the external circuit); ``vsource_power`` = volts x delivered
    current. ``isource_voltage`` is ``V(to) - V(from)``; ``isource_power`` = amps x that.
    ``resistances`` is the (batch, n_resistors) array of values that was solved.
    """

    network: Network
    batch: int
    resistances: np.ndarray
    node_voltage: dict[str, np.ndarray]
    resistor_current: dict[str, np.ndarray]
    resistor_voltage: dict[str, np.ndarray]
    resistor_power: dict[str, np.ndarray]
    vsource_current: dict[str, np.ndarray]
    vsource_power: dict[str, np.ndarray]
    isource_voltage: dict[str, np.ndarray]
    isource_power: dict[str, np.ndarray]

    def v(self, a: str, b: str | None = None) -> np.ndarray:
        """``V(a)`` to ground, or ``V(a) - V(b)``."""
        out = self.node_voltage[a]
        return out if b is None else out - self.node_voltage[b]


def _solve_chunk(
    net: Network, r: np.ndarray, e: np.ndarray, i_src: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Solve one chunk; returns node voltages (batch, n_nodes) and source currents."""
    index = {n: k for k, n in enumerate(net.node_order)}
    n = len(net.node_order)
    m = len(net.vsources)
    batch = max(r.shape[0], e.shape[0], i_src.shape[0])
    a = np.zeros((batch, n + m, n + m))
    rhs = np.zeros((batch, n + m))
    g = 1.0 / r  # (batch or 1, n_res)
    for k, (_, na, nb, _) in enumerate(net.resistors):
        ia, ib = index.get(na), index.get(nb)
        gk = g[:, k]
        if ia is not None:
            a[:, ia, ia] += gk
        if ib is not None:
            a[:, ib, ib] += gk
        if ia is not None and ib is not None:
            a[:, ia, ib] -= gk
            a[:, ib, ia] -= gk
    for k, (_, plus, minus, _) in enumerate(net.vsources):
        row = n + k
        ip, im = index.get(plus), index.get(minus)
        if ip is not None:
            a[:, ip, row] -= 1.0
            a[:, row, ip] += 1.0
        if im is not None:
            a[:, im, row] += 1.0
            a[:, row, im] -= 1.0
        rhs[:, row] = e[:, k]
    for k, (_, frm, to, _) in enumerate(net.isources):
        it, jf = index.get(to), index.get(frm)
        if it is not None:
            rhs[:, it] += i_src[:, k]
        if jf is not None:
            rhs[:, jf] -= i_src[:, k]
    x = np.linalg.solve(a, rhs[..., None])[..., 0]
    return x[:, :n], x[:, n:]


def solve(
    net: Network,
    resistances: Any = None,
    volts: Any = None,
    amps: Any = None,
    chunk: int = DEFAULT_CHUNK,
) -> Solution:
    """Solve the network in float64 for a batch of value sets.

    ``resistances``, ``volts`` and ``amps`` override the resistor, voltage-source and
    current-source values: None (use the network's), an array (k,) or (batch, k) in element
    order, or a mapping name -> scalar or (batch,) array. Batches broadcast against each
    other. Large batches are solved ``chunk`` rows at a time.
    """
    r = _value_matrix(net.resistor_names, [x[3] for x in net.resistors], resistances)
    e = _value_matrix(net.vsource_names, [x[3] for x in net.vsources], volts)
    i_src = _value_matrix(net.isource_names, [x[3] for x in net.isources], amps)
    batch = max(r.shape[0], e.shape[0], i_src.shape[0])
    for arr in (r, e, i_src):
        if arr.shape[0] not in (1, batch):
            raise ValueError("batch sizes do not broadcast")
    r = np.broadcast_to(r, (batch, r.shape[1]))
    if np.any(r <= 0):
        raise ValueError("resistances must be positive")
    e = np.broadcast_to(e, (batch, e.shape[1]))
    i_src = np.broadcast_to(i_src, (batch, i_src.shape[1]))
    n = len(net.node_order)
    volt = np.empty((batch, n))
    cur = np.empty((batch, len(net.vsources)))
    for s in range(0, batch, chunk):
        sl = slice(s, min(s + chunk, batch))
        volt[sl], cur[sl] = _solve_chunk(net, r[sl], e[sl], i_src[sl])
    node_voltage = {name: volt[:, k] for k, name in enumerate(net.node_order)}
    node_voltage[net.ground] = np.zeros(batch)
    rc, rv, rp = {}, {}, {}
    for k, (name, na, nb, _) in enumerate(net.resistors):
        vk = node_voltage[na] - node_voltage[nb]
        ik = vk / r[:, k]
        rv[name], rc[name], rp[name] = vk, ik, vk * ik
    vc = {name: cur[:, k] for k, name in enumerate(net.vsource_names)}
    vp = {name: e[:, k] * cur[:, k] for k, name in enumerate(net.vsource_names)}
    iv, ip = {}, {}
    for k, (name, frm, to, _) in enumerate(net.isources):
        iv[name] = node_voltage[to] - node_voltage[frm]
        ip[name] = i_src[:, k] * iv[name]
    return Solution(net, batch, np.array(r), node_voltage, rc, rv, rp, vc, vp, iv, ip)


# --------------------------------------------------------------------------- exact paths


def to_fraction(x: Any) -> Fraction:
    """An exact rational for ``x``: ints, Fractions, SymPy Rationals and decimal strings are
    taken exactly; a float is read by its shortest decimal repr (so 0.1 means 1/10)."""
    if isinstance(x, Fraction):
        return x
    if isinstance(x, bool):
        raise TypeError("bool is not a value")
    if isinstance(x, int):
        return Fraction(x)
    if isinstance(x, float):
        return Fraction(repr(x))
    if isinstance(x, str):
        return Fraction(x)
    if isinstance(x, sympy.Rational):
        return Fraction(int(x.p), int(x.q))
    if isinstance(x, np.floating | np.integer):
        return to_fraction(x.item())
    raise TypeError(f"cannot make an exact rational from {x!r}")


@dataclass
class ExactSolution:
    """Exact solution (one value set); fields as in :class:`Solution`, values Fractions."""

    network: Network
    node_voltage: dict[str, Fraction]
    resistor_current: dict[str, Fraction]
    resistor_voltage: dict[str, Fraction]
    resistor_power: dict[str, Fraction]
    vsource_current: dict[str, Fraction]
    vsource_power: dict[str, Fraction]
    isource_voltage: dict[str, Fraction]
    isource_power: dict[str, Fraction]

    def v(self, a: str, b: str | None = None) -> Fraction:
        """``V(a)`` to ground, or ``V(a) - V(b)``."""
        out = self.node_voltage[a]
        return out if b is None else out - self.node_voltage[b]


def _exact_values(net: Network, overrides: Mapping[str, Any] | None) -> dict[str, Fraction]:
    vals = {n: v for n, _, _, v in net.resistors + net.vsources + net.isources}
    if overrides:
        unknown = set(overrides) - set(vals)
        if unknown:
            raise KeyError(f"unknown elements {sorted(unknown)}")
        vals.update(overrides)
    return {n: to_fraction(v) for n, v in vals.items()}


def _exact_system(
    net: Network, vals: Mapping[str, Fraction]
) -> tuple[list[list[Fraction]], list[Fraction]]:
    index = {n: k for k, n in enumerate(net.node_order)}
    n = len(net.node_order)
    size = n + len(net.vsources)
    a = [[Fraction(0)] * size for _ in range(size)]
    rhs = [Fraction(0)] * size
    for name, na, nb, _ in net.resistors:
        if vals[name] <= 0:
            raise ValueError("resistances must be positive")
        g = 1 / vals[name]
        ia, ib = index.get(na), index.get(nb)
        if ia is not None:
            a[ia][ia] += g
        if ib is not None:
            a[ib][ib] += g
        if ia is not None and ib is not None:
            a[ia][ib] -= g
            a[ib][ia] -= g
    for k, (name, plus, minus, _) in enumerate(net.vsources):
        row = n + k
        ip, im = index.get(plus), index.get(minus)
        if ip is not None:
            a[ip][row] -= 1
            a[row][ip] += 1
        if im is not None:
            a[im][row] += 1
            a[row][im] -= 1
        rhs[row] = vals[name]
    for name, frm, to, _ in net.isources:
        it, jf = index.get(to), index.get(frm)
        if it is not None:
            rhs[it] += vals[name]
        if jf is not None:
            rhs[jf] -= vals[name]
    return a, rhs


def _gauss_jordan(a: list[list[Fraction]], rhs: list[Fraction]) -> list[Fraction]:
    """Solve a x = rhs exactly (Gauss-Jordan, first non-zero pivot)."""
    size = len(rhs)
    m = [[*row, rhs[i]] for i, row in enumerate(a)]
    for col in range(size):
        pivot = next((r for r in range(col, size) if m[r][col] != 0), None)
        if pivot is None:
            raise ZeroDivisionError("singular network matrix (floating node or source loop)")
        m[col], m[pivot] = m[pivot], m[col]
        p = m[col][col]
        m[col] = [x / p for x in m[col]]
        for r in range(size):
            if r != col and m[r][col] != 0:
                f = m[r][col]
                m[r] = [x - f * y for x, y in zip(m[r], m[col], strict=True)]
    return [m[i][size] for i in range(size)]


def _exact_solution(
    net: Network, vals: Mapping[str, Fraction], x: Sequence[Fraction]
) -> ExactSolution:
    n = len(net.node_order)
    node_voltage = {name: x[k] for k, name in enumerate(net.node_order)}
    node_voltage[net.ground] = Fraction(0)
    rc, rv, rp = {}, {}, {}
    for name, na, nb, _ in net.resistors:
        vk = node_voltage[na] - node_voltage[nb]
        rv[name], rc[name], rp[name] = vk, vk / vals[name], vk * vk / vals[name]
    vc = {name: x[n + k] for k, name in enumerate(net.vsource_names)}
    vp = {name: vals[name] * vc[name] for name in net.vsource_names}
    iv, ip = {}, {}
    for name, frm, to, _ in net.isources:
        iv[name] = node_voltage[to] - node_voltage[frm]
        ip[name] = vals[name] * iv[name]
    return ExactSolution(net, node_voltage, rc, rv, rp, vc, vp, iv, ip)


def solve_exact(net: Network, values: Mapping[str, Any] | None = None) -> ExactSolution:
    """Solve exactly with :class:`fractions.Fraction` (Gauss-Jordan elimination).

    ``values`` optionally overrides element values by name. Values are converted by
    :func:`to_fraction` (a float is read by its shortest decimal repr).
    """
    vals = _exact_values(net, values)
    a, rhs = _exact_system(net, vals)
    return _exact_solution(net, vals, _gauss_jordan(a, rhs))


def solve_sympy(net: Network, values: Mapping[str, Any] | None = None) -> ExactSolution:
    """Solve exactly with SymPy Rationals (``Matrix.LUsolve``); results as Fractions.

    A second, independent exact path to cross-check :func:`solve_exact`.
    """
    vals = _exact_values(net, values)
    a, rhs = _exact_system(net, vals)
    am = sympy.Matrix([[sympy.Rational(x.numerator, x.denominator) for x in row] for row in a])
    bm = sympy.Matrix([sympy.Rational(x.numerator, x.denominator) for x in rhs])
    sol = am.LUsolve(bm)
    return _exact_solution(net, vals, [to_fraction(sympy.nsimplify(s)) for s in sol])


# --------------------------------------------------------------------------- seen resistance


def _component(net: Network, start: str) -> set[str]:
    """Nodes joined to ``start`` through resistors and voltage sources."""
    adj: dict[str, set[str]] = {}
    for _, a, b, _ in net.resistors + net.vsources:
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)
    seen = {start}
    todo = [start]
    while todo:
        for nxt in adj.get(todo.pop(), ()):
            if nxt not in seen:
                seen.add(nxt)
                todo.append(nxt)
    return seen


def _zeroed_test_network(net: Network, a: str, b: str) -> tuple[Network, list[int]] | None:
    """Sources zeroed (voltage sources shorted, current sources opened), reference ``b``,
    restricted to b's component, with a 1 A test source driven from b into a."""
    comp = _component(net, b)
    if a not in comp:
        return None
    keep = [k for k, r in enumerate(net.resistors) if r[1] in comp]
    test = Network(
        resistors=[net.resistors[k] for k in keep],
        vsources=[(n, p, m, 0) for n, p, m, _ in net.vsources if p in comp],
        isources=[("__test__", b, a, 1)],
        ground=b,
    )
    return test, keep


def seen_resistance(
    net: Network, a: str, b: str, resistances: Any = None, exact: bool = False
) -> Any:
    """Resistance seen between nodes ``a`` and ``b`` with independent sources zeroed.

    Voltage sources are shorted and current sources opened; a 1 A test current is driven
    into ``a`` and out of ``b`` and ``V(a) - V(b)`` is the answer. Returns a (batch,) float
    array (``resistances`` as for :func:`solve`), or with ``exact=True`` a Fraction
    (``resistances`` then a mapping name -> value). ``inf`` when a and b are not joined.
    """
    if a == b:
        return Fraction(0) if exact else np.zeros(
            _value_matrix(net.resistor_names, [x[3] for x in net.resistors], resistances)
            .shape[0])
    built = _zeroed_test_network(net, a, b)
    if exact:
        if built is None:
            return float("inf")
        test, keep = built
        vals = dict(resistances or {})
        vals = {k: v for k, v in vals.items() if k in test.resistor_names}
        return solve_exact(test, vals).v(a)
    r = _value_matrix(net.resistor_names, [x[3] for x in net.resistors], resistances)
    if built is None:
        return np.full(r.shape[0], np.inf)
    test, keep = built
    return solve(test, r[:, keep]).v(a)
