"""The class table (synth.catalog.part_classes): bundled, one's own, a stock list with prices."""

from __future__ import annotations

from pathlib import Path

import pytest

from synth.catalog.part_classes import class_series, load_class_table, tighter_class
from synth.catalog.series import series_values
from synth.errors import DesignError
from synth.search.choices import choices_for

_HEADER = "name,series,tolerance,tcr,cost\n"


def _table(tmp_path: Path, body: str, header: str = _HEADER) -> Path:
    path = tmp_path / "classes.csv"
    path.write_text(header + body, encoding="utf-8")
    return path


def test_bundled_table_labels_its_costs_invented_and_pairs_series_as_practice():
    text = (Path(__file__).resolve().parents[2] / "catalogs" / "part_classes.csv").read_text()
    assert "invented" in text
    table = load_class_table()
    # 1 % parts sold in E24 and E96 values, 5 % in E24 [CP-series-tolerance]
    assert table["1%"].series == ("E24", "E96") and table["1%"].tolerance == 0.01
    assert table["5%"].series == ("E24",) and table["5%"].tolerance == 0.05
    costs = [c.cost for c in sorted(table.values(), key=lambda c: -c.tolerance)]
    assert costs == sorted(costs)  # a tighter class never costs less in the demo table


def test_a_union_of_series_holds_each_value_of_both_once():
    # E24 2.7 is not in E96, E96 1.02 not in E24 [IEC60063]
    from synth.design.reader import design_from_dict
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "classes": ["1%"],
                      "range": ["1k", "10k"]}]})
    values = choices_for(design.resistors[0]).values
    both = set(series_values("E24", 1e3, 1e4)) | set(series_values("E96", 1e3, 1e4))
    assert sorted(both) == values.tolist()
    assert 2700.0 in values and 1020.0 in values and len(values) == len(set(values))


def test_own_table_replaces_the_bundled_one(tmp_path):
    path = _table(tmp_path, "cheap,E12,10%,,0.5\nfine,E24+E192,0.1%,15 ppm/C,4\n")
    table = load_class_table(path)
    assert list(table) == ["cheap", "fine"]
    assert table["cheap"].tcr is None and table["fine"].tcr == pytest.approx(15e-6)
    assert table["fine"].choose == "E24+E192"


@pytest.mark.parametrize(("body", "fragment"), [
    ("a,E24,,100 ppm/C,1\n", "class 'a' has no tolerance"),
    ("a,E24,1%,100 ppm/C,-1\n", "cost '-1' is negative"),
    ("a,E24,1%,100 ppm/C,cheap\n", "cost 'cheap' is not a number"),
    ("a,E24,1%,100 ppm/C,inf\n", "must be finite"),
    ("a,E25,1%,100 ppm/C,1\n", "series 'E25' is not known"),
    ("a,E24,1,100 ppm/C,1\n", "is not a percentage"),
    ("a,E24,100%,100 ppm/C,1\n", "must lie between 0 % and 100 %"),
    (",E24,1%,100 ppm/C,1\n", "the class name is empty"),
    ("a,E24,1%,100 ppm/C,1\na,E96,1%,100 ppm/C,1\n", "class 'a' is given twice"),
    ("", "has no classes"),
])
def test_bad_class_tables_are_refused_with_the_line(tmp_path, body, fragment):
    with pytest.raises(DesignError, match=r"classes\.csv") as caught:
        load_class_table(_table(tmp_path, body))
    assert fragment in str(caught.value)


def test_a_table_missing_a_column_is_refused(tmp_path):
    with pytest.raises(DesignError, match="column 'cost' is missing"):
        load_class_table(_table(tmp_path, "a,E24,1%,0\n", "name,series,tolerance,tcr\n"))


def test_a_stock_list_with_prices_gives_one_class_per_tolerance_and_tcr(tmp_path):
    path = _table(tmp_path, "1k,1%,100,0.02\n2k,1%,100,0.03\n1k,0.1%,25,0.4\n1k,0.1%,10,0.9\n",
                  "value,tolerance,tcr,price\n")
    table = load_class_table(path)
    assert list(table) == ["1%", "0.1% 25ppm", "0.1% 10ppm"]
    # a class holds its own kind's rows and costs the dearest of them
    assert table["1%"].cost == 0.03 and table["1%"].values == (1e3, 2e3)
    assert table["0.1% 25ppm"].cost == 0.4 and table["0.1% 25ppm"].values == (1e3,)
    assert table["0.1% 10ppm"].tcr == pytest.approx(1e-5)
    assert table["1%"].stock_path == path and table["1%"].choose == "classes.csv"
    plain = tmp_path / "plain.csv"
    plain.write_text("value,tolerance,price\n1k,5%,0.01\n", encoding="utf-8")
    assert list(load_class_table(plain)) == ["5%"] and load_class_table(plain)["5%"].tcr is None


@pytest.mark.parametrize(("body", "fragment"), [
    ("1k,1%,-0.1\n", "price '-0.1' is negative"),
    ("1k,,0.1\n", "a class without a tolerance"),
    ("1k,1%,\n", "needs a price on every row"),
])
def test_bad_stock_class_tables_are_refused(tmp_path, body, fragment):
    with pytest.raises(DesignError, match=fragment):
        load_class_table(_table(tmp_path, body, "value,tolerance,price\n"))


def test_a_class_table_must_be_a_csv(tmp_path):
    with pytest.raises(DesignError, match=r"a class table must be a \.csv file"):
        load_class_table(tmp_path / "classes.toml")


def test_class_series_names_the_unknown_one():
    assert class_series("E12") == ("E12",)
    with pytest.raises(DesignError, match="'E97' is not known; did you mean 'E96'"):
        class_series("E24+E97")


def test_tighter_class_takes_the_loosest_tolerance_below_and_the_cheaper_on_a_tie(tmp_path):
    table = load_class_table(_table(tmp_path, "a,E24,1%,,1\nb,E96,0.1%,,5\nc,E192,0.1%,,3\n"
                                    "d,E192,0.01%,,9\n"))
    allowed = list(table.values())
    assert tighter_class(table["a"], allowed) == table["c"]
    assert tighter_class(table["c"], allowed) == table["d"]
    assert tighter_class(table["d"], allowed) is None
