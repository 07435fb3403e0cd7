"""A log whose angles are zero with the pendulum upright, fitted on a tablet (touch) and a
phone: the page's fit equals `shakestill fit --zero inverted --json` on CPython (1e-6
relative, as tests/browser/test_fit_panel.py), and the plot's saved numbers give the logged
angles as logged (from the log's own zero, not wrapped to a half turn) under words naming
that zero.

The log is the page's invented sample (site/sample-decay.csv, zero hanging) moved to an
upright zero by adding 180 deg to each angle (the two zeros are half a turn apart).
"""

from __future__ import annotations

import csv
import json
import math

import pytest

from pagekit import RESULT_TIMEOUT_MS, SITE, TOUCH_SIZES as SIZES, wait_for_result
from test_fit_panel import cli_fit

pytestmark = pytest.mark.browser

FIT_REL = 1e-6  # page (Pyodide) vs command line (CPython): libm may differ in the last bits


def upright_log() -> str:
    rows = [line for line in (SITE / "sample-decay.csv").read_text().splitlines()
            if line and not line.startswith("#")]
    header, body = rows[0].split(","), [r.split(",") for r in rows[1:]]
    k = header.index("angle_deg")
    for r in body:
        r[k] = f"{float(r[k]) + 180.0:.4f}"
    return "\n".join([",".join(header)] + [",".join(r) for r in body]) + "\n"


@pytest.mark.parametrize("size", sorted(SIZES))
def test_an_upright_zero_log_is_fitted_and_plotted_from_its_own_zero(booted, tmp_path, size):
    page = booted(**SIZES[size])  # the worker's booted page at this size, reset to a first visit
    wait_for_result(page)
    log = upright_log()
    page.fill("#fit-log", log)
    page.locator('input[name="fit-zero"][value="inverted"]').tap()
    page.locator("#fit-go").tap()
    page.wait_for_function("""() => document.getElementById("fit-result").dataset.state === "fresh"
        && document.getElementById("fit-cancel").hidden""", timeout=RESULT_TIMEOUT_MS)
    result = json.loads(page.get_attribute("#fit-result", "data-result"))
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    want = cli_fit(rig, log, tmp_path, "--zero", "inverted")  # the last --zero given wins
    got, ref = result["parameters"][0], want["parameters"][0]
    assert got["path"] == ref["path"] == "links[0].joint_damping_N_m_s"
    assert math.isclose(got["value"], ref["value"], rel_tol=FIT_REL), (got, ref)
    assert math.isclose(result["rms_rad"], want["rms_rad"], rel_tol=FIT_REL)
    assert "angle from upward vertical" in page.inner_text("#fit-plot")
    with page.expect_download() as saved:
        page.locator('[data-save-from="fit-plot"][data-save-as="csv"]').tap()
    rows = list(csv.reader(open(saved.value.path())))
    logged = [float(line.split(",")[1]) for line in log.splitlines()[1:]]
    assert len(rows) - 1 == len(logged) and rows[0][1] == "link1_logged_deg"
    for row, angle in zip(rows[1:], logged):  # the log's own zero and branch: as logged
        assert abs(float(row[1]) - angle) < 1e-9, (row, angle)
    # the fitted start is said from the same zero, on the log's branch (205, not -155 deg)
    start = result["initial_angles_rad"][0]
    assert abs(math.degrees(start) - logged[0]) < 1.0
