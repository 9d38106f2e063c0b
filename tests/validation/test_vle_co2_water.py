"""hipeq's flash and bubble points against measured high-pressure vapour-liquid equilibrium of CO2 + water.

Source of every check here: Bamberger, Sieder & Maurer (2000), J. Supercrit. Fluids 17, 97-110, the 323 K isotherm
at 4.05-14.11 MPa (10 rows: P, x_CO2 of the liquid, y_H2O of the CO2-rich phase), read in the public transcription
named in tests/validation/data/vle_co2_water_bamberger_2000.csv. The comparison itself lives in
tests/validation/vle_cases.py (shared with docs/tools/vle_table.py, which writes the table of docs/phases.md).

The bounds (vle_cases.BOUNDS) sit just above the errors each model gives today, so a change in the flash, the
bubble point, the cubic kernels or the k_ij sources that moves the answers away from the measurements fails here.
"""
from __future__ import annotations

import numpy as np
import pytest

import vle_cases as vc


def test_data_file_reads_as_transcribed():
    # Bamberger et al. 2000 (transcription in DanWBR/dwsim, CO2_H2O_PCSAFT.m): 10 rows at 323 K, first and last row
    data = vc.measured()
    assert data.P.size == 10 and np.all(data.T == 323.0)
    assert (data.P[0], data.x_CO2[0], data.y_H2O[0]) == (4.05e6, 0.0109, 0.0046)
    assert (data.P[-1], data.x_CO2[-1], data.y_H2O[-1]) == (14.11e6, 0.0217, 0.0061)
    assert any("Bamberger" in line and "Supercrit. Fluids 17" in line for line in data.header)


@pytest.mark.parametrize("label", list(vc.MODELS))
def test_flash_errors_against_bamberger_2000(label):
    # Bamberger, Sieder & Maurer 2000, J. Supercrit. Fluids 17, 97 (CO2 + water, 323 K, 4-14 MPa)
    data = vc.measured()
    result = vc.comparison(label)
    assert np.all(result.split), f"{label}: the flash must find two phases at every measured state"
    errors, bounds = result.errors(data), vc.BOUNDS[label]
    for key in ("x_mean", "x_max", "y_mean", "y_max"):
        assert errors[key] <= bounds[key], f"{label}: {key} = {errors[key]:.5f} > bound {bounds[key]}"


@pytest.mark.parametrize("label", list(vc.MODELS))
def test_bubble_pressures_against_bamberger_2000(label):
    # Bamberger, Sieder & Maurer 2000 (as above): bubble pressure of each measured liquid against the measured P
    data = vc.measured()
    result = vc.comparison(label)
    bounds = vc.BOUNDS[label]
    if bounds["p_mean"] is None:
        # the model's CO2 solubility stays below every measured x_CO2 (its flash gives a tenth to a quarter of
        # it): no bubble point exists, and the answer must say so instead of giving a pressure
        assert not np.any(result.bubble_converged), label
        assert np.all(result.x_CO2 < data.x_CO2), label
        return
    errors = result.errors(data)
    assert errors["no_bubble"] == 0, label
    assert errors["p_mean"] <= bounds["p_mean"] and errors["p_max"] <= bounds["p_max"], (label, errors)


def test_temperature_of_the_transcription_does_not_matter():
    # The transcription gives 323 K; the paper's isotherm value was not checked. 0.15 K moves the best model's
    # compositions by under a tenth of its mean error against Bamberger et al. 2000.
    label = "PR78+E-PPR78+Peneloux"
    data = vc.measured()
    base, shifted = vc.comparison(label), vc.compare(label, dT=0.15)
    errors = base.errors(data)
    assert np.max(np.abs(shifted.x_CO2 - base.x_CO2)) < 0.1 * errors["x_mean"]
    assert np.max(np.abs(shifted.y_H2O - base.y_H2O)) < 0.1 * errors["y_mean"]


def test_table_in_docs_is_current():
    # docs/phases.md carries the table docs/tools/vle_table.py writes from these comparisons (Bamberger et al. 2000)
    import re
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    sys.path.insert(0, str(root / "docs" / "tools"))
    import vle_table

    text = vle_table.DOC.read_text(encoding="utf-8")
    match = re.search(r"<!-- table: vle-co2-water -->\n(.*?)\n<!-- end table -->", text, re.S)
    assert match, "docs/phases.md has no vle-co2-water block"
    assert match.group(1) == vle_table.block(), "run docs/tools/vle_table.py"
