"""Pieces every analysis shares: named model choices, the key product and limiting reactant of a feed, and the
tolerance that says when the ideal-gas estimate is off.

Only the public solver API is used here (``ReactionSystem.with_model``, ``feed_vector``, ``nu``, ``reactions``,
``species_names``); see ARCHITECTURE.md in the project leads' notes.
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.errors import InputError
from hipeq.solvers.system import ReactionSystem

# Named model choices. A label is what tables, figures and `results[...]` show; options go to
# `ReactionSystem.with_model`. Case-insensitive look-up.
PRESETS: Mapping[str, Mapping[str, Any]] = MappingProxyType({
    "ideal": MappingProxyType({"eos": "ideal"}),
    "PR": MappingProxyType({"eos": "PR"}),
    "SRK": MappingProxyType({"eos": "SRK"}),
    "PR78": MappingProxyType({"eos": "PR78"}),
    "virial": MappingProxyType({"eos": "virial"}),
    "lewis-randall": MappingProxyType({"eos": "lewis-randall"}),
    "PR78+E-PPR78+Peneloux": MappingProxyType({"eos": "PR78", "kij": "e-ppr78", "volume_translation": "peneloux"}),
})
# The credible real-gas models whose spread is the model-uncertainty band (the cubics with their default k_ij and
# the group-contribution k_ij with volume translation; the truncated virial and the Lewis-Randall rule are not
# credible at hundreds of bar, see docs/ammonia_validation.md)
BAND_MODELS: tuple[str, ...] = ("PR", "SRK", "PR78+E-PPR78+Peneloux")
DEFAULT_MODELS: tuple[str, ...] = ("ideal", *BAND_MODELS)
DEFAULT_REFERENCE = "PR"
# One mole-percent point of the key product: the size of the ideal-gas error at which practitioners stop quoting
# an ideal-gas equilibrium yield for sizing a loop (common practice), and well above the scatter of the cubic
# models against measured ammonia equilibria below 300 atm (docs/ammonia_validation.md)
DEFAULT_TOLERANCE = 0.01


@dataclass(frozen=True)
class ModelChoice:
    """A fugacity model as analysis sees it: a ``label`` and the ``options`` of ``ReactionSystem.with_model``."""

    label: str
    options: Mapping[str, Any] = field(default_factory=dict)

    @property
    def ideal(self) -> bool:
        """True for the ideal-gas model (phi_i = 1)."""
        return str(self.options.get("eos", "")).lower() == "ideal"


def model_choice(spec: str | ModelChoice | tuple[str, Mapping[str, Any]] | Mapping[str, Any]) -> ModelChoice:
    """A :class:`ModelChoice` from a preset name (``"PR"``, ``"ideal"``, ``"PR78+E-PPR78+Peneloux"``, ...; see
    ``PRESETS``), a ``(label, options)`` pair, a mapping of options (labelled by its values), or a ModelChoice."""
    if isinstance(spec, ModelChoice):
        return spec
    if isinstance(spec, str):
        for label, options in PRESETS.items():
            if label.lower() == spec.strip().lower():
                return ModelChoice(label, dict(options))
        return ModelChoice(spec.strip(), {"eos": spec.strip()})  # any equation-of-state name with default options
    if isinstance(spec, tuple) and len(spec) == 2 and isinstance(spec[0], str) and isinstance(spec[1], Mapping):
        return ModelChoice(spec[0], dict(spec[1]))
    if isinstance(spec, Mapping) and spec:
        label = "+".join(str(v) for v in spec.values() if v not in (None, False))
        return ModelChoice(label, dict(spec))
    raise InputError("models", f"a model is a name ({', '.join(PRESETS)}), a (label, options) pair or a mapping "
                               f"of model options; got {spec!r}")


def model_choices(models: Iterable[Any]) -> tuple[ModelChoice, ...]:
    """Model choices with unique labels, in the order given."""
    if isinstance(models, (str, ModelChoice)) or not isinstance(models, Iterable):
        models = (models,)
    choices = tuple(model_choice(m) for m in models)
    labels = [c.label for c in choices]
    if not choices:
        raise InputError("models", "give at least one model")
    if len(set(labels)) != len(labels):
        raise InputError("models", f"each model label may appear once; got {labels}")
    return choices


def model_systems(system: ReactionSystem, choices: Iterable[ModelChoice]) -> dict[str, ReactionSystem]:
    """``label -> system.with_model(**options)`` (same species, reactions, ln K and feed patterns)."""
    out = {}
    for choice in choices:
        try:
            out[choice.label] = system.with_model(**choice.options)
        except InputError as err:
            raise InputError("models", f"model {choice.label!r}: {err}") from None
    return out


def key_product(system: ReactionSystem, n0: np.ndarray, key: str | None = None) -> str:
    """The species whose mole fraction the comparison reports. Default: the first product (positive coefficient)
    of the system's first reaction that is absent from the feed (NH3 for N2 + 3 H2 = 2 NH3; CH3OH for
    CO2 + 3 H2 = CH3OH + H2O when listed first); else the first species in the system's order that is absent from
    the feed and takes part in a reaction (CO for a steam reformer fed CH4 and H2O with species CH4, H2O, CO,
    CO2, H2); else the first reaction's first product. Pass ``key`` to choose."""
    if key is not None:
        return system.species_names[system.species_index(key)]
    if not len(system.reactions):
        raise InputError("key", "the system has no reactions; name the species to report with key=")
    nu = np.asarray(system.nu)[0]
    products = [j for j in range(nu.size) if nu[j] > 0]
    absent = [j for j in products if n0[j] == 0.0]
    if not absent:
        reacting = np.any(np.asarray(system.nu) != 0.0, axis=0)
        absent = [j for j in range(nu.size) if n0[j] == 0.0 and reacting[j]]
    return system.species_names[(absent or products)[0]]


