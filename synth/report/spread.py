"""Text tables and JSON records of spread results."""

from __future__ import annotations

__all__ = ["SELF_HEATING_METHOD", "spread_json", "spread_text"]

import math
from typing import Any

from tabulate import tabulate

from synth.report.numbers import json_number
from synth.spread.monte_carlo import SHARD_SIZE
from synth.spread.records import SampleHistogram, SpreadResult, TargetSpread
from synth.units import format_eng

QUANTILES = (0.001, 0.01, 0.05, 0.5, 0.95, 0.99, 0.999)
"""Shares of the samples whose quantiles the JSON gives (read from each target's histogram)."""

MC_METHOD = {
    "statistics": "mean, standard deviation and extremes streamed block by block over every "
                  "sample (pairwise merge of Chan, Golub and LeVeque), in seeded shards merged "
                  "in shard order",
    "yield": "samples meeting every window and limit, counted over every sample; 95 % "
             "Clopper-Pearson interval",
    "quantiles": "read from each target's histogram of every sample (equal bins over its "
                 "worst-case range, 2 % wider at each end), linear within a bin: within one "
                 "bin width (mc_quantile_error) of the samples' own quantiles; null where the "
                 "share falls outside the range",
}
"""How the JSON's Monte Carlo figures are computed (the ``mc_method`` field)."""


def _corner(corner: dict[str, str]) -> str:
    return " ".join(f"{name}{sign}" for name, sign in corner.items()) or "-"


def _value(value: float | None, unit: str) -> str:
    if value is None:
        return "-"
    return format_eng(value, unit, 5) if unit else f"{value:.6g}"


