"""Writing a bill of materials as CSV, JSON or Markdown, and its terminal summary."""

from __future__ import annotations

__all__ = [
    "BOM_COLUMNS", "FORMATS", "bom_csv", "bom_json", "bom_markdown", "bom_rows", "bom_summary",
    "render_bom",
]

import csv
import io
import json
from typing import Any

from synth.bom.lines import BomResult, collapse_references
from synth.units import format_eng, format_rkm

FORMATS = ("csv", "json", "markdown")


BOM_COLUMNS = (
    "line", "quantity", "references", "value", "code", "ohms", "series", "tolerance",
    "tcr_ppm_per_c", "package", "imperial", "metric", "mount", "rated_power_w",
    "in_stock", "on_hand", "to_buy",
)


def bom_rows(result: BomResult) -> list[dict[str, Any]]:
    """One dict per BOM line, keyed by :data:`BOM_COLUMNS`."""
    rows = []
    for line in result.lines:
        rating = line.rating
        rows.append({
            "line": line.number,
            "quantity": line.quantity,
            "references": collapse_references(list(line.references)),
            "value": format_eng(line.key.value, "Ω", 6),
            "code": format_rkm(line.key.value, 4),
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
        })
    return rows


def bom_csv(result: BomResult) -> str:
    """The BOM as CSV with a header row."""
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=list(BOM_COLUMNS), lineterminator="\n")
    writer.writeheader()
    for row in bom_rows(result):
        writer.writerow({k: "" if v is None else v for k, v in row.items()})
    return buffer.getvalue()


def _cell(value: Any) -> str:
    text = "" if value is None else str(value)
    return text.replace("|", "\\|").replace("\n", " ")


def bom_markdown(result: BomResult) -> str:
    """The BOM as a Markdown table (a title, then the table)."""
    lines = [f"# Bill of materials: {result.board.title}", "",
             "| " + " | ".join(BOM_COLUMNS) + " |",
             "|" + "|".join("---" for _ in BOM_COLUMNS) + "|"]
    for row in bom_rows(result):
        lines.append("| " + " | ".join(_cell(row[c]) for c in BOM_COLUMNS) + " |")
    return "\n".join(lines) + "\n"


def bom_json(result: BomResult) -> str:
    """The BOM as a JSON document: lines, network choices, renumbering, consolidation."""
    c = result.consolidation
    doc = {
        "board": result.board.title,
        "lines": bom_rows(result),
        "networks": [{"name": n.name, "count": n.count, "rank": n.rank, "values": n.values,
                      "objective": n.objective, "pool": n.pool_size} for n in result.networks],
        "renumbered": result.renumbered,
        "consolidation": {"lines_before": result.lines_before, "lines_after": c.lines,
                          "to_buy": c.to_buy, "total_error": c.total_error,
                          "optimal": c.optimal, "lines_optimal": c.lines_optimal,
                          "status": c.status,
                          "elapsed_s": c.elapsed_s},
        "parts": result.parts,
        "notes": list(result.notes),
    }
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def render_bom(result: BomResult, form: str) -> str:
    """The BOM in one of :data:`FORMATS`."""
    return {"csv": bom_csv, "json": bom_json, "markdown": bom_markdown}[form](result)


def bom_summary(result: BomResult) -> str:
    """A few lines for the terminal: lines, parts, networks, what consolidation saved."""
    c = result.consolidation
    saved = result.lines_before - c.lines
    if c.optimal:
        state = "optimal"
    elif c.lines_optimal:
        state = f"fewest lines proven; later priorities best found within the limit ({c.status})"
    else:
        state = f"best found within the time limit ({c.status})"
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
    lines.extend(f"  note: {note}" for note in result.notes)
    return "\n".join(lines)
