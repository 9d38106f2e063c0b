"""Reactions: parsing, element balance, stoichiometric and element matrices, independent reaction sets.

Coefficients are signed, products positive: sum_i nu_i A_i = 0. A reaction conserves every element e:
sum_i nu_i a_(e,i) = 0 (a = element matrix). A complete set of independent reactions spans the null space of the
element matrix; its size is n_species - rank(a) (Smith & Missen, "Chemical Reaction Equilibrium Analysis",
Wiley 1982, ch. 2). Null-space bases here are computed in exact rational arithmetic.
"""
from __future__ import annotations

import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from types import MappingProxyType

import numpy as np

from hipeq.data.species import Species, species
from hipeq.errors import InputError, UnbalancedReactionError, UnknownSpeciesError

__all__ = ["Reaction", "ReactionIndependence", "element_matrix", "stoichiometric_matrix",
           "independent_reactions", "check_independent"]

_BALANCE_TOL = 1e-9
_SEPARATORS = ("<=>", "->", "=")
_NUMBER = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?(?:/\d+)?"  # 2, 0.5, .5, 1e-3, 3/2
_TERM = re.compile(rf"^\s*(?P<coef>{_NUMBER})?\s*(?P<name>.*?)\s*$")
_SECOND = re.compile(rf"^(?P<coef>{_NUMBER})(?P<space>\s*)(?P<rest>.*)$")  # a second number, as in "2 2 N2"
_SIGNS = ("-", "\u2212")  # hyphen-minus and the minus sign
_COEFFICIENT_RULE = ("coefficients are finite positive numbers (e.g. 2, 0.5, 3/2) written without a sign, "
                     "reactants on the left side and products on the right side")
_ORDINALS = ("first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth", "ninth", "tenth")


def _fmt(value: float) -> str:
    """Readable coefficient: integers plain, simple fractions as p/q, otherwise 6 significant digits."""
    frac = Fraction(value).limit_denominator(12)
    if abs(float(frac) - value) < 1e-9:
        return str(frac.numerator) if frac.denominator == 1 else f"{frac.numerator}/{frac.denominator}"
    return f"{value:.6g}"


def _side(terms: Iterable[tuple[str, float]]) -> str:
    return " + ".join(name if abs(c - 1.0) < 1e-12 else f"{_fmt(c)} {name}" for name, c in terms)


