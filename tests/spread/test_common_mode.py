"""Worst case with matched arrays (synth.spread.common_mode) against brute-force scans.

The networks are two dividers from one source, written out here by the divider formula
[HB-divider]; the brute force scans the common deviation c finely and every own
deviation r over a grid of its range, with the array model of [CP-matched-array]
(member = nominal × (1 + c + r)).  A target monotone in each r and in c has its extremes at
the vertices [CALC-wca-divider]; one that is not monotone in c needs the scan.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.report.spread import spread_text
from synth.report.verdict import check_verdict_text
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings

A, RHO = 0.001, 0.0002
V = 10.0


def _two_dividers(values: dict[str, float], members: tuple[str, ...], *,
                  require: str = "nominal", window: str | None = None,
                  second_array: tuple[str, ...] = (), tolerance: float = A) -> dict:
    """V1 into a = R1 over R2 and b = R3 over R4; ``members`` form array RN1."""
    resistors = []
    for ref, (top, bottom) in {"R1": ("in", "a"), "R2": ("a", "gnd"), "R3": ("in", "b"),
                               "R4": ("b", "gnd")}.items():
        part = {"ref": ref, "nodes": [top, bottom], "value": values[ref]}
        if ref in members:
            part["array"] = "RN1"
        elif ref in second_array:
            part["array"] = "RN2"
        else:
            part.update(tolerance="0%", tcr="0 ppm/C")
        resistors.append(part)
    arrays = [{"name": "RN1", "tolerance": f"{tolerance * 100:g}%", "ratio_tolerance": "0.02%",
               "tcr": "0 ppm/C"}]
    if second_array:
        arrays.append({"name": "RN2", "tolerance": "0.5%", "ratio_tolerance": "0.1%",
                       "tcr": "0 ppm/C"})
    target = {"name": "b - a", "voltage": ["b", "a"], "equals": "4 V"}
    if window:
        target.update(within=window)
    return {
        "design": {"temperature": ["25 C", "25 C"], "require": require},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": resistors,
        "array": arrays,
        "target": [target, {"name": "a", "voltage": "a", "at_least": "0 V"}],
    }


def _brute(values: dict[str, float], members: tuple[str, ...], tolerance: float = A
           ) -> tuple[np.ndarray, ...]:
    """Every (c, r...) of a fine grid: V(b) - V(a) and V(a) by the divider formula."""
    cs = np.linspace(-(tolerance - RHO / 2), tolerance - RHO / 2, 2001)
    rs = np.linspace(-RHO / 2, RHO / 2, 5)
    diff, va = [], []
    for own in itertools.product(rs, repeat=len(members)):
        r = dict(values)
        dev = dict(zip(members, own, strict=True))
        ohm = {k: r[k] * (1 + cs + dev[k]) if k in dev else np.full_like(cs, r[k])
               for k in r}
        a = V * ohm["R2"] / (ohm["R1"] + ohm["R2"])
        b = V * ohm["R4"] / (ohm["R3"] + ohm["R4"])
        diff.append(b - a)
        va.append(a)
    return np.concatenate(diff), np.concatenate(va)


def test_a_target_flat_in_the_common_mode_is_scanned_and_its_interior_extreme_found():
    # a = 3k/(7k + 3k), b = 7k/(3k + 7k): members R2 and R4 move a and b up alike to first
    # order (k(1 - k) = 0.21 on both sides), so b - a peaks inside the common range (a
    # wide absolute tolerance, 5 %, makes the second-order peak stand out)
    values = {"R1": 7e3, "R2": 3e3, "R3": 3e3, "R4": 7e3}
    members = ("R2", "R4")
    spread = analyse_spread(design_from_dict(_two_dividers(values, members, tolerance=0.05)),
                            settings=SpreadSettings(samples=0))
    diff, va = _brute(values, members, 0.05)
    t, a = spread.targets
    assert t.method == "vertices, common mode scanned" and not t.exact
    # the scan reaches the brute force's extremes closely, and never beyond them
    span = diff.max() - diff.min()
    assert t.worst_high == pytest.approx(diff.max(), abs=1e-3 * span)
    assert t.worst_low == pytest.approx(diff.min(), abs=1e-3 * span)
    assert t.worst_high <= diff.max() + 1e-12 and t.worst_low >= diff.min() - 1e-12
    # the common deviation at its ends alone would miss the peak
    c_ends = diff.reshape(-1, 2001)[:, [0, -1]]
    assert diff.max() - c_ends.max() > 0.01 * span
    assert t.high_corner["RN1"] not in ("+", "-")  # inside its range
    # a alone is a divider of one member: monotone in c, exact at the vertices
    assert a.method == "vertices, common mode monotone" and a.exact
    assert a.worst_high == pytest.approx(va.max(), rel=1e-12)
    assert a.worst_low == pytest.approx(va.min(), rel=1e-12)
    text = spread_text(spread, ["V", "V"])
    assert "not linear-fractional in a matched array's common deviation" in text
    assert "no sound dissipation bound" in text
    assert all(p.worst_power_bound == np.inf for p in spread.parts)


def test_a_ratio_of_members_is_exact_at_the_vertices():
    # a = R2/(R1 + R2) with both members: linear-fractional in c [CP-matched-array]
    values = {"R1": 10e3, "R2": 5e3, "R3": 5e3, "R4": 5e3}
    members = ("R1", "R2")
    spread = analyse_spread(design_from_dict(_two_dividers(values, members)),
                            settings=SpreadSettings(samples=0))
    _, va = _brute(values, members)
    a = spread.targets[1]
    assert a.exact and a.method == "vertices, common mode monotone"
    assert a.worst_high == pytest.approx(va.max(), rel=1e-12)
    assert a.worst_low == pytest.approx(va.min(), rel=1e-12)
    assert a.high_corner == {"R1": "-", "R2": "+", "RN1": "-"}


def test_two_arrays_are_scanned_together_and_never_called_exact():
    values = {"R1": 7e3, "R2": 3e3, "R3": 3e3, "R4": 7e3}
    data = _two_dividers(values, ("R1", "R2"), second_array=("R3", "R4"))
    spread = analyse_spread(design_from_dict(data), settings=SpreadSettings(samples=0))
    assert spread.variables[-2:] == ("RN1", "RN2")
    assert all(t.method == "vertices, common mode scanned" and not t.exact
               for t in spread.targets)


def test_the_check_verdict_says_a_scanned_worst_case_is_not_proven():
    values = {"R1": 7e3, "R2": 3e3, "R3": 3e3, "R4": 7e3}
    result = check(design_from_dict(_two_dividers(values, ("R2", "R4"), require="worst-case",
                                                  window="1%")))
    assert result.ok
    assert "(not proven for b - a: a matched array's common deviation was scanned" in (
        check_verdict_text(result))
