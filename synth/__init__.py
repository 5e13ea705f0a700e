"""rnsynth: from electrical targets to standard resistor values.

The library API a notebook uses::

    from synth import load_design, check
    result = check(load_design("examples/greenhouse_probe.toml"))
    result.nodes["sense"]
"""

from __future__ import annotations

__version__ = "0.2.0"

from synth.catalog.packages import PackageRating, load_package_table
from synth.catalog.series import Series, load_series, nearest_value, series_names, series_values
from synth.checking import check
from synth.circuit.measure import Evaluation, Evaluator
from synth.circuit.mesh import MeshSolution, MeshSolver
from synth.circuit.network import Network, build_network
from synth.circuit.nodal import nodal_solve
from synth.design.load import load_design
from synth.design.model import Design, Regulator, Resistor, Source, Target
from synth.design.reader import design_from_dict
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
    "series_names",
    "series_values",
    "synthesize",
]
