"""One design's section of a review page: inputs, catalogues, values, targets, stress, cautions.

Rendering only: every number comes from a :class:`~synth.results.CheckResult` or a
:class:`~synth.results.SynthesisResult` (its best candidate), and every status is
the word :mod:`synth.report.verdict` gives it.
"""

from __future__ import annotations

__all__ = ["design_section", "passes", "shown_check", "verdict_lines"]

import math

from synth.design.model import Design, Resistor
from synth.report.points import points_lines
from synth.report.review.figures import ReviewFigure
from synth.report.review.markup import Cell, Markup, element, table
from synth.report.verdict import check_verdict_text, error_text, status_text, verdict_text
from synth.results import CheckResult, PartReport, Problem, SynthesisResult, TargetReport
from synth.spread.records import SpreadResult, TargetSpread
from synth.units import format_eng, format_rkm, format_window

Result = CheckResult | SynthesisResult


def passes(result: Result) -> bool:
    """Whether the design meets every window and limit on its required basis."""
    return result.ok if isinstance(result, CheckResult) else result.feasible


def shown_check(result: Result) -> CheckResult | None:
    """The check of the values the page shows: the design's own, or the best candidate's."""
    if isinstance(result, CheckResult):
        return result
    return result.candidates[0].check if result.candidates else None


def verdict_lines(result: Result) -> list[str]:
    """The verdict in :mod:`synth.report.verdict`'s words: the head line first."""
    if isinstance(result, CheckResult):
        return [check_verdict_text(result)]
    lines = verdict_text(result)
    head = lines[0].removeprefix("result: ")
    # the per-target lines become the targets table's status column
    rest = [line.strip() for line in lines[1:] if line.startswith("  best design:")]
    if not result.proven_optimal:
        rest.append("the search was stopped by its time limit: the best design shown is the "
                    "best found, NOT proven the best over the catalogue")
    return [head, *rest]


def _quantity(value: float | None, unit: str, digits: int = 5) -> str:
    if value is None or not math.isfinite(value):
        return "-"
    return format_eng(value, unit, digits) if unit else f"{value:.{digits}g}"


def _percent(value: float | None) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value * 100:.3g} %"


def _number(text: str) -> Markup:
    return element("span", text, cls="n")


def _facts(pairs: list[tuple[str, Cell]]) -> Markup:
    return element("dl", *(Markup(element("dt", k) + element("dd", v)) for k, v in pairs),
                   cls="facts")


# -- inputs and assumptions ----------------------------------------------------------------


def _basis(design: Design) -> str:
    if design.require == "worst-case":
        return "every window and limit over the whole tolerance box (worst case)"
    if design.require == "yield":
        least = "" if design.min_yield is None else f" of at least {design.min_yield * 100:g} %"
        return f"a Monte Carlo yield{least} (95 % lower confidence bound)"
    return "every window and limit at nominal values"


def _value_spec(resistor: Resistor) -> str:
    if resistor.choose is None:
        parts = resistor.position.part_values
        if parts is not None and len(parts) > 1:
            return " + ".join(format_eng(v, "Ω", 4) for v in parts)
        return "-" if resistor.value is None else format_eng(resistor.value, "Ω", 6)
    chosen = "from the stock list" if resistor.stock_path else f"from {resistor.choose}"
    span = ("" if resistor.range is None else
            f", {format_eng(resistor.range[0], 'Ω', 4)} .. {format_eng(resistor.range[1], 'Ω', 4)}")
    return f"chosen {chosen}{span}"


def _arrangement(resistor: Resistor) -> str:
    position = resistor.position
    if position.count == 1:
        return "one part"
    equal = ", equal values" if position.equal_parts else ""
    return f"{position.count} in {position.arrangement}{equal}"


def _self_heating(spread: SpreadResult) -> str:
    """Each part's own rise, or why the spread holds none."""
    if spread.self_heating_note is not None:
        return f"not modelled: {spread.self_heating_note}"
    rises = ", ".join(f"{p.ref} +{p.temperature_rise_c:.3g} K" for p in spread.parts
                      if p.temperature_rise_c > 0) or "no part dissipates at nominal values"
    return ("first order: each part's rise P·Rθ at the nominal operating point, added to the "
            f"ambient its TCR acts on: {rises}")


