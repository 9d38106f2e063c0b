"""The bound that decides where a state needs several starts (``several_roots_possible``) against brute force.

If any composition the feed can reach has three real volume roots of the cubic at some pressure, the bound must
say True (it may say True more often: it is an upper bound). Brute force: random points of the feasible polytope
(and its vertices' neighbourhood), the cubic's three-root condition for the one-fluid a and b at that
composition, a / (b R T) > Omega_a / Omega_b (the critical condition of a cubic with fixed a and b;
Michelsen & Mollerup 2007, "Thermodynamic Models", ch. 3).
"""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from hipeq.models._kernels import OMEGA_A, OMEGA_B, R, tparams_into
from hipeq.solvers._common import make_work, python_views
from hipeq.solvers._driver import SEVERAL_ROOTS, several_roots_possible

SYSTEMS = {
    "methanol": (["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"], "PR"),
    "ammonia": (["N2", "H2", "NH3", "Ar", "CH4"], "SRK"),
    "reforming": (["CH4", "H2O", "CO", "CO2", "H2", "C2H6"], "PR"),
}


def _bound(system: hipeq.ReactionSystem, T: float, n0: np.ndarray) -> tuple[bool, np.ndarray, np.ndarray, np.ndarray]:
    arrays = system.compiled.arrays
    key = int(sum(1 << i for i in range(n0.size) if n0[i] > 0))
    patterns, (pat,), _ = system.compiled.patterns_for([key])
    nc = n0.size
    aij, bi = np.zeros((nc, nc)), np.zeros(nc)
    tparams_into(arrays.model_code, T, arrays.components, arrays.model_constants, arrays.kij, aij, bi,
                 np.zeros((nc, nc)), np.zeros(nc))
    work = python_views(make_work(nc, arrays.nu.shape[0], arrays.elements.shape[0]))
    flag = several_roots_possible(arrays.model_code, T, aij, bi, arrays.model_constants,
                                  patterns.gibbs_active[pat], n0, patterns.gibbs_null[pat],
                                  int(patterns.gibbs_null_rank[pat]), pat, work)
    null = patterns.gibbs_null[pat][:, :int(patterns.gibbs_null_rank[pat])]
    return flag == SEVERAL_ROOTS, aij, bi, null


@pytest.mark.parametrize("name", sorted(SYSTEMS))
def test_bound_is_never_false_where_three_roots_exist(name: str) -> None:
    species, eos = SYSTEMS[name]
    system = hipeq.ReactionSystem(species, eos=eos)
    limit = system.compiled.arrays.model_constants[OMEGA_A] / system.compiled.arrays.model_constants[OMEGA_B]
    rng = np.random.default_rng(7)
    said_false = found_three = 0
    for _ in range(150):
        n0 = rng.uniform(0.0, 1.0, len(species)) * (rng.uniform(size=len(species)) > 0.4)
        n0[rng.integers(len(species))] += 0.5
        T = float(rng.uniform(300.0, 900.0))
        flag, aij, bi, null = _bound(system, T, n0)
        # random feasible points: n0 + null t >= 0, found by shrinking random directions into the polytope
        three = False
        for _ in range(60):
            d = null @ rng.normal(size=null.shape[1]) if null.shape[1] else np.zeros_like(n0)
            neg = d < 0
            step = np.min(n0[neg] / -d[neg]) if neg.any() else 1.0
            n = n0 + rng.uniform(0.0, 1.0) * step * d
            y = np.maximum(n, 0.0) / max(n.sum(), 1e-300)
            a = y @ aij @ y
            b = y @ bi
            if a / (b * R * T) > limit:
                three = True
                break
        found_three += three
        said_false += not flag
        assert flag or not three, (n0, T)
    assert found_three > 0 and said_false > 0  # the cases exercise both sides


def test_bound_is_false_above_every_critical_temperature() -> None:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
    flag, *_ = _bound(system, 700.0, np.array([1.0, 3.0, 0.0]))
    assert not flag  # ammonia's T_c is 405.4 K (Poling, Prausnitz & O'Connell 2001, app. A)


def test_bound_is_true_for_a_condensable_feed() -> None:
    system = hipeq.ReactionSystem(["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"],
                                  reactions=["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"], eos="PR")
    feed = np.array([.0244, 1e-12, .0265, .212, .0272, 1e-12, .0227])
    flag, *_ = _bound(system, 324.66, feed)
    assert flag


def test_kept_vertices_give_the_fresh_answer_at_every_temperature() -> None:
    """The vertices are kept per feed and pattern between states (a chunk pays the enumeration once); reused for
    other temperatures they must give what a fresh enumeration gives."""
    system = hipeq.ReactionSystem(["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"], eos="PR")
    arrays = system.compiled.arrays
    n0 = np.array([0.1, 0.3, 0.4, 0.05, 0.1, 0.0, 0.05])
    key = int(sum(1 << i for i in range(7) if n0[i] > 0))
    patterns, (pat,), _ = system.compiled.patterns_for([key])
    nc, nr, ne = 7, arrays.nu.shape[0], arrays.elements.shape[0]
    kept = python_views(make_work(nc, nr, ne))
    answers = set()
    for T in np.linspace(300.0, 900.0, 25):
        aij, bi = np.zeros((nc, nc)), np.zeros(nc)
        tparams_into(arrays.model_code, T, arrays.components, arrays.model_constants, arrays.kij, aij, bi,
                     np.zeros((nc, nc)), np.zeros(nc))
        args = (arrays.model_code, T, aij, bi, arrays.model_constants, patterns.gibbs_active[pat], n0,
                patterns.gibbs_null[pat], int(patterns.gibbs_null_rank[pat]), pat)
        reused = several_roots_possible(*args, kept)
        fresh = several_roots_possible(*args, python_views(make_work(nc, nr, ne)))
        assert reused == fresh, T
        answers.add(fresh == SEVERAL_ROOTS)
    assert answers == {True, False} and kept.vertex_info[1] == 1  # both sides met; the vertices were kept
