"""Settings and result records of the spread analysis.
"""

from __future__ import annotations

__all__ = ["PartSpread", "SampleHistogram", "SpreadResult", "SpreadSettings", "TargetSpread"]

import math
from dataclasses import dataclass, field

import numpy as np


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
    keep_samples : bool
        Keep each target's first samples (``TargetSpread.mc_values``, for plots
        and notebooks), at most ``kept_samples`` of them.  Off by default: the
        statistics, histograms and the yield are accumulated block by block, so
        memory stays bounded at any sample count.
    sample_budget : int
        On a network of more than :data:`synth.circuit.sparse.SPARSE_ABOVE`
        resistors (each sample a sparse solve of the whole network), the most
        samples times resistors the Monte Carlo runs: a larger ``samples`` is
        cut to ``sample_budget // resistors`` (at least 1,000), and
        :attr:`SpreadResult.samples_run` and the reports say so.  The budget
        bounds the time of a run; memory is bounded at any sample count.
    kept_samples : int
        The most samples kept per target with ``keep_samples`` (the first ones
        drawn, in the run's order).
    """

    samples: int = 100_000
    distribution: str = "uniform"
    seed: int = 1
    keep_samples: bool = False
    sample_budget: int = 10_000_000
    kept_samples: int = 100_000


@dataclass(frozen=True)
class SampleHistogram:
    """Counts of one target's Monte Carlo samples in equal bins over a range fixed beforehand.

    Attributes
    ----------
    low, high : float
        The range, in the target's unit: the worst-case span, 2 % wider at each end.
    counts : tuple of int
        Samples in each equal bin, ``[edge_k, edge_k+1)`` (the last one closed).
    below, above : int
        Samples under ``low`` and over ``high`` (possible when the worst case is not exact).
    undefined : int
        Samples where the target is not defined (NaN).
    """

    low: float
    high: float
    counts: tuple[int, ...]
    below: int = 0
    above: int = 0
    undefined: int = 0

    @property
    def bin_width(self) -> float:
        """Width of one bin, in the target's unit."""
        return (self.high - self.low) / len(self.counts)

    @property
    def defined(self) -> int:
        """Samples with a value (binned, below or above)."""
        return sum(self.counts) + self.below + self.above

    def quantile(self, p: float) -> float | None:
        """The ``p``-quantile of the samples, within one bin width; None outside the range.

        Examples
        --------
        >>> h = SampleHistogram(0.0, 4.0, (1, 1, 1, 1))
        >>> h.quantile(0.5), h.quantile(0.25), h.quantile(1.0)
        (2.0, 1.0, 4.0)

        Notes
        -----
        The rank ``r = p · n`` of the ``n`` defined samples falls in the bin ``k`` where
        the cumulative count first reaches it; the estimate interpolates linearly within
        that bin.  The sample of rank ``⌈r⌉`` (the empirical quantile) lies in the same
        bin, so the two differ by at most one bin width.  None when that rank falls
        among the samples below or above the range, or when no sample is defined.
        """
        n = self.defined
        rank = p * n
        if n == 0 or (self.below and rank <= self.below):
            return None
        cumulative = self.below + np.cumsum(self.counts)
        k = int(np.searchsorted(cumulative, rank, side="left"))
        if k >= len(self.counts):
            return None
        before = cumulative[k] - self.counts[k]
        share = (rank - before) / self.counts[k] if self.counts[k] else 0.0
        return float(self.low + (k + share) * self.bin_width)


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
        Which end of each varying quantity gives each extreme (``"+"``/``"-"``);
        a matched array's common deviation scanned inside its range gives its
        place there instead (``"+0.71"``: 71 % of its half-width up).
    exact : bool
        True when the extremes are exact: every vertex was solved (else the
        corners come from the sensitivity signs) and, with matched arrays, the
        target is monotone in each common deviation.
    method : str
        How the worst case was found: ``"vertices"`` (every vertex of the box
        solved: the exact extremes of a target monotone in each quantity) or
        ``"sensitivity corners"`` (too many quantities: only the two corners
        the signs of the nominal sensitivities point to are solved; the values
        are attained inside the box, so the true range is at least this wide,
        but it is neither exact nor a bound).  With matched arrays
        (:mod:`synth.spread.common_mode`): ``"vertices, common mode
        monotone"`` (every vertex of the own deviations, the target shown
        monotone in the common deviation along a scan of it: exact) or
        ``"vertices, common mode scanned"`` (the extremes of that scan: values
        reached inside the box, not proven extremes).
    rss : float
        Root-sum-square deviation, as a fraction of the nominal value (each
        tolerance and each part's TCR drift over the temperature range is one
        term of the root-sum-square).
    rss_abs : float
        The same root-sum-square deviation in the target's unit (what a zero
        goal, such as a bridge null, is judged by).
    sensitivities : dict of str to float
        % change of the target per % change of each quantity.
    mc_mean, mc_std : float or None
        Monte Carlo mean and standard deviation (None without samples).
    mc_values : numpy.ndarray or None
        The Monte Carlo samples themselves (None unless ``keep_samples``).
    mc_min, mc_max : float or None
        Smallest and largest Monte Carlo sample.
    inside : float or None
        Share of samples inside this target's window.
    rss_terms : dict of str to tuple of float
        Each varying quantity's terms of ``rss_abs ** 2``, in the target's
        unit squared: ``(tolerance term, temperature-drift term)``, each the
        squared product of the target's slope and the quantity's relative
        half-width.  Their sum over every quantity is ``rss_abs ** 2``.
    noise : float
        The largest noise floor of the target's value over the nominal point
        and the vertices solved (:attr:`synth.circuit.measure.Evaluation.target_noise`):
        the worst case meets a window edge within it.
    mc_histogram : SampleHistogram or None
        Every Monte Carlo sample's count in fixed bins (None without samples), from which
        quantiles are read within one bin width.
    self_heating_terms : dict of str to float
        Each varying quantity's self-heating part of its temperature-drift term of
        ``rss_terms``, in the target's unit squared: the target's slope squared times the
        difference of the squared drift half-widths over the part's own temperature range
        and over the ambient range alone (zero for sources and for parts that do not heat).
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
    rss_abs: float = 0.0
    mc_min: float | None = None
    mc_max: float | None = None
    rss_terms: dict[str, tuple[float, float]] = field(default_factory=dict)
    noise: float = 0.0
    method: str = "vertices"
    mc_histogram: SampleHistogram | None = None
    self_heating_terms: dict[str, float] = field(default_factory=dict)

    @property
    def drift_rss_abs(self) -> float:
        """Root-sum-square of the temperature-drift terms alone, in the target's unit.

        Examples
        --------
        >>> t = TargetSpread("out", 5.0, 5.0, 4.9, 5.1, {}, {}, True, 0.01, {}, None, None,
        ...                  None, None, rss_terms={"R1": (0.0, 9e-4), "R2": (0.0, 16e-4)},
        ...                  self_heating_terms={"R1": 0.0, "R2": 7e-4})
        >>> round(t.drift_rss_abs, 6), round(t.ambient_drift_rss_abs, 6)
        (0.05, 0.042426)
        >>> round(t.self_heating_share_of_drift, 4)
        0.28
        """
        return math.sqrt(max(sum(d for _, d in self.rss_terms.values()), 0.0))

    @property
    def ambient_drift_rss_abs(self) -> float:
        """The drift root-sum-square over the ambient range alone (no self-heating), target unit."""
        drift = sum(d for _, d in self.rss_terms.values())
        return math.sqrt(max(drift - sum(self.self_heating_terms.values()), 0.0))

    @property
    def self_heating_share_of_drift(self) -> float | None:
        """Self-heating's share of the temperature-drift variance (0 to 1); None without drift.

        Notes
        -----
        Variances of independent terms add (JCGM 100:2008, eq. 10), so the part of each
        drift term that the rise adds, summed, over the drift terms' sum is its share.
        """
        drift = sum(d for _, d in self.rss_terms.values())
        if not drift > 0 or not math.isfinite(drift):
            return None
        return sum(self.self_heating_terms.values()) / drift

    @property
    def self_heating_share_of_rss(self) -> float | None:
        """Self-heating's share of the whole root-sum-square variance (0 to 1); None when
        nothing varies the target."""
        total = sum(t + d for t, d in self.rss_terms.values())
        if not total > 0 or not math.isfinite(total):
            return None
        return sum(self.self_heating_terms.values()) / total

    def variance_shares(self) -> dict[str, float]:
        """Each varying quantity's share of the root-sum-square variance (they add up to 1).

        Tolerance and temperature-drift terms of a quantity are counted
        together; an empty dict when nothing varies the target.

        Examples
        --------
        >>> t = TargetSpread("out", 5.0, 5.0, 4.95, 5.05, {}, {}, True, 0.00707, {}, None,
        ...                  None, None, None, rss_terms={"R1": (1.25e-3, 0.0),
        ...                                               "R2": (1.25e-3, 0.0)})
        >>> t.variance_shares()
        {'R1': 0.5, 'R2': 0.5}

        Notes
        -----
        The law of propagation of uncertainty (JCGM 100:2008, the GUM, eq. 10):
        for independent inputs the output variance is the sum of the squared
        sensitivity-weighted input uncertainties, so each term's share of the
        sum is that input's contribution.
        """
        terms = {name: tol + drift for name, (tol, drift) in self.rss_terms.items()}
        total = sum(terms.values())
        if not total > 0:
            return {}
        return {name: term / total for name, term in terms.items()}


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
        Allowed dissipation of the physical part at the design's hottest
        ambient (derated, times the power use limit; see :mod:`synth.rating`), W.
    utilization : float or None
        ``worst_power / allowed_power_hot``.
    worst_voltage : float
        Largest voltage across the part over the box, V.
    allowed_voltage : float or None
        The voltage the design allows the part, V.
    point : str or None
        In a design of operating points: the point of the part's largest
        worst-case dissipation (its worst voltage is the largest over every
        point); None without points.
    temperature_rise_c : float
        The part's self-heating rise P·Rθ at the nominal operating point, K (the
        largest over the operating points; 0 when its package has no thermal
        resistance).
    """

    ref: str
    nominal_power: float
    worst_power: float
    worst_power_bound: float
    allowed_power_hot: float | None
    utilization: float | None
    worst_voltage: float
    allowed_voltage: float | None = None
    point: str | None = None
    temperature_rise_c: float = 0.0


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
    yield_interval : tuple of float or None
        The 95 % Clopper–Pearson confidence interval of the yield (exact
        binomial), or None without Monte Carlo.
    samples_run : int or None
        Monte Carlo samples actually run: ``settings.samples``, or fewer when
        a large network cut them (see :attr:`SpreadSettings.sample_budget`);
        None without Monte Carlo.
    samples_cut : str or None
        ``"time limit"`` when a time limit shortened the Monte Carlo to
        ``samples_run`` (``settings.samples`` stays the count asked for); None
        otherwise.
    shards : int or None
        Seeded shards of :data:`synth.spread.monte_carlo.SHARD_SIZE` samples the
        run was split into (None without Monte Carlo).
    samples_kept : int
        Samples kept per target (``TargetSpread.mc_values``): 0 unless
        ``settings.keep_samples``.
    self_heating_note : str or None
        Why the spread holds no self-heating (no part has a package with a thermal
        resistance); None when it does (:mod:`synth.spread.heating`).
    """

    variables: tuple[str, ...]
    targets: tuple[TargetSpread, ...]
    parts: tuple[PartSpread, ...]
    yield_fraction: float | None
    settings: SpreadSettings
    temperature_c: tuple[float, float]
    yield_interval: tuple[float, float] | None = None
    samples_run: int | None = None
    samples_cut: str | None = None
    shards: int | None = None
    samples_kept: int = 0
    self_heating_note: str | None = None

    @property
    def worst_error(self) -> float:
        """Largest worst-case relative error over targets with a non-zero goal (0 if none).

        Zero goals are judged in their unit: see :attr:`TargetSpread.worst_low`.
        """
        errors = [max(abs(t.worst_low - t.goal), abs(t.worst_high - t.goal)) / abs(t.goal)
                  for t in self.targets if t.goal]
        return max(errors, default=0.0)

    @property
    def rss_error(self) -> float:
        """Largest root-sum-square deviation over targets with a goal, as a fraction."""
        return max((t.rss for t in self.targets if t.goal), default=0.0)
