"""hipeq: chemical reaction equilibrium of gas mixtures at high pressure with real-gas fugacity corrections.

Standard state throughout: the ideal gas at 1 bar. SI units in the Python API (K, Pa, m3, mol, J).

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and
licensed engineering practice.

The public names are imported lazily so that ``import hipeq`` stays fast; the numerical core compiles (or
loads from the numba cache) on first use.
"""
from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

# public name -> module that defines it (imports flow downwards: data -> models -> solvers -> analysis)
_PUBLIC = {
    "species": "hipeq.data.species",
    "Species": "hipeq.data.species",
    "register_species": "hipeq.data.species",
    "load_species_file": "hipeq.data.species",
    "Reaction": "hipeq.data.reactions",
    "independent_reactions": "hipeq.data.reactions",
    "equilibrium_constant": "hipeq.data.thermochem",
    "fugacity_coefficients": "hipeq.models.eos",
    "FugacityResult": "hipeq.models.eos",
    "build_model": "hipeq.models.eos",
    "stability_test": "hipeq.models.stability",
    "StabilityResult": "hipeq.models.stability",
    "flash": "hipeq.models.phases",
    "bubble_point": "hipeq.models.phases",
    "dew_point": "hipeq.models.phases",
    "PhaseSplit": "hipeq.models.phases",
    "Phase": "hipeq.models.phases",
    "SaturationPoint": "hipeq.models.phases",
    "ReactionSystem": "hipeq.solvers.system",
    "EquilibriumResult": "hipeq.solvers.result",
    "BatchResult": "hipeq.solvers.result",
    "Status": "hipeq.solvers.result",
    "compare": "hipeq.analysis.compare",
    "Comparison": "hipeq.analysis.compare",
    "ideal_gas_limit": "hipeq.analysis.limit",
    "IdealGasLimit": "hipeq.analysis.limit",
    "operating_map": "hipeq.analysis.maps",
    "OperatingMap": "hipeq.analysis.maps",
    "Span": "hipeq.analysis.maps",
    "solve_in_chunks": "hipeq.analysis.chunks",
    "ChunkedBatch": "hipeq.analysis.chunks",
    "map_figure": "hipeq.analysis.figures",
    "parity_figure": "hipeq.analysis.figures",
    "error_figure": "hipeq.analysis.figures",
    "score_models": "hipeq.analysis.scoring",
    "Scores": "hipeq.analysis.scoring",
    "models_with_sources": "hipeq.analysis.scoring",
    "datasets": "hipeq.data.measurements",
    "load_dataset": "hipeq.data.measurements",
    "Dataset": "hipeq.data.measurements",
    "k_sources": "hipeq.data.ksources",
    "yield_figure": "hipeq.analysis.figures",
    "MixtureProperties": "hipeq.solvers.properties",
    "AdiabaticResult": "hipeq.solvers.adiabatic",
    "AdiabaticBatchResult": "hipeq.solvers.adiabatic",
    "Duty": "hipeq.analysis.energy",
    "reactor_duty": "hipeq.analysis.energy",
    "vessel_heat": "hipeq.analysis.energy",
    "EquilibriumCurve": "hipeq.analysis.energy",
    "equilibrium_curve": "hipeq.analysis.energy",
    "AdiabaticLine": "hipeq.analysis.energy",
    "adiabatic_line": "hipeq.analysis.energy",
    "line_crossing": "hipeq.analysis.energy",
    "Bed": "hipeq.analysis.energy",
    "StagedBeds": "hipeq.analysis.energy",
    "staged_beds": "hipeq.analysis.energy",
    "plot_staged_beds": "hipeq.analysis.energy",
    "RealGasEffect": "hipeq.analysis.energy",
    "real_gas_effect": "hipeq.analysis.energy",
    "HipeqError": "hipeq.errors",
    "InputError": "hipeq.errors",
    "UnknownSpeciesError": "hipeq.errors",
    "UnbalancedReactionError": "hipeq.errors",
    "NotConvergedError": "hipeq.errors",
    "OutOfRangeWarning": "hipeq.errors",
}

__all__ = sorted(_PUBLIC) + ["__version__"]


def __getattr__(name: str) -> Any:
    module = _PUBLIC.get(name)
    if module is None:
        raise AttributeError(f"module 'hipeq' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
