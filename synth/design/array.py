"""Matched resistor arrays: several resistors in one package, with a shared absolute tolerance,
a ratio tolerance between members and TCR tracking.

An ``[[array]]`` table names the array and gives its figures; each member resistor says
``array = "RN1"`` (or the array lists it in ``members``).  A member takes its tolerance, TCR
and package from the array.

The model: member ``i`` deviates from its nominal value by ``c + r_i``, with a common part
``c`` shared by every member within ±(A − ρ/2) and its own part ``r_i`` within ±ρ/2 (A the
absolute tolerance, ρ the ratio tolerance, ρ ≤ A).  Each member then stays within ±A and the
ratio of any two members within about ±ρ of its nominal value.  The temperature coefficient
splits the same way: common within ±(TCR − τ/2), own within ±τ/2 (τ the TCR tracking), so two
members' coefficients differ by at most τ.
"""

from __future__ import annotations

__all__ = ["ARRAY_KEYS", "ResistorArray", "attach_arrays", "read_array"]

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any

from synth.catalog.packages import PackageRating
from synth.design.fields import ItemReader, item_label
from synth.design.model import Resistor
from synth.errors import DesignError, name_list, nearest_name
from synth.units import parse_tcr

ARRAY_KEYS = ("name", "tolerance", "ratio_tolerance", "tcr", "tcr_tracking", "package",
              "members", "note")
"""The keys of an ``[[array]]`` table."""


@dataclass(frozen=True)
class ResistorArray:
    """A matched resistor array: resistors in one package whose deviations are correlated.

    Attributes
    ----------
    name : str
        How members (``array = "RN1"``) and reports name it.
    tolerance : float
        Absolute tolerance A of every member (fraction).
    ratio_tolerance : float
        Ratio tolerance ρ between any two members (fraction), ρ ≤ A.
    tcr : float
        Temperature coefficient of every member, 1/K (the bound of its magnitude).
    tcr_tracking : float
        TCR tracking τ, 1/K: two members' coefficients differ by at most τ, τ ≤ ``tcr``.
    package : str or None
        The package of every member (None: not rated).
    members : tuple of str
        The members' designators, in file order.

    Examples
    --------
    >>> a = ResistorArray("RN1", 0.001, 0.0002, 25e-6, 5e-6, None, ("R1", "R2"))
    >>> round(a.common_tolerance, 6), round(a.member_tolerance, 6)
    (0.0009, 0.0001)
    """

    name: str
    tolerance: float
    ratio_tolerance: float
    tcr: float
    tcr_tracking: float
    package: str | None
    members: tuple[str, ...]

    @property
    def common_tolerance(self) -> float:
        """Half-width of the deviation every member shares, A − ρ/2 (fraction)."""
        return self.tolerance - self.ratio_tolerance / 2

    @property
    def member_tolerance(self) -> float:
        """Half-width of each member's own deviation, ρ/2 (fraction)."""
        return self.ratio_tolerance / 2

    @property
    def common_tcr(self) -> float:
        """Half-width of the temperature coefficient every member shares, TCR − τ/2, 1/K."""
        return self.tcr - self.tcr_tracking / 2

    @property
    def member_tcr(self) -> float:
        """Half-width of each member's own temperature coefficient, τ/2, 1/K."""
        return self.tcr_tracking / 2


