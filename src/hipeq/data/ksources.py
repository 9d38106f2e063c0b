"""Named sources of equilibrium constants: published K correlations and choices of species thermochemistry.

A reaction system takes its K either from the data layer (``-sum_i nu_i G0_i(T) / (R T)``, Cp integrals of
:mod:`hipeq.data.thermochem`, the default) or from a named source chosen here::

    hipeq.ReactionSystem(species, reactions, eos="SRK", K_source="graaf-1986")
    hipeq.ReactionSystem(species, reactions, K_source={"Hf": "JANAF"})     # species data from another table

Two kinds of source:

* **Correlations** (:data:`CORRELATIONS`): ln K(T) of a few reactions as published. A system's reaction must be a
  linear combination of the source's reactions, ``nu_r = sum_k c_rk nu_k``; then ln K_r = sum_k c_rk ln K_k
  (e.g. CO2 + 3 H2 = CH3OH + H2O is reaction 1 plus reaction 2 of Graaf et al.). Otherwise InputError names it.
* **Species data** (:func:`species_data_source`): the formation enthalpy ΔfH°(298.15 K) and/or the entropy
  S°(298.15 K) of every species from another table of the ``chemicals`` package (ATcT, JANAF, CRC, NIST WebBook),
  the ideal-gas Cp integrals kept. With ΔH_i = Hf_i(source) - Hf_i(bundled) and ΔS_i likewise (Kirchhoff's law,
  the Cp terms cancel):

      ln K_r(T) = ln K_r,bundled(T) - sum_i nu_ri (ΔH_i - T ΔS_i) / (R T)

  A species the chosen table lacks keeps its bundled value and the description says so. Elements in their
  reference state have ΔfH° = 0 in every table.

Standard state everywhere: ideal gas at 1 bar. A correlation whose Kp has pressures in atm is converted: a
pressure in bar is 1.01325 times the number in atm, so K_bar = K_atm 1.01325^Δν, i.e.
ln K_bar = ln K_atm + Δν ln 1.01325 (Δν = sum of the stoichiometric coefficients; -1 for ammonia).

Every public function names its source; the coefficients of the correlations are those of the project leads'
reference file (correlations.md), as published.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.constants import R
from hipeq.data.reactions import Reaction, as_reaction, stoichiometric_matrix
from hipeq.errors import InputError

__all__ = ["CORRELATIONS", "SPECIES_DATA_TABLES", "Correlation", "KSource", "ResolvedK", "k_source",
           "k_sources", "resolve_k_source", "species_data_source"]

LN10 = math.log(10.0)
ATM_IN_BAR = 1.01325  # 1 atm = 101325 Pa = 1.01325 bar, exact (BIPM SI Brochure 2019)
R_GRAAF = 8.314  # [J/(mol K)], the gas constant as Graaf & Winkelman (2016) use it in their ln Kp


@dataclass(frozen=True)
class Correlation:
    """ln K(T) of one reaction. ``form``:

    * ``"log10-inverse-T"``: log10 K = A / T + B, ``coefficients = (A, B)`` [K, -];
    * ``"graaf-winkelman"``: ln K = (a + b T + c T^2 + d T^3 + e T^4 + f T^5 + g T ln T) / (R T), R = 8.314,
      ``coefficients = (a, b, c, d, e, f, g)``;
    * ``"gillespie-beattie"``: log10 K = a log10 T + b T + c T^2 + d / T + e, ``coefficients = (a, b, c, d, e)``.

    ``pressure_unit`` is the unit of the source's Kp (``"bar"`` or ``"atm"``); values are converted to the 1-bar
    standard state."""

    reaction: str
    form: str
    coefficients: tuple[float, ...]
    pressure_unit: str = "bar"

    def ln_k(self, T: np.ndarray) -> np.ndarray:
        """ln K [-] at T [K] (1-D array), standard state ideal gas at 1 bar."""
        T = np.asarray(T, dtype=float)
        c = self.coefficients
        if self.form == "log10-inverse-T":
            value = (c[0] / T + c[1]) * LN10
        elif self.form == "graaf-winkelman":
            a, b, cc, d, e, f, g = c
            value = (a + b * T + cc * T**2 + d * T**3 + e * T**4 + f * T**5 + g * T * np.log(T)) / (R_GRAAF * T)
        elif self.form == "gillespie-beattie":
            a, b, cc, d, e = c
            value = (a * np.log10(T) + b * T + cc * T**2 + d / T + e) * LN10
        else:  # pragma: no cover - the table below uses only the forms above
            raise InputError("K_source", f"unknown correlation form {self.form!r}")
        if self.pressure_unit == "atm":
            d_nu = sum(as_reaction(self.reaction).coefficients.values())
            value = value + d_nu * math.log(ATM_IN_BAR)
        return value


@dataclass(frozen=True)
class KSource:
    """A named source of K: ``name`` (the key of :func:`k_sources`), ``citation``, its ``correlations`` (empty for a
    species-data source), the species-data tables (``hf``, ``s0``: chemicals method names or None for bundled),
    and the stated ``valid_range`` of validity (text)."""

    name: str
    citation: str
    correlations: tuple[Correlation, ...] = ()
    hf: str | None = None
    s0: str | None = None
    valid_range: str = ""

    @property
    def kind(self) -> str:
        """``"correlation"`` or ``"species data"``."""
        return "correlation" if self.correlations else "species data"


CORRELATIONS: Mapping[str, KSource] = MappingProxyType({
    "graaf-1986": KSource(
        "graaf-1986",
        "Graaf, Sijtsema, Stamhuis & Joosten (1986), Chem. Eng. Sci. 41, 2883-2890: log10 Kp1 = 5139/T - 12.621 "
        "(CO + 2 H2 = CH3OH), log10 Kp2 = -2073/T + 2.029 (CO2 + H2 = CO + H2O), Kp in bar",
        (Correlation("CO + 2 H2 = CH3OH", "log10-inverse-T", (5139.0, -12.621)),
         Correlation("CO2 + H2 = CO + H2O", "log10-inverse-T", (-2073.0, 2.029))),
        valid_range="fitted to equilibria measured at 473-543 K and 10-80 bar (SRK fugacity correction)"),
    "graaf-winkelman-2016": KSource(
        "graaf-winkelman-2016",
        "Graaf & Winkelman (2016), Ind. Eng. Chem. Res. 55, 5854, doi 10.1021/acs.iecr.6b00815: ln Kp = (a + bT + "
        "cT^2 + dT^3 + eT^4 + fT^5 + g T ln T)/(RT), R = 8.314, for CO + 2 H2 = CH3OH and CO2 + H2 = CO + H2O",
        (Correlation("CO + 2 H2 = CH3OH", "graaf-winkelman",
                     (7.44140e4, 1.89260e2, 3.2443e-2, 7.0432e-6, -5.6053e-9, 1.0344e-12, -6.4364e1)),
         Correlation("CO2 + H2 = CO + H2O", "graaf-winkelman",
                     (-3.94121e4, -5.41516e1, -5.5642e-2, 2.5760e-5, -7.6594e-9, 1.0161e-12, 1.8429e1))),
        valid_range="from thermochemical data, for methanol-synthesis conditions"),
    "gillespie-beattie-1930": KSource(
        "gillespie-beattie-1930",
        "Gillespie & Beattie (1930), Phys. Rev. 36, 743: log10 Ka = -2.691122 log10 T - 5.519265e-5 T + "
        "1.848863e-7 T^2 + 2001.6/T + 2.6899 (1/2 N2 + 3/2 H2 = NH3, Ka in atm^-1, converted to 1 bar)",
        (Correlation("0.5 N2 + 1.5 H2 = NH3", "gillespie-beattie",
                     (-2.691122, -5.519265e-5, 1.848863e-7, 2001.6, 2.6899), pressure_unit="atm"),),
        valid_range="fitted to measured equilibria at 598-1225 K and 10-1000 atm"),
})

# chemicals method names of the formation-enthalpy and entropy tables a user may choose, with their citations
SPECIES_DATA_TABLES: Mapping[str, tuple[str, str, str]] = MappingProxyType({
    # key: (Hfg method, S0g method, citation)
    "ATcT": ("ATCT_G", "", "Active Thermochemical Tables 1.112 (Ruscic et al.), as in chemicals"),
    "JANAF": ("JANAF", "JANAF", "NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), as in chemicals"),
    "CRC": ("CRC", "CRC", "CRC Handbook of Chemistry and Physics (2014), as in chemicals"),
    "WebBook": ("WEBBOOK", "WEBBOOK", "NIST Chemistry WebBook, as in chemicals"),
})
BUNDLED = "bundled"
_BUNDLED_TEXT = "Hf ATcT 1.112, S0 CRC 2014 (hipeq.data.species), Cp TRC ideal-gas integrals"


def k_sources() -> Mapping[str, str]:
    """Name -> description of every named K source: ``"bundled"`` (the data layer), the published correlations
    (:data:`CORRELATIONS`), and the species-data tables (:data:`SPECIES_DATA_TABLES`; give
    ``{"Hf": name, "S0": name}`` to mix them)."""
    out = {BUNDLED: f"the data layer: {_BUNDLED_TEXT}"}
    for name, src in CORRELATIONS.items():
        out[name] = f"{src.citation}; {src.valid_range}"
    for name, (hf, s0, cite) in SPECIES_DATA_TABLES.items():
        parts = ["Hf"] + (["S0"] if s0 else [])
        out[name] = f"{' and '.join(parts)} of every species from {cite}; Cp as bundled"
    return MappingProxyType(out)


def species_data_source(Hf: str | None = None, S0: str | None = None) -> KSource:
    """A K source that takes ΔfH°(298.15 K) from table ``Hf`` and S°(298.15 K) from table ``S0`` (keys of
    :data:`SPECIES_DATA_TABLES`, or None/"bundled" to keep the data layer's); Cp integrals as bundled."""
    def check(field: str, value: str | None) -> str | None:
        if value is None or str(value).lower() == BUNDLED:
            return None
        for key, (hf, s0, _) in SPECIES_DATA_TABLES.items():
            if key.lower() == str(value).strip().lower() and (hf if field == "Hf" else s0):
                return key
        allowed = [k for k, (hf, s0, _) in SPECIES_DATA_TABLES.items() if (hf if field == "Hf" else s0)]
        raise InputError("K_source", f"{field} table must be one of {', '.join(allowed + [BUNDLED])}, "
                                     f"got {value!r}")
    hf, s0 = check("Hf", Hf), check("S0", S0)
    if hf is None and s0 is None:
        raise InputError("K_source", "a species-data source needs Hf or S0 from another table "
                                     f"({', '.join(SPECIES_DATA_TABLES)})")
    name = ", ".join(f"{f}={t}" for f, t in (("Hf", hf), ("S0", s0)) if t)
    cites = "; ".join(dict.fromkeys(SPECIES_DATA_TABLES[t][2] for t in (hf, s0) if t))
    return KSource(name, f"species data: {name} ({cites}); other data and Cp as bundled", hf=hf, s0=s0)


def k_source(spec: str | Mapping[str, str] | KSource) -> KSource:
    """The :class:`KSource` for a name of :func:`k_sources`, a text ``"Hf=JANAF, S0=CRC"``, a mapping
    ``{"Hf": "JANAF", "S0": "CRC"}`` or a KSource (returned as is). ``"bundled"`` is not a KSource (None)."""
    if isinstance(spec, KSource):
        return spec
    if isinstance(spec, Mapping):
        unknown = sorted(set(spec) - {"Hf", "S0"})
        if unknown:
            raise InputError("K_source", f"a species-data choice has keys Hf and S0, got {', '.join(unknown)}")
        return species_data_source(spec.get("Hf"), spec.get("S0"))
    if not isinstance(spec, str):
        raise InputError("K_source", f"must be a name ({', '.join(k_sources())}) or a mapping "
                                     f"{{'Hf': table, 'S0': table}}, got {spec!r}")
    text = spec.strip()
    for name, src in CORRELATIONS.items():
        if name == text.lower():
            return src
    if "=" in text:
        pairs = dict(part.split("=", 1) for part in text.replace(";", ",").split(",") if part.strip())
        return k_source({k.strip(): v.strip() for k, v in pairs.items()})
    for key, (_, s0, _) in SPECIES_DATA_TABLES.items():
        if key.lower() == text.lower():
            return species_data_source(key, key if s0 else None)
    raise InputError("K_source", f"unknown K source {spec!r}; known: {', '.join(k_sources())}, or "
                                 "'Hf=TABLE, S0=TABLE'")


@dataclass(frozen=True)
class ResolvedK:
    """ln K of a system's reactions from a :class:`KSource`: callable ``T [K] (1-D) -> (n_T, n_reactions)``, to
    be given as ``ReactionSystem(ln_K=...)`` (``K_source=`` does this). ``description`` is what results report as
    ``K_source``. Picklable (plain data)."""

    source: KSource
    reactions: tuple[str, ...]
    species: tuple[str, ...]
    combination: np.ndarray  # (n_reactions, n_correlations), correlations only
    offsets: np.ndarray  # (n_reactions, 2): sum_i nu_i ΔH_i [J/mol], sum_i nu_i ΔS_i [J/(mol K)]; species data only
    description: str

    @property
    def label(self) -> str:
        """The source's short name (``"graaf-1986"``, ``"Hf=JANAF"``)."""
        return self.source.name

    def __call__(self, T: Any) -> np.ndarray:
        T = np.atleast_1d(np.asarray(T, dtype=float))
        if self.source.correlations:
            columns = np.stack([c.ln_k(T) for c in self.source.correlations], axis=-1)
            return columns @ self.combination.T
        from hipeq.data.thermochem import ln_equilibrium_constants

        base = ln_equilibrium_constants(list(self.reactions), list(self.species), T)
        return base - (self.offsets[:, 0] - T[:, None] * self.offsets[:, 1]) / (R * T[:, None])


def _combination(src: KSource, reactions: Sequence[Reaction]) -> np.ndarray:
    """c with nu_system = c @ nu_source over the union of species; InputError for a reaction outside the span."""
    source_rx = [as_reaction(c.reaction) for c in src.correlations]
    names = sorted({n for r in (*source_rx, *reactions) for n in r.coefficients})
    nu_s = stoichiometric_matrix(source_rx, names)
    nu_r = stoichiometric_matrix(list(reactions), names)
    c, *_ = np.linalg.lstsq(nu_s.T, nu_r.T, rcond=None)
    c = c.T
    for k, r in enumerate(reactions):
        if np.max(np.abs(c[k] @ nu_s - nu_r[k])) > 1e-9:
            raise InputError("K_source", f"{src.name} gives K for {'; '.join(x.reaction for x in src.correlations)} "
                                         f"only; the reaction {r} is not a combination of them")
    c[np.abs(c) < 1e-12] = 0.0
    return c


def _species_offsets(src: KSource, reactions: Sequence[Reaction], names: Sequence[str]
                     ) -> tuple[np.ndarray, list[str]]:
    """Per reaction sum_i nu_i (Hf_i(table) - Hf_i) and sum_i nu_i (S0_i(table) - S0_i), and the notes on
    species whose table lacks them. Reads the ``chemicals`` tables (imported here only)."""
    try:
        from chemicals import reaction as chem
    except ImportError as err:  # pragma: no cover - chemicals is a dependency
        raise InputError("K_source", f"species-data sources need the chemicals package: {err}") from None
    from hipeq.data.species import species

    nu = stoichiometric_matrix(list(reactions), list(names))
    dH, dS, notes = np.zeros(len(names)), np.zeros(len(names)), []
    for i, name in enumerate(names):
        rec = species(name)
        if not np.any(nu[:, i]):
            continue
        element = len(rec.elements) == 1 and rec.Hf == 0.0
        if src.hf and not element:
            method = SPECIES_DATA_TABLES[src.hf][0]
            if rec.cas and method in chem.Hfg_methods(rec.cas):
                dH[i] = float(chem.Hfg(rec.cas, method=method)) - rec.Hf
            else:
                notes.append(f"{name}: no {src.hf} Hf, bundled kept")
        if src.s0:
            method = SPECIES_DATA_TABLES[src.s0][1]
            if rec.cas and method in chem.S0g_methods(rec.cas):
                dS[i] = float(chem.S0g(rec.cas, method=method)) - rec.S0
            else:
                notes.append(f"{name}: no {src.s0} S0, bundled kept")
    return np.column_stack([nu @ dH, nu @ dS]), notes


def resolve_k_source(spec: str | Mapping[str, str] | KSource, reactions: Sequence[Reaction | str],
                     species_names: Sequence[str]) -> ResolvedK:
    """The ln K callable of ``reactions`` (over ``species_names``) from a K source (see :func:`k_source`)."""
    src = k_source(spec)
    rx = [as_reaction(r) for r in reactions]
    if not rx:
        raise InputError("K_source", "the system has no reactions")
    texts = tuple(str(r) for r in rx)
    if src.correlations:
        comb = _combination(src, rx)
        description = f"{src.name}: {src.citation} ({src.valid_range})"
        return ResolvedK(src, texts, tuple(species_names), comb, np.zeros((len(rx), 2)), description)
    offsets, notes = _species_offsets(src, rx, species_names)
    description = f"{src.name}: {src.citation}" + (f"; {'; '.join(notes)}" if notes else "")
    return ResolvedK(src, texts, tuple(species_names), np.zeros((len(rx), 0)), offsets, description)