@dataclass(frozen=True, eq=False)
class Reaction:
    """A balanced reaction sum_i nu_i A_i = 0 with ``coefficients`` identifier -> nu_i (products > 0).

    Construct from a mapping (names, formulas or CAS numbers are resolved to identifiers; repeated species are
    summed; zero coefficients dropped) or with :meth:`parse`. Raises UnbalancedReactionError naming each
    element that is off and by how much.
    """

    coefficients: Mapping[str, float]

    def __post_init__(self) -> None:
        if not isinstance(self.coefficients, Mapping):
            raise InputError("coefficients", f"must map species to coefficients, got {self.coefficients!r}")
        merged: dict[str, float] = {}
        for name, coef in self.coefficients.items():
            try:
                value = float(coef)
            except (TypeError, ValueError):
                raise InputError("coefficients", f"coefficient of {name!r} must be a number, got {coef!r}") from None
            if not math.isfinite(value):
                raise InputError("coefficients", f"coefficient of {name!r} must be finite, got {coef!r}")
            ident = species(name).name
            merged[ident] = merged.get(ident, 0.0) + value
        ordered = [(k, v) for k, v in merged.items() if v < 0] + [(k, v) for k, v in merged.items() if v > 0]
        ordered = [(k, v) for k, v in ordered if abs(v) > 1e-12]
        if not ordered:
            raise InputError("coefficients", "reaction has no species with a non-zero coefficient")
        object.__setattr__(self, "coefficients", MappingProxyType(dict(ordered)))
        self._check_balance()

    def _check_balance(self) -> None:
        totals: dict[str, list[float]] = {}
        for ident, nu in self.coefficients.items():
            for element, count in species(ident).elements.items():
                side = totals.setdefault(element, [0.0, 0.0])
                side[nu > 0] += abs(nu) * count
        off = [(e, r, p) for e, (r, p) in totals.items() if abs(p - r) > _BALANCE_TOL * max(1.0, r, p)]
        if off:
            detail = "; ".join(f"{e}: reactants {_fmt(r)}, products {_fmt(p)} (off by {p - r:+.6g})"
                               for e, r, p in off)
            raise UnbalancedReactionError(f"reaction '{self}' is unbalanced: {detail}")

    @classmethod
    def parse(cls, text: str) -> Reaction:
        """Parse ``"N2 + 3 H2 = 2 NH3"``; ``<=>`` and ``->`` are accepted for ``=``; coefficients may be
        integers, decimals (``0.5``) or fractions (``3/2``); species by identifier, name, formula or CAS.

        Coefficients are finite positive numbers written without a sign (1 when left out): reactants on the left
        side, products on the right. InputError("reaction") names the offending term for a sign, a zero or
        non-finite coefficient, two coefficients in one term, a coefficient without a species or an empty term.
        """
        if not isinstance(text, str):
            raise InputError("reaction", f"must be text such as 'N2 + 3 H2 = 2 NH3', got {text!r}")
        sep = next((s for s in _SEPARATORS if s in text), None)
        if sep is None or text.count(sep) != 1 or (sep == "=" and "<=>" in text):
            raise InputError("reaction", f"{text!r} needs exactly one of '=', '<=>', '->' between the sides")
        left, right = text.split(sep)
        coefficients: dict[str, float] = {}
        for sign, side, where in ((-1.0, left, "left"), (1.0, right, "right")):
            if not side.strip():
                raise InputError("reaction", f"{text!r} has an empty {where} side")
            terms = side.split("+")
            for k, term in enumerate(terms):
                if not term.strip():
                    position = _ORDINALS[k] if k < len(_ORDINALS) else f"#{k + 1}"
                    cause = ("a '+' at the start of a side; coefficients take no sign" if k == 0 else
                             "a '+' at the end of a side" if k == len(terms) - 1 else "two '+' in a row")
                    raise InputError("reaction", f"the {position} term of the {where} side of {text!r} is empty "
                                                 f"({cause}); write one species, with an optional coefficient, "
                                                 "between each pair of '+'")
                coef, ident = _parse_term(term, text)
                total = coefficients.get(ident, 0.0) + sign * coef
                if not math.isfinite(total):
                    raise InputError("reaction", f"the coefficients of {ident!r} in {text!r} add up to more than "
                                                 "the largest floating-point number; " + _COEFFICIENT_RULE)
                coefficients[ident] = total
        return cls(coefficients)

    @property
    def species(self) -> tuple[str, ...]:
        """Identifiers taking part, reactants first."""
        return tuple(self.coefficients)

    @property
    def mole_change(self) -> float:
        """Change in moles of gas, sum_i nu_i [-]."""
        return float(sum(self.coefficients.values()))

    def reversed(self) -> Reaction:
        """The reverse reaction (every nu_i negated); K_reverse = 1/K."""
        return self.scaled(-1.0)

    def scaled(self, factor: float) -> Reaction:
        """The reaction with every nu_i multiplied by ``factor`` (non-zero); K_scaled = K**factor."""
        if not (isinstance(factor, (int, float, Fraction)) and math.isfinite(factor) and factor != 0):
            raise InputError("factor", f"must be a finite non-zero number, got {factor!r}")
        return Reaction({k: v * float(factor) for k, v in self.coefficients.items()})

    def __add__(self, other: Reaction) -> Reaction:
        """Sum of two reactions (coefficients added); K_sum = K_1 K_2."""
        if not isinstance(other, Reaction):
            return NotImplemented
        total = dict(self.coefficients)
        for k, v in other.coefficients.items():
            total[k] = total.get(k, 0.0) + v
        return Reaction(total)

    def __sub__(self, other: Reaction) -> Reaction:
        return self + other.reversed()

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Reaction):
            return NotImplemented
        keys = set(self.coefficients) | set(other.coefficients)
        return all(abs(self.coefficients.get(k, 0.0) - other.coefficients.get(k, 0.0)) <= 1e-12 for k in keys)

    def __hash__(self) -> int:
        return hash(frozenset((k, round(v, 9)) for k, v in self.coefficients.items()))

    def __str__(self) -> str:
        left = [(k, -v) for k, v in self.coefficients.items() if v < 0]
        right = [(k, v) for k, v in self.coefficients.items() if v > 0]
        return f"{_side(left)} = {_side(right)}"

    def __repr__(self) -> str:
        return f"Reaction.parse({str(self)!r})"