def spread_text(spread: SpreadResult, units: list[str]) -> str:
    """Spread section of a report: per-target spread, sensitivities, worst-case stress."""
    low_c, high_c = spread.temperature_c
    s = spread.settings
    run = s.samples if spread.samples_run is None else spread.samples_run
    lines = [f"spread over tolerance, TCR ({low_c:g} to {high_c:g} °C, reference 25 °C) and "
             f"supply: {len(spread.variables)} quantities vary"
             + (f"; Monte Carlo {run:,} {s.distribution} samples, seed {s.seed}"
                if s.samples else "")]
    if s.samples and run < s.samples and spread.samples_cut == "time limit":
        lines.append(f"note: Monte Carlo cut from {s.samples:,} to {run:,} samples to fit the "
                     "time limit; the yield interval is that of the samples run")
    elif s.samples and run < s.samples:
        lines.append(f"note: Monte Carlo cut from {s.samples:,} to {run:,} samples to bound its "
                     f"time (a large network runs at most {s.sample_budget:,} samples × "
                     "resistors); the yield interval is that of the samples run")
    scanned = [t.label for t in spread.targets if t.method == "vertices, common mode scanned"]
    if scanned:
        lines.append(f"note: {len(scanned)} target(s) ({', '.join(scanned)}) are not "
                     "linear-fractional in a matched array's common deviation: their worst "
                     "cases are the extremes over every vertex of the parts' own deviations "
                     "with the common deviation scanned (values reached inside the box, not "
                     "proven extremes); corners give its place in its range (+0.71: 71 % of "
                     "its half-width up)")
    if any(t.method.startswith("vertices, common mode") for t in spread.targets):
        lines.append("note: with a matched array no sound dissipation bound is given (the "
                     "common deviation is scanned, not bounded)")
    if spread.targets and spread.targets[0].method == "sensitivity corners":
        lines.append("note: too many quantities vary to solve every corner; worst cases are "
                     "those of the two corners the nominal sensitivity signs point to: values "
                     "reached inside the box, so the true range is at least this wide, but "
                     "neither exact nor a bound (and no dissipation bound is given)")
    rows = []
    for t, unit in zip(spread.targets, units, strict=True):
        rows.append([
            t.label, _value(t.nominal, unit),
            f"{_value(t.worst_low, unit)} ({_corner(t.low_corner)})",
            f"{_value(t.worst_high, unit)} ({_corner(t.high_corner)})",
            (f"±{_value(t.rss_abs, unit)}" if t.goal == 0 else f"±{t.rss * 100:.3g}%"),
            _value(t.mc_mean, unit), _value(t.mc_std, unit),
            "-" if t.inside is None else f"{t.inside * 100:.4g}%",
        ])
    if rows:
        lines.append(tabulate(rows, headers=["target", "nominal", "worst low (corner)",
                                             "worst high (corner)", "RSS", "MC mean", "MC σ",
                                             "in window"], disable_numparse=True))
    if spread.yield_fraction is not None:
        lines.append(f"yield (every window and limit met): {spread.yield_fraction * 100:.4g}%")
        shards = spread.shards or 0
        lines.append(f"Monte Carlo figures streamed over every sample in {shards:,} seeded "
                     f"shard{'s' if shards != 1 else ''} of up to {SHARD_SIZE:,} samples"
                     + (f"; {spread.samples_kept:,} samples per target kept"
                        if spread.samples_kept else "; no samples kept")
                     + "; quantiles (JSON) from each target's histogram, within one bin width")
    lines.extend(_self_heating_lines(spread, units))
    if spread.variables and spread.targets:
        lines.append("")
        lines.append("sensitivities (% change of the target per % change of each quantity)")
        lines.append(tabulate(
            [[t.label, *[f"{t.sensitivities[v]:+.3g}" if math.isfinite(t.sensitivities[v])
                         else "n/a" for v in spread.variables]]
             for t in spread.targets],
            headers=["target", *spread.variables], disable_numparse=True))
    lines.append("")
    at_points = any(p.point is not None for p in spread.parts)
    heating = spread.self_heating_note is None
    lines.append(f"worst-case dissipation against the derated rating at the hottest ambient "
                 f"({max(high_c, low_c):g} °C)")
    lines.append(tabulate(
        [[p.ref, format_eng(p.nominal_power, "W"), format_eng(p.worst_power, "W"),
          "n/a" if p.worst_power_bound == float("inf") else format_eng(p.worst_power_bound, "W"),
          "-" if p.allowed_power_hot is None else format_eng(p.allowed_power_hot, "W"),
          "-" if p.utilization is None else f"{p.utilization * 100:.3g}%",
          format_eng(p.worst_voltage, "V"), *([p.point or "-"] if at_points else []),
          *([f"{p.temperature_rise_c:.3g} K"] if heating else [])]
         for p in spread.parts],
        headers=["part", "nominal", "worst", "bound", "allowed", "use", "worst voltage",
                 *(["worst at point"] if at_points else []),
                 *(["own rise"] if heating else [])],
        disable_numparse=True))
    return "\n".join(lines)


SELF_HEATING_METHOD = ("first order: each part's rise P·Rθ at the nominal operating point "
                       "(nominal values and sources) is added to the ambient its TCR acts on, "
                       "over the whole tolerance box and temperature range; the rise's own "
                       "change with the drift and the tolerances is left out")
"""How the spread takes self-heating (the JSON's ``self_heating.method``)."""


def _self_heating_lines(spread: SpreadResult, units: list[str]) -> list[str]:
    """The self-heating block: each part's rise, and each drifting target's share of it."""
    if spread.self_heating_note is not None:
        return [f"self-heating: not modelled; {spread.self_heating_note}"]
    rises = [f"{p.ref} +{p.temperature_rise_c:.3g} K" for p in spread.parts
             if p.temperature_rise_c > 0]
    lines = ["self-heating (first order: each part's rise P·Rθ at the nominal operating point "
             "added to the ambient its TCR acts on): "
             + (", ".join(rises) if rises else "no part dissipates at nominal values")]
    rows = []
    for t, unit in zip(spread.targets, units, strict=True):
        share = t.self_heating_share_of_drift
        if share is None:
            continue
        whole = t.self_heating_share_of_rss or 0.0

        def amount(value: float, t: TargetSpread = t, unit: str = unit) -> str:
            if t.goal == 0 or not t.nominal:
                return f"±{_value(value, unit)}"
            return f"±{value / abs(t.nominal) * 100:.3g}%"

        rows.append([t.label, amount(t.drift_rss_abs), amount(t.ambient_drift_rss_abs),
                     f"{share * 100:.3g}%", f"{whole * 100:.3g}%"])
    if rows:
        lines.append(tabulate(rows, headers=["target", "drift RSS", "ambient alone",
                                             "self-heating share of drift variance",
                                             "of RSS variance"], disable_numparse=True))
    return lines


