"""Shared by every test: this folder is on sys.path (pytest puts a conftest's folder there),
so tests import the reference helpers (refsolvers, prereq, fuzzcases) by name."""

from hypothesis import settings

# Every property test draws the same examples in every run (CI never flakes on a new draw);
# bench/fuzz_long.py is where fresh random cases are tried at length.
settings.register_profile("fixed", derandomize=True, database=None)
settings.load_profile("fixed")
