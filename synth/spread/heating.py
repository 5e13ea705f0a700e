"""Self-heating in the spread: each part's own temperature rise at the nominal operating point,
and the TCR drift half-width it gives over the operating range.

A part dissipating P through its package's thermal resistance Rθ runs
ΔT = P·Rθ above the ambient (:func:`synth.rating.temperature_rise`), so its
temperature coefficient acts on T − 25 °C + ΔT rather than on T − 25 °C.

The approximation
-----------------
First order: the rise is taken at the nominal operating point (nominal values
and sources) and held over the whole tolerance box and temperature range.
The resistance depends on the rise, which depends on the power, which depends
on the resistance; going round that loop once more changes the rise by the
part's relative drift (TCR·ΔT, 0.4 % at 100 ppm/K and 40 K), so the drift by
that share of itself: a second-order term left out.  So is the change of the
rise over the tolerance box (a 1 % part's power moves by about 2 %, its rise
with it).  With operating points a physical part has one rise, the largest of
its copies' (one coefficient and one deviation at every point, as elsewhere).
"""

from __future__ import annotations

__all__ = [
    "REFERENCE_C", "drift_half_width", "heats", "part_rises", "self_heating_note",
    "thermal_resistances",
]

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.rating import temperature_rise

REFERENCE_C = 25.0
"""Temperature at which nominal values hold, °C (the usual TCR reference)."""


def part_rises(design: Design, ev: Evaluator, part_power: ArrayLike) -> np.ndarray:
    """Each physical part's own temperature rise at the nominal operating point, K.

    Parameters
    ----------
    design : Design
    ev : Evaluator
    part_power : array
        ``(parts,)`` dissipation of every physical part at nominal values, W (or
        ``(M, parts)`` for M candidates).

    Returns
    -------
    numpy.ndarray
        The shape of ``part_power``, K; with operating points every copy of a
        physical part holds the largest rise of its copies.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "2k",
    ...                   "package": "0603"}]})
    >>> part_rises(d, Evaluator(d), [0.05]).tolist()   # 50 mW x 850 K/W
    [42.5]
    """
    power = np.abs(np.asarray(part_power, dtype=float))
    rises: np.ndarray = power * thermal_resistances(design, ev)
    index = {r.ref: k for k, r in enumerate(design.resistors)}
    pairs = [(ev.part_columns[k], ev.part_columns[index[r.copy_of]])
             for k, r in enumerate(design.resistors) if r.copy_of in index]
    for copy, leader in pairs:  # the leader takes the largest over its copies ...
        rises[..., leader] = np.maximum(rises[..., leader], rises[..., copy])
    for copy, leader in pairs:  # ... and every copy the leader's
        rises[..., copy] = rises[..., leader]
    return rises


def thermal_resistances(design: Design, ev: Evaluator) -> np.ndarray:
    """``(parts,)`` thermal resistance of every physical part's package, K/W (0 when none)."""
    owner = ev.part_resistor()
    return np.array([float(temperature_rise(design.rating(design.resistors[int(k)]), 1.0))
                     for k in owner])


def heats(design: Design, ev: Evaluator) -> bool:
    """True when some part with a temperature coefficient has a thermal resistance."""
    theta = thermal_resistances(design, ev)
    owner = ev.part_resistor()
    return any(t > 0 and design.resistors[int(k)].tcr != 0 for t, k in zip(theta, owner,
                                                                          strict=True))


def drift_half_width(tcr: ArrayLike, rise_c: ArrayLike, temperature_c: tuple[float, float]
                     ) -> np.ndarray:
    """Relative half-width of a part's TCR drift over the operating range with its rise.

    ``TCR · max(|T_low − 25 + ΔT|, |T_high − 25 + ΔT|)``: the part's own
    temperature runs over the ambient range shifted up by its rise ΔT (a TCR
    written negative keeps its sign, as the spread has always read it: the
    coefficient lies anywhere within ±|TCR| either way).

    Examples
    --------
    >>> drift_half_width([100e-6], [0.0], (0.0, 50.0)).round(6).tolist()   # 25 K either way
    [0.0025]
    >>> drift_half_width([100e-6], [42.5], (0.0, 50.0)).round(6).tolist()  # up to 67.5 K
    [0.00675]
    """
    tcr = np.asarray(tcr, dtype=float)
    rise = np.asarray(rise_c, dtype=float)
    low_c, high_c = temperature_c
    return tcr * np.maximum(np.abs(low_c - REFERENCE_C + rise),
                            np.abs(high_c - REFERENCE_C + rise))


def self_heating_note(design: Design) -> str | None:
    """Why the spread holds no self-heating, or None when some part heats itself.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "2k"}]})
    >>> self_heating_note(d)
    'no part names a package, so none has a thermal resistance'
    """
    ratings = [design.rating(r) for r in design.resistors if r.copy_of is None]
    rated = [rating for rating in ratings if rating is not None]
    if not rated:
        return "no part names a package, so none has a thermal resistance"
    if not any(rating.thermal_resistance_k_per_w for rating in rated):
        return ("the package table gives the parts' packages no thermal resistance "
                "(thermal_resistance_k_per_w)")
    return None