def _parse_term(term: str, text: str) -> tuple[float, str]:
    """Coefficient (> 0, finite) and species identifier of one term such as ``"3/2 H2"`` of reaction ``text``.

    A name that starts with digits (``"1-butene"``) is read as a name when the digits are not followed by white
    space and the rest alone is no known species. Raises InputError("reaction") naming the term for a signed,
    zero, non-finite or doubled coefficient, a coefficient without a species or a zero denominator;
    UnknownSpeciesError for an unknown name.
    """
    stripped = term.strip()
    if stripped.startswith(_SIGNS):
        unsigned = stripped[1:].strip()
        name = _TERM.match(unsigned)["name"] or unsigned  # type: ignore[index]
        fix = (f": write {unsigned!r} on the left side if {name} is consumed, or on the right side if it is formed"
               if name else "")
        raise InputError("reaction", f"term {stripped!r} of {text!r} has a sign, but {_COEFFICIENT_RULE}{fix}")
    match = _TERM.match(term)
    if match is None:  # cannot happen with this pattern (every part is optional); kept as a guard
        raise InputError("reaction", f"cannot read term {stripped!r} in {text!r}")
    coef_text, name = match["coef"], match["name"]
    if not name:
        raise InputError("reaction", f"term {stripped!r} of {text!r} is a coefficient with no species; write a "
                                     f"species after the number, e.g. '{stripped} NH3'")
    if coef_text is None:
        return 1.0, species(name).name
    num, _, den = coef_text.partition("/")
    if den and float(den) == 0.0:
        raise InputError("reaction", f"zero denominator in {stripped!r} of {text!r}; {_COEFFICIENT_RULE}")
    try:
        ident = species(name).name
    except UnknownSpeciesError:
        spaced = stripped[len(coef_text):len(coef_text) + 1].isspace()
        second = _SECOND.match(name) if spaced else None
        if second is not None and (second["space"] or not second["rest"] or _known(second["rest"])):
            raise InputError("reaction", f"term {stripped!r} of {text!r} has more than one coefficient "
                                         f"({coef_text!r}, then {second['coef']!r}); write one number before the "
                                         "species") from None
        if spaced:
            raise
        return 1.0, species(stripped).name  # a name starting with digits, e.g. "1-butene"
    coef = float(num) / (float(den) if den else 1.0)
    if not math.isfinite(coef):
        raise InputError("reaction", f"coefficient {coef_text!r} of {name!r} in {text!r} is too large (it "
                                     f"overflows to infinity); {_COEFFICIENT_RULE}")
    if coef <= 0.0:
        written_zero = not any(c in "123456789" for c in re.split("[eE]", num)[0])
        reason = "is zero" if written_zero else "is too small to represent (it underflows to zero)"
        raise InputError("reaction", f"coefficient {coef_text!r} of {name!r} in {text!r} {reason}; "
                                     f"{_COEFFICIENT_RULE}; leave out a species that takes no part")
    return coef, ident


