"""Equations of state: compiled kernels (``_kernels``, ``_states``) and their Python face.

Public names: :func:`build_model` (a :class:`CompiledModel` for the solver kernels), :func:`fugacity_coefficients`
(a :class:`FugacityResult`), the model list :data:`MODELS` and the cubic table :data:`CUBICS`.
"""
from hipeq.models.eos import (CUBICS, MODELS, CompiledModel, CubicForm, FugacityResult, alpha_slope, build_model,
                              fugacity_coefficients)
from hipeq.models.stability import StabilityResult, stability_test
from hipeq.models.kij import KijAssignment, assign_kij, databank_kij, databank_kij_values

__all__ = ["build_model", "fugacity_coefficients", "CompiledModel", "FugacityResult", "MODELS", "CUBICS",
           "CubicForm", "alpha_slope", "KijAssignment", "assign_kij", "databank_kij", "databank_kij_values",
           "stability_test", "StabilityResult"]
