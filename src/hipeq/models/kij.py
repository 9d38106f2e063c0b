"""Binary interaction parameters kij of the van der Waals one-fluid mixing rule.

The cubic models mix a_ij = (1 - k_ij) sqrt(a_i a_j) (van der Waals one-fluid rule; Michelsen & Mollerup 2007,
"Thermodynamic Models: Fundamentals and Computational Aspects", 2nd ed., ch. 5); the virial model uses the same
k_ij in its combining rule T_cij = sqrt(T_ci T_cj) (1 - k_ij) (Smith, Van Ness & Abbott, 7th ed., eq. 11.70).

Where the defaults come from (recorded per pair in ``KijAssignment.sources``):

=============  ====================================================================================
model          default k_ij
=============  ====================================================================================
PR, PR78       thermo's interaction-parameter databank, table ``'ChemSep PR'`` (ChemSep's PR kij,
               looked up by CAS pair; for pairs of bundled species from the stored copy in
               ``hipeq/data/bundled_constants.toml``); a pair missing from it falls back to zero and is
               listed in ``zero_pairs``
SRK            zero. The databank has no SRK table; PR kij were regressed with the PR alpha function
               and volume dependence, and carrying them over to SRK is a guess we do not make silently.
               Pass ``kij=databank_kij_values(species)`` to use the PR values deliberately.
virial         zero (the databank's values belong to the cubic mixing rule, not to T_cij)
ideal, LR      none: these models have no interaction parameters (passing ``kij`` is an error)
=============  ====================================================================================

User values override the default pair by pair: a full symmetric matrix, or a mapping
``{("H2", "N2"): 0.1}`` (order inside a pair does not matter). This module is used once per model build, never in
the hot path; the databank look-ups are cached per CAS pair.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType
from typing import Any, Union

import numpy as np

from hipeq.data.databanks import DATABANK_TABLE, SOURCE_DATABANK, databank_kij_pair
from hipeq.errors import InputError

__all__ = ["KijAssignment", "KijInput", "assign_kij", "databank_kij", "databank_kij_values",
           "DATABANK_TABLE", "SOURCE_DATABANK", "SOURCE_USER", "SOURCE_ZERO"]

SOURCE_USER = "user"
SOURCE_ZERO = "default zero"
KIJ_LIMIT = 1.0  # |k_ij| < 1 keeps (1 - k_ij) > 0, i.e. a positive cross attraction and T_cij > 0

Pair = tuple[str, str]
KijInput = Union[None, Mapping[Pair, float], Sequence[Sequence[float]], np.ndarray]


@dataclass(frozen=True)
class KijAssignment:
    """The k_ij of one species list: ``matrix`` (read-only, symmetric, zero diagonal), ``values`` and ``sources``
    per unordered pair (names in species order), and ``zero_pairs`` that fell back to zero for want of a value."""

    matrix: np.ndarray
    values: Mapping[Pair, float]
    sources: Mapping[Pair, str]
    zero_pairs: tuple[Pair, ...]


@lru_cache(maxsize=4096)
def databank_kij(cas_a: str, cas_b: str) -> float | None:
    """k_ij [-] of a CAS pair in thermo's databank table 'ChemSep PR', or None when the pair is missing.

    Source: ChemSep's Peng-Robinson binary interaction parameters as distributed with thermo
    (``thermo.interaction_parameters.IPDB``, table 'ChemSep PR'); symmetric in the pair. Pairs of bundled species
    are read from the stored copy (``hipeq/data/bundled_constants.toml``, no thermo import); any other pair is
    looked up in thermo itself (:func:`hipeq.data.databanks.databank_kij_pair`).
    """
    if not cas_a or not cas_b or cas_a == cas_b:
        return None
    return databank_kij_pair(cas_a, cas_b)


def databank_kij_values(species: Sequence[Any]) -> dict[Pair, float]:
    """The databank k_ij of every pair of ``species`` (records with ``name`` and ``cas``) that has one, as a
    mapping ready to pass as ``kij=`` (e.g. to use the PR values with SRK deliberately)."""
    out: dict[Pair, float] = {}
    for i, a in enumerate(species):
        for b in species[i + 1:]:
            value = databank_kij(a.cas, b.cas)
            if value is not None:
                out[(a.name, b.name)] = value
    return out


def _pairs(names: Sequence[str]) -> list[tuple[int, int]]:
    return [(i, j) for i in range(len(names)) for j in range(i + 1, len(names))]


def _check_value(value: Any, where: str) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError("kij", f"{where}: must be a number, got {value!r}") from None
    if not math.isfinite(number):
        raise InputError("kij", f"{where}: must be finite, got {number!r}")
    if not -KIJ_LIMIT < number < KIJ_LIMIT:
        raise InputError("kij", f"{where}: must lie in (-1, 1), got {number!r}")
    return number


def _user_matrix(kij: Any, names: Sequence[str]) -> dict[tuple[int, int], float]:
    nc = len(names)
    try:
        matrix = np.asarray(kij, dtype=float)
    except (TypeError, ValueError):
        raise InputError("kij", "must be a square matrix of numbers or a mapping {(name_i, name_j): k_ij}") from None
    if matrix.shape != (nc, nc):
        raise InputError("kij", f"matrix must have shape ({nc}, {nc}) for species {list(names)}, "
                                f"got {matrix.shape}")
    if not np.all(np.isfinite(matrix)):
        i, j = np.argwhere(~np.isfinite(matrix))[0]
        raise InputError("kij", f"entry [{i}, {j}] ({names[i]}-{names[j]}) must be finite, got {float(matrix[i, j])!r}")
    if np.any(np.diag(matrix) != 0.0):
        i = int(np.flatnonzero(np.diag(matrix))[0])
        raise InputError("kij", f"diagonal must be zero; entry [{i}, {i}] ({names[i]}) is {float(matrix[i, i])!r}")
    asym = np.abs(matrix - matrix.T)
    if np.any(asym > 0.0):
        i, j = np.unravel_index(int(np.argmax(asym)), asym.shape)
        raise InputError("kij", f"matrix must be symmetric: [{i}, {j}] = {float(matrix[i, j])!r} but "
                                f"[{j}, {i}] = {float(matrix[j, i])!r} ({names[i]}-{names[j]})")
    return {(i, j): _check_value(matrix[i, j], f"entry [{i}, {j}] ({names[i]}-{names[j]})") for i, j in _pairs(names)}


def _user_mapping(kij: Mapping[Any, Any], names: Sequence[str]) -> dict[tuple[int, int], float]:
    index = {name: k for k, name in enumerate(names)}
    given: dict[tuple[int, int], float] = {}
    for key, value in kij.items():
        if not (isinstance(key, tuple) and len(key) == 2 and all(isinstance(s, str) for s in key)):
            raise InputError("kij", f"mapping keys must be pairs of species names like ('H2', 'N2'), got {key!r}")
        missing = [s for s in key if s not in index]
        if missing:
            raise InputError("kij", f"pair {key!r}: species {missing[0]!r} is not in the model's species "
                                    f"{list(names)}")
        i, j = sorted((index[key[0]], index[key[1]]))
        if i == j:
            raise InputError("kij", f"pair {key!r}: a species has no interaction parameter with itself")
        number = _check_value(value, f"pair {key!r}")
        if (i, j) in given and given[(i, j)] != number:
            raise InputError("kij", f"pair {names[i]}-{names[j]} given twice with different values "
                                    f"({given[(i, j)]!r} and {number!r}): k_ij must be symmetric")
        given[(i, j)] = number
    return given


def assign_kij(species: Sequence[Any], default: str, kij: KijInput = None) -> KijAssignment:
    """k_ij for ``species`` (records with ``name`` and ``cas``): defaults per ``default`` ("databank" or
    "zero"), overridden pair by pair by ``kij`` (a symmetric (nc, nc) matrix with zero diagonal, or a mapping
    {(name_i, name_j): k_ij}); every k_ij must be finite and in (-1, 1).

    Raises:
        InputError: field ``kij``, naming the entry or pair and the rule it breaks.
    """
    names = [s.name for s in species]
    if kij is None:
        user: dict[tuple[int, int], float] = {}
    elif isinstance(kij, Mapping):
        user = _user_mapping(kij, names)
    else:
        user = _user_matrix(kij, names)
    nc = len(names)
    matrix = np.zeros((nc, nc))
    values: dict[Pair, float] = {}
    sources: dict[Pair, str] = {}
    zero: list[Pair] = []
    for i, j in _pairs(names):
        pair = (names[i], names[j])
        if (i, j) in user:
            value, source = user[(i, j)], SOURCE_USER
        else:
            found = databank_kij(species[i].cas, species[j].cas) if default == "databank" else None
            value, source = (found, SOURCE_DATABANK) if found is not None else (0.0, SOURCE_ZERO)
            if found is None:
                zero.append(pair)
        matrix[i, j] = matrix[j, i] = value
        values[pair] = value
        sources[pair] = source
    matrix.setflags(write=False)
    return KijAssignment(matrix, MappingProxyType(values), MappingProxyType(sources), tuple(zero))
