"""Shared test settings.

Hypothesis runs derandomized (a fixed sequence of examples) so that CI is reproducible;
set HYPOTHESIS_PROFILE=explore for a fresh random search with more examples.
"""

import os

from hypothesis import HealthCheck, settings

settings.register_profile(
    "ci", max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile("explore", max_examples=500, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