def limiting_reactant(system: ReactionSystem, n0: np.ndarray, key: str) -> str | None:
    """The fed reactant that limits the formation of ``key``: over the reactions that form ``key``, the reactant
    with the smallest n0_i / |nu_i|. None when no reaction forms ``key`` from fed species."""
    j_key = system.species_index(key)
    best, best_ratio = None, math.inf
    for row in np.asarray(system.nu):
        if row[j_key] <= 0:
            continue
        for i in np.flatnonzero(row < 0):
            ratio = n0[i] / -row[i]
            if n0[i] > 0 and ratio < best_ratio:
                best, best_ratio = system.species_names[i], ratio
    return best


@dataclass(frozen=True)
class Tolerance:
    """When the ideal-gas estimate is off: ``absolute`` (difference in the key product's mole fraction, 0.01 =
    one mole-percent point) or ``relative`` (of the reference model's yield of the key product, 0.05 = 5 %)."""

    absolute: float | None = DEFAULT_TOLERANCE
    relative: float | None = None

    def limit(self, reference_y: Any) -> Any:
        """The largest allowed |deviation| in mole fraction at the reference's key-product mole fraction."""
        if self.relative is not None:
            return self.relative * np.abs(reference_y)
        return np.full(np.shape(reference_y), self.absolute) if np.ndim(reference_y) else self.absolute

    def describe(self) -> str:
        """Words for tables and verdicts."""
        if self.relative is not None:
            return f"{100 * self.relative:g} % of the reference yield"
        points = 100 * self.absolute
        return f"{points:g} mole-percent point{'' if points == 1 else 's'}"


def tolerance_from(tolerance: float | None = None, relative_tolerance: float | None = None) -> Tolerance:
    """A :class:`Tolerance` from the public keywords (at most one given; neither: one mole-percent point)."""
    if tolerance is not None and relative_tolerance is not None:
        raise InputError("tolerance", "give tolerance (absolute, mole fraction) or relative_tolerance, not both")
    if relative_tolerance is not None:
        value = float(relative_tolerance)
        if not 0.0 < value < 1.0:
            raise InputError("relative_tolerance", f"must be in (0, 1) (a fraction of the yield), got {value!r}")
        return Tolerance(absolute=None, relative=value)
    value = DEFAULT_TOLERANCE if tolerance is None else float(tolerance)
    if not 0.0 < value < 1.0:
        raise InputError("tolerance", f"must be in (0, 1) (a difference in mole fraction), got {value!r}")
    return Tolerance(absolute=value)
