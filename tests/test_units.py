"""Value notation: reading and writing (IEC 60062 letter-and-digit code, SI prefixes).

Sources: the letter-and-digit code [IEC60062]; SI prefixes and units [SI-brochure].
"""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import given
from hypothesis import strategies as st

from synth.errors import DesignError
from synth.units import (
    format_eng,
    format_rkm,
    parse_decibels,
    parse_fraction,
    parse_quantity,
    parse_resistance,
    parse_tcr,
    parse_temperature,
)

# Letter-and-digit examples from IEC 60062 (via the RKM code article) [IEC60062]:
# R47 = 0.47 ohm, 4R7, 470R, 4K7, 47K3 = 47.3 kohm, 4M7, 2R2, 1K0, 1M0.  Zero is 0R [CP-zero-ohm].
RKM_EXAMPLES = [
    ("R47", 0.47), ("4R7", 4.7), ("470R", 470.0), ("4K7", 4700.0), ("47K3", 47300.0),
    ("4M7", 4.7e6), ("2R2", 2.2), ("1K0", 1000.0), ("1M0", 1e6), ("0R1", 0.1), ("0R", 0.0),
    ("1G0", 1e9), ("4L7", 0.0047),
]


@pytest.mark.parametrize(("text", "ohms"), RKM_EXAMPLES)
def test_rkm_codes_read(text, ohms):
    assert parse_resistance(text) == pytest.approx(ohms, rel=1e-15)


@pytest.mark.parametrize(("text", "ohms"), [
    ("4k7", 4700.0), ("4.7k", 4700.0), ("4K7", 4700.0), ("4700", 4700.0),
    ("4.7 kΩ", 4700.0), ("4.7kohm", 4700.0), ("4.7 kohms", 4700.0), ("100m", 0.1),
    ("1e3", 1000.0), ("2.2M", 2.2e6), (4700, 4700.0), (0.5, 0.5),
    ("10 Ω", 10.0),
])
def test_engineering_resistances_read(text, ohms):
    assert parse_resistance(text) == pytest.approx(ohms, rel=1e-15)


@pytest.mark.parametrize(("text", "fragment"), [
    ("4k7k", "is not a resistance"),
    ("1.5k7", "is not a resistance"),
    ("4 7k", "is not a resistance"),
    ("abc", "is not a resistance"),
    ("", "is not a resistance"),
    ("4m7", "ambiguous"),
    ("1e3k", "mixes an exponent and a prefix"),
    (float("nan"), "not a finite"),
    (float("inf"), "not a finite"),
    (True, "is not a resistance"),
    ([1], "is not a resistance"),
])
def test_malformed_resistances_refused(text, fragment):
    with pytest.raises(DesignError, match=fragment):
        parse_resistance(text)


@pytest.mark.parametrize(("text", "hint"), [
    ("4.7meg", "write M for mega (4.7M)"), ("1MEG", "write M for mega (1M)"),
    ("2.2 Meg", "write M for mega (2.2M)"), ("10megohm", "write M for mega (10M)"),
])
def test_meg_is_refused_with_the_si_prefix_hinted(text, hint):
    # SI writes M for mega (the SI Brochure's prefix table) [SI-brochure]; "meg" is not a prefix
    with pytest.raises(DesignError) as caught:
        parse_resistance(text)
    message = str(caught.value)
    assert message == f"{text!r} is not a resistance; {hint}"
    assert "\n" not in message


@pytest.mark.parametrize(("text", "unit", "value"), [
    ("12 V", "V", 12.0), ("50 uA", "A", 50e-6), ("50 µA", "A", 50e-6), ("50 μA", "A", 50e-6),
    ("250mW", "W", 0.25), ("3.3", "V", 3.3), ("1.5kV", "V", 1500.0), ("-5 V", "V", -5.0),
    ("20 mA", "A", 0.02), (13.8, "V", 13.8),
])
def test_quantities_read(text, unit, value):
    assert parse_quantity(text, unit) == pytest.approx(value, rel=1e-15)


def test_micro_is_exact():
    # the decimal scaling gives the correctly rounded float, not 50 * 1e-6
    assert parse_quantity("50 uA", "A") == 5e-05


@pytest.mark.parametrize(("text", "fragment"), [
    ("12 A", "is not a voltage (unit 'A')"),
    ("12 VV", "is not a voltage"),
    ("twelve", "is not a voltage"),
    ("1e3k V", "mixes an exponent"),
])
def test_wrong_quantities_refused(text, fragment):
    with pytest.raises(DesignError, match=re.escape(fragment)):
        parse_quantity(text, "V")


def test_fractions_tcr_temperatures():
    assert parse_fraction("1 %") == 0.01
    assert parse_fraction("±0.5%") == 0.005
    assert parse_fraction("50 ppm") == 50e-6
    assert parse_tcr("100 ppm/C") == pytest.approx(1e-4)
    assert parse_tcr("±25 ppm/K") == pytest.approx(25e-6)
    assert parse_tcr("50ppm/°C") == pytest.approx(50e-6)
    assert parse_temperature("70 C") == 70.0
    assert parse_temperature("-20 °C") == -20.0
    assert parse_temperature("343.15 K") == pytest.approx(70.0)
    assert parse_temperature(25) == 25.0
    assert parse_decibels("6 dB") == 6.0