def spread_json(spread: SpreadResult) -> dict[str, Any]:
    """JSON record of a spread result (Monte Carlo samples themselves left out)."""
    s = spread.settings
    return {
        "variables": list(spread.variables),
        "temperature": list(spread.temperature_c),
        "samples": s.samples, "distribution": s.distribution, "seed": s.seed,
        "samples_run": spread.samples_run,
        "shards": spread.shards,
        "shard_size": None if spread.shards is None else SHARD_SIZE,
        "samples_kept": spread.samples_kept,
        "mc_method": None if spread.samples_run is None else dict(MC_METHOD),
        "samples_cut": spread.samples_cut,
        "yield": json_number(spread.yield_fraction),
        "yield_interval": (None if spread.yield_interval is None
                           else [json_number(v) for v in spread.yield_interval]),
        "self_heating": {"modelled": spread.self_heating_note is None,
                         "note": spread.self_heating_note,
                         "method": SELF_HEATING_METHOD},
        "worst_error": json_number(spread.worst_error),
        "rss_error": json_number(spread.rss_error),
        "targets": [{
            "label": t.label, "goal": json_number(t.goal), "nominal": json_number(t.nominal),
            "worst_low": json_number(t.worst_low), "worst_high": json_number(t.worst_high),
            "low_corner": t.low_corner, "high_corner": t.high_corner, "exact": t.exact,
            "worst_case_method": t.method,
            "rss": json_number(t.rss), "rss_abs": json_number(t.rss_abs),
            "sensitivities": {k: json_number(v) for k, v in t.sensitivities.items()},
            "mc_mean": json_number(t.mc_mean), "mc_std": json_number(t.mc_std),
            "inside": json_number(t.inside),
            "mc_min": json_number(t.mc_min), "mc_max": json_number(t.mc_max),
            **_histogram_json(t.mc_histogram),
            "drift_rss_abs": json_number(t.drift_rss_abs),
            "ambient_drift_rss_abs": json_number(t.ambient_drift_rss_abs),
            "self_heating_share_of_drift": json_number(t.self_heating_share_of_drift),
            "self_heating_share_of_rss": json_number(t.self_heating_share_of_rss),
        } for t in spread.targets],
        "parts": [{
            "ref": p.ref, "nominal_power": json_number(p.nominal_power),
            "worst_power": json_number(p.worst_power),
            "worst_power_bound": json_number(p.worst_power_bound),
            "allowed_power_hot": json_number(p.allowed_power_hot),
            "utilization": json_number(p.utilization),
            "worst_voltage": json_number(p.worst_voltage),
            **({"point": p.point} if p.point is not None else {}),
            "allowed_voltage": json_number(p.allowed_voltage),
            "temperature_rise": json_number(p.temperature_rise_c),
        } for p in spread.parts],
    }


def _histogram_json(histogram: SampleHistogram | None) -> dict[str, Any]:
    """A target's quantiles, their error bound and its histogram (all null without samples)."""
    if histogram is None:
        return {"mc_quantiles": None, "mc_quantile_error": None, "mc_histogram": None}
    return {
        "mc_quantiles": {f"{p:g}": json_number(histogram.quantile(p)) for p in QUANTILES},
        "mc_quantile_error": json_number(histogram.bin_width),
        "mc_histogram": {"low": json_number(histogram.low), "high": json_number(histogram.high),
                         "counts": list(histogram.counts), "below": histogram.below,
                         "above": histogram.above, "undefined": histogram.undefined},
    }