def _known(name: str) -> bool:
    """Whether ``name`` is a registered species (identifier, name, formula or CAS)."""
    try:
        species(name)
    except UnknownSpeciesError:
        return False
    return True


def as_reaction(reaction: Reaction | str) -> Reaction:
    """A Reaction from a Reaction or its text."""
    return reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction)


def _identifiers(species_list: Sequence[str | Species], field: str = "species") -> list[str]:
    if isinstance(species_list, (str, Species)) or not isinstance(species_list, Iterable):
        raise InputError(field, f"must be a list of species names, got {species_list!r}")
    idents = [species(s).name for s in species_list]
    if not idents:
        raise InputError(field, "is empty; give at least one species")
    seen: set[str] = set()
    for ident in idents:
        if ident in seen:
            raise InputError(field, f"{ident!r} is listed twice")
        seen.add(ident)
    return idents


def element_matrix(species_list: Sequence[str | Species]) -> tuple[tuple[str, ...], np.ndarray]:
    """Element matrix a[e, i] = atoms of element e in species i, elements in Hill order (C, H, then A-Z).

    Returns (elements, matrix of shape (n_elements, n_species)).
    """
    idents = _identifiers(species_list)
    found = {e for i in idents for e in species(i).elements}
    elements = tuple(sorted(found, key=lambda e: (e != "C", e != "H", e)))
    matrix = np.array([[species(i).elements.get(e, 0) for i in idents] for e in elements], dtype=float)
    return elements, matrix


def stoichiometric_matrix(reactions: Sequence[Reaction | str], species_list: Sequence[str | Species]) -> np.ndarray:
    """nu[j, i], coefficient of species i in reaction j: shape (n_reactions, n_species).

    Raises InputError("species") when a reaction involves a species missing from ``species_list``.
    """
    idents = _identifiers(species_list)
    column = {ident: k for k, ident in enumerate(idents)}
    rxns = [as_reaction(r) for r in reactions]
    nu = np.zeros((len(rxns), len(idents)))
    for j, rxn in enumerate(rxns):
        for ident, coef in rxn.coefficients.items():
            if ident not in column:
                raise InputError("species", f"reaction '{rxn}' involves {ident!r}, which is not in the species list")
            nu[j, column[ident]] = coef
    return nu


def _rref(rows: list[list[Fraction]]) -> tuple[list[list[Fraction]], list[int]]:
    """Reduced row-echelon form (exact) and the pivot columns."""
    m = [row[:] for row in rows]
    pivots: list[int] = []
    r = 0
    n_cols = len(m[0]) if m else 0
    for c in range(n_cols):
        p = next((k for k in range(r, len(m)) if m[k][c] != 0), None)
        if p is None:
            continue
        m[r], m[p] = m[p], m[r]
        lead = m[r][c]
        m[r] = [x / lead for x in m[r]]
        for k in range(len(m)):
            if k != r and m[k][c] != 0:
                factor = m[k][c]
                m[k] = [a - factor * b for a, b in zip(m[k], m[r])]
        pivots.append(c)
        r += 1
        if r == len(m):
            break
    return m, pivots


