"""Shared by every test: this folder is on sys.path (pytest puts a conftest's folder there),
so tests import the reference helpers (refsolvers, prereq, fuzzcases) by name."""

from hypothesis import settings

# Every property test draws the same examples in every run (CI never flakes on a new draw);
# bench/fuzz_long.py is where fresh random cases are tried at length.
settings.register_profile("fixed", derandomize=True, database=None)
settings.load_profile("fixed")


# The longest files first, then the rest by number of tests, most first (pytest-xdist's own
# default). build_scripts/test.sh runs xdist with --dist loadfile --no-loadscope-reorder, so a
# worker takes whole files in this order (the next one when two tests of its own are left) and
# no long file starts last while the other core has nothing left to do. Ordered by each file's
# summed --durations (setup, call, teardown) in a full two-worker run, 2026-12-05 21:37 (load
# 7-12, 1857 s in all), less what this branch's changes took off; every file of 30 s or more.
# By count alone test_last_results (88 s, 6 tests), test_first_verdict (59 s, 5 tests),
# test_snapshot (73 s, 4 tests) and test_units_page (45 s, 4 tests) came among the last files.
SLOW_FILES_FIRST = (
    "tests/browser/test_motion_panel.py", "tests/test_command_fields.py", "tests/browser/test_last_results.py",
    "tests/browser/test_snapshot.py", "tests/test_tolerance.py", "tests/test_modal_charts.py",
    "tests/browser/test_panel_units.py", "tests/test_plan.py", "tests/browser/test_first_verdict.py",
    "tests/browser/test_hostile_page.py", "tests/browser/test_chart.py", "tests/test_build.py",
    "tests/browser/test_touch_sizes.py", "tests/browser/test_units_page.py", "tests/test_stdlib_trim.py",
    "tests/browser/test_page.py", "tests/browser/test_plan_panel.py", "tests/browser/test_sheet_units.py",
    "tests/browser/test_fit_panel.py", "tests/browser/test_share.py", "tests/browser/test_words_page.py",
    "tests/browser/test_states_sizes.py", "tests/test_motion.py", "tests/browser/test_offline.py",
)


def pytest_collection_modifyitems(config, items):
    files = [item.nodeid.split("::")[0] for item in items]
    count = {name: files.count(name) for name in set(files)}
    rank = {item.nodeid: (SLOW_FILES_FIRST.index(name) if name in SLOW_FILES_FIRST else len(SLOW_FILES_FIRST),
                          -count[name], name) for item, name in zip(items, files)}
    items.sort(key=lambda item: rank[item.nodeid])  # stable: each file's own order is kept
