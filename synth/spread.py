"""Spread of every target and part stress over tolerance, temperature and supply variation.

Three methods, all through the batched mesh solve:

* **worst case** (extreme value analysis): every target of a linear network
  is linear-fractional, hence monotone, in each resistance and source, so its
  extremes over the tolerance box lie at the box's vertices; all vertices are
  solved (up to :data:`EXACT_VARIABLES` varying quantities) and the corner
  giving each extreme is reported.  Dissipation is not monotone (it peaks
  where a resistor equals the Thevenin resistance it sees), so each vertex
  pair along a resistor's own range is also checked for that interior peak;
  a sound upper bound is given beside the attained maximum.
* **root-sum-square** from normalised sensitivities (% change of the target
  per % change of each part and source), each term the sensitivity times the
  quantity's relative half-width.
* **Monte Carlo**: seeded samples of every tolerance (uniform, or normal with
  tolerance = 3σ), each part's TCR and a shared ambient temperature; yield is
  the share of samples inside every target window and part limit.

Temperature: a part's resistance is R·(1 + δ)·(1 + a·(T − 25 °C)) with δ its
tolerance deviation and a its temperature coefficient, anywhere within ±TCR.
A controlled source with a gain range (a transistor's β from least to
greatest) varies over that range; Monte Carlo draws it uniformly within it.

References
----------
Worst-case circuit analysis: extreme value analysis Δy = Σ|∂y/∂xᵢ|Δxᵢ and
root-sum-square σ_y² = Σ(∂y/∂xᵢ)²σᵢ² (RIAC Desk Reference "Worst Case
Analysis"; W. M. Smith, "Worst Case Circuit Analysis – An Overview", RAMS).
"""

from __future__ import annotations

__all__ = ["EXACT_VARIABLES", "RANKING_VARIABLES", "REFERENCE_C", "PartSpread", "SpreadResult",
           "SpreadSettings", "TargetSpread", "WorstCase", "analyse_spread"]

from dataclasses import dataclass
from typing import Any

import numpy as np

from synth.derating import allowed_power
from synth.design import Design
from synth.errors import DesignError
from synth.evaluate import Evaluator, SourceValues

EXACT_VARIABLES = 16
"""Up to this many varying quantities every vertex of the tolerance box is solved."""
RANKING_VARIABLES = 10
"""Ranking candidates by worst case solves every vertex per candidate: at most this many
varying quantities (1024 vertices)."""
REFERENCE_C = 25.0
"""Temperature at which nominal values hold, °C (the usual TCR reference)."""


@dataclass(frozen=True)
class SpreadSettings:
    """How to analyse spread.

    Attributes
    ----------
    samples : int
        Monte Carlo samples (0 skips Monte Carlo).
    distribution : {"uniform", "normal"}
        Shape of each tolerance; normal takes tolerance = 3σ.
    seed : int
        Seed of the random generator (results repeat for the same seed).
    """

    samples: int = 100_000
    distribution: str = "uniform"
    seed: int = 1


@dataclass(frozen=True)
class TargetSpread:
    """Spread of one target.

    Attributes
    ----------
    label : str
    goal : float or None
        The target's ``equals`` value.
    nominal : float
    worst_low, worst_high : float
        Extremes over the tolerance box.
    low_corner, high_corner : dict of str to str
        Which end of each varying quantity gives each extreme (``"+"``/``"-"``).
    exact : bool
        True when every vertex was solved (else the corners come from the
        sensitivity signs).
    rss : float
        Root-sum-square deviation, as a fraction of the nominal value.
    sensitivities : dict of str to float
        % change of the target per % change of each quantity.
    mc_mean, mc_std : float or None
        Monte Carlo mean and standard deviation (None without samples).
    mc_values : numpy.ndarray or None
        The Monte Carlo samples themselves.
    inside : float or None
        Share of samples inside this target's window.
    """

    label: str
    goal: float | None
    nominal: float
    worst_low: float
    worst_high: float
    low_corner: dict[str, str]
    high_corner: dict[str, str]
    exact: bool
    rss: float
    sensitivities: dict[str, float]
    mc_mean: float | None
    mc_std: float | None
    mc_values: np.ndarray | None
    inside: float | None