def read_array(origin: str, index: int, raw: Any, settings: Mapping[str, Any],
               packages: Mapping[str, PackageRating]) -> tuple[ResistorArray, tuple[str, ...]]:
    """One ``[[array]]`` table: the array (without its members yet) and the members it lists.

    Parameters
    ----------
    origin : str
        The design file, named in errors.
    index : int
        The table's number among the ``[[array]]`` tables (from 1).
    raw : mapping
        The table as ``tomllib`` gives it.
    settings : mapping
        The ``[design]`` settings (``default_tcr``, 1/K).
    packages : mapping
        The package table in force.

    Raises
    ------
    DesignError
        A missing or malformed figure, a ratio tolerance above the absolute one, a TCR
        tracking above the TCR, an unknown package.
    """
    reader = ItemReader(origin, item_label("array", index, raw, key="name"), raw, ARRAY_KEYS)
    name = reader.text("name")
    reader = ItemReader(origin, f"array {name}", raw, ARRAY_KEYS)
    if not reader.has("tolerance"):
        reader.fail('key \'tolerance\' is missing; give the absolute tolerance of every member, '
                    'such as tolerance = "0.1%"')
    if not reader.has("ratio_tolerance"):
        reader.fail('key \'ratio_tolerance\' is missing; give the tolerance of the ratio of two '
                    'members, such as ratio_tolerance = "0.05%"')
    tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    ratio = reader.fraction("ratio_tolerance", "0%", upper=0.99)
    if ratio > tolerance:
        reader.fail(f"ratio_tolerance {raw['ratio_tolerance']!r} is larger than tolerance "
                    f"{raw['tolerance']!r}; two members cannot differ by more than their "
                    "absolute tolerance allows, give a ratio tolerance at most the absolute one")
    tcr = abs(reader.parsed("tcr", parse_tcr)) if reader.has("tcr") else settings["default_tcr"]
    tracking = abs(reader.parsed("tcr_tracking", parse_tcr)) if reader.has("tcr_tracking") else tcr
    if tracking > tcr:
        reader.fail(f"tcr_tracking {raw['tcr_tracking']!r} is larger than the TCR "
                    f"({tcr * 1e6:g} ppm/K); give a tracking at most the TCR")
    package = reader.text("package") if reader.has("package") else None
    if package is not None and package not in packages:
        reader.fail(f"package {package!r} is not in the package table"
                    f"{nearest_name(package, packages)}; use one of "
                    f"{name_list(sorted(packages))} or add a row to your table")
    listed: tuple[str, ...] = ()
    if reader.has("members"):
        names = raw["members"]
        if not (isinstance(names, list) and all(isinstance(n, str) and n.strip() for n in names)):
            reader.fail('members must be a list of resistor designators such as ["R1", "R2"]')
        listed = tuple(n.strip() for n in names)
    return ResistorArray(name, tolerance, ratio, tcr, tracking, package, ()), listed


