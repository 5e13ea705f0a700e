"""Catalogues: IEC 60063 series and package ratings."""

from __future__ import annotations

import numpy as np
import pytest

from synth.catalog.packages import load_package_table
from synth.catalog.series import load_series, nearest_value, series_names, series_values
from synth.errors import DesignError

# IEC 60063:2015 Table 1 [IEC60063]
E3 = [1.0, 2.2, 4.7]
E6 = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7,
       5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1]
# IEC 60063:2015 Table 2, E192 (x 0.01) [IEC60063]
E192 = [int(v) for v in """
100 101 102 104 105 106 107 109 110 111 113 114 115 117 118 120 121 123 124 126 127 129 130 132
133 135 137 138 140 142 143 145 147 149 150 152 154 156 158 160 162 164 165 167 169 172 174 176
178 180 182 184 187 189 191 193 196 198 200 203 205 208 210 213 215 218 221 223 226 229 232 234
237 240 243 246 249 252 255 258 261 264 267 271 274 277 280 284 287 291 294 298 301 305 309 312
316 320 324 328 332 336 340 344 348 352 357 361 365 370 374 379 383 388 392 397 402 407 412 417
422 427 432 437 442 448 453 459 464 470 475 481 487 493 499 505 511 517 523 530 536 542 549 556
562 569 576 583 590 597 604 612 619 626 634 642 649 657 665 673 681 690 698 706 715 723 732 741
750 759 768 777 787 796 806 816 825 835 845 856 866 876 887 898 909 920 931 942 953 965 976 988
""".split()]


def decade(name):
    return series_values(name, 1.0, 9.999).tolist()


@pytest.mark.parametrize(("name", "table"), [("E3", E3), ("E6", E6), ("E12", E12), ("E24", E24)])
def test_two_digit_series_match_iec_60063_table_1(name, table):
    assert decade(name) == table


def test_three_digit_series_match_iec_60063_table_2():
    # the E192 table [IEC60063]; E96 = E192[0::2], E48 = E192[0::4] [CALC-eseries]
    assert decade("E192") == [v / 100 for v in E192]
    assert decade("E96") == [v / 100 for v in E192[0::2]]
    assert decade("E48") == [v / 100 for v in E192[0::4]]


def test_counts_and_order():
    assert series_names() == ("E3", "E6", "E12", "E24", "E48", "E96", "E192")
    for name in series_names():
        assert len(load_series(name).mantissas) == int(name[1:])


def test_irregular_values_are_the_tables_not_the_formula():
    # IEC 60063 lists 2.7..4.7 and 8.2 in E24 where round(10^(i/24), 1) gives other values,
    # and 9.20 at E192 index 185 where the formula gives 9.19 [IEC60063] [CALC-eseries].
    formula = [round(10 ** (i / 24), 1) for i in range(24)]
    table = decade("E24")
    differ = [i for i in range(24) if formula[i] != table[i]]
    assert differ == [10, 11, 12, 13, 14, 15, 16, 22]
    assert table[22] == 8.2 and formula[22] == 8.3
    assert decade("E192")[185] == 9.2
    assert round(10 ** (185 / 192), 2) == 9.19


def test_nesting_of_two_digit_series():
    assert decade("E12") == decade("E24")[0::2]
    assert decade("E6") == decade("E12")[0::2]
    assert decade("E3") == decade("E6")[0::2]


def test_e24_and_e96_share_six_values():
    # [CALC-eseries]: E24 ∩ E96 = {1.0, 1.1, 1.3, 1.5, 2.0, 7.5}
    assert sorted(set(decade("E24")) & set(decade("E96"))) == [1.0, 1.1, 1.3, 1.5, 2.0, 7.5]


def test_values_span_decades_exactly():
    values = series_values("E96", 1e3, 1e4)
    assert values[0] == 1000.0 and values[-1] == 10000.0 and len(values) == 97
    assert series_values("E12", 1000, 2000).tolist() == [1000.0, 1200.0, 1500.0, 1800.0]
    assert series_values("E192", 0.1, 0.1).tolist() == [0.1]
    assert np.all(np.diff(series_values("E24", 1, 1e9)) > 0)


@pytest.mark.parametrize(("ohms", "name", "expected"), [
    # nearest value on a log scale [CALC-eseries]
    (1563, "E24", 1600.0), (1563, "E96", 1580.0), (1563, "E192", 1560.0), (9190, "E192", 9200.0),
    (1.0487, "E24", 1.0), (1.0489, "E24", 1.1),  # the 1.0/1.1 boundary is at 1.0488
    (9.6, "E6", 10.0),
])
def test_nearest_value_on_a_log_scale(ohms, name, expected):
    assert nearest_value(ohms, name) == expected


def test_usual_tolerances():
    # IEC 60063 informative pairing / common practice [CP-series-tolerance]
    tolerances = {n: load_series(n).tolerance for n in series_names()}
    assert tolerances == {"E3": 0.4, "E6": 0.2, "E12": 0.1, "E24": 0.05, "E48": 0.02,
                          "E96": 0.01, "E192": 0.005}


def test_unknown_series_is_refused_with_a_suggestion():
    with pytest.raises(DesignError, match=r"unknown series 'E97'; did you mean 'E96'\?"):
        load_series("E97")
    with pytest.raises(DesignError, match=r"range .* is empty"):
        series_values("E24", 10, 1)


def test_bundled_package_table():
    # typical thick-film chip ratings, common practice [CP-chip-ratings]
    table = load_package_table()
    expected = {"0201": (0.05, 25), "0402": (0.0625, 50), "0603": (0.1, 50), "0805": (0.125, 150),
                "1206": (0.25, 200), "1210": (0.333, 200), "2010": (0.75, 200), "2512": (1.0, 200)}
    for name, (power, volts) in expected.items():
        assert (table[name].rated_power_w, table[name].limiting_voltage_v) == (power, volts)
        assert table[name].rated_ambient_c == 70 and table[name].zero_power_c == 155
        assert table[name].source
    # imperial 0201 is metric 0603, a BOM pitfall [CP-package-codes]
    assert table["0603M"].imperial == "0201"
    assert table["1608M"].name == "0603"
    assert table["axial-1/4W"].rated_power_w == 0.25


def test_user_package_table(tmp_path):
    path = tmp_path / "house.csv"
    path.write_text(
        "name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
        "limiting_voltage_v,source\n"
        "0603HP,chip,0603,1608M,0.25,70,155,75,house data\n", encoding="utf-8")
    assert load_package_table(path)["0603HP"].rated_power_w == 0.25


@pytest.mark.parametrize(("row", "fragment"), [
    ("0603,chip,0603,1608M,lots,70,155,75,x", "rated_power_w 'lots' is not a number"),
    ("0603,chip,0603,1608M,-1,70,155,75,x", "rated_power_w and limiting_voltage_v must be"),
    ("0603,chip,0603,1608M,0.1,70,60,75,x", "zero_power_c must lie above"),
])
def test_bad_package_rows_are_refused_with_line(tmp_path, row, fragment):
    path = tmp_path / "bad.csv"
    path.write_text("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
                    f"limiting_voltage_v,source\n# comment\n{row}\n", encoding="utf-8")
    with pytest.raises(DesignError, match=f"bad.csv, line 3: {fragment}"):
        load_package_table(path)
