"""Catalogue of hard equilibrium cases, shared by the solver tests and the benchmarks.

Each case is a reaction system, a feed and conditions chosen to stress one difficulty (near-complete
conversion, trace species, zero feeds, inert-only feeds, 1000 bar, K from about 1e-20 to 1e20 and beyond,
zero-mole-change reactions, sealed vessels). Feeds and conditions are invented scenarios of our own. The "known
answer" of every case is checked in ``test_hard_cases.py``: the extent and the Gibbs formulations must agree
to 1e-8 in mole fraction, and the single-reaction cases are also solved by a slow independent reference
(bracketed root of the one equilibrium condition, fugacity coefficients from the public model call).

Usage from the benchmarks: ``sys.path.insert(0, "tests/solvers"); import hard_cases; hard_cases.CASES``.
"""
from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class HardCase:
    """One case: ``system()`` builds the ReactionSystem, ``conditions()`` the keyword arguments of equilibrium."""

    name: str
    species: tuple[str, ...]
    feed: dict[str, float]
    T: float  # [K]
    P: float | None = None  # [Pa]
    V: float | None = None  # [m3]
    reactions: tuple[str, ...] | None = None
    eos: str = "PR"
    why: str = ""
    tags: tuple[str, ...] = field(default_factory=tuple)

    def system(self):
        import hipeq

        return hipeq.ReactionSystem(list(self.species), reactions=None if self.reactions is None
                                    else list(self.reactions), eos=self.eos)

    def conditions(self) -> dict:
        out: dict = {"feed": dict(self.feed), "T": self.T}
        if self.V is not None:
            out["V"] = self.V
        else:
            out["P"] = self.P
        return out


AMMONIA = ("N2", "H2", "NH3")
METHANOL = ("CO", "CO2", "H2", "H2O", "CH3OH")
METHANOL_REACTIONS = ("CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O", "CO2 + 3 H2 = CH3OH + H2O")
STEAM_METHANE = ("CH4", "H2O", "CO", "CO2", "H2")
WATER = ("H2", "O2", "H2O")

CASES: tuple[HardCase, ...] = (
    HardCase("ammonia_converter", ("N2", "H2", "NH3", "Ar", "CH4"),
             {"N2": 0.2325, "H2": 0.6975, "NH3": 0.03, "Ar": 0.02, "CH4": 0.02}, 723.15, P=300e5,
             why="typical loop conditions with inerts", tags=("inerts", "single")),
    HardCase("ammonia_near_complete", AMMONIA, {"N2": 1.0, "H2": 3.0}, 400.0, P=1000e5,
             why="cold and 1000 bar: conversion above 99.8 %, N2 driven below 4e-4", tags=("1000 bar", "single")),
    HardCase("ammonia_trace_product", AMMONIA, {"N2": 1.0, "H2": 3.0}, 1500.0, P=1e5,
             why="hot and 1 bar: NH3 about 2e-5", tags=("trace", "single")),
    HardCase("ammonia_product_only_feed", AMMONIA, {"NH3": 1.0}, 900.0, P=10e5,
             why="reactants absent from the feed; decomposition", tags=("zero feed", "single")),
    HardCase("ammonia_inert_only", ("N2", "H2", "NH3", "Ar"), {"Ar": 1.0}, 700.0, P=100e5,
             why="only an inert: nothing can react", tags=("inert only",)),
    HardCase("ammonia_hot_1000bar", AMMONIA, {"N2": 1.0, "H2": 3.0, "NH3": 0.1}, 900.0, P=1000e5,
             why="1000 bar with strong non-ideality", tags=("1000 bar", "single")),
    HardCase("methanol_no_co2_in_feed", METHANOL, {"CO": 1.0, "H2": 2.0}, 523.15, P=80e5,
             reactions=METHANOL_REACTIONS,
             why="CO2 and H2O absent and not formable (O - C balance); one reaction frozen, one dependent dropped",
             tags=("zero feed",)),
    HardCase("methanol_co2_route", METHANOL, {"CO2": 1.0, "H2": 3.0}, 523.15, P=80e5,
             reactions=METHANOL_REACTIONS, why="CO and CH3OH formed from CO2 only", tags=("zero feed",)),
    HardCase("methanol_1000bar", METHANOL, {"CO": 0.1, "CO2": 0.1, "H2": 0.7, "H2O": 0.01}, 473.15, P=1000e5,
             reactions=METHANOL_REACTIONS, why="1000 bar, cold: CO and CO2 driven to 1e-7",
             tags=("1000 bar", "trace")),
    HardCase("water_decomposition_K_1e-20", WATER, {"H2O": 1.0}, 1000.0, P=1e5,
             why="K of 2 H2O = 2 H2 + O2 about 1e-20 at 1000 K: H2 and O2 near 1e-7", tags=("K tiny", "single")),
    HardCase("water_formation_K_1e20", WATER, {"H2": 2.0, "O2": 1.0}, 1000.0, P=1e5,
             why="K of 2 H2 + O2 = 2 H2O about 1e20: stoichiometric feed converted to 1e-7",
             tags=("K huge", "single")),
    HardCase("water_traces_1e-16", WATER, {"H2O": 1.0}, 500.0, P=1e5,
             why="K about 1e45: H2 and O2 near 1e-16, the element balances carried by trace species",
             tags=("trace", "K huge", "single")),
    HardCase("oxygen_excess_K_1e80", WATER, {"H2": 2.0, "O2": 1.0000001}, 300.0, P=1e5, eos="ideal",
             why="ideal gas, K about 1e80: H2 falls to about 1e-36 while the O2 excess stays at 5e-8",
             tags=("trace", "K huge")),
    HardCase("steam_methane_reformer", STEAM_METHANE, {"CH4": 1.0, "H2O": 3.0}, 1100.0, P=20e5,
             why="reformer outlet", tags=("multi",)),
    HardCase("steam_methane_K_tiny", STEAM_METHANE, {"CH4": 1.0, "H2O": 2.0}, 400.0, P=1e5,
             why="reforming K about 1e-15 at 400 K: CO near 2e-9", tags=("K tiny", "trace")),
    HardCase("steam_methane_complete", STEAM_METHANE, {"CH4": 1.0, "H2O": 2.0}, 1500.0, P=1e5,
             why="CH4 converted to 1e-6", tags=("near complete",)),
    HardCase("methane_without_oxygen", STEAM_METHANE, {"CH4": 1.0, "H2": 1.0}, 900.0, P=20e5,
             why="no oxygen in the feed: every reaction frozen", tags=("zero feed",)),
    HardCase("water_gas_shift_zero_mole_change", ("CO", "H2O", "CO2", "H2"), {"CO": 1.0, "H2O": 1.0}, 700.0,
             P=50e5, reactions=("CO + H2O = CO2 + H2",), eos="SRK", why="sum of nu = 0", tags=("single",)),
    HardCase("sealed_vessel_ammonia", AMMONIA, {"N2": 1.0, "H2": 3.0}, 723.15, V=1e-3,
             why="fixed volume: about 200 bar at equilibrium", tags=("vessel", "single")),
    HardCase("sealed_vessel_methanol", METHANOL, {"CO": 1.0, "CO2": 0.2, "H2": 3.0}, 523.15, V=2e-3,
             reactions=METHANOL_REACTIONS, why="fixed volume, two reactions, P changes with total moles",
             tags=("vessel",)),
)

BY_NAME = {case.name: case for case in CASES}