def _inputs(design: Design, spread: SpreadResult | None) -> list[Markup]:
    low, high = design.temperature_c
    facts: list[tuple[str, Cell]] = [
        ("file", design.origin),
        ("ground", design.ground),
        ("ambient for derating", f"{design.ambient_c:g} °C"),
        ("operating range (TCR)", f"{low:g} to {high:g} °C, reference 25 °C"),
        ("power use limit", f"{design.margin_frac * 100:g} % of each part's derated power"),
        ("voltage use limit",
         f"{design.voltage_margin_frac * 100:g} % of each part's limiting element voltage"),
        ("required basis", _basis(design)),
    ]
    if spread is not None:
        s = spread.settings
        facts.append(("spread", f"worst case over {len(spread.variables)} varying quantities; "
                      + (f"Monte Carlo {s.samples:,} {s.distribution} samples, seed {s.seed}"
                         if s.samples else "no Monte Carlo (0 samples)")))
        facts.append(("self-heating", _self_heating(spread)))
    else:
        facts.append(("spread", "not analysed"))
    # a design of operating points lists its parts as written, once, and names its points
    written = design.single or design
    facts += [("operating points", line.removeprefix("operating points: "))
              for line in points_lines(design)[:1]]
    out = [element("h3", "Inputs and assumptions"), _facts(facts)]
    if written.sources:
        out.append(table(
            ["source", "kind", "between", "value", "tolerance"],
            [[s.ref, s.kind, f"{s.pos} (+) and {s.neg}" if s.kind == "voltage"
              else f"from {s.neg} to {s.pos}",
              _quantity(s.value, "V" if s.kind == "voltage" else "A", 6),
              _quantity(s.tolerance_abs, "V" if s.kind == "voltage" else "A")
              if s.tolerance_abs is not None else _percent(s.tolerance)]
             for s in written.sources], caption="Sources"))
    if design.regulators:
        out.append(table(
            ["regulator", "drives", "holds", "set-point", "tolerance"],
            [[g.ref, g.output, f"{g.sense} above {g.reference}", _quantity(g.setpoint, "V", 6),
              _percent(g.tolerance)] for g in design.regulators], caption="Regulators"))
    if written.controlled:
        out.append(table(
            ["controlled source", "kind", "output", "gain (low .. high)"],
            [[c.ref, c.kind, f"{c.pos}, {c.neg}",
              f"{c.gain:.6g} ({c.gain_low:.6g} .. {c.gain_high:.6g})"]
             for c in written.controlled], caption="Controlled sources"))
    if written.transistors:
        out.append(table(
            ["transistor", "type", "C, B, E", "VBE", "β (low .. high)"],
            [[t.ref, t.polarity, f"{t.collector}, {t.base}, {t.emitter}",
              _quantity(t.vbe, "V", 4), f"{t.beta:g} ({t.beta_low:g} .. {t.beta_high:g})"]
             for t in written.transistors], caption="Transistors"))
    out.append(table(
        ["position", "between", "value", "parts", "tolerance", "TCR", "package", "on the BOM"],
        [[r.ref, f"{r.nodes[0]}, {r.nodes[1]}", _value_spec(r), _arrangement(r),
          _percent(r.tolerance), f"{r.tcr * 1e6:g} ppm/°C", r.package or "none (unrated)",
          "yes" if r.bom else "no (a model)"] for r in written.resistors],
        caption="Resistor positions"))
    out.append(table(
        ["target", "quantity", "goal", "hard window"],
        [[t.label, t.kind, "-" if t.equals is None else _quantity(t.equals, t.unit, 6),
          _window(*t.bounds, unit=t.unit)] for t in design.targets], caption="Targets asked for"))
    return out


def _window(low: float, high: float, unit: str) -> str:
    text = format_window(low, high, unit, 5)
    return "none (a soft goal)" if text == "any value" else text


# -- catalogues and packages ---------------------------------------------------------------