def _integers(vector: list[Fraction]) -> list[int]:
    lcm = math.lcm(*(v.denominator for v in vector))
    ints = [int(v * lcm) for v in vector]
    gcd = math.gcd(*ints)
    return [v // gcd for v in ints]


def independent_reactions(species_list: Sequence[str | Species]) -> list[Reaction]:
    """A complete set of independent reactions among ``species_list`` (n_species - rank(a) of them).

    Basis of the null space of the element matrix a: species are ranked simplest first (fewest atoms, then
    list order) and the first linearly independent ones become components; each remaining species gets one
    reaction forming it (as product, coefficient > 0) from components, in the smallest integers. Deterministic;
    species that share no element balance with others (e.g. Ar) take part in none.
    """
    idents = _identifiers(species_list)
    order = sorted(range(len(idents)), key=lambda k: (sum(species(idents[k]).elements.values()), k))
    _, a = element_matrix(idents)
    rows = [[Fraction(int(a[e, k])) for k in order] for e in range(a.shape[0])]
    reduced, pivots = _rref(rows)
    reactions: list[tuple[int, Reaction]] = []
    for free, col in enumerate(order):
        if free in pivots:
            continue
        vector = [Fraction(0)] * len(order)
        vector[free] = Fraction(1)
        for r, p in enumerate(pivots):
            vector[p] = -reduced[r][free]
        ints = _integers(vector)
        coefficients = {idents[order[k]]: float(ints[k]) for k in sorted(range(len(order)), key=lambda k: order[k])
                        if ints[k] != 0}
        reactions.append((col, Reaction(coefficients)))
    return [rxn for _, rxn in sorted(reactions, key=lambda item: item[0])]


@dataclass(frozen=True)
class ReactionIndependence:
    """Outcome of :func:`check_independent`.

    rank: rank of the stoichiometric matrix; independent: indices of a maximal independent subset, chosen
    greedily in the given order; dependent: the other indices; combinations: for each dependent index, the
    coefficients c_k with reaction = sum_k c_k reaction_k over ``independent`` indices.
    """

    rank: int
    independent: tuple[int, ...]
    dependent: tuple[int, ...]
    combinations: Mapping[int, Mapping[int, float]]

    @property
    def all_independent(self) -> bool:
        return not self.dependent

    def __str__(self) -> str:
        if not self.dependent:
            return f"all {self.rank} reactions are independent"
        parts = [f"#{d} = " + " + ".join(f"{_fmt(c)} x #{k}" for k, c in self.combinations[d].items())
                 for d in self.dependent]
        return f"rank {self.rank} of {self.rank + len(self.dependent)} reactions; dependent: " + "; ".join(parts)


def check_independent(reactions: Sequence[Reaction | str]) -> ReactionIndependence:
    """Find linear dependences among reactions (exact rational arithmetic on the coefficients).

    E.g. CO + 2 H2 = CH3OH, CO2 + H2 = CO + H2O and CO2 + 3 H2 = CH3OH + H2O: rank 2, the third is the sum of
    the first two. The solver keeps ``independent`` and drops ``dependent``.
    """
    rxns = [as_reaction(r) for r in reactions]
    if not rxns:
        raise InputError("reactions", "is empty; give at least one reaction")
    keys = list(dict.fromkeys(k for r in rxns for k in r.coefficients))
    vectors = [[Fraction(r.coefficients.get(k, 0.0)).limit_denominator(10**6) for k in keys] for r in rxns]
    kept: list[int] = []
    combinations: dict[int, dict[int, float]] = {}
    for j, vec in enumerate(vectors):
        coefs = _solve_combination([vectors[k] for k in kept], vec)
        if coefs is None:
            kept.append(j)
        else:
            combinations[j] = {kept[k]: float(c) for k, c in enumerate(coefs) if c != 0}
    dependent = tuple(j for j in range(len(rxns)) if j not in kept)
    return ReactionIndependence(len(kept), tuple(kept), dependent,
                                MappingProxyType({d: MappingProxyType(combinations[d]) for d in dependent}))


def _solve_combination(basis: list[list[Fraction]], target: list[Fraction]) -> list[Fraction] | None:
    """Exact c with sum_k c_k basis_k = target, or None when target is outside their span."""
    if not basis:
        return None if any(target) else []
    n = len(basis)
    augmented = [[basis[k][i] for k in range(n)] + [target[i]] for i in range(len(target))]
    reduced, pivots = _rref(augmented)
    if n in pivots:  # inconsistent: the target column is a pivot
        return None
    solution = [Fraction(0)] * n
    for r, p in enumerate(pivots):
        solution[p] = reduced[r][n]
    return solution
