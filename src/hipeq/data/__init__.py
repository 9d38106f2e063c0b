"""Data layer: species records, reactions and standard-state thermochemistry (ideal gas at 1 bar).

Importing this package needs only numpy. The bundled species' databank constants are read from the stored file
``bundled_constants.toml``; ``chemicals`` is imported only to look up a species that is not bundled.
"""
from hipeq import _pickle  # noqa: F401  (read-only mappings pickle as dicts)
from hipeq.data.reactions import (Reaction, check_independent, element_matrix, independent_reactions,
                                  stoichiometric_matrix)
from hipeq.data.species import Species, load_species_file, register_species, species
from hipeq.data.thermochem import (P_STANDARD, R, equilibrium_constant, ln_equilibrium_constants,
                                   standard_enthalpies, standard_entropies, standard_gibbs)

__all__ = ["species", "Species", "register_species", "load_species_file", "Reaction", "independent_reactions",
           "check_independent", "element_matrix", "stoichiometric_matrix", "equilibrium_constant",
           "ln_equilibrium_constants", "standard_gibbs", "standard_enthalpies", "standard_entropies",
           "P_STANDARD", "R"]
