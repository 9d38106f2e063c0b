"""The problems every benchmark solves: species, feeds, reactions and seeded samples of states.

Invented operating windows (our own scenarios, not plant data):

- ammonia synthesis loop: N2, H2, NH3, Ar, CH4 with Peng-Robinson; feed H2/N2 = 3 with recycle NH3 and inerts,
  600-900 K, 50-600 bar;
- methanol synthesis: CO, CO2, H2, H2O, CH3OH with Soave-Redlich-Kwong; three reactions of which two are
  independent, 480-620 K, 30-150 bar.

hipeq and the hand-written baseline receive exactly the same arrays from here.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

SEED = 20240611


@dataclass(frozen=True)
class Case:
    name: str
    species: tuple[str, ...]
    reactions: tuple[str, ...]  # all reactions given to hipeq
    independent: tuple[str, ...]  # the subset a practitioner solves for (one extent each)
    eos: str
    feed: dict[str, float]  # mole amounts [mol]
    T_range: tuple[float, float]  # [K]
    P_range: tuple[float, float]  # [Pa]

    def feed_vector(self) -> np.ndarray:
        return np.array([self.feed.get(s, 0.0) for s in self.species], dtype=float)

    def states(self, n: int, seed: int = SEED) -> tuple[np.ndarray, np.ndarray]:
        """n states (T [K], P [Pa]) drawn uniformly from the operating window, reproducibly."""
        rng = np.random.default_rng(seed)
        T = rng.uniform(*self.T_range, size=n)
        P = rng.uniform(*self.P_range, size=n)
        return T, P

    def grid(self, nT: int, nP: int) -> tuple[np.ndarray, np.ndarray]:
        """A full nT x nP map, flattened (T varies slowest)."""
        T, P = np.meshgrid(np.linspace(*self.T_range, nT), np.linspace(*self.P_range, nP), indexing="ij")
        return T.ravel().copy(), P.ravel().copy()


AMMONIA = Case(
    name="ammonia",
    species=("N2", "H2", "NH3", "Ar", "CH4"),
    reactions=("N2 + 3 H2 = 2 NH3",),
    independent=("N2 + 3 H2 = 2 NH3",),
    eos="PR",
    feed={"N2": 0.2325, "H2": 0.6975, "NH3": 0.03, "Ar": 0.02, "CH4": 0.02},
    T_range=(600.0, 900.0),
    P_range=(50e5, 600e5),
)

METHANOL = Case(
    name="methanol",
    species=("CO", "CO2", "H2", "H2O", "CH3OH"),
    reactions=("CO + 2 H2 = CH3OH", "CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"),
    independent=("CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"),
    eos="SRK",
    feed={"CO": 0.12, "CO2": 0.08, "H2": 0.78, "H2O": 0.01, "CH3OH": 0.01},
    T_range=(480.0, 620.0),
    P_range=(30e5, 150e5),
)


def compositions(n: int, nc: int, seed: int = SEED) -> np.ndarray:
    """n random mole-fraction vectors (flat Dirichlet), shape (n, nc)."""
    rng = np.random.default_rng(seed + 1)
    return rng.dirichlet(np.ones(nc), size=n)


def model(case: Case):
    """hipeq's compiled model for the case (``hipeq.build_model``): ``.code``, ``.comp``, ``.consts``, ``.kmat``."""
    import hipeq

    return hipeq.build_model(list(case.species), eos=case.eos)


def ln_equilibrium_constants(case: Case, T: np.ndarray) -> np.ndarray:
    """ln K_j(T) of the case's independent reactions from ``hipeq.equilibrium_constant``, shape (n, n_r)."""
    import hipeq

    return np.stack([np.log(np.asarray(hipeq.equilibrium_constant(r, T), dtype=float))
                     for r in case.independent], axis=-1)


def stoichiometry(case: Case) -> np.ndarray:
    """nu[j, i] of the case's independent reactions over its species."""
    from hipeq.data.reactions import stoichiometric_matrix

    return np.asarray(stoichiometric_matrix(list(case.independent), list(case.species)), dtype=float)
