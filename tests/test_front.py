"""The error-against-supply-current front against an exhaustive enumeration.

Every combination of catalogue values is solved here by the divider formulas
[HB-divider] [HB-loaded-divider], judged by the window and the linear power
derating with the design's use limit [CP-derating] [CP-margin], and the
non-dominated set of (supply current, largest goal error) is taken by plain
sorting [CALC-exhaustive].  The epsilon-constraint method is that of Haimes,
Lasdon and Wismer [HB-epsilon-constraint].
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from synth.catalog.series import series_values
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.front import ErrorFront, error_front


def loaded_divider(package: str | None = "0402", tolerance: str | None = None):
    design = {"title": "loaded divider", "ambient": "25 C"}
    extra = {"tolerance": tolerance} if tolerance else {}
    if package:
        design["package"] = package
    return design_from_dict({
        "design": design,
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
                      "range": ["1k", "100k"], **extra},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["1k", "100k"], **extra},
                     {"ref": "R3", "nodes": ["out", "gnd"], "choose": "E6",
                      "range": ["1k", "100k"], **extra}],
        "target": [{"voltage": "out", "equals": "3.3 V", "within": "5%"}],
    })


def non_dominated(points):
    """The (supply, error) pairs no other beats on both counts, highest supply first.

    Supply currents within 1e-9 of each other count as one, errors within 1e-12 as one.
    """
    points = sorted(points, key=lambda p: (p[0], p[1]))
    front = []
    best = np.inf
    for supply, error in points:  # by supply ascending: a point is kept if it beats all below
        if error < best - 1e-12:
            if front and abs(front[-1][0] - supply) <= 1e-9 * supply:
                front.pop()
            front.append((supply, error))
            best = error
    return sorted(front, key=lambda p: -p[0])


def loaded_divider_front(package_power_w: float | None):
    """Every combination of the loaded divider, solved and judged here."""
    e12 = series_values("E12", 1e3, 100e3)
    e6 = series_values("E6", 1e3, 100e3)
    points = []
    for r1, r2, r3 in itertools.product(e12, e12, e6):
        lower = r2 * r3 / (r2 + r3)  # [HB-loaded-divider]
        out = 10.0 * lower / (r1 + lower)
        if not 3.3 * 0.95 * (1 - 1e-9) <= out <= 3.3 * 1.05 * (1 + 1e-9):
            continue
        if package_power_w is not None:
            # 0402: 62.5 mW at 25 C, full rating below 70 C, half of it allowed
            allowed = package_power_w * 0.5  # [CP-derating] [CP-margin]
            powers = ((10 - out) ** 2 / r1, out ** 2 / r2, out ** 2 / r3)
            if max(powers) > allowed * (1 + 1e-9):
                continue
        points.append((10.0 / (r1 + lower), abs(out - 3.3) / 3.3))
    return non_dominated(points)


def plain_divider():
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "100k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
                      "range": ["1k", "100k"]}],
        "target": [{"voltage": "out", "equals": "4 V", "within": "10%"}],
    })


def plain_divider_front():
    """Many exact 2:1 pairs tie at no error: the front keeps the one of least supply."""
    e24 = series_values("E24", 1e3, 100e3)
    points = []
    for r1, r2 in itertools.product(e24, e24):
        out = 12.0 * r2 / (r1 + r2)  # [HB-divider]
        if 4 * 0.9 * (1 - 1e-9) <= out <= 4 * 1.1 * (1 + 1e-9):
            points.append((12.0 / (r1 + r2), abs(out - 4) / 4))
    return non_dominated(points)


@pytest.mark.parametrize(("design", "expected"), [
    (lambda: loaded_divider(None), lambda: loaded_divider_front(None)),
    (lambda: loaded_divider("0402"), lambda: loaded_divider_front(0.0625)),
    (plain_divider, plain_divider_front),
], ids=["loaded", "loaded-0402", "plain-ties"])
def test_front_matches_exhaustive_enumeration(design, expected):
    front = error_front(design())
    wanted = expected()
    assert front.complete and front.stopped is None
    assert all(p.proven for p in front.points)
    assert len(front.points) == len(wanted) >= 3
    for point, (supply, error) in zip(front.points, wanted, strict=True):
        assert point.supply_current == pytest.approx(supply, rel=1e-9)
        assert point.objective == pytest.approx(error, rel=1e-9, abs=1e-12)
    # one run per point and one that finds nothing below the last point
    assert front.runs == len(front.points) + 1


def test_points_are_mutually_non_dominated_and_ordered():
    front = error_front(loaded_divider())
    supplies = [p.supply_current for p in front.points]
    errors = [p.objective for p in front.points]
    assert supplies == sorted(supplies, reverse=True)
    assert all(b > a for a, b in itertools.pairwise(errors))
    assert set(front.points[0].values) == {"R1", "R2", "R3"}


def test_a_point_limit_cuts_the_front_and_says_so():
    front = error_front(loaded_divider(), max_points=2)
    assert len(front.points) == 2 and not front.complete
    assert front.stopped == "point limit 2"


def test_a_time_limit_cuts_the_front_and_says_so(monkeypatch):
    front = error_front(loaded_divider(), time_limit_s=1e-9)
    assert not front.complete and front.stopped == "time limit 1e-09 s"
    assert isinstance(front, ErrorFront)


def test_worst_case_basis_gives_a_front_of_robust_designs():
    nominal = error_front(loaded_divider())
    robust = error_front(loaded_divider(tolerance="1%"), require="worst-case")
    assert robust.points and robust.complete
    assert robust.require == "worst-case" and nominal.require == "nominal"
    # the robust designs are a subset: the least error at any supply is no smaller
    assert robust.points[0].objective >= nominal.points[0].objective


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"max_points": 0}, "max_points 0 must be at least 1"),
    ({"require": "always"}, "require 'always' is not known"),
])
def test_bad_arguments_are_refused(kwargs, message):
    with pytest.raises(DesignError, match=message):
        error_front(loaded_divider(), **kwargs)


def test_a_design_without_free_parts_is_refused():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k"}],
        "target": [{"voltage": "in", "equals": "10 V"}]})
    with pytest.raises(DesignError, match="no resistor has choose"):
        error_front(design)


def test_a_design_fed_by_a_current_source_has_one_point_at_no_supply():
    # the supply current counts voltage sources and regulators only: a current source's
    # design draws none, so the least error is the whole front; 1 mA x 3.3k = 3.3 V [HB-ohm]
    design = design_from_dict({
        "source": [{"ref": "I1", "kind": "current", "from": "gnd", "to": "out",
                    "value": "1 mA"}],
        "resistor": [{"ref": "R1", "nodes": ["out", "gnd"], "choose": "E12",
                      "range": ["1k", "10k"]}],
        "target": [{"voltage": "out", "equals": "3.3 V"}]})
    front = error_front(design)
    assert front.complete and front.runs == 1
    assert [(p.supply_current, p.values) for p in front.points] == [(0.0, {"R1": 3300.0})]
    assert front.points[0].objective == pytest.approx(0.0, abs=1e-12)