def _catalogues(design: Design) -> list[Markup]:
    free = design.free_resistors
    series = sorted({r.choose for r in free if r.choose and r.stock_path is None})
    stock = sorted({str(r.stock_path) for r in free if r.stock_path is not None})
    facts: list[tuple[str, Cell]] = []
    if series:
        facts.append(("series", f"{', '.join(series)}: IEC 60063 values as its tables list "
                                "them (catalogs/e_series.toml, bundled with rnsynth)"))
    for path in stock:
        facts.append(("stock list", path))
    if not free:
        facts.append(("values", "all given in the design file"))
    facts.append(("package table", str(design.packages_path) if design.packages_path
                  else "catalogs/packages.csv, bundled with rnsynth"))
    used = sorted({r.package for r in design.resistors if r.package})
    rows = []
    for name in used:
        rating = design.packages[name]
        size = " / ".join(x for x in (rating.imperial, rating.metric) if x) or "-"
        rows.append([name, rating.mount, size,
                     f"{format_eng(rating.rated_power_w, 'W')} up to "
                     f"{rating.rated_ambient_c:g} °C",
                     f"{rating.zero_power_c:g} °C", format_eng(rating.limiting_voltage_v, "V"),
                     rating.technology or "-", rating.source])
    out = [element("h3", "Catalogues and package ratings"), _facts(facts)]
    if rows:
        out.append(table(["package", "mount", "size", "rated power", "zero power at",
                          "limiting voltage", "technology", "source of the rating"], rows,
                         caption="Packages in use (derated linearly from the rated ambient "
                                 "to the zero-power temperature)"))
    return out


# -- chosen values ------------------------------------------------------------------------


def _values(result: Result, checked: CheckResult) -> list[Markup]:
    out = [element("h3", "Chosen values" if isinstance(result, SynthesisResult)
                   else "Values checked")]
    design = result.design
    if isinstance(result, SynthesisResult):
        best = result.candidates[0]
        state = ("proven optimal: no other combination of catalogue values does better"
                 if result.proven_optimal else
                 "NOT proven optimal: the search was stopped by its time limit")
        facts: list[tuple[str, Cell]] = [
            ("search", f"{result.combinations:,} combinations, {result.evaluated:,} solved, "
                       f"{result.elapsed_s:.2f} s; {state}"),
            ("ranked by", {"nominal": "nominal error", "yield": "Monte Carlo yield",
                           "worst-case": "worst-case error over the tolerance box"}
             .get(result.rank_by, result.rank_by)),
        ]
        out.append(_facts(facts))
        rows = []
        for ref, value in best.values.items():
            position = design.position_of(ref)
            home = design.resistors[position[0]].ref if position else ref
            ideal = result.ideal.get(home)
            rows.append([ref, _number(format_eng(value, "Ω", 6)), format_rkm(value),
                         best.series.get(ref, "-"),
                         "-" if ideal is None else _number(format_eng(ideal, "Ω", 6))])
        out.append(table(["part", "chosen value", "code", "series", "ideal value (position)"],
                         rows, caption="Values chosen for the free parts (the best candidate)"))
        return out
    rows = [[ref, _number(format_eng(value, "Ω", 6)), format_rkm(value),
             "ideal value, no standard value chosen" if ref in checked.filled else "given"]
            for ref, value in checked.values.items()]
    out.append(table(["part", "value", "code", "from"], rows,
                     caption="Every physical part's value"))
    return out


# -- targets ------------------------------------------------------------------------------


def _spread_of(spread: SpreadResult | None, label: str) -> TargetSpread | None:
    if spread is None:
        return None
    return next((t for t in spread.targets if t.label == label), None)


def _with_corner(value: str, corner: dict[str, str]) -> Markup:
    """A worst-case value over the corner giving it (``R1+ R2-``: each quantity's end)."""
    text = " ".join(f"{name}{sign}" for name, sign in corner.items())
    return Markup(_number(value) + (Markup("<br>") + element("small", text) if text else ""))


