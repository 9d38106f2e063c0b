"""Equilibrium solvers: extent Newton (coupled / nested), Gibbs minimisation, sealed vessel, and their results.

Public: :class:`~hipeq.solvers.system.ReactionSystem`, :class:`~hipeq.solvers.result.EquilibriumResult`,
:class:`~hipeq.solvers.result.BatchResult` and the status codes (``STATUS_NAMES``, ``STATUS_MESSAGES``).
"""
from __future__ import annotations

from hipeq.solvers.result import STATUS_MESSAGES, STATUS_NAMES, BatchResult, EquilibriumResult
from hipeq.solvers.system import ReactionSystem

__all__ = ["ReactionSystem", "EquilibriumResult", "BatchResult", "STATUS_NAMES", "STATUS_MESSAGES"]
