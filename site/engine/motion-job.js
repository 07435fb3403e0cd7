// Motion jobs in the worker (motion_job_start, then motion_job_step calls that
// each work for a short budget and report progress), shared by the motion,
// tolerance and recovery-map views. One Runner holds at most one job: starting
// another or calling stop() cancels the one before.

import { Cancelled } from "./worker-client.js";

const STEP_BUDGET_MS = 150; // one step: short enough for a check or a map step to slip in between

export class Runner {
  constructor(engine) {
    this.engine = engine;
    this.run = 0; // bumps for every job; steps of older jobs stop
    this.job = null; // the worker's job number while it runs
  }

  get running() {
    return this.job !== null;
  }

  /** Cancel the running job, if any; its steps stop and its result is dropped. */
  async stop() {
    const job = this.job;
    this.run += 1;
    this.job = null;
    if (job === null) return;
    try {
      await this.engine.request("motion_job_cancel", { job });
    } catch (err) {
      if (!(err instanceof Cancelled)) console.warn("motion_job_cancel:", err);
    }
  }

  /**
   * Run a job of `kind` to the end. onStep(reply) sees every step's reply (progress, and a
   * basin map's picture so far). Resolves with the final reply ({ok: false, ...} on bad
   * input), or null if the job was stopped or superseded.
   */
  async start(kind, fields, onStep = () => {}) {
    await this.stop();
    const run = this.run;
    const live = () => run === this.run;
    try {
      const started = await this.engine.request("motion_job_start", { kind, ...fields });
      if (!live()) {
        if (started.ok) this.engine.request("motion_job_cancel", { job: started.job }).catch(() => {});
        return null;
      }
      if (!started.ok) return started;
      this.job = started.job;
      for (;;) {
        const step = await this.engine.request("motion_job_step", { job: started.job, budget_ms: STEP_BUDGET_MS });
        if (!live()) return null;
        if (!step.ok || step.done) {
          this.job = null;
          return step;
        }
        onStep(step);
      }
    } catch (err) {
      if (!live() || err instanceof Cancelled) return null;
      this.job = null;
      return { ok: false, error: err.message || String(err) };
    }
  }
}

/** The value for the core: a plain number gets the field's unit, anything else goes as typed. */
export function withUnit(text, unit) {
  const t = String(text).trim();
  return /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(t) ? `${t} ${unit}` : t;
}

/** The status words and progress bar of a view: status(words, fraction or null). */
export function statusLine(words, bar) {
  return (text, fraction = null) => {
    words.textContent = text;
    if (fraction !== null) bar.value = fraction;
  };
}

/** While work runs: Cancel shows and the holder is marked busy for assistive technology. */
export function busyMark(cancel, holder) {
  return (on) => {
    cancel.hidden = !on;
    holder.setAttribute("aria-busy", on ? "true" : "false");
  };
}

/** Cancel stops the runner's job: a `holder` still running is marked cancelled, `words` shown. */
export function cancelWith(cancel, runner, busy, holder, status, words) {
  cancel.addEventListener("click", async () => {
    await runner.stop();
    busy(false);
    if (holder.dataset.state === "running") holder.dataset.state = "cancelled";
    status(words);
  });
}

/** The rig changed: running work stops and `words` say so; true when it was running. */
export function stopForEdit(runner, busy, status, words) {
  if (!runner.running) return false;
  runner.stop();
  busy(false);
  status(words);
  return true;
}

/** Why a job gave no result: the rig sheet's problems (marked there), or the engine's reason. */
export function failedWords(reply, what) {
  return reply.problems
    ? `The ${what} waits for a rig without problems: fix the marked fields in the rig sheet.`
    : `The ${what} could not be worked out: ${reply.error}`;
}

/** A number for display: at most `digits` significant figures, or a dash. */
export function num(x, digits = 4) {
  if (x === null || x === undefined || !Number.isFinite(x)) return "—";
  return String(Number(x.toPrecision(digits)));
}
