"""Writing a bill of materials as CSV, JSON or Markdown, and its terminal summary."""

from __future__ import annotations

__all__ = [
    "BOM_COLUMNS", "BOM_SCHEMA_VERSION", "DESIGNATOR_COLUMNS", "ENCODINGS", "FORMATS", "bom_csv",
    "bom_document", "bom_json", "bom_markdown", "bom_rows", "bom_summary", "default_encoding",
    "describe", "designator_csv", "designator_rows", "encode", "render_bom", "resolve_encoding",
]

import csv
import io
import json
from typing import Any

from synth.bom.lines import (
    BomLine,
    BomResult,
    LineKey,
    collapse_references,
    list_references,
    natural_order,
)
from synth.errors import DesignError
from synth.units import format_eng, format_rkm

FORMATS = ("csv", "json", "markdown", "per-designator")
ENCODINGS = ("utf-8", "utf-8-sig", "ascii")
BOM_SCHEMA_VERSION = 1

BOM_COLUMNS = (
    "line", "quantity", "references", "value", "code", "ohms", "series", "tolerance",
    "tcr_ppm_per_c", "package", "imperial", "metric", "mount", "rated_power_w",
    "in_stock", "on_hand", "to_buy", "voltage_rating_v", "technology", "description",
)

DESIGNATOR_COLUMNS = (
    "designator", "value", "code", "ohms", "tolerance", "tcr_ppm_per_c", "package", "imperial",
    "metric", "description", "line", "network", "designator_in_design",
)

# what ASCII output writes for the few non-ASCII signs rnsynth itself prints
_ASCII = {"Ω": "ohm", "–": "-", "—": "-", "µ": "u", "°": "deg", "×": "x", "±": "+/-",
          "→": "->", "\u202f": " ", "\u00a0": " "}


def describe(line: BomLine) -> str:
    """The generic description of a line, e.g. ``RES 4.7 kΩ 1 % 0603 0.1 W 100 ppm/°C``.

    The package, its power and the TCR are left out when unknown (no package, zero TCR).
    """
    key, rating = line.key, line.rating
    if key.is_array:
        # RES ARRAY 2 × 10 kΩ, 10 kΩ 0.1 % ratio 0.02 % 0603 0.1 W 25 ppm/°C tracking 5 ppm/°C
        words = ["RES ARRAY", f"{len(key.members)} ×", _values_text(key),
                 f"{key.tolerance * 100:g} %", f"ratio {key.ratio_tolerance * 100:g} %"]
    else:
        words = ["RES", format_eng(key.value, "Ω", 6), f"{key.tolerance * 100:g} %"]
    if key.package:
        words.append(key.package)
    if rating is not None:
        words.append(f"{rating.rated_power_w:g} W")
    if key.tcr > 0:
        words.append(f"{key.tcr * 1e6:g} ppm/°C")
    if key.is_array and key.tcr_tracking > 0:
        words.append(f"tracking {key.tcr_tracking * 1e6:g} ppm/°C")
    return " ".join(words)


def _values_text(key: LineKey) -> str:
    """A line's value: one, or a matched array's members' values in member order."""
    return ", ".join(format_eng(v, "Ω", 6) for v in key.members or (key.value,))


def _codes(key: LineKey) -> str:
    return "/".join(format_rkm(v, 4) for v in key.members or (key.value,))


def _references(line: BomLine, ranges: bool) -> str:
    refs = list(line.references)
    return collapse_references(refs) if ranges else list_references(refs)


def bom_rows(result: BomResult, ranges: bool = False) -> list[dict[str, Any]]:
    """One dict per BOM line, keyed by :data:`BOM_COLUMNS` and then ``stock_<column>`` for each
    of the stock list's own columns.

    Designators are listed one by one (``R1, R2, R3``); ``ranges`` collapses runs (``R1–R3``).
    """
    rows = []
    for line in result.lines:
        rating = line.rating
        row: dict[str, Any] = {
            "line": line.number,
            "quantity": line.quantity,
            "references": _references(line, ranges),
            "value": _values_text(line.key),
            "code": _codes(line.key),
            "ohms": line.key.value,
            "series": line.series,
            "tolerance": f"{line.key.tolerance * 100:g}%",
            "tcr_ppm_per_c": round(line.key.tcr * 1e6, 6),
            "package": line.key.package or "-",
            "imperial": rating.imperial if rating else "",
            "metric": rating.metric if rating else "",
            "mount": rating.mount if rating else "",
            "rated_power_w": rating.rated_power_w if rating else None,
            "in_stock": "yes" if line.in_stock else "no",
            "on_hand": line.on_hand,
            "to_buy": line.shortfall,
            "voltage_rating_v": rating.limiting_voltage_v if rating else None,
            "technology": (rating.technology or None) if rating else None,
            "description": describe(line),
        }
        given = dict(line.stock)
        for column in result.stock_columns:
            row[f"stock_{column}"] = given.get(column, "")
        rows.append(row)
    return rows


