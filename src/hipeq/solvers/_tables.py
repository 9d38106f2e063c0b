"""Standard Gibbs energies g0_i(T) = G0_i(T)/(R T) as a quintic Hermite table for the compiled solvers.

The compiled kernels need g0_i(T) at every state without calling back into Python. From the data layer
(:mod:`hipeq.data.thermochem`) we take, at nodes equally spaced in u = ln T over the common heat-capacity range
of the species, the value and its first two derivatives,

    g = G0 / (R T),   dg/du = -H0 / (R T),   d2g/du2 = -Cp / R + H0 / (R T)

(Gibbs-Helmholtz, dg/dT = -H0/(R T^2); e.g. Smith, Van Ness & Abbott 2005, "Introduction to Chemical
Engineering Thermodynamics", 7th ed., sect. 6.1), and interpolate with quintic Hermite polynomials in u, whose
error is O(du^6) uniformly in T. Every table is checked at all interval midpoints against the data layer; the
spacing is halved until the largest difference is below 1e-11 (in g, i.e. in ln K per unit stoichiometric
coefficient). The check result travels with the table.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from hipeq.data.species import Species
from hipeq.data.thermochem import R, standard_enthalpies, standard_gibbs
from hipeq.solvers._common import g0_into

TARGET_ERROR = 1e-11
_SPACING = 0.008  # first try, in ln T (about 5.6 K at 700 K)
_CACHE: dict[tuple[Species, ...], G0Table] = {}


@dataclass(frozen=True, eq=False)
class G0Table:
    """Nodes ln T_k = ln t_lo + k h, ``values[k, 0:3, i]`` = (g, dg/du, d2g/du2) of species i (u = ln T); the
    table is valid on [t_lo, t_hi] [K] and reproduces the data layer to ``max_error`` (checked at midpoints)."""

    t_lo: float
    t_hi: float
    h: float
    values: np.ndarray
    max_error: float
    limiting: tuple[str, str]  # species limiting the range at the low and the high end

    @property
    def u_lo(self) -> float:
        """ln t_lo, the first node in u = ln T."""
        return math.log(self.t_lo)


def _nodes_values(records: tuple[Species, ...], T: np.ndarray) -> np.ndarray:
    G = standard_gibbs(records, T)
    H = standard_enthalpies(records, T)
    cp = np.stack([np.asarray(r.cp.cp(T), dtype=float) for r in records], axis=-1)
    t = T[:, None]
    out = np.empty((T.size, 3, len(records)))
    out[:, 0, :] = G / (R * t)
    out[:, 1, :] = -H / (R * t)
    out[:, 2, :] = -cp / R + H / (R * t)
    return out


def g0_table(records: tuple[Species, ...]) -> G0Table:
    """The checked table for ``records`` (cached per tuple of records)."""
    table = _CACHE.get(records)
    if table is not None:
        return table
    lows = [r.cp.T_min for r in records]
    highs = [r.cp.T_max for r in records]
    t_lo, t_hi = max(lows), min(highs)
    limiting = (records[int(np.argmax(lows))].name, records[int(np.argmin(highs))].name)
    spacing = _SPACING
    for _ in range(4):
        u_lo, u_hi = math.log(t_lo), math.log(t_hi)
        count = max(2, int(math.ceil((u_hi - u_lo) / spacing)) + 1)
        u = np.linspace(u_lo, u_hi, count)
        h = (u_hi - u_lo) / (count - 1)
        T = np.exp(u)
        T[0], T[-1] = t_lo, t_hi
        values = _nodes_values(records, T)
        mid = np.exp(0.5 * (u[1:] + u[:-1]))
        exact = standard_gibbs(records, mid) / (R * mid[:, None])
        approx = np.empty_like(exact)
        for k, tk in enumerate(mid):
            g0_into(float(tk), u_lo, h, values, approx[k])
        error = float(np.max(np.abs(approx - exact)))
        if error <= TARGET_ERROR:
            break
        spacing *= 0.5
    values.setflags(write=False)
    table = G0Table(float(t_lo), float(t_hi), float(h), values, error, limiting)
    _CACHE[records] = table
    return table
