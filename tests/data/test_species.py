"""Species records: fields, look-up rules, sources, overrides and error messages."""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from hipeq.data.heat_capacity import R as R_CP
from hipeq.data.species import (GRAPHITE_S0, AmbiguousSpeciesError, Species, available_species,
                                load_species_file, register_species, reset_registry, species)
from hipeq.errors import InputError, UnknownSpeciesError

BUNDLED = ["H2", "N2", "NH3", "Ar", "He", "CH4", "CO", "CO2", "H2O", "CH3OH", "O2", "C2H6", "C2H4", "C3H8",
           "CH3OCH3", "C2H5OH"]


def test_every_bundled_species_has_every_field_in_si_units():
    assert list(available_species()) == BUNDLED
    for name in BUNDLED:
        s = species(name)
        assert isinstance(s, Species) and s.name == name
        for field in ("molar_mass", "Tc", "Pc", "omega", "Vc", "Zc", "Hf", "Gf", "S0"):
            assert math.isfinite(getattr(s, field)), (name, field)
        assert 1e-3 < s.molar_mass < 0.1  # kg/mol, not g/mol
        assert 1.0 < s.Tc < 700.0 and 1e5 < s.Pc < 3e7  # K and Pa
        assert 1e-5 < s.Vc < 1e-3  # m3/mol
        # Zc = Pc Vc / (R Tc) holds for the recorded constants (definition of Zc)
        assert s.Zc == pytest.approx(s.Pc * s.Vc / (R_CP * s.Tc), rel=2e-3)
        assert {"Tc", "Pc", "omega", "Hf", "S0", "Gf", "cp", "molar_mass"} <= set(s.sources)
        assert s.cp.T_min <= 298.15 and s.cp.T_max >= 1500.0


def test_ammonia_record_values():
    nh3 = species("NH3")
    assert nh3.common_name == "ammonia" and nh3.cas == "7664-41-7"
    assert dict(nh3.elements) == {"H": 3, "N": 1}
    # IUPAC atomic weights: N 14.007, H 1.008 -> 17.031 g/mol (from memory; CRC Handbook value 17.031)
    assert nh3.molar_mass == pytest.approx(0.017031, abs=2e-6)
    # ATcT ammonia ΔfH°(298.15 K) = -45.56 kJ/mol (reference README: JANAF -45.90, ATcT about 0.35 less negative)
    assert nh3.Hf == pytest.approx(-45558.0, abs=1.0)
    assert "ATcT" in nh3.sources["Hf"] and "CRC" in nh3.sources["S0"]


def test_critical_constants_match_the_reference_equation_of_state_in_coolprop():
    cp = pytest.importorskip("CoolProp.CoolProp")
    # CoolProp's reference EOS critical points (Gao et al. 2020 for NH3, Leachman et al. 2009 for H2) are the
    # HEOS constants chemicals tabulates; a relative difference above 1e-4 would mean a different source
    for name, fluid in [("NH3", "Ammonia"), ("H2", "Hydrogen"), ("CO2", "CO2"), ("CH3OH", "Methanol")]:
        s = species(name)
        assert s.Tc == pytest.approx(cp.PropsSI("Tcrit", fluid), rel=1e-4)
        assert s.Pc == pytest.approx(cp.PropsSI("pcrit", fluid), rel=1e-4)


def test_bundled_formulas_match_the_databank_formula_of_their_cas():
    from chemicals.identifiers import search_chemical

    for name in BUNDLED:
        s = species(name)
        assert search_chemical(s.cas).formula == s.formula, name


def test_monatomic_gases_have_exactly_five_halves_r():
    for name in ("Ar", "He"):
        cp = species(name).cp
        assert cp.cp(np.array([300.0, 3000.0])) == pytest.approx([2.5 * 8.314462618] * 2, rel=1e-15)
        assert "monatomic" in species(name).sources["cp"]


def test_gf_is_consistent_with_hf_and_absolute_entropies():
    s_ref = {"H": species("H2").S0 / 2, "N": species("N2").S0 / 2, "O": species("O2").S0 / 2, "C": GRAPHITE_S0}
    for name in ("NH3", "H2O", "CO", "CO2", "CH4", "CH3OH", "C2H5OH"):
        s = species(name)
        expected = s.Hf - 298.15 * (s.S0 - sum(n * s_ref[e] for e, n in s.elements.items()))
        assert s.Gf == pytest.approx(expected, abs=1e-6)
    assert species("H2").Gf == 0.0 and species("Ar").Gf == 0.0


def test_records_are_frozen_and_read_only():
    nh3 = species("NH3")
    with pytest.raises(dataclasses.FrozenInstanceError):
        nh3.Tc = 1.0  # type: ignore[misc]
    with pytest.raises(TypeError):
        nh3.elements["N"] = 2  # type: ignore[index]
    with pytest.raises(TypeError):
        nh3.sources["Tc"] = "x"  # type: ignore[index]
    assert hash(nh3) == hash(species("NH3"))


@pytest.mark.parametrize("query, expected", [
    ("NH3", "NH3"), ("ammonia", "NH3"), ("Ammonia", "NH3"), ("H3N", "NH3"), ("7664-41-7", "NH3"),
    ("dimethyl ether", "CH3OCH3"), ("Dimethyl  Ether", "CH3OCH3"), ("DME", "CH3OCH3"), ("ethanol", "C2H5OH"),
    ("CH4O", "CH3OH"), ("methyl alcohol", "CH3OH"), ("co2", "CO2"), ("steam", "H2O"), ("ethene", "C2H4"),
])
def test_lookup_by_identifier_name_formula_or_cas(query, expected):
    assert species(query).name == expected
    assert species(query) is species(expected)  # cached: the same record