def _targets(targets: tuple[TargetReport, ...], spread: SpreadResult | None) -> list[Markup]:
    rows, classes = [], []
    for t in targets:
        rows.append([t.label, _number(_quantity(t.value, t.unit, 6)),
                     "-" if t.goal is None else _number(_quantity(t.goal, t.unit, 6)),
                     _number(error_text(t)), _window(t.low, t.high, t.unit),
                     element("span", status_text(t), cls="status")])
        classes.append(None if t.met else "fail")
    out = [element("h3", "Targets"),
           table(["target", "value", "goal", "error", "hard window", "status"], rows,
                 caption="At nominal values", row_classes=classes)]
    if spread is not None and spread.targets:
        rows = []
        for t in targets:
            s = _spread_of(spread, t.label)
            if s is None:
                continue
            rss = (f"±{_quantity(s.rss_abs, t.unit)}" if s.goal == 0
                   else f"±{s.rss * 100:.3g} %")
            rows.append([t.label, _number(_quantity(s.nominal, t.unit, 6)),
                         _with_corner(_quantity(s.worst_low, t.unit, 6), s.low_corner),
                         _with_corner(_quantity(s.worst_high, t.unit, 6), s.high_corner),
                         _number(rss), _number(_quantity(s.mc_mean, t.unit, 6)),
                         _number(_quantity(s.mc_std, t.unit, 4)),
                         _number("-" if s.inside is None else f"{s.inside * 100:.4g} %")])
        exact = all(s.exact for s in spread.targets)
        note = ("" if exact else "; too many quantities vary to solve every corner: the worst "
                "cases use the corners the sensitivity signs give (not exhaustive)")
        out.append(table(["target", "nominal", "worst low (corner)", "worst high (corner)",
                          "RSS", "Monte Carlo mean", "Monte Carlo σ", "inside its window"],
                         rows, caption=f"Spread over tolerance, temperature and supply{note}"))
        if spread.yield_fraction is not None:
            interval = ("" if spread.yield_interval is None else
                        f" (95 % interval {spread.yield_interval[0] * 100:.4g} .. "
                        f"{spread.yield_interval[1] * 100:.4g} %)")
            out.append(element("p", element("b", "Yield: "),
                               f"{spread.yield_fraction * 100:.4g} % of "
                               f"{spread.samples_run or spread.settings.samples:,} Monte "
                               "Carlo samples run meet every "
                               f"window and every part's power and voltage allowance{interval}."))
    return out


# -- part stress --------------------------------------------------------------------------


def _part_status(part: PartReport, problems: tuple[Problem, ...]) -> str:
    over = [p for p in problems if p.subject == part.ref and p.kind in ("power", "voltage")]
    if part.allowed_power is None and part.allowed_voltage is None:
        return "unrated (no package)"
    if not over:
        return "within its allowance"
    return "; ".join(f"OVER its {p.kind} allowance" + (" at worst case"
                                                      if p.basis == "worst case" else "")
                     for p in over)


def _stress(checked: CheckResult, parts: tuple[PartReport, ...], problems: tuple[Problem, ...],
            spread: SpreadResult | None) -> list[Markup]:
    worst = {p.ref: p for p in spread.parts} if spread is not None else {}
    rows, classes = [], []
    for part in parts:
        if part.kind != "resistor":
            continue
        w = worst.get(part.ref)
        status = _part_status(part, problems)
        rows.append([part.ref, _number(format_eng(part.value, "Ω", 5)),
                     _number(format_eng(part.power, "W", 4)),
                     _number("-" if part.allowed_power is None
                             else format_eng(part.allowed_power, "W", 4)),
                     _number(_percent(part.utilization)),
                     _number("-" if w is None else format_eng(w.worst_power, "W", 4)),
                     _number("-" if w is None else _percent(w.utilization)),
                     _number(format_eng(part.voltage, "V", 4)),
                     _number("-" if part.allowed_voltage is None
                             else format_eng(part.allowed_voltage, "V", 4)),
                     _number(_percent(part.voltage_utilization)),
                     element("span", status, cls="status")])
        classes.append("fail" if status.startswith("OVER") else None)
    design = checked.design
    hottest = max(design.temperature_c[1], design.ambient_c)
    out = [element("h3", "Stress of each part against its derated rating"),
           table(["part", "value", "power", "allowed power", "power use", "worst-case power",
                  "worst-case use", "voltage", "allowed voltage", "voltage use", "status"],
                 rows, row_classes=classes,
                 caption=f"Allowed power: the package rating derated at {design.ambient_c:g} °C"
                         f" times the {design.margin_frac * 100:g} % use limit; worst case at "
                         f"{hottest:g} °C over the tolerance box")]
    others = [p for p in parts if p.kind != "resistor"]
    if others:
        out.append(table(["part", "kind", "value", "current", "power delivered"],
                         [[p.ref, p.kind, _number(_quantity(
                             p.value, "A" if p.kind == "current source" else
                             "" if p.kind.startswith("controlled") else "V", 6)),
                           _number(format_eng(p.current, "A", 5)),
                           _number(format_eng(p.power, "W", 4))] for p in others],
                         caption="Sources and regulating elements"))
    supply = (f"Supply current {format_eng(checked.supply_current, 'A', 5)}"
              if checked.design.has_supply
              else "No supply current (no voltage source or regulator)")
    out.append(element("p", f"{supply}; largest voltage in the circuit "
                            f"{format_eng(checked.max_voltage, 'V', 5)}."))
    return out


