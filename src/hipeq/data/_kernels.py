"""Compiled standard-state thermochemistry: H°_i(T), S°_i(T), G°_i(T)/(RT) and Cp°_i(T) for a species table.

Private layer (arrays and scalars in, ``out`` buffers, no exceptions). The table is built and checked by
:func:`hipeq.data.thermochem.standard_state_table`; one row per species::

    [form, Hf, S0, c0, c1, c2, c3, c4, c5, c6, c7]

``form`` 0: TRC ideal-gas correlation, c0..c7 = a0..a7 (Cp/R = a0 + (a1/T^2) exp(-a2/T) + a3 y^2
+ (a4 - a5/(T - a7)^2) y^8, y = (T - a7)/(T + a6); Thermodynamics Research Center 1994); Cp and its integrals are
the closed forms of :mod:`hipeq.data.heat_capacity` (``trc_cp``, ``trc_integral``, ``trc_integral_over_T``;
Kabo & Roganov 1994), compiled here as they are.
``form`` 1: polynomial Cp = sum_k c_k T^k [J/(mol K)], k <= 7.  ``form`` 2: constant Cp = c0 [J/(mol K)].

H°(T) = Hf + ∫_298.15^T Cp dT [J/mol]; S°(T) = S0 + ∫_298.15^T Cp/T dT [J/(mol K)] (Kirchhoff's law).
"""
from __future__ import annotations

import math

from hipeq._jit import entry

from hipeq.data.heat_capacity import trc_cp, trc_integral, trc_integral_over_T

from hipeq.constants import R, T_REFERENCE as T_REF

FORM_TRC, FORM_POLYNOMIAL, FORM_CONSTANT = 0, 1, 2
COL_FORM, COL_HF, COL_S0, COL_C0 = 0, 1, 2, 3
N_COLUMNS = 11

_trc_cp = entry(trc_cp)
_trc_h = entry(trc_integral)
_trc_s = entry(trc_integral_over_T)


@entry
def _poly_parts(T, row):
    """(∫Cp dT from 0, ∫Cp/T dT without the ln term's constant) of a polynomial Cp at T."""
    h = 0.0
    s = row[COL_C0] * math.log(T)
    tk = T
    for k in range(8):
        c = row[COL_C0 + k]
        h += c * tk / (k + 1)
        if k >= 1:
            s += c * (tk / T) / k
        tk *= T
    return h, s


@entry
def _parts(T, row):
    form = int(row[COL_FORM])
    if form == FORM_TRC:
        a = row[COL_C0:COL_C0 + 8]
        return (_trc_h(T, a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7]),
                _trc_s(T, a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7]))
    if form == FORM_POLYNOMIAL:
        return _poly_parts(T, row)
    c = row[COL_C0]
    return c * T, c * math.log(T)


@entry
def cp_one(T, row):
    """Cp°(T) [J/(mol K)] of one table row."""
    form = int(row[COL_FORM])
    if form == FORM_TRC:
        a = row[COL_C0:COL_C0 + 8]
        return _trc_cp(T, a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7])
    if form == FORM_POLYNOMIAL:
        total = 0.0
        tk = 1.0
        for k in range(8):
            total += row[COL_C0 + k] * tk
            tk *= T
        return total
    return row[COL_C0]


@entry
def enthalpy_entropy_into(T, table, h_out, s_out):
    """H°_i(T) [J/mol] and S°_i(T) [J/(mol K)] of every row of ``table`` at T [K]."""
    for i in range(table.shape[0]):
        row = table[i]
        h1, s1 = _parts(T, row)
        h0, s0 = _parts(T_REF, row)
        h_out[i] = row[COL_HF] + h1 - h0
        s_out[i] = row[COL_S0] + s1 - s0


@entry
def gibbs_rt_into(T, table, out):
    """G°_i(T)/(R T) = (H°_i - T S°_i)/(R T) [-] of every row at T [K]."""
    for i in range(table.shape[0]):
        row = table[i]
        h1, s1 = _parts(T, row)
        h0, s0 = _parts(T_REF, row)
        out[i] = (row[COL_HF] + h1 - h0 - T * (row[COL_S0] + s1 - s0)) / (R * T)


@entry
def profiles_range(T, table, H, S, first, last):
    """H°[k, i] and S°[k, i] for temperatures T[k] [K], k = first .. last - 1. Runs without the GIL: called once
    per thread's range of temperatures (``hipeq._threads.run_in_ranges``), one call for short T arrays such as
    the ~500 nodes of a solver's g0 table."""
    for k in range(first, last):
        enthalpy_entropy_into(T[k], table, H[k], S[k])
