"""Random states and thermo's mixture objects for the cross-implementation check of hipeq's cubics.

Shared by tests/validation/test_eos_vs_thermo.py and docs/tools/eos_validation_table.py. thermo (0.6, C. Bell,
https://github.com/CalebBell/thermo) implements the same cubics: ``PRMIX`` (Peng & Robinson 1976), ``PR78MIX``
(Robinson & Peng 1978) and ``SRKMIX`` (Soave 1972). We give it our constants (Tc, Pc, omega of our species
records) and our k_ij. thermo calls the single supercritical root of hydrogen-rich gas 'l' at many states
(shared/reference README, "pitfalls"), so the root to compare is the one thermo found: 'g' if only it exists,
else 'l'; where both exist, the lower-Gibbs one (as hipeq takes).
"""
from __future__ import annotations

import numpy as np
from thermo import PR78MIX, PRMIX, SRKMIX

from hipeq.models import _kernels as K

THERMO = {"PR": PRMIX, "PR78": PR78MIX, "SRK": SRKMIX}
SETS = {"ammonia loop": ["H2", "N2", "NH3", "CH4", "Ar"], "methanol loop": ["CO", "H2", "CH3OH", "CO2", "H2O"],
        "syngas": ["H2", "CO2", "CO", "CH4", "N2"]}
N_STATES = 60  # per model and species set


def random_states(eos: str, set_name: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Seeded states: T uniform in 300-1000 K, P log-uniform in 1-1000 bar, y uniform on the simplex."""
    rng = np.random.default_rng(20240 + 10 * list(SETS).index(set_name) + list(THERMO).index(eos))
    nc = len(SETS[set_name])
    T = rng.uniform(300.0, 1000.0, N_STATES)
    P = 10 ** rng.uniform(5.0, 8.0, N_STATES)
    return T, P, rng.dirichlet(np.ones(nc), N_STATES)


def thermo_state(eos: str, model, T: float, P: float, y) -> tuple[object, str]:
    """thermo's mixture object for ``model``'s constants and k_ij at (T, P, y), and the phase letter to compare."""
    state = THERMO[eos](T=T, P=P, zs=list(y), Tcs=list(model.comp[:, K.TC]), Pcs=list(model.comp[:, K.PC]),
                        omegas=list(model.comp[:, K.OMEGA]), kijs=np.asarray(model.kmat).tolist())
    has_g, has_l = hasattr(state, "lnphis_g"), hasattr(state, "lnphis_l")
    phase = "g" if has_g and (not has_l or state.G_dep_g <= state.G_dep_l) else "l"
    return state, phase
