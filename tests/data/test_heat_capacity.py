"""TRC closed forms of hipeq.data.heat_capacity (and their compiled copies) against chemicals' own functions.

Reference: ``chemicals.heat_capacity.TRCCp``, ``TRCCp_integral`` and ``TRCCp_integral_over_T`` (chemicals 1.x,
C. Bell; the Thermodynamics Research Center 1994 correlation with the closed-form integrals of Kabo & Roganov 1994),
evaluated on the coefficient rows of ``chemicals.heat_capacity.TRC_gas_data``.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from chemicals.heat_capacity import TRC_gas_data, TRCCp, TRCCp_integral, TRCCp_integral_over_T

from hipeq.data import _kernels
from hipeq.data.heat_capacity import TRCHeatCapacity, trc_cp, trc_integral, trc_integral_over_T
from hipeq.data.species import available_species, species

RTOL = 1e-12
PAIRS = [(trc_cp, TRCCp), (trc_integral, TRCCp_integral), (trc_integral_over_T, TRCCp_integral_over_T)]
COMPILED = [_kernels._trc_cp, _kernels._trc_h, _kernels._trc_s]


def _rows() -> list[tuple[str, tuple[float, ...], float, float]]:
    """The TRC rows of every bundled species and every 25th row of chemicals' table, with a6, a7 > 0 (the
    rows TRCHeatCapacity accepts) and a2 != 0 (the integral divides by it)."""
    bundled = {species(n).cas for n in available_species()}
    rows = []
    for k, (cas, row) in enumerate(TRC_gas_data.iterrows()):
        if cas not in bundled and k % 25:
            continue
        a = tuple(float(row[f"a{i}"]) for i in range(8))
        if all(math.isfinite(c) for c in a) and a[6] > 0 and a[7] > 0 and a[2] != 0:
            rows.append((str(cas), a, float(row["Tmin"]), float(row["Tmax"])))
    return rows


ROWS = _rows()


def _temperatures(a: tuple[float, ...], t_min: float, t_max: float) -> list[float]:
    """60 temperatures over the row's range and the branch points of the form: T = a7 (y = 0) and either side."""
    grid = np.geomspace(t_min, t_max, 60).tolist()
    return grid + [a[7], math.nextafter(a[7], 0.0), math.nextafter(a[7], math.inf), a[7] * 1.001]


def test_enough_rows_are_checked():
    assert len(ROWS) >= 60  # bundled TRC species plus a spread of chemicals' table
    assert {species("NH3").cas, species("CH3OH").cas} <= {cas for cas, *_ in ROWS}


@pytest.mark.parametrize("ours, theirs", PAIRS, ids=["Cp", "integral", "integral_over_T"])
def test_closed_forms_equal_chemicals(ours, theirs):
    """chemicals.heat_capacity.TRCCp / TRCCp_integral / TRCCp_integral_over_T on the same rows and temperatures."""
    for cas, a, t_min, t_max in ROWS:
        for T in _temperatures(a, t_min, t_max):
            expected = theirs(T, *a)
            assert ours(T, *a) == pytest.approx(expected, rel=RTOL, abs=0.0), (cas, T)


@pytest.mark.parametrize("k", range(3), ids=["Cp", "integral", "integral_over_T"])
def test_compiled_closed_forms_equal_chemicals(k):
    """The numba-compiled copies in hipeq.data._kernels against chemicals' TRC functions."""
    theirs = PAIRS[k][1]
    for cas, a, t_min, t_max in ROWS[::4]:
        for T in _temperatures(a, t_min, t_max)[::3]:
            assert COMPILED[k](T, *a) == pytest.approx(theirs(T, *a), rel=RTOL, abs=0.0), (cas, T)


def test_correlation_object_differences_equal_chemicals():
    """TRCHeatCapacity.cp / integral / integral_over_T: chemicals' TRCCp and differences of its antiderivatives."""
    for cas, a, t_min, t_max in ROWS[::5]:
        cp = TRCHeatCapacity(a, max(t_min, 10.0), min(t_max, 6000.0))  # type: ignore[arg-type]
        T = np.geomspace(cp.T_min, cp.T_max, 25)
        np.testing.assert_allclose(cp.cp(T), [TRCCp(t, *a) for t in T], rtol=RTOL, atol=0, err_msg=cas)
        h = cp.integral(cp.T_min, T)
        s = cp.integral_over_T(cp.T_min, T)
        h_ref = [TRCCp_integral(t, *a) - TRCCp_integral(cp.T_min, *a) for t in T]
        s_ref = [TRCCp_integral_over_T(t, *a) - TRCCp_integral_over_T(cp.T_min, *a) for t in T]
        scale_h = max(abs(TRCCp_integral(t, *a)) for t in T)  # a difference is as exact as its terms
        scale_s = max(abs(TRCCp_integral_over_T(t, *a)) for t in T)
        np.testing.assert_allclose(h, h_ref, rtol=0, atol=RTOL * scale_h, err_msg=cas)
        np.testing.assert_allclose(s, s_ref, rtol=0, atol=RTOL * scale_s, err_msg=cas)
