"""rnsynth: from electrical targets to standard resistor values.

The library API a notebook uses::

    from synth import load_design, check
    result = check(load_design("examples/greenhouse_probe.toml"))
    result.nodes["sense"]

The public names are imported on first use (PEP 562), so ``import synth``
and the quick command-line paths load numpy, scipy, ortools or matplotlib
only when a name that needs them is touched.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from synth.catalog.packages import PackageRating, load_package_table
    from synth.catalog.series import (
        Series,
        load_series,
        nearest_value,
        series_names,
        series_values,
    )
    from synth.checking import check
    from synth.circuit.measure import Evaluation, Evaluator
    from synth.circuit.mesh import MeshSolver
    from synth.circuit.network import Network, build_network
    from synth.circuit.nodal import nodal_solve
    from synth.circuit.solution import MeshSolution
    from synth.design.load import load_design
    from synth.design.model import Design, OperatingPoint, Regulator, Resistor, Source
    from synth.design.points import expand_points, range_points
    from synth.design.reader import design_from_dict
    from synth.design.target import Target
    from synth.errors import DesignError, InfeasibleError, RnsynthError
    from synth.rating import allowed_power, derating_factor
    from synth.results import Candidate, CheckResult, PartReport, SynthesisResult, TargetReport
    from synth.spread.analyse import analyse_spread
    from synth.spread.records import SpreadResult, SpreadSettings
    from synth.synthesis import synthesize
    from synth.units import (
        format_eng,
        format_rkm,
        parse_fraction,
        parse_quantity,
        parse_resistance,
        parse_tcr,
        parse_temperature,
    )

    __version__: str

# public name -> the module that owns it
_OWNERS = {
    "Candidate": "synth.results",
    "CheckResult": "synth.results",
    "Design": "synth.design.model",
    "DesignError": "synth.errors",
    "Evaluation": "synth.circuit.measure",
    "Evaluator": "synth.circuit.measure",
    "InfeasibleError": "synth.errors",
    "MeshSolution": "synth.circuit.solution",
    "MeshSolver": "synth.circuit.mesh",
    "Network": "synth.circuit.network",
    "OperatingPoint": "synth.design.model",
    "PackageRating": "synth.catalog.packages",
    "PartReport": "synth.results",
    "Regulator": "synth.design.model",
    "Resistor": "synth.design.model",
    "RnsynthError": "synth.errors",
    "Series": "synth.catalog.series",
    "Source": "synth.design.model",
    "SpreadResult": "synth.spread.records",
    "SpreadSettings": "synth.spread.records",
    "SynthesisResult": "synth.results",
    "Target": "synth.design.model",
    "TargetReport": "synth.results",
    "allowed_power": "synth.rating",
    "expand_points": "synth.design.points",
    "range_points": "synth.design.points",
    "analyse_spread": "synth.spread.analyse",
    "build_network": "synth.circuit.network",
    "check": "synth.checking",
    "derating_factor": "synth.rating",
    "design_from_dict": "synth.design.reader",
    "format_eng": "synth.units",
    "format_rkm": "synth.units",
    "load_design": "synth.design.load",
    "load_package_table": "synth.catalog.packages",
    "load_series": "synth.catalog.series",
    "nearest_value": "synth.catalog.series",
    "nodal_solve": "synth.circuit.nodal",
    "parse_fraction": "synth.units",
    "parse_quantity": "synth.units",
    "parse_resistance": "synth.units",
    "parse_tcr": "synth.units",
    "parse_temperature": "synth.units",
    "series_names": "synth.catalog.series",
    "series_values": "synth.catalog.series",
    "synthesize": "synth.synthesis",
}

__all__ = [
    "Candidate",
    "CheckResult",
    "Design",
    "DesignError",
    "Evaluation",
    "Evaluator",
    "InfeasibleError",
    "MeshSolution",
    "MeshSolver",
    "Network",
    "OperatingPoint",
    "PackageRating",
    "PartReport",
    "Regulator",
    "Resistor",
    "RnsynthError",
    "Series",
    "Source",
    "SpreadResult",
    "SpreadSettings",
    "SynthesisResult",
    "Target",
    "TargetReport",
    "__version__",
    "allowed_power",
    "analyse_spread",
    "build_network",
    "check",
    "derating_factor",
    "design_from_dict",
    "expand_points",
    "format_eng",
    "format_rkm",
    "load_design",
    "load_package_table",
    "load_series",
    "nearest_value",
    "nodal_solve",
    "parse_fraction",
    "parse_quantity",
    "parse_resistance",
    "parse_tcr",
    "parse_temperature",
    "range_points",
    "series_names",
    "series_values",
    "synthesize",
]


def _installed_version() -> str:
    """The version of the installed distribution (pyproject.toml holds the one number)."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("rnsynth")
    except PackageNotFoundError:  # a source tree on sys.path, never installed
        return "0+unknown"


def __getattr__(name: str) -> Any:
    """Import a public name from its owning module on first use (PEP 562)."""
    if name == "__version__":
        value: Any = _installed_version()
    elif name in _OWNERS:
        value = getattr(importlib.import_module(_OWNERS[name]), name)
    else:
        raise AttributeError(f"module 'synth' has no attribute {name!r}")
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})