def test_ambiguous_formula_names_both_candidates():
    with pytest.raises(AmbiguousSpeciesError) as err:
        species("C2H6O")
    assert set(err.value.suggestions) == {"CH3OCH3", "C2H5OH"}
    assert "dimethyl ether" in str(err.value) and "ethanol" in str(err.value)
    assert isinstance(err.value, UnknownSpeciesError)


def test_unknown_species_suggests_close_matches():
    with pytest.raises(UnknownSpeciesError) as err:
        species("amonia")
    assert "ammonia" in err.value.suggestions and "did you mean" in str(err.value)
    with pytest.raises(UnknownSpeciesError) as err:
        species("NH4")
    assert "NH3" in err.value.suggestions
    with pytest.raises(InputError):
        species(42)  # type: ignore[arg-type]


def test_override_records_its_source_and_updates_gf():
    before = species("NH3")
    # NIST-JANAF ammonia ΔfH°(298.15 K) = -45.898 kJ/mol (Chase 1998, table H-083)
    after = register_species("ammonia", Hf=-45898.0, source="NIST-JANAF, Chase 1998")
    assert after.name == "NH3" and after.Hf == -45898.0
    assert after.sources["Hf"] == "override: NIST-JANAF, Chase 1998"
    assert after.Gf == pytest.approx(before.Gf - 340.0, abs=1e-6)  # Gf follows Hf at fixed S0
    assert species("NH3") is after and "ATcT" in before.sources["Hf"]
    reset_registry()
    assert species("NH3").Hf == before.Hf


def test_override_gf_alone_derives_s0():
    before = species("NH3")
    after = register_species("NH3", Gf=before.Gf + 298.15)  # ΔS0 = -1 J/(mol K) at the same Hf
    assert after.S0 == pytest.approx(before.S0 - 1.0, abs=1e-9)
    assert after.sources["S0"].startswith("derived")


def test_polynomial_cp_override_reproduces_the_trc_correlation():
    trc = species("NH3").cp
    T = np.linspace(300.0, 1000.0, 30)
    coeffs = np.polynomial.polynomial.polyfit(T, trc.cp(T), 4)  # derived from TRC here, not invented
    poly = register_species("NH3", cp={"form": "polynomial", "coefficients": list(coeffs), "T_min": 300.0,
                                       "T_max": 1000.0}).cp
    assert poly.form == "polynomial"
    # a 4th-degree fit follows the smooth TRC curve to well under 0.1 %, so the integrals agree to 0.1 %
    assert poly.integral(300.0, 900.0) == pytest.approx(trc.integral(300.0, 900.0), rel=1e-3)
    assert poly.integral_over_T(300.0, 900.0) == pytest.approx(trc.integral_over_T(300.0, 900.0), rel=1e-3)


def test_new_species_from_cas_and_from_a_toml_file(tmp_path):
    no = register_species("NO", formula="NO", cas="10102-43-9", common_name="nitric oxide")
    assert no.elements == {"N": 1, "O": 1} and species("nitric oxide") is no
    # ATcT ΔfH°(NO, g, 298.15 K) = +91.1 kJ/mol (from memory; JANAF 90.29): positive, endothermic
    assert 85e3 < no.Hf < 95e3
    reset_registry()
    path = tmp_path / "extra.toml"
    path.write_text('[species.NO]\nformula = "NO"\ncas = "10102-43-9"\ncommon_name = "nitric oxide"\n'
                    '[species.NH3]\nHf = -45898.0\nsource = "NIST-JANAF, Chase 1998"\n', encoding="utf-8")
    records = load_species_file(path)
    assert [r.name for r in records] == ["NO", "NH3"]
    assert species("NH3").sources["Hf"] == "override: NIST-JANAF, Chase 1998"


def test_bad_file_registers_nothing(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text('[species.NO]\nformula = "NO"\ncas = "10102-43-9"\n[species.NH3]\nTc = -5.0\n', encoding="utf-8")
    with pytest.raises(InputError) as err:
        load_species_file(path)
    assert err.value.field == "Tc" and "> 0" in str(err.value)
    with pytest.raises(UnknownSpeciesError):
        species("NO")
    with pytest.raises(InputError) as err:
        load_species_file(tmp_path / "missing.toml")
    assert err.value.field == "path"


@pytest.mark.parametrize("fields, field", [
    ({"Tc": float("nan")}, "Tc"),
    ({"Pc": 0.0}, "Pc"),
    ({"colour": "blue"}, "species.NH3.colour"),
    ({"Hf": -45558.0, "S0": 192.8, "Gf": -10000.0}, "Gf"),
    ({"cp": {"form": "spline"}}, "cp"),
    ({"cp": {"form": "polynomial", "coefficients": [-5.0], "T_min": 300, "T_max": 900}}, "cp"),
    ({"formula": "H4N"}, "formula"),
])
def test_bad_overrides_name_the_field_and_leave_the_registry_unchanged(fields, field):
    before = species("NH3")
    with pytest.raises(InputError) as err:
        register_species("NH3", fields)
    assert err.value.field == field
    assert species("NH3") == before


def test_new_species_without_data_asks_for_the_missing_field():
    with pytest.raises(InputError) as err:
        register_species("XeF2", formula="F2Xe")  # no CAS: no databank values
    assert err.value.field in {"Tc", "Pc", "omega", "Hf", "S0", "cp"}
    with pytest.raises(UnknownSpeciesError):
        register_species("unobtainium", Tc=300.0)  # not registered and no formula
