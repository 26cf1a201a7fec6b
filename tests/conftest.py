"""Shared test set-up: hypothesis profiles.

``HYPOTHESIS_PROFILE=ci`` (default) keeps example counts small enough for CI;
``HYPOTHESIS_PROFILE=long`` is the longer local fuzzing run (DEVELOPERS.md).
"""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

settings.register_profile(
    "ci", max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile(
    "long", max_examples=5000, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
