"""Shared fixtures of the data-layer tests."""
from __future__ import annotations

import pytest

from hipeq.data.species import reset_registry


@pytest.fixture(autouse=True)
def _clean_registry():
    """Every data test starts and ends with the bundled species only (user registrations undone)."""
    reset_registry()
    yield
    reset_registry()
