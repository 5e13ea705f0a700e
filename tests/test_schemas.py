"""Every JSON output validates against the JSON Schema shipped in the package
(synth/schemas/), for each bundled example: check and design of each design file, the BOM of
the bundled board (and of a board with a stock list)."""

from __future__ import annotations

import json

import jsonschema
import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.schemas import schema_path

from conftest import ROOT

DESIGNS = sorted(p for p in (ROOT / "examples").glob("*.toml") if "board" not in p.name)
FREE = [p for p in DESIGNS if any(key in p.read_text(encoding="utf-8")
                                  for key in ("choose", "classes"))]  # design needs these


def validate(name, text):
    schema = json.loads(schema_path(name).read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    document = json.loads(text)
    jsonschema.validate(document, schema, cls=jsonschema.Draft202012Validator)
    return document


@pytest.mark.parametrize(("command", "path"),
                         [("check", p) for p in DESIGNS] + [("design", p) for p in FREE],
                         ids=lambda x: x if isinstance(x, str) else x.stem)
def test_example_outputs_validate(command, path):
    result = CliRunner().invoke(cli, [command, str(path), "--json"])
    assert result.exit_code in (0, 1), result.output
    assert validate(command, result.stdout)["schema_version"] == 1


def test_bundled_board_bom_validates(tmp_path):
    board = ROOT / "examples" / "greenhouse_board.toml"
    result = CliRunner().invoke(cli, ["bom", str(board), "--format", "json", "--quiet"])
    assert result.exit_code == 0, result.output
    doc = validate("bom", result.stdout)
    first = doc["lines"][0]
    (tmp_path / "shelf.csv").write_text(
        f"value,package,quantity\n{first['code']},{first['package']},1\n",
        encoding="utf-8")
    result = CliRunner().invoke(cli, ["bom", str(board), "--format", "json", "--quiet",
                                      "--stock", str(tmp_path / "shelf.csv")])
    assert result.exit_code == 0, result.output
    validate("bom", result.stdout)


def test_schemas_refuse_untyped_values():
    bom = json.loads(schema_path("bom").read_text(encoding="utf-8"))
    line = bom["properties"]["lines"]["items"]
    with pytest.raises(jsonschema.ValidationError, match="'yes' is not of type 'boolean'"):
        jsonschema.validate("yes", line["properties"]["in_stock"])
