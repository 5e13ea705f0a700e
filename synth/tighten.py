"""Which part to tighten: each target's spread when one classed part moves to its next
tighter class, from the spread's root-sum-square terms (first order, values kept).
"""

from __future__ import annotations

__all__ = ["TightenRow", "tighten_rows"]

import math
from collections.abc import Sequence
from dataclasses import dataclass

from synth.catalog.part_classes import PartClass, tighter_class
from synth.design.model import Resistor
from synth.spread.records import SpreadResult


@dataclass(frozen=True)
class TightenRow:
    """What one target's spread becomes when one part moves to its next tighter class.

    Attributes
    ----------
    ref : str
        The position.
    from_class, to_class : str
        Its class in the chosen design, and the next tighter one it may take.
    added_cost : float
        The cost of the move (class cost difference × parts).
    target : str
        The target's label.
    rss_now, rss_after : float
        The target's root-sum-square deviation, in the target's unit, before and
        after (the values kept; first order, see :func:`tighten_rows`).
    nominal : float
        The target's nominal value (for a relative figure).
    share : float
        The part's share of the target's RSS variance now (0..1).
    """

    ref: str
    from_class: str
    to_class: str
    added_cost: float
    target: str
    rss_now: float
    rss_after: float
    nominal: float
    share: float



def tighten_rows(parts: Sequence[Resistor], classes: dict[str, PartClass],
                 spread: SpreadResult) -> tuple[TightenRow, ...]:
    """Each target's RSS spread when one classed part moves to its next tighter class.

    Parameters
    ----------
    parts : sequence of Resistor
        The classed positions (file order).
    classes : dict of str to PartClass
        The class each classed position is in.
    spread : SpreadResult
        The spread of the design at its chosen values (its RSS terms).

    Returns
    -------
    tuple of TightenRow
        Position by position (file order), target by target; a part in its tightest
        class has none.

    Notes
    -----
    First-order propagation (the GUM's law of propagation of uncertainty, JCGM
    100:2008 eq. 10): a target's RSS variance is the sum of each quantity's
    squared sensitivity-weighted half-width.  Moving one part from tolerance
    ``t`` to ``t'`` scales its tolerance term by ``(t'/t)**2`` and its
    temperature-drift term by ``(tcr'/tcr)**2`` (a part of zero TCR keeps its
    zero drift term); the other terms and the values stay as they are.
    """
    variances = [sum(tol + drift for tol, drift in t.rss_terms.values())
                 for t in spread.targets]
    shares = [t.variance_shares() for t in spread.targets]
    rows = []
    for resistor in parts:
        now = classes[resistor.ref]
        nxt = tighter_class(now, resistor.classes)
        if nxt is None:
            continue
        tol_scale = (nxt.tolerance / now.tolerance) ** 2
        now_tcr, next_tcr = now.tcr or 0.0, nxt.tcr or 0.0
        drift_scale = (next_tcr / now_tcr) ** 2 if now_tcr > 0 else 1.0
        for target, variance, share in zip(spread.targets, variances, shares, strict=True):
            mine = [target.rss_terms[ref] for ref in resistor.part_refs
                    if ref in target.rss_terms]
            part = sum(tol + drift for tol, drift in mine)
            after = variance - part + sum(tol * tol_scale + drift * drift_scale
                                          for tol, drift in mine)
            rows.append(TightenRow(
                ref=resistor.ref, from_class=now.name, to_class=nxt.name,
                added_cost=(nxt.cost - now.cost) * resistor.position.count,
                target=target.label, rss_now=math.sqrt(max(variance, 0.0)),
                rss_after=math.sqrt(max(after, 0.0)), nominal=target.nominal,
                share=sum(share.get(ref, 0.0) for ref in resistor.part_refs)))
    return tuple(rows)
