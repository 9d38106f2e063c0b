"""Compiled helpers against slow NumPy references: linear algebra, the g0 table, the zero-feed patterns."""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from hipeq.data.species import species
from hipeq.data.thermochem import R, standard_gibbs
from hipeq._jit import kernel
from hipeq.solvers import _common
from hipeq.solvers._common import g0_into
from hipeq.solvers._patterns import analyse, null_space
from hipeq.solvers._tables import g0_table


# Compiled callers of the solvers' linear algebra, which only compiled code may call (hipeq._jit.inner_kernel).
@kernel
def cholesky_solve(H, rhs, m, x, L, s):
    return _common.cholesky_solve(H, rhs, m, x, L, s)


@kernel
def lu_solve(M, rhs, m, x, piv):
    return _common.lu_solve(M, rhs, m, x, piv)


@pytest.mark.parametrize("m", [1, 2, 5, 9])
def test_cholesky_solve_matches_numpy(m: int) -> None:
    rng = np.random.default_rng(m)
    a = rng.normal(size=(m, m))
    scales = 10.0 ** rng.uniform(-12, 12, m)  # badly scaled on purpose: the Jacobi scaling must cope
    B = a @ a.T + m * np.eye(m)  # well conditioned
    H = B * np.outer(scales, scales)
    rhs = rng.normal(size=m)
    x = np.zeros(m)
    assert cholesky_solve(H.copy(), rhs.copy(), m, x, np.zeros((m, m)), np.zeros(m))
    expected = np.linalg.solve(B, rhs / scales) / scales  # the same system solved in scaled form
    np.testing.assert_allclose(x, expected, rtol=1e-10)


def test_cholesky_rejects_indefinite_and_singular() -> None:
    x, L, s = np.zeros(2), np.zeros((2, 2)), np.zeros(2)
    assert not cholesky_solve(np.array([[1.0, 2.0], [2.0, 1.0]]), np.ones(2), 2, x, L, s)
    assert not cholesky_solve(np.array([[1.0, 1.0], [1.0, 1.0]]), np.ones(2), 2, x, L, s)
    assert not cholesky_solve(np.array([[np.nan, 0.0], [0.0, 1.0]]), np.ones(2), 2, x, L, s)


@pytest.mark.parametrize("m", [1, 3, 8, 15])
def test_lu_solve_matches_numpy(m: int) -> None:
    rng = np.random.default_rng(100 + m)
    M = rng.normal(size=(m, m))
    rhs = rng.normal(size=m)
    x = np.zeros(m)
    assert lu_solve(M.copy(), rhs.copy(), m, x, np.zeros(m, dtype=np.int64))
    np.testing.assert_allclose(x, np.linalg.solve(M, rhs), rtol=1e-9, atol=1e-12)
    assert not lu_solve(np.zeros((m, m)), rhs.copy(), m, x, np.zeros(m, dtype=np.int64))


@pytest.mark.parametrize("names", [("N2", "H2", "NH3", "Ar", "CH4"), ("CO", "CO2", "H2", "H2O", "CH3OH"),
                                   ("H2", "O2", "H2O")])
def test_g0_table_reproduces_data_layer(names) -> None:
    records = tuple(species(n) for n in names)
    table = g0_table(records)
    T = np.random.default_rng(3).uniform(table.t_lo, table.t_hi, 200)
    T[:2] = table.t_lo, table.t_hi
    exact = standard_gibbs(records, T) / (R * T[:, None])
    approx = np.empty_like(exact)
    for k, t in enumerate(T):
        g0_into(float(t), table.u_lo, table.h, table.values, approx[k])
    # the table is checked at build time to 1e-11 at every interval midpoint (its worst points)
    assert np.max(np.abs(approx - exact)) <= 1e-11


def test_pattern_of_methanol_without_co2_or_water() -> None:
    system = hipeq.ReactionSystem(["CO", "CO2", "H2", "H2O", "CH3OH"],
                                  reactions=["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"])
    key = 0b00101  # CO and H2 fed
    p = analyse(key, 5, system.nu, null_space(system.element_matrix), system.element_matrix)
    assert p.ext_active.tolist() == [True, False, True, False, True]
    assert p.gibbs_active.tolist() == p.ext_active.tolist()  # the O - C balance forbids CO2 and H2O
    assert p.frozen.tolist() == [False, True]
    assert p.neff == 1
    # the kept extent direction leaves the absent species at zero
    assert np.allclose((system.nu.T @ p.Zb[:, :p.neff])[[1, 3]], 0.0)
    # element rows: rows of the element matrix on the species present (one element each, so that each balance is
    # solved relative to its own feed amount), independent, spanning the balances of the species present
    Q = p.Q[:p.neq]
    A = system.element_matrix * p.gibbs_active
    assert all(any(np.array_equal(q, a) for a in A) for q in Q)
    assert p.neq == np.linalg.matrix_rank(Q) == np.linalg.matrix_rank(system.element_matrix[:, p.gibbs_active])
    # the cold-start direction keeps every present species positive for the indicator feed
    f = np.array([1.0, 0.0, 1.0, 0.0, 0.0])
    assert np.all((f + p.ext_dir)[p.ext_active] > 0.0)


def test_null_space() -> None:
    A = np.array([[1.0, 0.0, 1.0], [0.0, 2.0, 3.0]])
    Z = null_space(A)
    assert Z.shape == (3, 1)
    np.testing.assert_allclose(A @ Z, 0.0, atol=1e-14)
