"""The spread section's Monte Carlo fields (synth.report.spread): how each figure was computed,
and quantiles read from the streamed histogram against numpy.quantile of the same samples
[LIB-numpy-quantile]."""

from __future__ import annotations

import json

import numpy as np
import pytest

from synth.design.reader import design_from_dict
from synth.report.spread import MC_METHOD, QUANTILES, spread_json, spread_text
from synth.spread.analyse import analyse_spread
from synth.spread.monte_carlo import SHARD_SIZE
from synth.spread.records import SpreadSettings


def _divider():
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "1%",
                      "tcr": "0 ppm/C"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "1%",
                      "tcr": "0 ppm/C"}],
        "target": [{"voltage": "out", "equals": "5 V", "within": "0.5%"}]})


def test_json_says_how_the_monte_carlo_figures_were_computed():
    design = _divider()
    spread = analyse_spread(design, settings=SpreadSettings(samples=20_000, seed=2,
                                                            keep_samples=True))
    record = spread_json(spread)
    json.dumps(record, allow_nan=False)  # JSON never holds NaN or Infinity
    assert record["shards"] == 1 and record["shard_size"] == SHARD_SIZE
    assert record["samples_kept"] == 20_000 and record["mc_method"] == MC_METHOD
    target = record["targets"][0]
    values = spread.targets[0].mc_values
    assert (target["mc_min"], target["mc_max"]) == (values.min(), values.max())
    histogram = target["mc_histogram"]
    assert sum(histogram["counts"]) + histogram["below"] + histogram["above"] == 20_000
    assert histogram["undefined"] == 0
    # every quantile within one bin width of the samples' own [LIB-numpy-quantile]
    assert set(target["mc_quantiles"]) == {f"{p:g}" for p in QUANTILES}
    for p in QUANTILES:
        got = target["mc_quantiles"][f"{p:g}"]
        assert abs(got - np.quantile(values, p)) <= target["mc_quantile_error"]
    assert target["mc_quantile_error"] == pytest.approx(
        (histogram["high"] - histogram["low"]) / len(histogram["counts"]))
    text = spread_text(spread, ["V"])
    assert ("Monte Carlo figures streamed over every sample in 1 seeded shard of up to "
            f"{SHARD_SIZE:,} samples; 20,000 samples per target kept") in text


def test_without_monte_carlo_the_fields_are_null():
    record = spread_json(analyse_spread(_divider(), settings=SpreadSettings(samples=0)))
    assert record["shards"] is None and record["shard_size"] is None
    assert record["mc_method"] is None and record["samples_kept"] == 0
    target = record["targets"][0]
    assert target["mc_quantiles"] is None and target["mc_histogram"] is None
    assert target["mc_quantile_error"] is None and target["mc_min"] is None


def test_text_says_when_no_samples_are_kept():
    spread = analyse_spread(_divider(), settings=SpreadSettings(samples=3000))
    assert "in 1 seeded shard of up to" in spread_text(spread, ["V"])
    assert "; no samples kept;" in spread_text(spread, ["V"])
