"""rnsynth: from electrical targets to standard resistor values.

The library API a notebook uses::

    from synth import load_design, check
    result = check(load_design("examples/greenhouse_probe.toml"))
    result.nodes["sense"]
"""

from __future__ import annotations

__version__ = "0.2.0"

from synth.analysis import CheckResult, PartReport, TargetReport, check
from synth.catalogs import (
    PackageRating,
    Series,
    load_package_table,
    load_series,
    nearest_value,
    series_names,
    series_values,
)
from synth.derating import allowed_power, derating_factor
from synth.design import Design, Regulator, Resistor, Source, Target, design_from_dict, load_design
from synth.errors import DesignError, InfeasibleError, RnsynthError
from synth.evaluate import Evaluation, Evaluator
from synth.mesh import MeshSolution, MeshSolver
from synth.network import Network, build_network
from synth.nodal import nodal_solve
from synth.spread import SpreadResult, SpreadSettings, analyse_spread
from synth.synthesis import Candidate, SynthesisResult, synthesize
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
