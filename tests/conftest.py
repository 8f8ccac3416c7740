"""Shared test settings: a bounded hypothesis profile (no deadline, few examples)."""

from hypothesis import settings

settings.register_profile("bandsketch", max_examples=30, deadline=None, derandomize=False)
settings.load_profile("bandsketch")