@dataclass(frozen=True)
class PartSpread:
    """Worst-case stress of one resistor.

    Attributes
    ----------
    ref : str
    nominal_power : float
        W at nominal values.
    worst_power : float
        Largest dissipation found over the tolerance box (vertices and the
        interior peaks along the part's own range), W.
    worst_power_bound : float
        A sound upper bound of the dissipation over the box, W.
    allowed_power_hot : float or None
        Allowed dissipation at the hottest ambient of the temperature range
        (derated, times the margin), W.
    utilization : float or None
        ``worst_power / allowed_power_hot``.
    worst_voltage : float
        Largest voltage across the part over the box, V.
    """

    ref: str
    nominal_power: float
    worst_power: float
    worst_power_bound: float
    allowed_power_hot: float | None
    utilization: float | None
    worst_voltage: float


@dataclass(frozen=True)
class SpreadResult:
    """Spread of a design at given values.

    Attributes
    ----------
    variables : tuple of str
        The varying quantities (references), in order.
    targets : tuple of TargetSpread
    parts : tuple of PartSpread
    yield_fraction : float or None
        Share of Monte Carlo samples meeting every window and limit.
    settings : SpreadSettings
    temperature_c : tuple of float
        Operating range used, °C.
    """

    variables: tuple[str, ...]
    targets: tuple[TargetSpread, ...]
    parts: tuple[PartSpread, ...]
    yield_fraction: float | None
    settings: SpreadSettings
    temperature_c: tuple[float, float]

    @property
    def worst_error(self) -> float:
        """Largest worst-case relative error over targets with a non-zero goal (0 if none)."""
        errors = [max(abs(t.worst_low - t.goal), abs(t.worst_high - t.goal)) / abs(t.goal)
                  for t in self.targets if t.goal]
        return max(errors, default=0.0)

    @property
    def rss_error(self) -> float:
        """Largest root-sum-square deviation over targets with a goal, as a fraction."""
        return max((t.rss for t in self.targets if t.goal), default=0.0)


class _Variables:
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


