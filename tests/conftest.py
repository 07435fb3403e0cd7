"""Shared by every test: this folder is on sys.path (pytest puts a conftest's folder there),
so tests import the reference helpers (refsolvers, prereq, fuzzcases) by name."""

from hypothesis import settings

# Every property test draws the same examples in every run (CI never flakes on a new draw);
# bench/fuzz_long.py is where fresh random cases are tried at length.
settings.register_profile("fixed", derandomize=True, database=None)
settings.load_profile("fixed")


# The longest files first (measured with --durations, 2026-12-04: a minute or more each under
# CI's load), the rest by number of tests, most first (pytest-xdist's own default). build_scripts/
# test.sh runs xdist with --dist loadfile --no-loadscope-reorder, so a worker takes whole files in
# this order and no long file starts last while the other core has nothing left to do.
SLOW_FILES_FIRST = (
    "tests/test_stdlib_trim.py", "tests/test_plan.py", "tests/test_command_fields.py",
    "tests/browser/test_page.py", "tests/browser/test_words_page.py", "tests/browser/test_panel_units.py",
    "tests/browser/test_motion_panel.py", "tests/browser/test_share.py", "tests/browser/test_hostile_page.py",
    "tests/test_tolerance.py", "tests/browser/test_touch_sizes.py", "tests/browser/test_unit_hints.py",
    # few tests but long ones (the cold second-visit snapshots ~50 s each, the off-vertical knock
    # tolerance ~56 s, the map export/cancel ~40 s, 2026-12-05): by count alone they came 36th, 68th and
    # 70th of 87 files, so one could start late while the other core had little left
    "tests/browser/test_snapshot.py", "tests/test_tilt_motion.py", "tests/browser/test_chart.py",
)


def pytest_collection_modifyitems(config, items):
    files = [item.nodeid.split("::")[0] for item in items]
    count = {name: files.count(name) for name in set(files)}
    rank = {item.nodeid: (SLOW_FILES_FIRST.index(name) if name in SLOW_FILES_FIRST else len(SLOW_FILES_FIRST),
                          -count[name], name) for item, name in zip(items, files)}
    items.sort(key=lambda item: rank[item.nodeid])  # stable: each file's own order is kept