# -- other candidates ---------------------------------------------------------------------


def _candidates(result: SynthesisResult) -> list[Markup]:
    if len(result.candidates) < 2:
        return []
    refs = list(result.candidates[0].values)
    supply = result.design.has_supply  # without a voltage source or regulator: no column
    rows = []
    for c in result.candidates:
        hot = c.hottest
        rows.append([str(c.rank), *[_number(format_eng(c.values[r], "Ω", 4)) if r in c.values
                                    else "-" for r in refs],
                     _number(f"{c.objective * 100:.3g} %"),
                     "yes" if c.feasible else "NO",
                     _number("-" if hot is None or hot.utilization is None
                             else f"{hot.ref} {hot.utilization * 100:.3g} %"),
                     *([_number(format_eng(c.supply_current, "A", 4))] if supply else [])])
    return [element("h3", "Ranked candidates"),
            table(["rank", *refs, "largest goal error", "meets every window and limit",
                   "hottest part", *(["supply"] if supply else [])], rows,
                  row_classes=[None if c.feasible else "fail" for c in result.candidates],
                  caption=f"The best {len(result.candidates)} candidates, each re-checked by a "
                          "full solve")]


# -- the section --------------------------------------------------------------------------


def design_section(result: Result, number: int, figures: list[ReviewFigure],
                   name: str | None = None, count: int = 1) -> Markup:
    """The HTML section of one design.

    Parameters
    ----------
    result : CheckResult or SynthesisResult
    number : int
        The section's number on the page (1 for the first design).
    figures : list of ReviewFigure
    name : str, optional
        The network's name on a board.
    count : int
        Copies of the network on the board.
    """
    design = result.design
    title = design.title or name or design.origin
    ok = passes(result)
    lines = verdict_lines(result)
    head = element("p", element("span", "passes" if ok else "fails", cls="word"),
                   Markup(" — "), lines[0])
    verdict = element("div", head, *(element("p", line) for line in lines[1:]),
                      cls="verdict" if ok else "verdict fail")
    out: list[Markup] = [element("h2", f"{number}. {title}", id=f"design-{number}")]
    if name is not None or count != 1:
        out.append(element("p", f"network {name or design.origin}"
                                + (f", {count} copies on the board" if count != 1 else "")))
    out += [verdict, *_inputs(design, _spread_shown(result)), *_catalogues(design)]
    checked = shown_check(result)
    if checked is None:
        out.append(element("p", "No candidate could be evaluated."))
        return element("section", *out, cls="design")
    if isinstance(result, SynthesisResult):
        best = result.candidates[0]
        targets, parts, problems = best.targets, best.parts, best.problems
    else:
        targets, parts, problems = checked.targets, checked.parts, checked.problems
    spread = _spread_shown(result)
    out += _values(result, checked)
    out += _targets(targets, spread)
    out += _stress(checked, parts, problems, spread)
    out.append(element("h3", "Cautions"))
    cautions = checked.cautions
    out.append(element("ul", *(element("li", c) for c in cautions), cls="cautions")
               if cautions else element("p", "none"))
    if isinstance(result, SynthesisResult):
        out += _candidates(result)
    if figures:
        out.append(element("h3", "Figures"))
        out += [element("figure", Markup(f.svg), element("figcaption", f.caption))
                for f in figures]
    return element("section", *out, cls="design")


def _spread_shown(result: Result) -> SpreadResult | None:
    if isinstance(result, CheckResult):
        return result.spread
    return result.candidates[0].spread if result.candidates else None