class WorstCase:
    """Exact worst-case target ranges of many candidates at once (for ranking).

    Parameters
    ----------
    design : Design
    evaluator : Evaluator

    Raises
    ------
    DesignError
        When more than :data:`RANKING_VARIABLES` quantities vary.
    """

    def __init__(self, design: Design, evaluator: Evaluator):
        self.design, self.ev = design, evaluator
        self.var = _Variables(design, evaluator)
        if len(self.var) > RANKING_VARIABLES:
            raise DesignError(
                f"{design.origin}: {len(self.var)} quantities have a tolerance or TCR; ranking "
                f"by worst case supports at most {RANKING_VARIABLES}; rank by nominal error "
                "or give fixed parts zero tolerance"
            )
        bits = _corners(len(self.var))
        self.factors = np.where(bits, self.var.high[None, :], self.var.low[None, :])

    def ranges(self, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(low, high)`` of every target over each candidate's tolerance box, ``(M, T)``."""
        n_v = len(self.factors)
        m = len(r)
        low = np.empty((m, len(self.design.targets)))
        high = np.empty_like(low)
        block = max(1, (1 << 17) // n_v)
        src = self.ev.nominal_sources
        for start in range(0, m, block):
            rows = r[start:start + block]
            count = len(rows)
            r_all = np.repeat(rows, n_v, axis=0)
            tiled = np.tile(self.factors, (count, 1))
            r_all, sources = self.var.apply(tiled, np.zeros(r.shape[1]), src, base=r_all)
            with np.errstate(all="ignore"):
                values = self.ev.evaluate(r_all, sources).targets.reshape(count, n_v, -1)
            low[start:start + count] = values.min(axis=1)
            high[start:start + count] = values.max(axis=1)
        return low, high


def _corners(n: int) -> np.ndarray:
    return ((np.arange(2 ** n)[:, None] >> np.arange(n)[None, :]) & 1).astype(bool)


def _window(design: Design, values: np.ndarray) -> np.ndarray:
    inside = np.ones(values.shape, dtype=bool)
    for j, t in enumerate(design.targets):
        low, high = t.bounds
        inside[:, j] = (values[:, j] >= low) & (values[:, j] <= high)
    return inside


def analyse_spread(design: Design, values: dict[str, float] | None = None,
                   settings: SpreadSettings | None = None,
                   evaluator: Evaluator | None = None) -> SpreadResult:
    """Worst case, root-sum-square and Monte Carlo spread of a design.

    Parameters
    ----------
    design : Design
    values : dict of str to float, optional
        Resistance of each resistor position by reference (ohm); the design's
        own values by default.
    settings : SpreadSettings, optional
    evaluator : Evaluator, optional
        Reused when given.

    Returns
    -------
    SpreadResult

    Examples
    --------
    >>> from synth.design import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tcr": "0 ppm/C"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tcr": "0 ppm/C"}],
    ...     "target": [{"voltage": "out", "equals": "5 V"}]})
    >>> s = analyse_spread(d, settings=SpreadSettings(samples=0)).targets[0]
    >>> round(s.worst_low, 4), round(s.worst_high, 4), round(s.rss, 5)
    (4.95, 5.05, 0.00707)
    """
    settings = settings or SpreadSettings()
    ev = evaluator or Evaluator(design)
    given = dict(values or {})
    r0 = np.array([given.get(r.ref, r.value if r.value is not None else np.nan)
                   for r in design.resistors], dtype=float)
    src = ev.nominal_sources
    var = _Variables(design, ev)
    n = len(var)
    nominal = ev.evaluate(r0[None, :])
    nominal_targets = nominal.targets[0]

    # sensitivities by central differences, one batch
    step = 1e-6
    factors = np.ones((2 * n, n))
    for i in range(n):
        factors[2 * i, i] += step
        factors[2 * i + 1, i] -= step
    if n:
        r_s, s_s = var.apply(factors, r0, src)
        probe = ev.evaluate(r_s, s_s).targets
        with np.errstate(all="ignore"):
            slope = (probe[0::2] - probe[1::2]) / (2 * step)  # d y / (d x / x)
            sens = slope / nominal_targets[None, :]
    else:
        sens = np.zeros((0, len(design.targets)))

    # worst case over the vertices (or sensitivity-sign corners when too many)
    exact = n <= EXACT_VARIABLES
    if exact:
        bits = _corners(n)
    else:
        up = np.nan_to_num(sens) >= 0
        bits = np.concatenate([up.T, ~up.T]) if len(design.targets) else np.zeros((0, n), bool)
    vertex_factors = np.where(bits, var.high[None, :], var.low[None, :])
    r_v, s_v = var.apply(vertex_factors, r0, src)
    vertices = ev.evaluate(r_v, s_v)

    targets = []
    for j, t in enumerate(design.targets):
        column = vertices.targets[:, j]
        lo_at, hi_at = int(np.nanargmin(column)), int(np.nanargmax(column))

        def corner(at: int) -> dict[str, str]:
            return {name: "+" if bits[at, i] else "-" for i, name in enumerate(var.names)}

        widths = np.concatenate([var.tolerance, var.drift])
        both = np.concatenate([sens[:, j], sens[:, j]]) if n else np.zeros(0)
        rss = float(np.sqrt(np.nansum((both * widths) ** 2))) if n else 0.0
        targets.append(TargetSpread(
            label=t.label, goal=t.equals, nominal=float(nominal_targets[j]),
            worst_low=float(min(column[lo_at], nominal_targets[j])),
            worst_high=float(max(column[hi_at], nominal_targets[j])),
            low_corner=corner(lo_at), high_corner=corner(hi_at), exact=exact, rss=rss,
            sensitivities={name: float(sens[i, j]) for i, name in enumerate(var.names)},
            mc_mean=None, mc_std=None, mc_values=None, inside=None,
        ))

    parts = _part_spread(design, ev, var, r0, bits if exact else None, vertices, nominal,
                         r_v)
    yield_fraction = None
    if settings.samples > 0:
        targets, yield_fraction = _monte_carlo(design, ev, var, r0, src, settings, targets)
    return SpreadResult(variables=var.names, targets=tuple(targets), parts=tuple(parts),
                        yield_fraction=yield_fraction, settings=settings,
                        temperature_c=design.temperature_c)


def _part_spread(design: Design, ev: Evaluator, var: _Variables, r0: np.ndarray,
                 bits: np.ndarray | None, vertices: object, nominal: object,
                 r_v: np.ndarray) -> list[PartSpread]:
    hot_c = max(design.temperature_c[1], design.ambient_c)
    current = vertices.solution.branch_currents[:, : len(r0)]  # type: ignore[attr-defined]
    volts = vertices.resistor_voltage  # type: ignore[attr-defined]
    out = []
    column_of = {k: c for c, (group, k) in enumerate(var.kind) if group == "resistor"}
    for k, resistor in enumerate(design.resistors):
        power = current[:, k] ** 2 * r_v[:, k]
        worst = float(np.max(power))
        # without every vertex solved there is no sound bound to give
        bound = worst if bits is not None else np.inf
        if bits is not None and k in column_of and len(power) > 1:
            c = column_of[k]
            lo_rows = np.flatnonzero(~bits[:, c])
            hi_rows = lo_rows + (1 << c)
            r_lo, r_hi = r_v[lo_rows, k], r_v[hi_rows, k]
            i_lo, i_hi = current[lo_rows, k], current[hi_rows, k]
            with np.errstate(all="ignore"):
                # I = V_th / (R_th + R): 1/I is linear in R
                slope = (1 / i_hi - 1 / i_lo) / (r_hi - r_lo)
                v_th = 1 / slope
                r_th = (1 / i_lo) / slope - r_lo
                inside = (r_th > r_lo) & (r_th < r_hi) & np.isfinite(r_th)
                peak = np.where(inside, v_th ** 2 / (4 * r_th), 0.0)
                available = np.abs(v_th) * np.abs(v_th / r_th) / 4
            worst = max(worst, float(np.nanmax(peak)) if peak.size else worst)
            # two sound bounds: the available power V_oc I_sc / 4 with both at their box
            # extremes, and (I monotone in R) the largest I² at either end times R at its
            # high end; the tighter one is given
            by_available = (float(np.nanmax(np.abs(v_th)) * np.nanmax(np.abs(v_th / r_th)) / 4)
                            if np.all(np.isfinite(available)) else np.inf)
            by_current = float(np.max(np.maximum(i_lo ** 2, i_hi ** 2) * r_hi))
            bound = max(worst, min(by_available, by_current))
        rating = design.rating(resistor)
        allowed_hot = (None if rating is None
                       else float(allowed_power(rating, hot_c, design.margin_frac)))
        out.append(PartSpread(
            ref=resistor.ref,
            nominal_power=float(nominal.resistor_power[0, k]),  # type: ignore[attr-defined]
            worst_power=worst, worst_power_bound=bound, allowed_power_hot=allowed_hot,
            utilization=None if not allowed_hot else worst / allowed_hot,
            worst_voltage=float(np.max(volts[:, k])),
        ))
    return out


_MC_BLOCK = 1 << 15
"""Samples drawn and solved per block: arrays stay in cache; the random stream is drawn
block by block in a fixed order, so a seed gives the same samples every time."""


def _monte_carlo(design: Design, ev: Evaluator, var: _Variables, r0: np.ndarray,
                 src: SourceValues, settings: SpreadSettings, targets: list[TargetSpread]
                 ) -> tuple[list[TargetSpread], float]:
    rng = np.random.default_rng(settings.seed)
    total, n = settings.samples, len(var)
    low_c, high_c = design.temperature_c
    tcr = np.array([design.resistors[k].tcr if g == "resistor" else 0.0
                    for g, k in var.kind])
    ratings = [(k, rating) for k, r in enumerate(design.resistors)
               if (rating := design.rating(r)) is not None]
    gain_columns = [c for c, (group, _) in enumerate(var.kind) if group == "gain"]
    values = np.empty((total, len(design.targets)))
    inside = np.empty((total, len(design.targets)), dtype=bool)
    ok = np.empty(total, dtype=bool)

    def draw(m: int, width: np.ndarray) -> np.ndarray:
        if settings.distribution == "normal":
            out = rng.standard_normal((m, len(width)))
            out *= width / 3
        else:
            out = rng.random((m, len(width)))
            out *= 2 * width
            out -= width
        return out

    for start in range(0, total, _MC_BLOCK):
        m = min(_MC_BLOCK, total - start)
        rows = slice(start, start + m)
        temperature = (rng.uniform(low_c, high_c, m) if high_c > low_c
                       else np.full(m, low_c))
        factors = draw(m, var.tolerance)
        factors += 1.0
        for column in gain_columns:  # a gain range (a transistor's beta): uniform within it
            factors[:, column] = rng.uniform(var.low[column], var.high[column], m)
        if n:
            # each part's temperature coefficient lies within its ±TCR (a normal spread
            # reads the TCR limit as 3σ, like a tolerance)
            drift = draw(m, tcr)
            drift *= (temperature - REFERENCE_C)[:, None]
            drift += 1.0
            factors *= drift
        r, s = var.apply(factors, r0, src)
        result = ev.evaluate(r, s)
        values[rows] = result.targets
        inside[rows] = _window(design, result.targets) & np.isfinite(result.targets)
        good = inside[rows].all(axis=1)
        for k, rating in ratings:
            allowed = allowed_power(rating, temperature, design.margin_frac)
            good &= result.resistor_power[:, k] <= allowed
            good &= (result.resistor_voltage[:, k]
                     <= rating.limiting_voltage_v * design.voltage_margin_frac)
        ok[rows] = good
    updated = []
    for j, t in enumerate(targets):
        drawn = values[:, j]
        updated.append(TargetSpread(
            **{**t.__dict__, "mc_mean": float(np.mean(drawn)), "mc_std": float(np.std(drawn)),
               "mc_values": drawn, "inside": float(np.mean(inside[:, j]))}))
    return updated, float(np.mean(ok))
