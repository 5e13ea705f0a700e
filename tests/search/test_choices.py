"""The choices of a free position: single values, and strings of three or more parts made of
equal main parts and one trimming part, or of equal parts only.

E3 is 1.0, 2.2, 4.7 per decade [IEC60063]; a series string's value is the sum of its
parts [HB-ohm]; each part of a series position may lie from a tenth of the range's low
end up to its high end (docs/design-file.md).
"""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.search.choices import choices_for


def position(span, **extra):
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "1 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E3", "range": span,
                      **extra}]})
    return design.resistors[0]


def test_three_part_string_of_two_main_parts_and_a_trim():
    # parts from 3k to 33k: 4.7k, 10k, 22k; of the sets (m, m, t) only 10k+10k+10k = 30k
    # and 4.7k+4.7k+22k = 31.4k lie within 30k..33k
    choices = choices_for(position(["30k", "33k"], combine="series", parts=3))
    assert choices.combine == "series" and len(choices) == 2
    assert choices.values.tolist() == [30e3, 31.4e3]
    assert choices.parts.tolist() == [[10e3, 10e3, 10e3], [4.7e3, 4.7e3, 22e3]]
    assert choices.rank.tolist() == [0, 0]  # every part an E3 value


def test_equal_parts_only():
    choices = choices_for(position(["30k", "33k"], combine="series", parts=3,
                                   equal_parts=True))
    assert choices.values.tolist() == [30e3]


def test_a_single_part_has_no_combination():
    choices = choices_for(position(["1k", "10k"]))
    assert choices.combine is None
    assert choices.values.tolist() == [1e3, 2.2e3, 4.7e3, 10e3]


@pytest.mark.parametrize(("span", "extra", "fragment"), [
    (["5k", "6k"], {}, "f.toml, resistor R1: no E3 value lies in its range; widen the range"),
    # parts from 15 to 160: pairs of 22, 47 and 100 give 44, 69, 94, 122, 147 and 200
    (["150", "160"], {"combine": "series"},
     "f.toml, resistor R1: no set of 2 E3 values reaches its range; widen the range"),
])
def test_a_range_no_choice_reaches_is_refused(span, extra, fragment):
    with pytest.raises(DesignError) as raised:
        choices_for(position(span, **extra), "f.toml")
    assert str(raised.value) == fragment
