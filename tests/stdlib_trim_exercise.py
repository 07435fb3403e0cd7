# Runs inside Pyodide on the site's trimmed standard library (tests/test_stdlib_trim.py):
# imports every module of the core, micropip and packaging, calls every bridge op and
# every CLI command once, and ends with the JSON list of what failed. A module missing
# from the zip shows as an ImportError here, or as a bridge reply with "error" (the
# bridge turns any internal exception into one).
import contextlib
import importlib
import io
import json
import pathlib
import sys
import zipfile

# (pkgutil is not used: the site does not need it, so the trimmed zip may lack it)
wheels = json.loads(open("/work/wheels.json").read())
sys.path[:0] = ["/work/core", *wheels]
failures = []

sources = [p.relative_to("/work/core").as_posix() for p in pathlib.Path("/work/core").rglob("*.py")]
for wheel in wheels:
    sources += [n for n in zipfile.ZipFile(wheel).namelist() if n.endswith(".py")]
for source in sorted(sources):
    name = source[:-3].replace("/", ".").removesuffix(".__init__")
    if name.endswith("__main__"):
        continue
    try:
        importlib.import_module(name)
    except Exception as error:  # noqa: BLE001 - every failure is the finding
        failures.append(f"import {name}: {error!r}")



def exercise():
    """Every bridge op and CLI command once, on the demo rig."""
    from shakestill import bridge
    from shakestill.cli import main as cli
    from shakestill.commands.table import COMMANDS, OPS

    rig = json.loads(bridge.handle('{"op": "demo"}'))["rig"]
    log = open("/work/log.csv").read()
    fragment = json.loads(bridge.handle(json.dumps({"op": "share_encode", "rig": rig, "view": {}})))
    requests = [
        {"op": "version"}, {"op": "demo"}, {"op": "validate", "rig": rig}, {"op": "check", "rig": rig},
        {"op": "schematic", "rig": rig}, {"op": "share_encode", "rig": rig, "view": {}},
        {"op": "share_decode", "fragment": fragment.get("fragment", "")},
        {"op": "point", "rig": rig, "speed_rpm": 2400, "stroke_m": 0.02},
        {"op": "runup", "rig": rig, "rate_rpm_s": 200, "start_rpm": 0, "end_rpm": 2400, "factor": 1.5},
        {"op": "simulate", "rig": rig, "duration_s": 0.2}, {"op": "tolerance", "rig": rig},
        {"op": "loads", "rig": rig, "equilibrium": "inverted"},
        {"op": "fit", "rig": rig, "log": log, "drive_stopped": True, "max_iterations": 2},
        {"op": "lean", "rig": rig, "tilts": 3, "speeds": 3},
        {"op": "plan", "rig": rig, "rows": 4},
    ]
    jobs = [("job", {"op": "job_start", "kind": "chart", "rig": rig, "rows": 4}),
            ("motion_job", {"op": "motion_job_start", "kind": "basin", "rig": rig, "size": 3, "validate": 0})]
    seen = set()
    for request in requests:
        seen.add(request["op"])
        reply = json.loads(bridge.handle(json.dumps(request)))
        if reply.get("ok") is not True:  # each request is valid: an answer must come back
            failures.append(f"op {request['op']}: {reply.get('error') or reply.get('problems')}")
    for prefix, start in jobs:
        job = json.loads(bridge.handle(json.dumps(start)))
        number, steps = job.get("job"), 0
        while "error" not in job and not job.get("done") and steps < 200:
            job = json.loads(bridge.handle(json.dumps({"op": f"{prefix}_step", "job": number, "budget_ms": 5000})))
            steps += 1
        cancel = json.loads(bridge.handle(json.dumps({"op": f"{prefix}_cancel", "job": number})))
        seen.update({f"{prefix}_start", f"{prefix}_step", f"{prefix}_cancel"})
        for reply in (job, cancel):
            if "error" in reply:
                failures.append(f"op {prefix}: {reply['error']}")
    missed = sorted(set(OPS) - seen)
    if missed:
        failures.append(f"ops not exercised: {missed}")

    commands = [["check", "--json"], ["chart", "--rows", "4", "--json"], ["runup", "--rate", "200", "--json"],
                ["lean", "--tilts", "3", "--speeds", "3", "--json"], ["plan", "--rows", "4", "--json"],
                ["simulate", "--duration", "0.2", "--json"],
                # the op above ran the knock tolerance's long search on the demo rig in this
                # same interpreter (every module it imports, imported); the command runs once
                # more where the rig falls over (500 rpm), its own code and JSON without
                # repeating that search (the search's modules load at import time, above)
                ["loads", "--json"], ["tolerance", "--speed", "500rpm", "--json"],
                ["fit", "--log", "/work/log.csv", "--stopped", "--json"],
                ["demo"], ["link"], ["check"], ["chart", "--rows", "4", "-o", "/tmp/chart.svg"]]
    missed = sorted(set(COMMANDS) - {argv[0] for argv in commands})
    if missed:
        failures.append(f"commands not exercised: {missed}")
    for argv in commands:
        out, err = io.StringIO(), io.StringIO()
        try:
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                code = cli(argv)
        except SystemExit as stop:
            code = stop.code
        except Exception as error:  # noqa: BLE001
            code = repr(error)
        if code not in (0, None):
            failures.append(f"shakestill {' '.join(argv)}: {code} {err.getvalue()[-300:]}")


try:
    exercise()
except Exception as error:  # noqa: BLE001 - e.g. the bridge itself cannot be imported
    failures.append(f"ops and commands: {error!r}")
json.dumps(failures)
