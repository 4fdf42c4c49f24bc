import os

from hypothesis import settings

# Deterministic property tests: the same examples on every run and machine.
settings.register_profile("ci", derandomize=True, deadline=None, print_blob=True)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