@pytest.mark.parametrize(("parser", "text", "fragment"), [
    (parse_fraction, 1, "percentage with its sign"),
    (parse_fraction, "1", "percentage with its sign"),
    (parse_tcr, "100", "TCR with its unit"),
    (parse_tcr, "100 ppm", "TCR with its unit"),
    (parse_temperature, "70 F", "temperature such as"),
    (parse_temperature, "-5 K", "below absolute zero"),
    (parse_decibels, "6 dBm", "level in dB"),
])
def test_other_notations_refused(parser, text, fragment):
    with pytest.raises(DesignError, match=fragment):
        parser(text)


@pytest.mark.parametrize(("ohms", "code"), [
    (0.47, "R47"), (4.7, "4R7"), (470, "470R"), (4700, "4K7"), (47300, "47K3"),
    (4.7e6, "4M7"), (2.2, "2R2"), (1000, "1K0"), (1e6, "1M0"), (0, "0R"), (10e3, "10K"),
    (4990, "4K99"), (49.9, "49R9"), (0.1, "R10"),
])
def test_rkm_codes_written(ohms, code):
    # the same IEC 60062 examples, written [IEC60062]; zero as 0R [CP-zero-ohm]
    assert format_rkm(ohms) == code


@pytest.mark.parametrize(("value", "unit", "text"), [
    (4700, "Ω", "4.7 kΩ"), (5e-5, "A", "50 µA"), (-0.0125, "A", "-12.5 mA"),
    (999.96, "V", "1 kV"), (0, "V", "0 V"), (3.30075, "V", "3.301 V"), (1e6, "Ω", "1 MΩ"),
])
def test_engineering_notation_written(value, unit, text):
    assert format_eng(value, unit) == text


@pytest.mark.parametrize(("ohms", "code"), [(1e308, "1.00e308"), (4.7e15, "4.70e15"),
                                           (999e12, "999T")])
def test_values_beyond_the_largest_letter_are_written_in_scientific_notation(ohms, code):
    # the code's largest letter is T, 10^12 [IEC60062] [MEM-rkm-T]: 1e308 ohm written with
    # it took 297 digits; the short form still reads back as the same value
    assert format_rkm(ohms) == code
    assert parse_resistance(code) == pytest.approx(ohms, rel=5e-3)


def test_negative_resistance_has_no_code():
    with pytest.raises(DesignError, match="no letter-and-digit code"):
        format_rkm(-1)


resistances = st.floats(min_value=1e-3, max_value=1e12, allow_nan=False, allow_infinity=False)


@given(resistances, st.integers(min_value=2, max_value=6))
def test_rkm_round_trip(ohms, digits):
    written = format_rkm(ohms, digits)
    back = parse_resistance(written)
    assert math.isclose(back, ohms, rel_tol=0.5 * 10 ** (1 - digits) + 1e-12)


@given(resistances, st.integers(min_value=3, max_value=12))
def test_engineering_round_trip_resistance(ohms, digits):
    back = parse_resistance(format_eng(ohms, "Ω", digits))
    assert math.isclose(back, ohms, rel_tol=0.5 * 10 ** (1 - digits) + 1e-12)


@given(st.floats(min_value=-1e9, max_value=1e9, allow_nan=False).filter(lambda v: abs(v) > 1e-11),
       st.sampled_from(["V", "A", "W"]))
def test_engineering_round_trip_quantities(value, unit):
    back = parse_quantity(format_eng(value, unit, 12), unit)
    assert math.isclose(back, value, rel_tol=1e-11)


# -- numbers at the edge of the float range (common practice: refuse, never overflow) -----

_EDGES = ["1e1000000", "1e99999999999999999999", "9" * 400, "9" * 400 + "R", "9" * 99 + "R9",
          "1e400"]


@pytest.mark.parametrize("text", _EDGES, ids=lambda t: t[:12])
@pytest.mark.parametrize("parse", [
    parse_resistance,
    lambda t: parse_quantity(t + " V", "V"),
    lambda t: parse_fraction(t + "%"),
    lambda t: parse_tcr(t + " ppm/C"),
    lambda t: parse_temperature(t + " C"),
])
def test_numbers_beyond_the_float_range_are_refused(parse, text):
    with pytest.raises(DesignError) as info:
        parse(text)
    assert len(str(info.value)) < 200 and "\n" not in str(info.value)


@pytest.mark.parametrize("number", [10 ** 400, -(10 ** 400), float("nan"), float("inf")])
def test_toml_numbers_beyond_the_float_range_are_refused(number):
    for parse in (parse_resistance, lambda n: parse_quantity(n, "V"), parse_temperature):
        with pytest.raises(DesignError, match="not a finite"):
            parse(number)


@pytest.mark.parametrize("text", ["-273.16 C", "-300 C", "-1 K", -274])
def test_temperatures_below_absolute_zero_are_refused(text):
    with pytest.raises(DesignError, match="below absolute zero"):
        parse_temperature(text)


def test_absolute_zero_itself_is_read():
    assert parse_temperature("0 K") == pytest.approx(-273.15)
    assert parse_temperature("-273.15 C") == -273.15
