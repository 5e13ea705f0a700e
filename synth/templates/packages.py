"""``--package auto``: each chosen part gets the smallest package that carries its stress.

The order of preference is the chip packages by rated power, then the leaded
(through-hole) parts by rated power, all from the design's package table.  A
part is placed in the first package whose allowance (at the design's hottest
ambient, under its use limits; see :mod:`synth.rating`) covers both the
dissipation and the voltage the part has at its ideal value.  When no single
package may take the voltage, the position becomes a series string of as many
parts of the highest-voltage package as the voltage (or the power) needs, all
of one value so that they share it equally (common practice for high-voltage
dividers).  The search then runs; if a part still breaks a limit
at its standard value, its package steps up and the search runs again.
"""

from __future__ import annotations

__all__ = ["AUTO_ROUNDS", "PackageChoice", "package_order", "smallest_fit", "synthesize_auto"]

import copy
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from synth.catalog.packages import PackageRating
from synth.checking import check
from synth.design.model import Design
from synth.design.position import MAX_PARTS
from synth.design.reader import design_from_dict
from synth.rating import allowance
from synth.results import SynthesisResult

AUTO_ROUNDS = 4
"""Most searches ``--package auto`` runs while stepping a package up."""


@dataclass(frozen=True)
class PackageChoice:
    """What ``--package auto`` chose for one position.

    Attributes
    ----------
    ref : str
    package : str
    parts : int
        1, or the length of the series string the voltage needs.
    """

    ref: str
    package: str
    parts: int = 1

    def __str__(self) -> str:
        return (f"{self.ref}: {self.package}" if self.parts == 1
                else f"{self.ref}: {self.parts} x {self.package} in series")


def package_order(packages: Mapping[str, PackageRating]) -> list[PackageRating]:
    """Chips by rated power (then voltage), then leaded parts likewise; one row per package."""
    rows = {p.name: p for p in packages.values()}.values()
    return sorted(rows, key=lambda p: (p.mount != "chip", p.rated_power_w,
                                       p.limiting_voltage_v, p.name))


def smallest_fit(order: list[PackageRating], power_w: float, voltage_v: float, *,
                 ambient_c: float, max_power_use: float, max_voltage_use: float,
                 after: int = -1) -> int | None:
    """Index in ``order`` of the first package past ``after`` that carries the stress.

    The allowance is :func:`synth.rating.allowance` at ``ambient_c`` under the use
    limits; None when no package in the order may take it.
    """
    for k, rating in enumerate(order):
        share = allowance(rating, ambient_c=ambient_c, max_power_use=max_power_use,
                          max_voltage_use=max_voltage_use)
        if k > after and power_w <= share.power_w and voltage_v <= share.voltage_v:
            return k
    return None


def _first_choice(design: Design, order: list[PackageRating], ref: str, power_w: float,
                  voltage_v: float, after: int = -1) -> PackageChoice:
    fit = smallest_fit(order, power_w, voltage_v, ambient_c=design.rating_ambient_c,
                       max_power_use=design.margin_frac,
                       max_voltage_use=design.voltage_margin_frac, after=after)
    if fit is not None:
        return PackageChoice(ref, order[fit].name)
    # no single part takes it: a series string of the highest-voltage package
    tallest = max(order, key=lambda p: (p.limiting_voltage_v, p.rated_power_w))
    share = allowance(tallest, ambient_c=design.rating_ambient_c,
                      max_power_use=design.margin_frac, max_voltage_use=design.voltage_margin_frac)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        need = np.array([voltage_v / share.voltage_v, power_w / max(share.power_w, 1e-300)])
    # a stress beyond any string (or not a number at all) takes the longest string: the
    # search then judges it and names the limit
    need = np.where(np.isfinite(need), need * 1.05, MAX_PARTS)
    count = max(2, math.ceil(min(float(need.max()), MAX_PARTS)))
    return PackageChoice(ref, tallest.name, min(count, MAX_PARTS))


def _apply(tables: dict[str, Any], choices: dict[str, PackageChoice]) -> dict[str, Any]:
    out = copy.deepcopy(tables)
    out.get("design", {}).pop("package", None)
    for row in out.get("resistor", []):
        choice = choices.get(row.get("ref"))
        if choice is None:
            continue
        row["package"] = choice.package
        if choice.parts > 1:
            row["combine"], row["parts"], row["equal_parts"] = "series", choice.parts, True
    return out


def synthesize_auto(tables: dict[str, Any], origin: str,
                    run: Callable[[Design], SynthesisResult],
                    options: Mapping[tuple[str, str], str] | None = None,
                    ) -> tuple[dict[str, Any], Design, SynthesisResult, list[PackageChoice]]:
    """Choose packages for a quick design's free parts, then search with ``run``.

    Parameters
    ----------
    tables : dict
        The design-file tables of a quick command (free parts with ``choose``).
    origin : str
        Named in messages.
    run : callable
        Runs the search on a design (the caller's settings: top, spread, ...).
    options : mapping, optional
        The command-line option behind each ``(item, key)``, for the reader's
        refusals (see :func:`synth.templates.passive.option_names`).

    Returns
    -------
    tables, design, result, choices
        The tables and design searched last, its result and the package of
        each free part.
    """
    bare = copy.deepcopy(tables)
    bare.get("design", {}).pop("package", None)
    for row in bare.get("resistor", []):
        if "choose" in row:
            row.pop("package", None)
    unrated = design_from_dict(bare, origin=origin, options=options)
    order = package_order(unrated.packages)
    ideal = check(unrated)
    stress = {p.ref: (p.power, abs(p.voltage)) for p in ideal.parts if p.kind == "resistor"}
    choices = {r.ref: _first_choice(unrated, order, r.ref, *stress[r.ref])
               for r in unrated.free_resistors}
    index = {p.name: k for k, p in enumerate(order)}
    chosen = _apply(tables, choices)
    design = design_from_dict(chosen, origin=origin, options=options)
    result = run(design)
    for _ in range(AUTO_ROUNDS - 1):
        if result.feasible or not result.candidates:
            break
        best = result.candidates[0]
        over = {design.resistors[found[0]].ref for p in best.problems if p.kind != "window"
                if (found := design.position_of(p.subject)) is not None}
        stepped = False
        for ref in over & set(choices):
            current = choices[ref]
            if current.parts > 1:
                continue
            part = next(x for x in best.parts if x.position == ref)
            choices[ref] = _first_choice(unrated, order, ref, part.power, abs(part.voltage),
                                         after=index[current.package])
            stepped = True
        if not stepped:
            break
        chosen = _apply(tables, choices)
        design = design_from_dict(chosen, origin=origin, options=options)
        result = run(design)
    return chosen, design, result, [choices[r.ref] for r in unrated.free_resistors]
