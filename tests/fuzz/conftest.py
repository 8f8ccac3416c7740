"""Fuzz budget: a bounded hypothesis profile for CI and a long one behind an environment variable.

Profiles (registered here, applied only to the tests under ``tests/fuzz``, which decorate
themselves with ``settings.get_profile("bandsketch-fuzz")``):

- ``bandsketch-fuzz-ci`` (the default): 50 examples per property, no deadline, so the fuzz
  tests add well under a minute to a CI run on two cores.
- ``bandsketch-fuzz-long``: 2,000 examples per property, no deadline; chosen with
  ``BANDSKETCH_FUZZ=long``, e.g.::

      BANDSKETCH_FUZZ=long python -m pytest tests/fuzz

  Expect it to take several minutes. ``BANDSKETCH_FUZZ_EXAMPLES=N`` overrides the count of
  either profile.
"""

import os

from hypothesis import HealthCheck, settings

_SUPPRESS = [HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much]

# CI draws the same examples every run (derandomize), so a red CI always means a change of
# ours; the long profile draws fresh ones to look for new failures.
settings.register_profile("bandsketch-fuzz-ci", max_examples=50, deadline=None, derandomize=True,
                          suppress_health_check=_SUPPRESS, print_blob=True)
settings.register_profile("bandsketch-fuzz-long", max_examples=2000, deadline=None,
                          suppress_health_check=_SUPPRESS, print_blob=True)

_choice = os.environ.get("BANDSKETCH_FUZZ", "ci").strip().lower() or "ci"
if _choice not in ("ci", "long"):
    raise ValueError(f"BANDSKETCH_FUZZ must be 'ci' or 'long', not {_choice!r}")
_chosen = settings.get_profile(f"bandsketch-fuzz-{_choice}")
_examples = os.environ.get("BANDSKETCH_FUZZ_EXAMPLES")
if _examples:
    _chosen = settings(_chosen, max_examples=int(_examples))
settings.register_profile("bandsketch-fuzz", _chosen)
