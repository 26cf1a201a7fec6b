"""Shared test set-up: hypothesis profiles.

``HYPOTHESIS_PROFILE=ci`` (default) keeps example counts small enough for CI;
``HYPOTHESIS_PROFILE=long`` is the longer local fuzzing run (DEVELOPERS.md).
"""

from __future__ import annotations

import os
import sys

from hypothesis import HealthCheck, settings

# the shared test helpers (bad_inputs.py, bad_input_catalogue.py) live beside this file
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
for _sub in ("xlsx",):  # test modules whose tables other tests reuse
    sys.path.append(os.path.join(os.path.dirname(os.path.abspath(__file__)), _sub))

settings.register_profile(
    "ci", max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile(
    "long", max_examples=5000, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
