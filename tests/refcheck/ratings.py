"""Per-physical-part allowances from the package table.

Sources: ``/work/shared/FACTS.md`` section 3 (derating: full rated power up to the rated
ambient, then linear to zero at the zero-power temperature; margins of 50 % power and 80 %
of the limiting element voltage, [CP]) and ``catalogs/packages.csv`` (ratings, read here
with the :mod:`csv` module; lines starting with ``#`` are comments).

For a part of package ``p`` at ambient ``T``::

    allowed power   = P_rated * clip((T_zero - T) / (T_zero - T_rated), 0, 1) * power_use
    allowed voltage = limiting_voltage * voltage_use

with ``power_use`` 0.5 and ``voltage_use`` 0.8 by default.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from fractions import Fraction
from functools import cache
from pathlib import Path

PACKAGES_CSV = Path(__file__).resolve().parents[2] / "catalogs" / "packages.csv"
POWER_USE = 0.5
VOLTAGE_USE = 0.8
AMBIENT_C = 25.0


@dataclass(frozen=True)
class Package:
    """One row of the package table (text fields kept as written, numbers as floats)."""

    name: str
    mount: str
    imperial: str
    metric: str
    rated_power_w: float
    rated_ambient_c: float
    zero_power_c: float
    limiting_voltage_v: float
    source: str
    row: dict[str, str]


@cache
def _load(path: str) -> dict[str, Package]:
    with open(path, newline="", encoding="utf-8") as fh:
        lines = [ln for ln in fh if ln.strip() and not ln.lstrip().startswith("#")]
    out: dict[str, Package] = {}
    for row in csv.DictReader(lines):
        pkg = Package(
            name=row["name"].strip(),
            mount=row["mount"].strip(),
            imperial=row["imperial"].strip(),
            metric=row["metric"].strip(),
            rated_power_w=float(row["rated_power_w"]),
            rated_ambient_c=float(row["rated_ambient_c"]),
            zero_power_c=float(row["zero_power_c"]),
            limiting_voltage_v=float(row["limiting_voltage_v"]),
            source=row["source"].strip(),
            row={k: v.strip() for k, v in row.items()},
        )
        out[pkg.name] = pkg
    return out


def load_packages(path: Path | str = PACKAGES_CSV) -> dict[str, Package]:
    """All packages of the table, by name (in file order)."""
    return dict(_load(str(path)))


def get_package(name: str | Package, path: Path | str = PACKAGES_CSV) -> Package:
    """A package by name, or by its metric size (``"1608M"``); a Package is returned as is."""
    if isinstance(name, Package):
        return name
    table = _load(str(path))
    if name in table:
        return table[name]
    for pkg in table.values():
        if name and name in (pkg.metric, pkg.imperial):
            return pkg
    raise KeyError(f"no package {name!r} in {path}")


def derating_factor(pkg: str | Package, ambient_c: float = AMBIENT_C) -> float:
    """``clip((T_zero - T) / (T_zero - T_rated), 0, 1)``: share of rated power allowed."""
    p = get_package(pkg)
    f = (p.zero_power_c - ambient_c) / (p.zero_power_c - p.rated_ambient_c)
    return min(1.0, max(0.0, f))


def allowed_power(
    pkg: str | Package, ambient_c: float = AMBIENT_C, power_use: float = POWER_USE
) -> float:
    """Allowed dissipation of one physical part, W."""
    p = get_package(pkg)
    return p.rated_power_w * derating_factor(p, ambient_c) * power_use


def allowed_voltage(pkg: str | Package, voltage_use: float = VOLTAGE_USE) -> float:
    """Allowed voltage across one physical part, V."""
    return get_package(pkg).limiting_voltage_v * voltage_use


def exact_allowed_power(
    pkg: str | Package, ambient_c: Fraction | int | str = 25,
    power_use: Fraction | int | str = Fraction(1, 2),
) -> Fraction:
    """:func:`allowed_power` in exact rationals, from the table's decimal text."""
    p = get_package(pkg)
    t = Fraction(ambient_c)
    t0 = Fraction(p.row["zero_power_c"])
    tr = Fraction(p.row["rated_ambient_c"])
    f = min(Fraction(1), max(Fraction(0), (t0 - t) / (t0 - tr)))
    return Fraction(p.row["rated_power_w"]) * f * Fraction(power_use)


def exact_allowed_voltage(
    pkg: str | Package, voltage_use: Fraction | int | str = Fraction(4, 5)
) -> Fraction:
    """:func:`allowed_voltage` in exact rationals."""
    p = get_package(pkg)
    return Fraction(p.row["limiting_voltage_v"]) * Fraction(voltage_use)


def critical_resistance(pkg: str | Package) -> float:
    """``U_max**2 / P_rated`` (FACTS 3), ohm."""
    p = get_package(pkg)
    return p.limiting_voltage_v**2 / p.rated_power_w
