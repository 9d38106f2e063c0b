"""Shared test configuration: hypothesis profiles.

``HYPOTHESIS_PROFILE=default`` (the default): about 40 examples per property, no deadline (the first call of a
compiled kernel may load or compile it). ``HYPOTHESIS_PROFILE=soak``: 1000 examples, for ``make soak``.
A test that sets its own ``@settings(max_examples=...)`` keeps its own count.
"""
from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

settings.register_profile("default", max_examples=40, deadline=None,
                          suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("soak", max_examples=1000, deadline=None,
                          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "default"))
