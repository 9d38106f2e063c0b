"""The case-file schema: every table and key a case file may hold, with its kind, unit, allowed values and help.

One declaration serves three purposes: :mod:`hipeq.interfaces.casefile` checks a case against it (an unknown
table or key, a missing one, a wrong type or unit gives an InputError that names ``[table] key`` and says what is
allowed), ``docs/casefile.md`` is generated from it (``python -m hipeq.interfaces.schema > docs/casefile.md``; a
test keeps the two equal), and ``hipeq keys`` prints it.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from hipeq.units import SI_UNITS, units_of

MAX_AXIS = 2000  # values along one axis of a sweep or a map (a 2000 x 2000 map is 4 million states)
MAX_STATES = 4_000_000  # states in one sweep or map of a case file


@dataclass(frozen=True)
class Key:
    """One key of a case-file table. ``kind``: text, flag, number, count, choice, species, species-list,
    reaction-list, quantity, quantity-list, axis, models, kij (see :data:`KIND_HELP`)."""

    name: str
    kind: str
    help: str
    example: str
    required: bool = False
    dimension: str | None = None  # for quantity, quantity-list and axis
    choices: tuple[str, ...] = ()
    low: float | None = None
    high: float | None = None


@dataclass(frozen=True)
class Table:
    """A ``[table]`` of a case file; ``species_keys``: its keys are species names (the feed)."""

    name: str
    help: str
    keys: tuple[Key, ...] = ()
    required: bool = False
    species_keys: bool = False
    example: str = ""
    requires: tuple[str, ...] = field(default=())

    def key(self, name: str) -> Key | None:
        """The key called ``name``, or None."""
        return next((k for k in self.keys if k.name == name), None)


KIND_HELP = {
    "text": "a string in quotes",
    "flag": "true or false",
    "number": "a plain number (no unit)",
    "count": "a whole number",
    "choice": "one of the listed words, in quotes",
    "species": "a species name of [mixture] species",
    "species-list": "a list of species names",
    "reaction-list": 'a list of reactions, e.g. ["N2 + 3 H2 = 2 NH3"]',
    "text-list": "a list of strings",
    "quantity": 'a number and its unit in one string, e.g. "450 degC"',
    "quantity-list": 'a list of quantities, e.g. ["380 degC", "420 degC"]',
    "axis": f'[start, stop, count] (count 1..{MAX_AXIS}, evenly spaced) or a list of quantities',
    "models": 'a list of model names (ideal, PR, SRK, PR78, virial, lewis-randall, "PR78+E-PPR78+Peneloux")',
    "kij": '"e-ppr78" (the group-contribution method, PR and PR78 only) or a table of pairs that override the '
           'model\'s default values, e.g. { "H2-N2" = 0.08 }',
}

MODEL_NAMES = ("ideal", "PR", "SRK", "PR78", "virial", "lewis-randall", "PR78+E-PPR78+Peneloux")

TABLES: tuple[Table, ...] = (
    Table("case", "What the case is; shown at the top of every output.", (
        Key("title", "text", "a title for tables, reports and figures", '"Converter bed 2 outlet"'),
        Key("notes", "text", "free text carried into the report", '"invented feed"'),
    )),
    Table("mixture", "The species of the gas and, optionally, the reactions among them.", (
        Key("species", "species-list", "names, formulas or CAS numbers of the species", '["N2", "H2", "NH3"]',
            required=True),
        Key("reactions", "reaction-list", "independent reactions; when absent, a set spanning every composition "
            "change the element balances allow is derived from the species", '["N2 + 3 H2 = 2 NH3"]'),
    ), required=True),
    Table("feed", "Amount of each fed species: `<species> = \"<amount> <unit>\"`; species not listed are not "
          "fed.", required=True, species_keys=True, example='N2 = "1 kmol"\nH2 = "3 kmol"'),
    Table("model", "The fugacity model of the main solve.", (
        Key("eos", "choice", "equation of state (or the ideal gas)", '"PR"',
            choices=("ideal", "PR", "PR78", "SRK", "virial", "lewis-randall")),
        Key("kij", "kij", "binary interaction parameters (default: the model's own set; PR and PR78 from the "
            "bundled databank, SRK zero)", '{ "H2-N2" = 0.08 }'),
        Key("volume_translation", "choice", "Peneloux et al. (1982) volume shift (cubics only)", '"peneloux"',
            choices=("none", "peneloux")),
        Key("quantum_hydrogen", "flag", "quantum-corrected critical constants for H2 (cubics)", "false"),
        Key("hydrogen_omega", "number", "acentric factor used for H2 (cubics)", "-0.216", low=-1.0, high=1.0),
        Key("pure_eos", "choice", "pure-fluid equation of state of the Lewis-Randall rule", '"PR"',
            choices=("PR", "PR78", "SRK")),
    )),
    Table("solver", "How the equilibrium is solved (the defaults suit almost every case).", (
        Key("method", "choice", "Newton on the extents of reaction, or Gibbs minimisation with element "
            "balances", '"extent"', choices=("extent", "gibbs")),
        Key("scheme", "choice", "full Newton with d ln phi / d n, or fugacity coefficients frozen in an inner "
            "loop", '"coupled"', choices=("coupled", "nested")),
        Key("tolerance", "number", "largest equilibrium-condition residual accepted", "1e-11", low=1e-14,
            high=1e-3),
        Key("max_iterations", "count", "Newton iterations allowed per start", "100", low=1, high=100000),
    )),
    Table("conditions", "The state of the main solve: temperature and exactly one of pressure (fixed pressure) "
          "or volume (sealed vessel).", (
        Key("temperature", "quantity", "temperature", '"440 degC"', required=True, dimension="temperature"),
        Key("pressure", "quantity", "pressure (absolute)", '"215 bar"', dimension="pressure"),
        Key("volume", "quantity", "total volume of a sealed vessel", '"2.5 m3"', dimension="volume"),
    ), required=True),
    Table("report", "What tables show.", (
        Key("species", "species-list", "species shown in tables (default: all)", '["NH3", "H2"]'),
        Key("key", "species", "the key product of comparisons and maps (default: the first product of the first "
            "reaction that is absent from the feed)", '"NH3"'),
    )),
    Table("compare", "Ideal gas against real-gas models at the conditions of the case.", (
        Key("models", "models", "models to compare", '["ideal", "SRK", "PR"]'),
        Key("reference", "text", "the model the others are measured against", '"PR"'),
        Key("tolerance", "number", "how far (mole fraction of the key product) the ideal gas may be off before it "
            "is called unsafe; 0.01 = one mole-percent point", "0.01", low=1e-6, high=0.5),
        Key("relative_tolerance", "number", "instead of tolerance: a fraction of the reference's key-product "
            "mole fraction", "0.05", low=1e-6, high=0.99),
    )),
    Table("sweep", "Solve the case's feed over one or two axes with the case's model. Give temperature and/or "
          "one of pressure or volume (volume for a sealed vessel).", (
        Key("temperature", "axis", "temperatures", '["380 degC", "500 degC", 7]', dimension="temperature"),
        Key("pressure", "axis", "pressures", '["100 bar", "400 bar", 4]', dimension="pressure"),
        Key("volume", "axis", "volumes of a sealed vessel", '["1 m3", "4 m3", 4]', dimension="volume"),
    )),
    Table("map", "An operating map over temperature and pressure: each model's key-product mole fraction, the "
          "ideal-gas deviation, the pressure where the ideal gas stops being safe, the band of the real-gas "
          "models.", (
        Key("temperature", "axis", "temperature axis", '["300 degC", "600 degC", 61]', required=True,
            dimension="temperature"),
        Key("pressure", "axis", "pressure axis", '["10 bar", "1000 bar", 100]', required=True,
            dimension="pressure"),
        Key("models", "models", "models on the map (default: ideal and the credible real-gas models)",
            '["ideal", "PR", "SRK"]'),
        Key("reference", "text", "the model the deviations are measured against", '"PR"'),
        Key("tolerance", "number", "as in [compare]", "0.01", low=1e-6, high=0.5),
    )),
    Table("adiabatic", "An adiabatic bed at the case's pressure: the outlet at equilibrium with enthalpy in = "
          "enthalpy out.", (
        Key("inlet_temperature", "quantity", "inlet temperature of the feed", '"380 degC"', required=True,
            dimension="temperature"),
    )),
    Table("beds", "Adiabatic beds in series at the case's pressure, the gas cooled to the next inlet "
          "temperature between beds.", (
        Key("inlet_temperatures", "quantity-list", "inlet temperature of each bed", '["380 degC", "400 degC"]',
            required=True, dimension="temperature"),
        Key("cooling", "choice", "between beds: an exchanger cools the gas, or cold fresh feed is mixed in",
            '"exchanger"', choices=("exchanger", "quench")),
        Key("quench_temperature", "quantity", "temperature of the cold feed mixed in (cooling = \"quench\")",
            '"150 degC"', dimension="temperature"),
    )),
    Table("scoring", "Score models against measured equilibria (bundled data sets or your own CSV files, layout "
          "in docs/scoring.md). A case file may hold only [case] and [scoring]; run it with `hipeq score`.", (
        Key("data", "text-list", "bundled data-set names (`hipeq score --list`) or CSV file paths (relative to the "
            "case file)", '["ammonia-larson-1924"]', required=True),
        Key("models", "models", "models to score; options such as K_source by a (label, options) pair are for the "
            "Python API", '["ideal", "PR", "SRK"]'),
        Key("bands", "quantity-list", "upper edges of the pressure bands of the statistics", '["100 bar", "300 bar"]',
            dimension="pressure"),
    )),
    Table("separator", "A vapour-liquid flash (no reaction) of the equilibrium gas, cooled to separator "
          "conditions.", (
        Key("temperature", "quantity", "separator temperature", '"-5 degC"', required=True,
            dimension="temperature"),
        Key("pressure", "quantity", "separator pressure (default: the case's pressure)", '"210 bar"',
            dimension="pressure"),
    )),
)

TABLE_BY_NAME = {t.name: t for t in TABLES}


def _units(dimension: str) -> str:
    return ", ".join(units_of(dimension))


def markdown() -> str:
    """The case-file reference (docs/casefile.md), generated from :data:`TABLES`."""
    lines = [
        "# Case-file reference",
        "",
        "<!-- generated by `python -m hipeq.interfaces.schema > docs/casefile.md`; a test keeps it equal to the "
        "schema -->",
        "",
        "A case file is a TOML file (UTF-8) that describes one job: a gas, its feed, the conditions, and what to "
        "do with them. Numbers with a dimension are strings with their unit (`\"450 degC\"`, `\"250 bar\"`); "
        "plain numbers are for dimensionless values. Every table and key is checked: an unknown or missing one, "
        "a wrong type or a wrong unit stops the run with a message that names `[table] key` and what is "
        "allowed (exit code 2).",
        "",
        "Units accepted:",
        "",
    ]
    for dimension in ("temperature", "pressure", "volume", "amount"):
        lines.append(f"- {dimension}: {_units(dimension)} (SI: {SI_UNITS[dimension]})")
    lines += ["", "Gauge pressures (`barg`, `psig`) are refused: give absolute pressures.", "",
              f"Axes of `[sweep]` and `[map]`: `[start, stop, count]` with 1 <= count <= {MAX_AXIS}, or an explicit "
              f"list of quantities; at most {MAX_STATES:,} states in one sweep or map.", "",
              "Which commands read which tables: `hipeq run` reads every table present; `hipeq compare`, "
              "`hipeq map`, `hipeq beds`, `hipeq separator` read the case and their own table.", ""]
    for table in TABLES:
        need = " (required)" if table.required else ""
        lines += [f"## [{table.name}]{need}", "", table.help, ""]
        if table.species_keys:
            lines += ["```toml", f"[{table.name}]", table.example, "```", ""]
            continue
        lines += ["| key | kind | required | meaning | example |", "|---|---|---|---|---|"]
        for key in table.keys:
            kind = KIND_HELP[key.kind]
            if key.choices:
                kind += ": " + ", ".join(f"`{c}`" for c in key.choices)
            if key.dimension:
                kind += f" ({key.dimension}: {_units(key.dimension)})"
            if key.low is not None:
                kind += f"; {key.low:g} to {key.high:g}"
            lines.append(f"| `{key.name}` | {kind} | {'yes' if key.required else 'no'} | {key.help} | "
                         f"`{key.example}` |")
        lines.append("")
    lines += ["## Kinds of value", ""] + [f"- **{k}**: {v}" for k, v in KIND_HELP.items()] + [""]
    return "\n".join(lines)


if __name__ == "__main__":  # pragma: no cover
    print(markdown(), end="")
