"""Bad input gives a clear InputError naming the field (and the allowed range) before any solve."""
from __future__ import annotations

import math

import pytest

import hipeq
from hipeq.errors import InputError, UnknownSpeciesError

FEED = {"N2": 1.0, "H2": 3.0}


@pytest.fixture(scope="module")
def system() -> hipeq.ReactionSystem:
    return hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")


@pytest.mark.parametrize("kwargs, field, words", [
    (dict(feed={"N2": -1.0, "H2": 3.0}, T=700.0, P=1e7), "feed", ">= 0 mol"),
    (dict(feed={"N2": math.nan}, T=700.0, P=1e7), "feed", "finite"),
    (dict(feed={"N2": "lots"}, T=700.0, P=1e7), "feed", "number"),
    (dict(feed={"N2": 0.0, "H2": 0.0}, T=700.0, P=1e7), "feed", "all amounts are zero"),
    (dict(feed={}, T=700.0, P=1e7), "feed", "empty"),
    (dict(feed={"CH4": 1.0}, T=700.0, P=1e7), "feed", "not in this system"),
    (dict(feed={"unobtainium": 1.0}, T=700.0, P=1e7), "feed", "not a known species"),
    (dict(feed=[1.0, 3.0], T=700.0, P=1e7), "feed", "shape (3,)"),
    (dict(feed=FEED, T=700.0, P=0.0), "P", "> 0 Pa"),
    (dict(feed=FEED, T=700.0, P=-5.0), "P", "> 0 Pa"),
    (dict(feed=FEED, T=700.0, P=math.inf), "P", "finite"),
    (dict(feed=FEED, T=700.0, P=2e10), "P", "<= 1e+10"),
    (dict(feed=FEED, T=700.0, V=0.0), "V", "> 0 m3"),
    (dict(feed=FEED, T=700.0, V=-1.0), "V", "> 0 m3"),
    (dict(feed=FEED, T=700.0, P=1e7, V=1.0), "P", "not both"),
    (dict(feed=FEED, T=700.0), "P", "exactly one of P="),
    (dict(feed=FEED, T=20.0, P=1e7), "T", "50-3000 K"),
    (dict(feed=FEED, T=5000.0, P=1e7), "T", "50-3000 K"),
    (dict(feed=FEED, T=math.nan, P=1e7), "T", "50-3000 K"),
    (dict(feed=FEED, T=700.0, P=1e7, method="newton"), "method", "'extent', 'gibbs'"),
    (dict(feed=FEED, T=700.0, P=1e7, scheme="both"), "scheme", "'coupled', 'nested'"),
    (dict(feed=FEED, T=700.0, P=1e7, tol=0.0), "tol", "[1e-14, 1e-3]"),
    (dict(feed=FEED, T=700.0, P=1e7, max_iterations=0), "max_iterations", "[1, 100000]"),
    (dict(feed=FEED, T=700.0, P=1e7, max_iterations=2.5), "max_iterations", "integer"),
])
def test_bad_equilibrium_input(system, kwargs, field, words) -> None:
    with pytest.raises(InputError) as err:
        system.equilibrium(**kwargs)
    assert err.value.field == field
    assert words in str(err.value)


def test_reaction_with_missing_species() -> None:
    with pytest.raises(InputError) as err:
        hipeq.ReactionSystem(["CO", "H2"], reactions=["CO + 2 H2 = CH3OH"])
    assert err.value.field == "reactions" and "CH3OH" in str(err.value)


@pytest.mark.parametrize("species, reactions, field", [
    ([], None, "species"),
    ("N2", None, "species"),
    (["N2", "N2", "H2"], None, "species"),
    (["N2", "H2", "NH3"], "N2 + 3 H2 = 2 NH3", "reactions"),
])
def test_bad_system(species, reactions, field) -> None:
    with pytest.raises(InputError) as err:
        hipeq.ReactionSystem(species, reactions=reactions)
    assert err.value.field == field


def test_bad_model_and_unknown_species() -> None:
    with pytest.raises(InputError) as err:
        hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="van-der-Waals-ish")
    assert err.value.field == "eos"
    with pytest.raises(UnknownSpeciesError):
        hipeq.ReactionSystem(["N2", "H2", "unobtainium"])
    with pytest.raises(InputError) as err:
        hipeq.ReactionSystem(["N2", "H2", "NH3"], ln_K=3.0)
    assert err.value.field == "ln_K"


def test_batch_shape_errors_raise(system) -> None:
    with pytest.raises(InputError) as err:
        system.equilibrium(feed=FEED, T=[700.0, 710.0, 720.0], P=[1e7, 2e7])
    assert err.value.field == "T" and "broadcast" in str(err.value)
    with pytest.raises(InputError) as err:
        system.equilibrium(feed=[[1.0, 3.0]], T=[700.0], P=[1e7])
    assert err.value.field == "feed"
    with pytest.raises(InputError) as err:
        system.equilibrium(feed={"N2": ["a"]}, T=[700.0], P=[1e7])
    assert err.value.field == "feed"
