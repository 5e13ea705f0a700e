"""A sweep's table, CSV and JSON (synth.report.sweep): the rows carry the points' own figures."""

from __future__ import annotations

import csv
import io
import json
import math

from synth.report.sweep import render_sweep, sweep_json, sweep_rows, sweep_summary, sweep_text
from synth.sweep import SweepAxis, SweepPoint, SweepResult

AXES = (SweepAxis("source.V1.value", (5.0, 10.0), "V"),
        SweepAxis("design.max_power_use", (0.25,), "%"))
POINTS = (
    SweepPoint((5.0, 0.25), "design", "meets", objective=0.0123, chosen={"R1": 4700.0},
               proven=True, supply_current=1e-3, targets={"tap": 3.3}),
    SweepPoint((10.0, 0.25), "design", "fails", objective=math.inf, chosen={"R1": 10_000.0},
               proven=False, supply_current=2e-3, targets={"tap": math.nan},
               note="target tap lies outside"),
)
RESULT = SweepResult("d.toml", AXES, POINTS)


def test_rows_hold_every_field_and_no_infinity():
    first, second = sweep_rows(RESULT)
    assert first == {"source.V1.value": 5.0, "design.max_power_use": 0.25, "mode": "design",
                     "verdict": "meets", "largest_error": 0.0123, "proven": True,
                     "supply_current": 1e-3, "R1": 4700.0, "target: tap": 3.3, "note": ""}
    assert second["largest_error"] is None and second["target: tap"] is None


def test_csv_round_trips_the_numbers():
    rows = list(csv.DictReader(io.StringIO(render_sweep(RESULT, "csv"))))
    assert float(rows[0]["largest_error"]) == 0.0123 and rows[0]["proven"] == "true"
    assert rows[1]["largest_error"] == "" and rows[1]["note"] == "target tap lies outside"


def test_json_is_strict_and_in_grid_order():
    document = json.loads(render_sweep(RESULT, "json"))
    assert document == json.loads(json.dumps(sweep_json(RESULT), allow_nan=True).replace(
        "Infinity", "null").replace("NaN", "null"))
    assert [p["values"]["source.V1.value"] for p in document["points"]] == [5.0, 10.0]
    assert document["ok"] is False and document["axes"][1]["unit"] == "%"


def test_the_table_shows_units_and_says_proven_only_when_true():
    text = sweep_text(RESULT)
    first, second = text.splitlines()[2:4]
    assert first.split()[:8] == ["5", "V", "25%", "meets", "1.23%", "yes", "1", "mA"]
    assert "fails" in second and " no " in second and " - " in second
    assert sweep_summary(RESULT) == ("sweep of d.toml: 2 point(s), 1 meet every window and "
                                     "limit, 1 fail")
    assert render_sweep(RESULT, "table").endswith(sweep_summary(RESULT) + "\n")
