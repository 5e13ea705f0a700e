"""``rnsynth thermometer``: a sensor front end against independent sensor and divider arithmetic.

The RTD's resistance is computed here from the Callendar–Van Dusen relation with the
coefficients of IEC 60751 [IEC60751-CVD], the NTC's from the B-value model [CP-ntc-beta];
the divider by its ratio and parallel resistances [HB-loaded-divider].  The NTC divider's
series resistor for an inflection at Tm is the published relation R_Tm·(B − 2Tm)/(B + 2Tm)
[MEM-ntc-inflection], and the E96 values come from the reference checker's own table
[IEC60063].
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.synthesis import synthesize
from synth.templates.passive import QuickSettings
from synth.templates.thermometer import SensorOptions, reachable_span, thermometer_tables
from tests.refcheck.eseries import values as series_values

CVD_A, CVD_B, CVD_C = 3.9083e-3, -5.775e-7, -4.183e-12  # [IEC60751-CVD]


def cvd_ohm(t_c, r0=100.0):
    """R(t) of IEC 60751 [IEC60751-CVD]: the C term below 0 °C only."""
    t = np.asarray(t_c, dtype=float)
    cold = np.where(t < 0, CVD_C * (t - 100.0) * t ** 3, 0.0)
    return r0 * (1 + CVD_A * t + CVD_B * t * t + cold)


def ntc_ohm(t_c, r25=10e3, beta=3950.0):
    """R(T) = R25·exp(B(1/T − 1/T25)) [CP-ntc-beta]."""
    return r25 * np.exp(beta * (1 / (np.asarray(t_c) + 273.15) - 1 / 298.15))


def parallel(a, b):
    return a * b / (a + b)  # [HB-loaded-divider]


def run(*args):
    return CliRunner().invoke(cli, ["thermometer", *args, "--samples", "0", "--top", "1",
                                    "--quiet", "--jobs", "1"])


NTC = ["--sensor", "ntc", "--r25", "10k", "--beta", "3950"]
RANGE = ["--temperature", "0 C:50 C", "--output", "0.6 V:2.2 V", "--reference", "3.3 V"]
PT100 = ["--sensor", "rtd", "--temperature", "0 C:100 C", "--reference", "3.3 V"]


@pytest.mark.parametrize("args, fragment", [
    (["--sensor", "ntc", "--r25", "10k", "--beta", "3950", "--temperature", "50 C:0 C",
      "--output", "0.6 V:2.2 V", "--reference", "3.3 V"],
     "--temperature '50 C:0 C' is reversed; give the colder end first"),
    (["--sensor", "rtd", "--temperature", "-250 C:0 C", "--output", "1 V:1.1 V",
      "--reference", "3.3 V"],
     "--temperature '-250 C:0 C' leaves the rtd model's valid range -200 °C..850 °C"),
    (["--sensor", "rtd", "--temperature", "0 C:900 C", "--output", "1 V:2 V",
      "--reference", "3.3 V"], "leaves the rtd model's valid range -200 °C..850 °C"),
    ([*NTC, *RANGE, "--grid", "0"], "--grid 0 must be a whole number of points from 2"),
    ([*NTC, *RANGE, "--grid", "1"], "--grid 1 must be a whole number of points from 2"),
    (["--sensor", "ptc", *RANGE], "'--sensor': 'ptc' is not one of 'rtd', 'ntc'"),
    ([*PT100, "--output", "1.5 V:1.7 V", "--r0", "0"], "--r0 '0' must be positive"),
    ([*PT100, "--output", "1.5 V:1.7 V", "--r0", "-100"], "--r0"),
    (["--sensor", "ntc", "--r25", "0", "--beta", "3950", *RANGE],
     "--r25 '0' must be positive"),
    (["--sensor", "ntc", "--r25", "10k", "--beta", "-3950", *RANGE],
     "--beta '-3950' must be a positive B value"),
    (["--sensor", "ntc", "--r25", "10k", "--beta", "0 K", *RANGE],
     "--beta '0 K' must be a positive B value"),
    (["--sensor", "ntc", "--r25", "10k", *RANGE], "an ntc needs --r25 and --beta"),
    ([*PT100, "--output", "1.5 V:1.7 V", "--r25", "10k"],
     "--r25 applies to another kind of sensor, not an rtd; drop it"),
    ([*NTC, *RANGE, "--class", "A"], "--class applies to another kind of sensor"),
    ([*NTC, "--steinhart-hart", "1e-3,2e-4,9e-8", *RANGE],
     "give either --steinhart-hart or --r25 with --beta, not both; drop --r25"),
    (["--sensor", "ntc", "--steinhart-hart", "1e-3,x,9e-8", *RANGE],
     "--steinhart-hart '1e-3,x,9e-8' must be three numbers"),
    (["--sensor", "ntc", "--steinhart-hart", "1e-3,-2e-4,9e-8", *RANGE],
     "--steinhart-hart [0.001, -0.0002, 9e-08] needs b > 0 and c >= 0"),
    ([*PT100, "--output", "0.5 V:2.5 V"], "--output '0.5 V:2.5 V' is out of reach"),
    ([*NTC, "--temperature", "0 C:50 C", "--output", "0.6 V:3.6 V", "--reference", "3.3 V"],
     "must lie between 0 V and the reference 3.3 V"),
    ([*NTC, "--temperature", "0 C:50 C", "--output", "0.6 V:2.2 V", "--reference", "-3.3 V"],
     "--reference '-3.3 V' must be a positive voltage"),
    ([*NTC, "--temperature", "0 C", "--output", "0.6 V:2.2 V", "--reference", "3.3 V"],
     "--temperature '0 C' needs two ends separated by a colon"),
    ([*NTC, "--temperature", "0 C:0 C", "--output", "0.6 V:2.2 V", "--reference", "3.3 V"],
     "--temperature '0 C:0 C' has two equal ends"),
    ([*NTC, *RANGE, "--within", "-1 C"], "--within '-1 C' must be a positive temperature"),
    ([*NTC, *RANGE, "--tolerance", "80%"], "--tolerance '80%' must lie between 0 % and 50 %"),
])
def test_bad_input_is_refused_in_one_line_naming_the_option(args, fragment):
    result = run(*args)
    assert result.exit_code == 2, result.output
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in result.output
    assert fragment in lines[0]


def test_the_library_refuses_an_unknown_network_or_kind():
    with pytest.raises(DesignError, match="--network 'bridge' is not known"):
        thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "0 C:50 C",
                           "0.6 V:2.2 V", "3.3 V", QuickSettings(), network="bridge")
    with pytest.raises(DesignError, match="--sensor 'ptc' is not known"):
        thermometer_tables(SensorOptions("ptc"), "0 C:50 C", "0.6 V:2.2 V", "3.3 V",
                           QuickSettings())


def test_the_widest_pt100_span_is_the_geometric_mean_divider():
    """RB = √(R(0)·R(100)) maximises r/(r + RB) between the two resistances: the span is
    Vref·(√k − 1)/(√k + 1) [IEC60751-CVD] [HB-loaded-divider]; at that span the output is
    accepted, a little beyond it refused with the span stated."""
    r_low, r_high = cvd_ohm(0.0), cvd_ohm(100.0)
    rb = math.sqrt(r_low * r_high)
    ends = [3.3 * r / (r + rb) for r in (r_low, r_high)]
    span, k = reachable_span(thermometer_tables.__globals__["_model"](
        {"ref": "RT1", "kind": "rtd", "nodes": ["out", "gnd"]}), 0.0, 100.0, 3.3)
    assert span == pytest.approx(ends[1] - ends[0], rel=1e-12)
    assert k == pytest.approx(r_high / r_low, rel=1e-12)
    sensor = SensorOptions("rtd")
    edge = f"{ends[0]:.12g} V:{ends[1]:.12g} V"
    tables = thermometer_tables(sensor, "0 C:100 C", edge, "3.3 V", QuickSettings(),
                                network="divider")
    assert tables["sensor"][0]["nodes"] == ["out", "gnd"]
    wider = f"{ends[0] - 0.01:.6g} V:{ends[1] + 0.01:.6g} V"
    with pytest.raises(DesignError) as caught:
        thermometer_tables(sensor, "0 C:100 C", wider, "3.3 V", QuickSettings())
    assert f"at most {span * 1000:.4g} mV from 0 to 100 °C" in str(caught.value)


def test_an_rtd_front_end_against_the_callendar_van_dusen_divider():
    """Every grid error the report gives equals this test's own: R(t) by IEC 60751 (the C term
    below 0 °C), RP across it, RB above, read on the line in °C."""
    tables = thermometer_tables(SensorOptions("rtd", r0="1k", tolerance_class="A"),
                                "-50 C:150 C", "1.2 V:1.6 V", "3.3 V", QuickSettings(),
                                grid=11)
    assert tables["sensor"][0] == {"ref": "RT1", "kind": "rtd", "nodes": ["out", "gnd"],
                                   "r0": "1k", "class": "A"}
    result = synthesize(design_from_dict(tables), top=1)
    best = result.candidates[0]
    rb, rp = best.values["RB"], best.values["RP"]
    t = np.linspace(-50, 150, 11)
    bottom = parallel(cvd_ohm(t, 1000.0), rp)
    volts = 3.3 * bottom / (bottom + rb)
    slope = (1.6 - 1.2) / 200.0
    expected = (volts - (1.2 + slope * (t + 50))) / slope
    line = best.check.linearity[0]
    np.testing.assert_allclose(line.grid_c, t)
    np.testing.assert_allclose(line.grid_error_c, expected, rtol=0, atol=1e-9)
    assert abs(line.worst_error_c) >= np.max(np.abs(expected)) - 1e-12
    # an RTD's curve and the divider's bend the same way: never straighter than the ends
    assert np.max(np.abs(expected)) > 0.1


def inflection_rb(t_m_c=25.0, r25=10e3, beta=3950.0):
    """R_Tm·(B − 2Tm)/(B + 2Tm), Tm in kelvin [MEM-ntc-inflection]."""
    tm = t_m_c + 273.15
    return float(ntc_ohm(t_m_c, r25, beta)) * (beta - 2 * tm) / (beta + 2 * tm)


def test_the_best_e96_divider_resistor_sits_next_to_the_inflection_value():
    """The line through the inflection divider's own ends over 0..50 °C: the one free part's
    best E96 value is one of the two E96 values around R_Tm·(B − 2Tm)/(B + 2Tm)."""
    rb = inflection_rb()
    ends = [3.3 * rb / (rb + float(ntc_ohm(t))) for t in (0.0, 50.0)]
    tables = thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "0 C:50 C",
                                f"{ends[0]:.9g} V:{ends[1]:.9g} V", "3.3 V", QuickSettings(),
                                network="divider")
    assert [r["ref"] for r in tables["resistor"]] == ["RB"]
    assert tables["sensor"][0]["nodes"] == ["ref", "out"]
    result = synthesize(design_from_dict(tables), top=1)
    e96 = series_values("E96", 100, 10e6)
    below = max(v for v in e96 if v <= rb)
    above = min(v for v in e96 if v > rb)
    assert (below, above) == (7320.0, 7500.0)
    assert result.candidates[0].values["RB"] in (below, above)
    assert result.proven_optimal
    # the continuous optimum lies within one E96 step of the relation's value
    assert abs(math.log(result.ideal["RB"] / rb)) < math.log(above / below)


def test_a_falling_output_puts_the_ntc_at_the_bottom():
    tables = thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "0 C:50 C",
                                "2.2 V:0.6 V", "3.3 V", QuickSettings(),
                                network="series-parallel")
    nodes = {r["ref"]: r["nodes"] for r in tables["resistor"]}
    assert tables["sensor"][0]["nodes"] == ["mid", "gnd"]
    assert nodes == {"RB": ["ref", "out"], "RP": ["out", "gnd"], "RS": ["out", "mid"]}


def test_a_relative_window_is_a_share_of_the_temperature_range():
    tables = thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "-10 C:30 C",
                                "0.8 V:2.2 V", "3.3 V", QuickSettings(within="2%"))
    assert tables["linearity"][0]["within"] == "0.8 C"
    kept = thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950"), "-10 C:30 C",
                              "0.8 V:2.2 V", "3.3 V", QuickSettings(within="0.3 K"))
    assert kept["linearity"][0]["within"] == "0.3 K"


def test_an_unmeetable_window_fails_honestly_in_degrees():
    result = run(*NTC, *RANGE, "--within", "0.01 C")
    assert result.exit_code == 1, result.output
    assert "NO standard values meet every window and limit" in result.output
    assert "reads" in result.output and "°C off its line, beyond the ±0.01 °C allowed" \
        in result.output
    assert " mV lies outside" not in result.output and " V lies outside" not in result.output
    assert "meets every window" not in result.output


def test_steinhart_hart_coefficients_drive_the_sensor():
    result = run("--sensor", "ntc", "--steinhart-hart", "1.129148e-3, 2.34125e-4, 8.76741e-8",
                 "--tolerance", "1%", *RANGE, "--within", "2 C", "--json")
    assert result.exit_code == 0, result.output
    document = json.loads(result.output)
    assert document["feasible"] is True


def test_save_writes_a_design_file_that_design_reads_back_to_the_same_result(tmp_path):
    saved = tmp_path / "front.toml"
    first = run(*NTC, *RANGE, "--within", "1 C", "--json", "--save", str(saved))
    assert first.exit_code == 0, first.output
    again = CliRunner().invoke(cli, ["design", str(saved), "--samples", "0", "--top", "1",
                                     "--quiet", "--jobs", "1", "--json"])
    assert again.exit_code == 0, again.output
    a, b = json.loads(first.output), json.loads(again.output)
    for key in ("values", "objective", "linearity", "targets"):
        assert a["candidates"][0][key] == b["candidates"][0][key], key
    assert (a["feasible"], a["proven_optimal"]) == (b["feasible"], b["proven_optimal"])
    assert "[[sensor]]" in saved.read_text() and "[[linearity]]" in saved.read_text()


def test_max_current_bounds_what_the_divider_draws():
    """The divider's current from the reference is Vref over its resistance at each point
    (Ohm's law): a bound below the least a meeting design draws fails, exit 1."""
    loose = run(*NTC, *RANGE, "--within", "1 C", "--max-current", "1 mA", "--json")
    assert loose.exit_code == 0, loose.output
    best = json.loads(loose.output)["candidates"][0]
    rb, rp = best["values"]["RB"], best["values"]["RP"]
    drawn = max(3.3 / (parallel(float(ntc_ohm(t)), rp) + rb) for t in np.linspace(0, 50, 21))
    assert drawn <= 1e-3
    tight = run(*NTC, *RANGE, "--within", "1 C", "--max-current", f"{drawn * 0.5:.4g} A")
    assert tight.exit_code == 1, tight.output
    assert "supply current" in tight.output
    refused = run(*NTC, *RANGE, "--max-current", "lots")
    assert refused.exit_code == 2 and "--max-current" in refused.output


def test_max_sensor_current_bounds_the_sensors_own_current():
    """The sensor's current at each temperature, by the divider in closed form
    [HB-loaded-divider]: Pt1000 with RP across it and RB above."""
    args = ["--sensor", "rtd", "--r0", "1k", "--temperature", "0 C:100 C", "--output",
            "1.5 V:1.7 V", "--reference", "3.3 V", "--within", "5 C", "--json"]
    free = run(*args)
    assert free.exit_code == 0, free.output
    best = json.loads(free.output)["candidates"][0]["values"]
    t = np.linspace(0, 100, 21)
    rt = cvd_ohm(t, 1000.0)
    bottom = parallel(rt, best["RP"])
    sensor_amps = 3.3 * bottom / (bottom + best["RB"]) / rt
    bound = float(sensor_amps.max()) * 0.5
    held = run(*args, "--max-sensor-current", f"{bound:.6g} A")
    assert held.exit_code in (0, 1), held.output
    document = json.loads(held.output)
    chosen = document["candidates"][0]["values"]
    bottom = parallel(rt, chosen["RP"])
    expected = 3.3 * bottom / (bottom + chosen["RB"]) / rt
    targets = [t for t in document["candidates"][0]["targets"]
               if t["label"].startswith("sensor current")]
    assert len(targets) == 21
    np.testing.assert_allclose([t["value"] for t in targets], expected, rtol=1e-9)
    assert [t["met"] for t in targets] == [bool(a <= bound * (1 + 1e-9)) for a in expected]
    assert (held.exit_code == 0) == bool(expected.max() <= bound * (1 + 1e-9)) or \
        not document["feasible"]
    refused = run(*args, "--max-sensor-current", "-")
    assert refused.exit_code == 2 and "--max-sensor-current" in refused.output


def test_a_window_broken_only_at_worst_case_is_read_in_degrees():
    """Met at nominal values, broken over the tolerance box: the worst-case line speaks °C."""
    result = run(*NTC, "--tolerance", "5%", *RANGE, "--within", "1 C", "--require",
                 "worst-case")
    assert result.exit_code == 1, result.output
    assert "at worst case, target temperature @ " in result.output
    assert "°C off its line, beyond the ±1 °C allowed" in result.output
    assert " V lies outside" not in result.output
