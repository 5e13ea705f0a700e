"""The network drawing: every designator, value and node as text, on each bundled example.

Values are written as format_eng writes them (the SI prefixes [SI-brochure]); the
divider's node voltage is that of [HB-divider].
"""

from __future__ import annotations

import pytest
from matplotlib.figure import Figure

from synth.checking import check
from synth.design.load import load_design
from synth.design.reader import design_from_dict
from synth.report.pictures.network import first_point_view, network_drawing
from synth.synthesis import synthesize
from synth.units import format_eng

from conftest import EXAMPLES


def texts(figure):
    return "\n".join(t.get_text() for ax in figure.axes for t in ax.texts)


def checked_example(path):
    design = load_design(path)
    if design.free_resistors:
        return synthesize(design, top=1).candidates[0].check
    return check(design)


DESIGNS = [p for p in EXAMPLES if "board" not in p.name]


@pytest.mark.parametrize("path", DESIGNS, ids=lambda p: p.stem)
def test_every_designator_value_and_node_is_drawn(path):
    result = checked_example(path)
    figure = network_drawing(result)
    assert isinstance(figure, Figure)
    drawn = texts(figure)
    if result.design.points:  # drawn once, at the first point
        result = first_point_view(result)
        assert result.design.points == () and "(at " in figure.axes[0].get_title()
    design = result.design
    for resistor in design.resistors:
        assert resistor.ref in drawn
    for resistor in design.physical_resistors:  # a point's copy takes its leader's value
        for ref in resistor.part_refs:
            assert ref in drawn and format_eng(result.values[ref], "Ω") in drawn, ref
    for source in design.sources:
        if "." not in source.ref:
            assert source.ref in drawn
    for transistor in design.transistors:
        assert transistor.ref in drawn
    for node in design.node_names:
        assert f"{node}  {format_eng(result.nodes[node], 'V')}" in drawn


def test_parts_of_a_position_and_a_given_axes():
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": ["10k", "10k"], "parts": 2,
                      "combine": "series"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "4 V"}]})
    result = check(design)
    host = Figure()
    ax = host.subplots()
    assert network_drawing(result, ax=ax, title="two in series") is host
    drawn = texts(host)
    assert "R1A" in drawn and "R1B" in drawn and "(series)" in drawn
    assert "out  4 V" in drawn  # 12 V x 10k / 30k [HB-divider]
    assert ax.get_title() == "two in series"


def test_columns_cross_no_rail_in_a_ladder():
    # a ladder drawn by the exhaustive column order: no line crosses a rail
    from synth.report.pictures.network import _branches, _columns, _crossings, _rows

    result = check(design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd",
                    "value": "8 V"}],
        "resistor": [{"ref": "R1", "nodes": ["a", "b"], "value": "1k"},
                     {"ref": "R3", "nodes": ["b", "c"], "value": "1k"},
                     {"ref": "R2", "nodes": ["b", "gnd"], "value": "2k"},
                     {"ref": "R4", "nodes": ["c", "gnd"], "value": "1k"}],
        "target": [{"voltage": "c", "equals": "2 V"}]}))
    branches = _branches(result)
    rows = _rows(result.design.node_names, result.nodes)
    # in file order R2 (b to gnd) crosses the rail of c between R3 and R4
    assert _crossings(tuple(range(len(branches))), branches, rows) == 1
    columns = _columns(branches, rows)
    order = tuple(sorted(range(len(branches)), key=lambda k: columns[k]))
    assert _crossings(order, branches, rows) == 0


def test_a_long_ladder_is_ordered_by_barycentres_and_swaps():
    # an R-2R ladder of four rungs (nine branches, past the exhaustive order): every
    # designator and value is drawn, and the ordering crosses no more rails than file order
    from synth.report.pictures.network import _branches, _columns, _crossings, _rows

    resistors = []
    nodes = ["n0", "n1", "n2", "n3"]
    for k, node in enumerate(nodes):
        resistors.append({"ref": f"RS{k}", "nodes": [node, "gnd"], "value": "20k"})
        if k:
            resistors.append({"ref": f"RL{k}", "nodes": [nodes[k - 1], node], "value": "10k"})
    resistors[0]["value"] = "10k"
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "n0", "minus": "gnd",
                    "value": "8 V"}],
        "resistor": resistors,
        "target": [{"voltage": "n3", "equals": "1 V"}]})
    result = check(design)
    drawn = texts(network_drawing(result))
    for item in resistors:
        assert f"{item['ref']}\n{format_eng(result.positions[item['ref']], 'Ω')}" in drawn
    branches = _branches(result)
    assert len(branches) > 7
    rows = _rows(design.node_names, result.nodes)
    columns = _columns(branches, rows)
    order = tuple(sorted(range(len(branches)), key=lambda k: columns[k]))
    assert _crossings(order, branches, rows) <= _crossings(tuple(range(len(branches))),
                                                          branches, rows)
