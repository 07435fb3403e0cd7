"""Long work as jobs: a generator started by one call and stepped by later calls, so the
page's worker stays free to answer between steps (a running call cannot be interrupted)."""

from __future__ import annotations

import itertools
import time

from ..model.rig import Problem, RigError

MAX_BUDGET_MS = 5000.0  # one job step never works longer than this on purpose
DEFAULT_BUDGET_MS = 150.0


class JobStore:
    """Running jobs of one family (their ids count from 1), each a generator of steps."""

    def __init__(self):
        self.jobs: dict[int, dict] = {}
        self._ids = itertools.count(1)

    def start(self, kind: str, steps) -> int:
        job = next(self._ids)
        self.jobs[job] = {"kind": kind, "steps": steps, "last": None, "fraction": 0.0}
        return job

    def get(self, job_id, message: str) -> dict:
        job = self.jobs.get(job_id)
        if job is None:
            raise RigError([Problem("job", message)])
        return job

    def run(self, job_id, budget_ms, until) -> bool:
        """Step job ``job_id`` for about ``budget_ms`` or until ``until(job)``; True when done.

        Each step sets the job's ``fraction`` and ``last``; a RigError from the work ends
        the job and is raised.
        """
        job = self.jobs[job_id]
        budget = min(MAX_BUDGET_MS, float(budget_ms)) / 1000.0
        start, done = time.perf_counter(), False
        try:
            while not done and time.perf_counter() - start < budget:
                job["fraction"], job["last"] = next(job["steps"])
                done = until(job)
        except StopIteration:
            done = True
        except RigError:
            self.jobs.pop(job_id, None)
            raise
        if done:
            self.jobs.pop(job_id, None)
        return done

    def cancel(self, job_id) -> bool:
        job = self.jobs.pop(job_id, None)
        if job is not None:
            job["steps"].close()
        return job is not None
