"""Shared test settings: a bounded hypothesis profile (no deadline, few examples).

The examples are drawn the same way every run (derandomize), so the suite is repeatable and
a red CI always means a change; `BANDSKETCH_FUZZ=long` (tests/fuzz) is where fresh examples
are looked for.
"""

from hypothesis import settings

settings.register_profile("bandsketch", max_examples=30, deadline=None, derandomize=True)
settings.load_profile("bandsketch")
