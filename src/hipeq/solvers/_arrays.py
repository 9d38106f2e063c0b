"""Named structures that cross the boundary between the Python face of the solvers and their compiled core.

numba hands a ``typing.NamedTuple`` of arrays and scalars to a compiled function as one argument and reads its
fields by name, so a kernel never needs to know a tuple position or a row index of another module's data:

- :class:`SystemArrays`: the fixed arrays of one reaction system (model, standard Gibbs-energy table,
  stoichiometry, elements), built once per :class:`~hipeq.solvers.system.ReactionSystem`;
- :class:`PatternArrays`: the reduced bases of every pattern of zero feeds seen so far, stacked along a first
  axis (one entry per pattern), from :class:`~hipeq.solvers._store.PatternStore`;
- :class:`Options`: the options of one solve;
- :class:`AnswerLayout`: where each answer sits in the packed float row and the integer row of one state
  (``answer_layout``), used by the kernels that write the rows and by the Python face that reads them.

Adding an array to a system: add a field to :class:`SystemArrays`, fill it in
``ReactionSystem.__init__`` (hipeq.solvers.system), read it by name in the kernel (DEVELOPERS.md, "Adding to the core").
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from hipeq._jit import inline_kernel

# methods (Options.method and the answer's METHOD column)
METHOD_EXTENT = 0
METHOD_GIBBS = 1
METHOD_NAMES = ("extent", "gibbs")


class SystemArrays(NamedTuple):
    """The fixed arrays of one reaction system (read-only)."""

    model_code: int  # MODEL_* of hipeq.models._kernels
    components: np.ndarray  # (nc, N_COMP_COLUMNS) critical constants etc. (CompiledModel.comp)
    model_constants: np.ndarray  # cubic constants and optional extensions (CompiledModel.consts)
    kij: np.ndarray  # (nc, nc) constant k_ij
    g0_ln_t0: float  # ln T of the first node of the standard Gibbs-energy table
    g0_step: float  # node spacing in ln T
    g0_nodes: np.ndarray  # (nodes, 3, nc): g0, dg0/dlnT, d2g0/dlnT2 (hipeq.solvers._tables)
    nu: np.ndarray  # (nr, nc) stoichiometric coefficients of the independent reactions
    nu_pinv: np.ndarray  # (nc, nr) pseudo-inverse of nu
    elements: np.ndarray  # (ne, nc) element matrix
    complete: bool  # the reactions span every composition change the element balances allow


class PatternArrays(NamedTuple):
    """Reduced bases of the feed patterns known to a store, stacked along the first axis (one per pattern); see
    :class:`hipeq.solvers._patterns.Pattern` for each field."""

    extent_active: np.ndarray  # (npat, nc) bool: species that can be present (extent formulation)
    extent_basis: np.ndarray  # (npat, nr, nr) Zb
    extent_directions: np.ndarray  # (npat, nc, nr) W = nu^T Zb
    extent_rank: np.ndarray  # (npat,) neff
    extent_start: np.ndarray  # (npat, nc) p - f
    extent_start_extents: np.ndarray  # (npat, nr)
    gibbs_active: np.ndarray  # (npat, nc) bool
    gibbs_rows: np.ndarray  # (npat, ne, nc): independent element rows on the active species
    gibbs_rank: np.ndarray  # (npat,) number of those rows
    gibbs_start: np.ndarray  # (npat, nc) p - f
    gibbs_null: np.ndarray  # (npat, nc, nc) basis of the feasible composition changes
    gibbs_null_rank: np.ndarray  # (npat,)


class Options(NamedTuple):
    """Options of one solve (see :meth:`hipeq.ReactionSystem.equilibrium`)."""

    method: int  # METHOD_EXTENT or METHOD_GIBBS
    coupled: bool  # full Newton with d ln phi / d n (else the nested scheme)
    fixed_volume: bool  # the given value is V [m3], not P [Pa]
    max_iterations: int
    user_ln_k: bool  # ln K per state comes from the caller
    warm: bool  # warm starts along a chunk (batch)
    guess: bool  # start from the caller's guess
    tol: float  # on every equilibrium condition
    tol_gibbs: float  # the same, per element potential
    tol_volume: float  # |ln(V_equilibrium / V)| of a sealed vessel


class AnswerLayout(NamedTuple):
    """Offsets in the packed answer rows of one state: a float row (``width`` long) and an integer row
    (``INT_COLUMNS`` long)."""

    amounts: int  # nc
    y: int  # nc, mole fractions
    ln_phis: int  # nc
    extents: int  # nr
    ln_k: int  # nr
    residuals: int  # nr
    element_residuals: int  # ne
    P: int
    V: int
    Z: int
    G: int  # G / RT of the answer [mol]
    width: int


# integer answer row of one state
# MAY_SPLIT: 1 where a cubic could have several volume roots at T for some composition of the species present
# (a vapour-liquid split is possible: ``phases="auto"`` tests the answer's stability there and nowhere else)
STATUS, ITERATIONS, OUTER, ROOT, REASON, METHOD, LIQUID, MAY_SPLIT = range(8)
INT_COLUMNS = 8


@inline_kernel
def answer_layout(nc: int, nr: int, ne: int) -> AnswerLayout:
    """Offsets of the float answer row: amounts, mole fractions, ln phi (nc each), extents, ln K, residuals (nr
    each), element residuals (ne), then P, V, Z and G/RT."""
    tail = 3 * nc + 3 * nr + ne
    return AnswerLayout(0, nc, 2 * nc, 3 * nc, 3 * nc + nr, 3 * nc + 2 * nr, 3 * nc + 3 * nr, tail, tail + 1,
                        tail + 2, tail + 3, tail + 4)
