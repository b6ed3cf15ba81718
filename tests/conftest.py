import os

import matplotlib

matplotlib.use("Agg")
os.environ.setdefault("MPLBACKEND", "Agg")

from hypothesis import settings  # noqa: E402

# Property-based tests draw the same examples on every run (a reproducible CI); set
# HYPOTHESIS_PROFILE=explore to search with fresh random examples while developing.
settings.register_profile("ci", derandomize=True, print_blob=True)
settings.register_profile("explore", derandomize=False, max_examples=200)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