def _csv(columns: list[str], rows: list[dict[str, Any]]) -> str:
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    for row in rows:
        writer.writerow({k: "" if v is None else v for k, v in row.items()})
    return buffer.getvalue()


def _columns(result: BomResult) -> list[str]:
    return [*BOM_COLUMNS, *(f"stock_{c}" for c in result.stock_columns)]


def bom_csv(result: BomResult, ranges: bool = False) -> str:
    """The BOM as CSV with a header row, one row per line."""
    return _csv(_columns(result), bom_rows(result, ranges))


def designator_rows(result: BomResult) -> list[dict[str, Any]]:
    """One dict per part on the board, keyed by :data:`DESIGNATOR_COLUMNS`, by designator."""
    by_number = {line.number: line for line in result.lines}
    rows = []
    for place in sorted(result.placements, key=lambda p: natural_order(p.designator)):
        line = by_number[place.line]
        rating = line.rating
        ohms = line.key.value if place.ohms is None else place.ohms  # an array member's own
        rows.append({
            "designator": place.designator,
            "value": format_eng(ohms, "Ω", 6),
            "code": format_rkm(ohms, 4),
            "ohms": ohms,
            "tolerance": f"{line.key.tolerance * 100:g}%",
            "tcr_ppm_per_c": round(line.key.tcr * 1e6, 6),
            "package": line.key.package or "-",
            "imperial": rating.imperial if rating else "",
            "metric": rating.metric if rating else "",
            "description": describe(line),
            "line": line.number,
            "network": place.network,
            "designator_in_design": place.original,
        })
    return rows


def designator_csv(result: BomResult) -> str:
    """One CSV row per designator, for re-importing the values into a board design."""
    return _csv(list(DESIGNATOR_COLUMNS), designator_rows(result))


def _cell(value: Any) -> str:
    text = "" if value is None else str(value)
    return text.replace("|", "\\|").replace("\n", " ")


def bom_markdown(result: BomResult, ranges: bool = False) -> str:
    """The BOM as a Markdown table (a title, then the table)."""
    columns = _columns(result)
    lines = [f"# Bill of materials: {result.board.title}", "",
             "| " + " | ".join(columns) + " |",
             "|" + "|".join("---" for _ in columns) + "|"]
    for row in bom_rows(result, ranges):
        lines.append("| " + " | ".join(_cell(row[c]) for c in columns) + " |")
    return "\n".join(lines) + "\n"


def _json_line(row: dict[str, Any], line: BomLine) -> dict[str, Any]:
    out = {k: v for k, v in row.items() if not k.startswith("stock_")}
    out["in_stock"] = line.in_stock
    out["tolerance_fraction"] = line.key.tolerance
    out["designators"] = list(line.references)
    out["stock"] = dict(line.stock)
    out["array"] = None if not line.key.is_array else {
        "members_ohms": list(line.key.members),
        "ratio_tolerance_fraction": line.key.ratio_tolerance,
        "tcr_tracking_ppm_per_c": round(line.key.tcr_tracking * 1e6, 6),
        "arrays": [list(members) for members in line.arrays],
    }
    return out


def bom_document(result: BomResult, ranges: bool = False) -> dict[str, Any]:
    """The BOM as a JSON-ready dict (see ``synth/schemas/bom.schema.json``)."""
    c = result.consolidation
    return {
        "schema_version": BOM_SCHEMA_VERSION,
        "board": result.board.title,
        "lines": [_json_line(row, line) for row, line in
                  zip(bom_rows(result, ranges), result.lines, strict=True)],
        "networks": [{"name": n.name, "count": n.count, "rank": n.rank, "values": n.values,
                      "objective": n.objective, "pool": n.pool_size} for n in result.networks],
        "renumbered": result.renumbered,
        "placements": [{"designator": p.designator, "network": p.network,
                        "original": p.original, "line": p.line} for p in result.placements],
        "consolidation": {"lines_before": result.lines_before, "lines_after": c.lines,
                          "to_buy": c.to_buy, "total_error": c.total_error,
                          "optimal": c.optimal, "lines_optimal": c.lines_optimal,
                          "status": c.status,
                          "elapsed_s": c.elapsed_s,
                          "lines_bound": c.lines_bound, "fallback": c.fallback,
                          "cut": c.cut or None,
                          "stages": [{"name": s.name, "value": s.value, "proven": s.proven,
                                      "bound": s.bound, "scope": s.scope or None,
                                      "work": round(s.work, 6)} for s in c.stages]},
        "parts": result.parts,
        "notes": list(result.notes),
    }


def bom_json(result: BomResult, ranges: bool = False, ascii_only: bool = False) -> str:
    """The BOM as a JSON document: lines, network choices, renumbering, consolidation."""
    return json.dumps(bom_document(result, ranges), indent=2, ensure_ascii=ascii_only) + "\n"


