"""Spread of matched arrays: a common deviation shared by the members, own deviations added.

A matched pair as a divider against [CP-matched-array] (its ratio spread is the ratio
tolerance, far below the spread of independent parts), and the root-sum-square and Monte
Carlo variances against the law of propagation with covariance [GUM-covariance], written
out here from the divider's sensitivities [HB-divider].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.circuit.measure import Evaluator
from synth.design.load import load_design
from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.spread.variables import SpreadVariables

from conftest import ROOT

A, RHO = 0.001, 0.0002  # absolute and ratio tolerance (fractions)
U3 = 0.0005  # R3's tolerance, an independent part


def _divider(matched: bool, *, third: bool = False, tcr: str = "0 ppm/C") -> dict:
    """10 V into R1 (top) and R2 (bottom, with R3 in series below it when ``third``)."""
    member = {"array": "RN1"} if matched else {"tolerance": "0.1%", "tcr": tcr}
    resistors = [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", **member},
                 {"ref": "R2", "nodes": ["out", "mid" if third else "gnd"], "value": "10k",
                  **member}]
    if third:
        resistors.append({"ref": "R3", "nodes": ["mid", "gnd"], "value": "5k",
                          "tolerance": "0.05%", "tcr": "0 ppm/C"})
    data = {
        "design": {"temperature": ["25 C", "25 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": resistors,
        "target": [{"name": "k", "ratio": [["out", "gnd"], ["in", "gnd"]],
                    "equals": 0.75 if third else 0.5},
                   {"name": "R1/R2", "ratio": [["in", "out"], ["out", "mid" if third
                                                               else "gnd"]], "equals": 1}],
    }
    if matched:
        data["array"] = [{"name": "RN1", "tolerance": "0.1%", "ratio_tolerance": "0.02%",
                          "tcr": tcr, "tcr_tracking": "0 ppm/C"}]
    return data


def _spread(data: dict, samples: int = 0, seed: int = 1):
    design = design_from_dict(data)
    return analyse_spread(design, settings=SpreadSettings(samples=samples, seed=seed))


def test_a_matched_pairs_ratio_spreads_by_the_ratio_tolerance():
    matched = {t.label: t for t in _spread(_divider(True)).targets}
    independent = {t.label: t for t in _spread(_divider(False)).targets}
    ratio = matched["R1/R2"]
    # R1/R2 within about ±ρ [CP-matched-array]; in the model exactly (1 - A + ρ)/(1 - A)
    # and (1 - A)/(1 - A + ρ), the common part at its low end
    assert ratio.worst_high - 1 == pytest.approx(RHO / (1 - A), rel=1e-9)
    assert 1 - ratio.worst_low == pytest.approx(RHO / (1 - A + RHO), rel=1e-9)
    # the same two ends by brute force over the model's box, apart from the hand formulas:
    # R1/R2 = (1 + c + r1)/(1 + c + r2), c in ±(A - ρ/2), r1, r2 in ±ρ/2 [CP-matched-array]
    c, r1, r2 = np.meshgrid(np.linspace(-(A - RHO / 2), A - RHO / 2, 201),
                            np.linspace(-RHO / 2, RHO / 2, 21),
                            np.linspace(-RHO / 2, RHO / 2, 21), indexing="ij")
    scanned = (1 + c + r1) / (1 + c + r2)
    assert ratio.worst_low == pytest.approx(scanned.min(), rel=1e-12)
    assert ratio.worst_high == pytest.approx(scanned.max(), rel=1e-12)
    assert ratio.exact and ratio.method == "vertices, common mode monotone"
    # two independent ±A parts: about ±2A, ten times wider here [CP-matched-array]
    assert independent["R1/R2"].worst_high - 1 == pytest.approx(2 * A, rel=2e-3)
    # the 2:1 divider: ±ρ/2 against ±A (first order, [CP-matched-array])
    k = matched["k"]
    assert (k.worst_high - 0.5) / 0.5 == pytest.approx(RHO / 2, rel=2e-3)
    assert (independent["k"].worst_high - 0.5) / 0.5 == pytest.approx(A, rel=2e-3)
    assert k.rss == pytest.approx(RHO / 2 / np.sqrt(2), rel=1e-4)  # two own terms, ρ/2·½ each
    assert k.rss < independent["k"].rss / 7


def _covariance(tolerance_r1r2: tuple[float, float], u3: float = 0.0) -> np.ndarray:
    """Covariance of the relative deviations of R1, R2 (members) and R3 (independent):
    d_i = c + r_i gives cov(d1, d2) = u_c², var(d_i) = u_c² + u_r² [GUM-covariance]."""
    uc, ur = tolerance_r1r2
    return np.array([[uc ** 2 + ur ** 2, uc ** 2, 0.0],
                     [uc ** 2, uc ** 2 + ur ** 2, 0.0],
                     [0.0, 0.0, u3 ** 2]])


def _sensitivities() -> np.ndarray:
    """∂k/∂d_i of k = (R2 + R3)/(R1 + R2 + R3) at 10k, 10k, 5k, d_i = ΔR_i/R_i [HB-divider]."""
    r1, r2, r3 = 10e3, 10e3, 5e3
    s = r1 + r2 + r3
    return np.array([-r1 * (r2 + r3) / s ** 2, r1 * r2 / s ** 2, r1 * r3 / s ** 2])


def test_root_sum_square_is_the_law_of_propagation_with_covariance():
    spread = _spread(_divider(True, third=True))
    k = next(t for t in spread.targets if t.label == "k")
    s = _sensitivities()
    # half-widths in place of standard uncertainties (the RSS of half-widths)
    variance = s @ _covariance((A - RHO / 2, RHO / 2), U3) @ s
    assert k.rss_abs ** 2 == pytest.approx(variance, rel=1e-6)
    # without the covariance (members taken as independent ±A) it would be larger
    assert s @ np.diag([A ** 2, A ** 2, U3 ** 2]) @ s > 5 * variance


def test_monte_carlo_agrees_with_the_correlated_variance():
    spread = _spread(_divider(True, third=True), samples=200_000, seed=7)
    k = next(t for t in spread.targets if t.label == "k")
    s = _sensitivities()
    # uniform deviations: u = half-width/√3 [GUM-covariance]
    sigma = np.sqrt(s @ _covariance(((A - RHO / 2) / np.sqrt(3), RHO / 2 / np.sqrt(3)),
                                    U3 / np.sqrt(3)) @ s)
    # the standard deviation's sampling error is about σ/√(2N) = 0.16 % [HB-sampling-error]
    assert k.mc_std == pytest.approx(sigma, rel=0.01)
    # members taken as independent ±A parts, or without their common part: far off
    assert k.mc_std < 0.4 * np.sqrt(s @ np.diag([A ** 2, A ** 2, U3 ** 2]) @ s / 3)
    assert k.mc_std > 1.5 * np.sqrt(s @ _covariance((0.0, RHO / 2), U3) @ s / 3)
    # the matched pair alone: only the own parts move the ratio, σ = ρ/2/√3 · √2 · ¼
    pair = next(t for t in _spread(_divider(True), samples=200_000, seed=3).targets
                if t.label == "k")
    assert pair.mc_std == pytest.approx(RHO / 2 / np.sqrt(3) * np.sqrt(2) / 4, rel=0.01)


def test_a_members_factor_adds_its_own_and_the_common_deviation():
    design = design_from_dict(_divider(True, tcr="20 ppm/C"))
    ev = Evaluator(design)
    var = SpreadVariables(design, ev)
    assert var.names == ("R1", "R2", "RN1")
    factors = np.array([[1.0001, 0.9999, 1.0009]])
    _, parts, _ = var.apply(factors, np.array([10e3, 10e3]), ev.nominal_sources)
    assert parts[0] == pytest.approx([10e3 * 1.001, 10e3 * 1.0008], rel=1e-12)
    # the TCR splits like the tolerance: common ±(TCR - τ/2), own ±τ/2 (τ = 0 here)
    assert var.tcr == pytest.approx([0.0, 0.0, 20e-6])


def _pair(tolerance: str, ratio: str, tcr: str, tracking: str) -> dict:
    data = _divider(True)
    data["design"]["temperature"] = ["25 C", "75 C"]
    data["array"][0].update(tolerance=tolerance, ratio_tolerance=ratio, tcr=tcr,
                            tcr_tracking=tracking)
    return data


def test_tcr_tracking_sets_the_ratio_drift():
    # two members' coefficients differ by at most τ: over 50 K the ratio drifts by at most
    # about τ·ΔT = 5 ppm/K × 50 K = 0.025 %, where independent ±0.1 %, 25 ppm/K parts give
    # 2 × (0.1 % + 25 ppm/K × 50 K) = 0.45 % [CP-tcr] [CP-matched-array]
    ratio = _spread(_pair("0%", "0%", "25 ppm/C", "5 ppm/C")).targets[1]
    assert ratio.worst_high - 1 == pytest.approx(5e-6 * 50, rel=2e-3)
    assert ratio.exact
    independent = _spread(_divider(False, tcr="25 ppm/C") | {
        "design": {"temperature": ["25 C", "75 C"]}}).targets[1]
    assert independent.worst_high - 1 == pytest.approx(2 * (A + 25e-6 * 50), rel=5e-3)


def test_members_without_a_ratio_tolerance_keep_their_ratio_exactly():
    # ρ = τ = 0: the members move together only, so R1/R2 stays 1 [CP-matched-array]
    spread = _spread(_pair("0.1%", "0%", "25 ppm/C", "0 ppm/C"))
    assert spread.variables == ("RN1",)
    ratio, k = spread.targets[1], spread.targets[0]
    assert ratio.worst_low == pytest.approx(1, abs=1e-15)
    assert ratio.worst_high == pytest.approx(1, abs=1e-15)
    assert k.worst_high == pytest.approx(0.5, abs=1e-15)
    # nothing varies at all: no common variable either
    assert _spread(_pair("0%", "0%", "0 ppm/C", "0 ppm/C")).variables == ()


def test_the_matched_bridge_example_spreads_less_than_independent_parts():
    # the example's own comparison: the reference half R3/R4 varies by the ratio tolerance
    # only once R2..R4 are one array [CP-matched-array]
    spreads = [analyse_spread(load_design(ROOT / "examples" / name),
                              settings=SpreadSettings(samples=0)).targets[0]
               for name in ("scale_bridge.toml", "scale_bridge_matched.toml")]
    independent, matched = spreads
    assert matched.rss < 0.75 * independent.rss
    assert matched.worst_high - matched.worst_low < 0.75 * (independent.worst_high
                                                           - independent.worst_low)
    assert matched.method == "vertices, common mode monotone" and matched.exact
