"""Spread records: each quantity's share of a target's root-sum-square variance, and
quantiles read from a streamed histogram.

By the law of propagation of uncertainty [GUM-propagation] (the RSS formula of
[HB-wca]) the variance of the output is the sum of the squared sensitivity-weighted
half-widths of independent inputs; each term is that input's contribution.  The
divider's sensitivities are those of [HB-divider]: for Vout = V R2 / (R1 + R2),
dVout/Vout per dR2/R2 is R1 / (R1 + R2), per dR1/R1 it is -R1 / (R1 + R2), per dV/V 1.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SampleHistogram, SpreadSettings, TargetSpread


def divider(r1="30k", r2="10k", tcr="0 ppm/C", source_tolerance="1%"):
    return design_from_dict({
        "design": {"temperature": ["-15 C", "65 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": source_tolerance}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": r1, "tolerance": "1%",
                      "tcr": tcr},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": r2, "tolerance": "1%",
                      "tcr": tcr}],
        "target": [{"voltage": "out", "equals": "2.5 V"}],
    })


def spread_of(design) -> TargetSpread:
    return analyse_spread(design, settings=SpreadSettings(samples=0)).targets[0]


def test_shares_of_a_divider_and_its_source_by_hand():
    # 30k over 10k from 10 V: 2.5 V; sensitivities -0.75, +0.75 and 1 [HB-divider], each
    # times its 1 % half-width, squared: 0.5625, 0.5625 and 1 (x 1e-4) of 2.125e-4
    target = spread_of(divider())
    shares = target.variance_shares()
    assert shares == pytest.approx({"R1": 0.5625 / 2.125, "R2": 0.5625 / 2.125,
                                    "V1": 1 / 2.125}, rel=1e-6)
    assert math.fsum(shares.values()) == pytest.approx(1.0, rel=1e-12)
    # in volts squared: (2.5 V x 0.75 x 1 %)^2 for each resistor [GUM-propagation]
    assert target.rss_terms["R1"][0] == pytest.approx((2.5 * 0.75 * 0.01) ** 2, rel=1e-6)
    assert target.rss_terms["V1"] == pytest.approx(((2.5 * 0.01) ** 2, 0.0), rel=1e-6)


def test_terms_add_up_to_the_rss_variance_with_temperature_drift():
    # 100 ppm/K over 40 K from 25 C (the larger distance of -15 C .. 65 C): a 0.4 % drift
    target = spread_of(divider(tcr="100 ppm/C"))
    tolerance, drift = target.rss_terms["R2"]
    assert drift == pytest.approx((2.5 * 0.75 * 0.004) ** 2, rel=1e-6)
    assert tolerance == pytest.approx((2.5 * 0.75 * 0.01) ** 2, rel=1e-6)
    total = math.fsum(t + d for t, d in target.rss_terms.values())
    assert total == pytest.approx(target.rss_abs ** 2, rel=1e-12)
    assert total == pytest.approx((target.rss * target.nominal) ** 2, rel=1e-9)
    shares = target.variance_shares()
    assert shares["R2"] == pytest.approx((tolerance + drift) / total, rel=1e-12)
    assert math.fsum(shares.values()) == pytest.approx(1.0, rel=1e-12)


def test_nothing_varies_nothing_is_shared():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k", "tolerance": "0%",
                      "tcr": "0 ppm/C"}],
        "target": [{"current": "R1", "equals": "10 mA"}]})
    target = spread_of(design)
    assert target.rss_terms == {} and target.variance_shares() == {}


def test_a_histogram_quantile_lies_within_one_bin_of_numpy_quantile():
    # the streamed histogram's quantile against numpy.quantile of the very samples
    # [LIB-numpy-quantile] [LIB-numpy-histogram]
    rng = np.random.default_rng(8)
    values = rng.normal(5.0, 0.02, 20_000)
    counts, _ = np.histogram(values, bins=64, range=(4.9, 5.1))
    below, above = int((values < 4.9).sum()), int((values > 5.1).sum())
    h = SampleHistogram(4.9, 5.1, tuple(int(c) for c in counts), below=below, above=above,
                        undefined=3)
    assert h.defined == 20_000 and h.bin_width == pytest.approx(0.2 / 64)
    for p in (0.001, 0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99, 0.999):
        assert abs(h.quantile(p) - np.quantile(values, p)) <= h.bin_width
    # a rank among the samples outside the range has no estimate
    tails = SampleHistogram(4.99, 5.01, (10, 10), below=5, above=5)
    assert tails.quantile(0.1) is None and tails.quantile(0.95) is None
    assert tails.quantile(0.5) == pytest.approx(5.0)
    assert SampleHistogram(0.0, 1.0, (0, 0), undefined=4).quantile(0.5) is None
