"""Linearity targets checked on their grid and refined (synth.linearity)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.design.target import Target
from synth.linearity import check_linearity


def _probe(r1: str = "4k7", grid: int = 11, within: str = "1 C") -> dict:
    return {
        "source": [{"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V"}],
        "resistor": [{"ref": "R1", "nodes": ["ref", "out"], "value": r1}],
        "sensor": [{"ref": "RT1", "kind": "ntc", "nodes": ["out", "gnd"], "r25": "10k",
                    "beta": "3950 K"}],
        "linearity": [{"sensor": "RT1", "voltage": "out", "grid": grid, "within": within,
                       "line": [["0 C", "2.5 V"], ["50 C", "1.0 V"]]}],
    }


def _closed_form(t_c: np.ndarray, r1: float) -> np.ndarray:
    """The unloaded divider 3.3 V · R/(R1 + R) [HB-divider] with the B model [CP-ntc-beta]."""
    r = 10e3 * np.exp(3950.0 * (1 / (t_c + 273.15) - 1 / 298.15))
    return 3.3 * r / (r1 + r)


def _line_error(t_c: np.ndarray, volts: np.ndarray) -> np.ndarray:
    return (volts - (2.5 - 0.03 * t_c)) / -0.03


def test_grid_errors_against_the_closed_form():
    d = design_from_dict(_probe())
    c = check_linearity(d, d.linearities[0], np.array([4700.0, 1.0]))
    assert np.allclose(c.grid_c, np.linspace(0, 50, 11))
    assert np.allclose(c.grid_error_c, _line_error(c.grid_c, _closed_form(c.grid_c, 4700.0)),
                       atol=1e-9)


@pytest.mark.parametrize("r1", [2200.0, 4700.0, 8200.0])
def test_refinement_finds_the_peak_of_a_dense_sweep(r1):
    d = design_from_dict(_probe(grid=6))
    c = check_linearity(d, d.linearities[0], np.array([r1, 1.0]))
    dense = np.linspace(0, 50, 20001)
    errors = _line_error(dense, _closed_form(dense, r1))
    peak = float(np.max(np.abs(errors)))
    assert abs(c.worst_error_c) >= abs(c.grid_worst_error_c)
    assert abs(c.worst_error_c) == pytest.approx(peak, abs=2e-4)
    assert c.worst_c == pytest.approx(float(dense[np.argmax(np.abs(errors))]), abs=0.05)
    t, e = c.curve
    assert np.all(np.diff(t) >= 0) and len(t) == len(e) == 6 + len(c.refined_c)


def test_met_follows_the_refined_error():
    loose = design_from_dict(_probe(r1="6k8", within="10 C"))
    assert check(loose).linearity[0].met and check(loose).ok
    tight = check(design_from_dict(_probe(within="0.1 C")))
    assert not tight.linearity[0].met and not tight.ok
    (problem,) = [p for p in tight.problems if p.kind == "linearity"]
    assert problem.unit == "°C" and problem.limit == 0.1
    assert "°C off its line, beyond the ±0.1 °C allowed" in str(problem)
    # the grid points out of their window speak in °C too: the closed form's error there
    t = np.linspace(0, 50, 11)
    errors = _line_error(t, _closed_form(t, 4700.0))
    windows = [p for p in tight.problems if p.kind == "window"]
    assert windows and len(windows) == int(np.sum(np.abs(errors) > 0.1))
    for p in windows:
        at = float(p.subject.rsplit("@ ", 1)[1].removesuffix(" °C"))
        off = errors[int(np.argmin(np.abs(t - at)))]
        assert str(p) == (f"target {p.subject} reads {off:+.3g} °C off its line, beyond the "
                          "±0.1 °C allowed")


def test_a_target_read_in_degrees():
    # a point of a linearity target: 30 mV/°C, 1 °C window; its error is in °C, not relative
    t = Target("p", "voltage", ("out", "gnd"), None, 2.0, 0.03, None, None, None, "V",
               reading=("°C", -0.03))
    assert not t.relative
    assert t.scale == 0.03
    assert float(t.error(2.015)) == pytest.approx(-0.5)
    assert float(t.objective(2.015)) == pytest.approx(0.5)
    assert math.isnan(float(Target("q", "voltage", ("out", "gnd"), None, None, None, None, 1.0,
                                   None, "V", reading=("°C", 1.0)).error(1.0)))


def _two_free(line: list, within: str = "1 C") -> dict:
    data = _probe(grid=9, within=within)
    data["resistor"] = [
        {"ref": "R1", "nodes": ["ref", "out"], "choose": "E24", "range": ["1k", "100k"]},
        {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24", "range": ["1k", "100k"]}]
    data["linearity"][0]["line"] = line
    return data


def _exhaustive(line: list, within_c: float) -> tuple[float, float, float]:
    """Every E24 pair [IEC60063], the divider and the B model in closed form [HB-divider]
    [CP-ntc-beta]: the pair with the least largest grid error, in units of ``within``."""
    from synth.catalog.series import series_values

    values = series_values("E24", 1e3, 1e5)
    (t1, v1), (t2, v2) = ((float(t.split()[0]), float(v.split()[0])) for t, v in line)
    t = np.linspace(t1, t2, 9)
    r = 10e3 * np.exp(3950.0 * (1 / (t + 273.15) - 1 / 298.15))
    slope = (v2 - v1) / (t2 - t1)
    r1, r2 = values[:, None, None], values[None, :, None]
    z = r2 * r / (r2 + r)
    volts = 3.3 * z / (r1 + z)
    worst = np.abs(volts - (v1 + slope * (t - t1))).max(axis=2) / abs(slope) / within_c
    i, j = np.unravel_index(np.argmin(worst), worst.shape)
    return float(values[i]), float(values[j]), float(worst[i, j])


@pytest.mark.parametrize("line", [[["0 C", "2.0 V"], ["50 C", "1.0 V"]],
                                  [["10 C", "1.8 V"], ["40 C", "1.2 V"]]])
def test_the_search_against_an_exhaustive_search(line):
    # [CALC-exhaustive]: the largest grid error in °C, minimised over every E24 pair
    from synth.synthesis import synthesize

    result = synthesize(design_from_dict(_two_free(line, within="1 C")), top=1)
    r1, r2, objective = _exhaustive(line, 1.0)
    best = result.candidates[0]
    assert result.proven_optimal
    assert (best.values["R1"], best.values["R2"]) == (r1, r2)
    assert best.objective == pytest.approx(objective, rel=1e-9)
    lin = best.check.linearity[0]
    assert abs(lin.grid_worst_error_c) == pytest.approx(objective, rel=1e-9)


def test_the_report_states_grid_refinement_and_largest_error():
    from synth.report.check import check_json, check_text

    result = check(design_from_dict(_probe(r1="6k8", grid=11, within="10 C")))
    text = check_text(result)
    assert "checked on a grid of 11 points every 5 °C from 0 to 50 °C, then 48 more" in text
    c = result.linearity[0]
    assert f"largest error {c.worst_error_c:+.3g} °C at {c.worst_c:.4g} °C" in text
    record = check_json(result)["linearity"][0]
    assert record["grid"] == 11 and record["refined"] == 48 and record["met"]
    assert record["worst_error_c"] == c.worst_error_c