def default_encoding(form: str) -> str:
    """CSV carries a byte-order mark (spreadsheets then read it as UTF-8); the rest do not."""
    return "utf-8-sig" if form in ("csv", "per-designator") else "utf-8"


def encode(text: str, encoding: str) -> str:
    """Text ready to be written as UTF-8: a leading byte-order mark for ``utf-8-sig``; for
    ``ascii``, rnsynth's own signs spelled out (``kohm``, ``R1-R3``, ``ppm/degC``).

    Raises
    ------
    DesignError
        For ``ascii`` when the text holds another non-ASCII character (a title, a stock
        column), naming it.

    Examples
    --------
    >>> encode("4.7 kΩ, R1–R3, 100 ppm/°C", "ascii")
    '4.7 kohm, R1-R3, 100 ppm/degC'
    """
    if encoding == "utf-8-sig":
        return "\ufeff" + text
    if encoding != "ascii":
        return text
    out = "".join(_ASCII.get(ch, ch) for ch in text)
    for number, row in enumerate(out.splitlines(), 1):
        bad = next((ch for ch in row if ord(ch) > 127), None)
        if bad is not None:
            raise DesignError(f"--encoding ascii: output line {number} holds {bad!r} "
                              f"(from the inputs: {row.strip()[:40]!r}); use --encoding utf-8 "
                              "or utf-8-sig")
    return out


def resolve_encoding(form: str, encoding: str | None) -> str:
    """The encoding of a BOM form: the one asked for, else :func:`default_encoding`.

    Raises
    ------
    DesignError
        For an unknown encoding, or a byte-order mark asked for JSON.
    """
    chosen = encoding or default_encoding(form)
    if chosen not in ENCODINGS:
        raise DesignError(f"--encoding {chosen!r} is not known; use {', '.join(ENCODINGS)}")
    if form == "json" and chosen == "utf-8-sig":
        raise DesignError("--encoding utf-8-sig goes with CSV; JSON is written without a "
                          "byte-order mark (use utf-8 or ascii)")
    return chosen


def render_bom(result: BomResult, form: str, ranges: bool = False,
               encoding: str | None = None) -> str:
    """The BOM in one of :data:`FORMATS`, encoded by :func:`encode` (default by the form:
    :func:`default_encoding`).

    Raises
    ------
    DesignError
        For a byte-order mark on JSON, or ASCII output of non-ASCII inputs.
    """
    chosen = resolve_encoding(form, encoding)
    if form == "json":
        return bom_json(result, ranges, ascii_only=chosen == "ascii")
    if form == "csv":
        text = bom_csv(result, ranges)
    elif form == "per-designator":
        text = designator_csv(result)
    else:
        text = bom_markdown(result, ranges)
    return encode(text, chosen)


def bom_summary(result: BomResult) -> str:
    """A few lines for the terminal: lines, parts, networks, what consolidation saved."""
    c = result.consolidation
    saved = result.lines_before - c.lines
    if c.fallback:
        state = "not consolidated: no cover found within the time limit"
    elif c.optimal:
        state = "optimal"
    elif c.lines_optimal and c.stages and all(s.proven for s in c.stages):
        state = ("fewest lines proven; least total error proven for the chosen lines, not "
                 f"over every choice with as few ({c.status})")
    elif c.lines_optimal:
        state = f"fewest lines proven; later priorities best found within the limit ({c.status})"
    else:
        state = (f"best found within the {c.cut or 'time limit'}, at least {c.lines_bound} "
                 f"lines ({c.status})")
    lines = [f"{len(result.lines)} BOM lines, {result.parts} parts, "
             f"{len(result.networks)} networks; consolidation: {result.lines_before} lines "
             f"with each network at its own best, {c.lines} after ({saved} saved, {state})"]
    for n in result.networks:
        lines.append(f"  {n.name}: candidate {n.rank} of {n.pool_size} "
                     f"(largest error {max(n.objective, 0.0) * 100:.3g}%)"
                     if n.objective > 1e-12 else f"  {n.name}: candidate {n.rank} of "
                     f"{n.pool_size} (exact)")
    for label, mapping in result.renumbered.items():
        moves = ", ".join(f"{a} → {b}" for a, b in mapping.items())
        lines.append(f"  renumbered in {label}: {moves}")
    short = [line for line in result.lines if line.shortfall]
    if result.board.stock_path is not None:
        lines.append(f"  stock: {sum(1 for x in result.lines if x.in_stock)} lines in stock, "
                     f"{len(short)} to buy or top up")
        for line in short:
            if line.in_stock:
                lines.append(f"  short: line {line.number} {describe(line)}: need "
                             f"{line.quantity}, on hand {line.on_hand}, buy {line.shortfall}")
    lines.extend(f"  note: {note}" for note in result.notes)
    return "\n".join(lines)