def attach_arrays(origin: str, resistors: Sequence[Resistor],
                  raw_resistors: Sequence[Any],
                  arrays: Sequence[tuple[ResistorArray, tuple[str, ...]]],
                  other_parts: Mapping[str, str], default_package: str | None
                  ) -> tuple[tuple[Resistor, ...], tuple[ResistorArray, ...]]:
    """Join each array to its members: every member takes the array's tolerance, TCR, package.

    Parameters
    ----------
    origin : str
        The design file, named in errors.
    resistors : sequence of Resistor
        The design's resistors, in file order (sensors included).
    raw_resistors : sequence of mapping
        The ``[[resistor]]`` tables as written (for the keys a member may not give).
    arrays : sequence of (ResistorArray, tuple of str)
        Each array read by :func:`read_array` and the members its table lists.
    other_parts : mapping of str to str
        Every designator that is not a resistor, with what it is (``"voltage source"``).
    default_package : str or None
        The ``[design]`` package.

    Returns
    -------
    resistors : tuple of Resistor
        With each member's ``array``, tolerance, TCR and package set.
    arrays : tuple of ResistorArray
        With their members.

    Raises
    ------
    DesignError
        An unknown array name, a member that is not a resistor part, a member giving its own
        tolerance, TCR or classes, members on different packages, an array with fewer than two
        members, two arrays of one name or an array named like a part.
    """
    by_name: dict[str, ResistorArray] = {}
    for array, _ in arrays:
        if array.name in by_name:
            raise DesignError(f"{origin}, array {array.name}: the name is used by two [[array]] "
                              "tables; give each array its own name")
        if array.name in other_parts or any(r.ref == array.name for r in resistors):
            raise DesignError(f"{origin}, array {array.name}: the name is also a part's "
                              "designator; give the array a name of its own, such as RN1")
        by_name[array.name] = array
    index = {r.ref: k for k, r in enumerate(resistors)}
    raw_of = {r.get("ref"): r for r in raw_resistors if isinstance(r, Mapping)}
    joined: dict[str, list[str]] = {name: [] for name in by_name}
    for array, listed in arrays:
        for ref in listed:
            item = f"{origin}, array {array.name}"
            if ref in other_parts:
                raise DesignError(f"{item}: member {ref!r} is a {other_parts[ref]}, not a "
                                  "resistor; list resistors only")
            if ref not in index:
                raise DesignError(f"{item}: member {ref!r} is not a resistor of the design"
                                  f"{nearest_name(ref, index)}; list resistors only")
            named = resistors[index[ref]].array
            if named is not None and named != array.name:
                raise DesignError(f"{item}: member {ref} names array {named!r}; a resistor "
                                  "belongs to one array, list it in one")
            if ref not in joined[array.name]:
                joined[array.name].append(ref)
    for r in resistors:
        if r.array is None:
            continue
        if r.array not in by_name:
            raise DesignError(f"{origin}, resistor {r.ref}: array {r.array!r} has no [[array]] "
                              f"table{nearest_name(r.array, by_name)}; add an [[array]] with "
                              f"name = {r.array!r} or correct the name")
        if r.ref not in joined[r.array]:
            joined[r.array].append(r.ref)
    out = list(resistors)
    finished = []
    for name, array in by_name.items():
        members = sorted(joined[name], key=index.__getitem__)
        item = f"{origin}, array {name}"
        if len(members) < 2:
            raise DesignError(f"{item}: it has {len(members)} member"
                              f"{'' if len(members) == 1 else 's'}; an array matches two or "
                              f'more resistors, add array = "{name}" to another resistor or give '
                              "the part its own tolerance instead")
        packages: dict[str, str | None] = {}
        for ref in members:
            r = resistors[index[ref]]
            raw = raw_of.get(ref, {})
            if not r.bom:
                raise DesignError(f"{item}: member {ref} is left off the BOM (it models a "
                                  "load, a sensor or an input), not a resistor part; drop it "
                                  "from the array")
            if r.position.count > 1:
                raise DesignError(f"{item}: member {ref} is a position of {r.position.count} "
                                  "parts; an array member is one resistor, drop combine")
            for key in ("tolerance", "tcr", "classes"):
                if key in raw:
                    raise DesignError(f"{origin}, resistor {ref}: it is a member of array "
                                      f"{name}, which sets its {key}; drop {key} from the "
                                      "resistor")
            own = raw.get("package") if isinstance(raw.get("package"), str) else None
            own = own.strip() if own else None
            if own and array.package and own != array.package:
                raise DesignError(f"{item}: member {ref} is on package {own!r} but the array is "
                                  f"one {array.package!r} package; drop the member's package "
                                  "or give the same one")
            packages[ref] = own or array.package or default_package
        chosen = set(packages.values())
        if len(chosen) > 1:
            (a, pa), (b, pb) = next(
                ((x, px), (y, py)) for x, px in packages.items() for y, py in packages.items()
                if px != py)
            raise DesignError(f"{item}: members {a} ({pa or 'no package'}) and {b} "
                              f"({pb or 'no package'}) are on different packages; an array is "
                              "one package, give every member the same one")
        package = chosen.pop()
        for ref in members:
            k = index[ref]
            # the array, not a part class, sets a member's tolerance and TCR
            out[k] = replace(out[k], array=name, tolerance=array.tolerance, tcr=array.tcr,
                             package=package, classes=())
        finished.append(replace(array, members=tuple(members), package=package))
    return tuple(out), tuple(finished)
