// The motion panel: the core's `simulate` run as a job (progress, cancel),
// at the rig's speed or on a speed ramp (run up, run down), played back to
// scale (animation.js), slowed down or stroboscopic, knocked while it plays,
// with the core's plot of the angles, its events and its words.
// No physics here: a ramp goes to the core as typed (start_rpm, ramps), the
// drive speed shown is the core's for the frame on show, and a knock re-runs
// the simulation in the core with the knock added at the time on show.

import { h, replaceChildren } from "../lib/dom.js";
import { createAnimation, frameIndex } from "./animation.js";
import { Runner, busyMark, num, statusLine, withUnit } from "../engine/motion-job.js";
import { svgNode } from "./schematic-view.js";
import { registerCsv } from "./export.js";
import { isCurrent, lastSession, markFresh } from "./last-session.js";

const FRAMES_PER_CYCLE = 24; // frames per drive cycle: slow motion shows each shake smoothly
const MIN_FRAME_RATE_HZ = 60; // at least one frame per screen refresh in real time
const MAX_FRAMES = 9000; // frames in one run: keeps a reply near 2 MB
const MAX_RUN_S = 120; // the page's longest run (the command line runs longer)
const KNOCK_TAIL_S = 3; // a knock near the end lengthens the run to this long after it
const RAMP_TAIL_S = 3; // a ramp's run goes on this long after the ramp: the swing after it shows
const SVG_NS = "http://www.w3.org/2000/svg";
const PLAIN = /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i;

/**
 * @param {object} els {form, start, angle, duration, knock, knockGo, status, progress, cancel,
 *                      anim, play, time, clock, slow, strobe, events, plot, msgs: {angle, duration, knock}}
 *                      (the speed ramp's fields and the drive speed read-out are found by their ids)
 * @param {object} deps {engine, getRig()}
 */
export function createMotionView(els, { engine, getRig }) {
  const $ = (id) => document.getElementById(id);
  const ramp = { mode: $("motion-speed-mode"), box: $("motion-ramp"), from: $("motion-ramp-from"),
                 by: $("motion-ramp-by"), time: $("motion-ramp-time"), rate: $("motion-ramp-rate"),
                 delay: $("motion-ramp-delay") };
  const speedOut = $("motion-drive-speed");
  const runner = new Runner(engine);
  const animation = createAnimation(els.anim, "The rig, drawn to scale, moving as simulated");
  const state = {
    frequencyHz: null, // drive frequency from the last check: sets the frame rate
    shown: null, // {reply, request, rigKey} of the run on show
    pending: null, // the request being worked out
    runKey: "", // the rig of the run being worked out
    time: 0,
    playing: false,
    last: 0, // wall-clock ms of the last animation frame
    raf: 0,
    playheads: [], // the time lines drawn on the core's plots
    operatingRpm: null, // the rig's speed from the last check: only for the run length's default
    autoLength: els.duration.value, // the run length the page put in; typing over it keeps yours
  };
  const rampField = (input, label) => ({ input, msg: $(`${input.id}-msg`), label });
  const fields = {
    duration: { input: els.duration, msg: els.msgs.duration, label: "Run length" },
    angle: { input: els.angle, msg: els.msgs.angle, label: "Initial angle" },
    knock: { input: els.knock, msg: els.msgs.knock, label: "Knock size" },
    from: rampField(ramp.from, "Start speed"),
    time: rampField(ramp.time, "Ramp time"),
    rate: rampField(ramp.rate, "Ramp rate"),
    delay: rampField(ramp.delay, "Delay before the ramp"),
  };

  // ------------------------------------------------------------ fields and problems

  function fieldFor(path) {
    if (path.startsWith("duration_s")) return fields.duration;
    if (path.startsWith("angles_rad")) return fields.angle;
    if (path.startsWith("knocks")) return fields.knock;
    if (path.startsWith("start_rpm")) return fields.from;
    if (/^ramps\[\d+\]\.at_s/.test(path)) return fields.delay;
    if (path.startsWith("ramps")) return ramp.by.value === "rate" ? fields.rate : fields.time;
    return null;
  }

  /** Messages beside the fields they name; anything else (the rig's own problems) in the status. */
  function showProblems(problems) {
    for (const f of Object.values(fields)) {
      f.input.removeAttribute("aria-invalid");
      f.msg.hidden = true;
      f.msg.textContent = "";
    }
    const other = [];
    for (const p of problems) {
      const f = fieldFor(p.path);
      if (!f) {
        other.push(p);
        continue;
      }
      f.input.setAttribute("aria-invalid", "true");
      f.msg.textContent = `${f.msg.textContent ? `${f.msg.textContent} ` : ""}${f.label}: ${p.message}.`;
      f.msg.hidden = false;
    }
    if (other.length) status("The motion waits for a rig without problems: fix the marked fields in the rig sheet.");
    else if (problems.length) status(`Nothing was run: see the message beside the field${state.shown ? "; the run shown is kept" : ""}.`);
  }

  /** The request's fields from the panel, or {problems} found before asking the core. */
  function read() {
    const rig = getRig();
    const n = Array.isArray(rig?.links) ? Math.max(1, rig.links.length) : 1;
    const reference = els.start.value;
    const durationText = els.duration.value.trim();
    const angleText = els.angle.value.trim().replace(/\s*(deg|°)$/i, "");
    const problems = [];
    const seconds = PLAIN.test(durationText) ? Number(durationText) : null;
    if (seconds !== null && seconds > MAX_RUN_S) {
      problems.push({ path: "duration_s", message: `"${els.duration.value}" is more than allowed: at most `
        + `${MAX_RUN_S} s on this page (the command line runs longer)` });
    }
    let angle = withUnit(els.angle.value, "deg");
    if (PLAIN.test(angleText)) {
      // angles go to the core from the upward vertical; the field is from the start position
      angle = `${Number(angleText) + (reference === "hanging" ? 180 : 0)} deg`;
    } else if (reference === "hanging" && angleText !== "") {
      problems.push({ path: "angles_rad", message: `"${els.angle.value}" is not allowed: type degrees `
        + "from the hanging position, such as 10" });
    }
    // a length typed with a unit is read by the core: frames at the plainest rate then
    const rate = seconds === null ? MIN_FRAME_RATE_HZ : frameRate(seconds);
    // a blank angle starts at rest: in the position, or off vertical on the orbit it holds
    const start = angleText === "" ? {} : { angles_rad: Array(n).fill(angle) };
    return { rig, problems, request: { reference, duration_s: withUnit(durationText, "s"),
                                       ...start, knocks: [], frame_rate_hz: rate,
                                       ...speedFields(rig) } };
  }

  /** The drive speed fields of the request: none at the rig's speed, else the ramp as typed. */
  function speedFields(rig) {
    const mode = ramp.mode.value;
    if (mode === "constant") return {};
    const byRate = ramp.by.value === "rate";
    const step = { at_s: withUnit(ramp.delay.value.trim() || "0", "s"),
                   [byRate ? "rate_rpm_s" : "over_s"]: byRate ? withUnit(ramp.rate.value, "rpm/s")
                     : withUnit(ramp.time.value, "s"),
                   to_rpm: mode === "up" ? rig?.drive?.speed_rpm : 0 };
    return mode === "up" ? { start_rpm: withUnit(ramp.from.value.trim() || "0", "rpm"), ramps: [step] }
      : { ramps: [step] };
  }

  /** When the ramp ends (s) for the run length's default, from plain numbers; null if unknown. */
  function rampEnd() {
    const plain = (input, blank) => {
      const text = input.value.trim().replace(/\s*(rpm\/s|rpm|s)$/i, "");
      return text === "" && blank !== undefined ? blank : PLAIN.test(text) ? Number(text) : NaN;
    };
    const up = ramp.mode.value === "up";
    const delay = plain(ramp.delay, 0);
    let over = plain(ramp.time);
    if (ramp.by.value === "rate") {
      if (state.operatingRpm === null) return null;
      const from = up ? plain(ramp.from, 0) : state.operatingRpm;
      over = Math.abs((up ? state.operatingRpm : 0) - from) / plain(ramp.rate);
    }
    return delay >= 0 && over >= 0 && Number.isFinite(delay + over) ? delay + over : null;
  }

  /** The run length follows the ramp (its end plus RAMP_TAIL_S) while it holds the page's value. */
  function followRamp() {
    if (els.duration.value.trim() !== state.autoLength) return;
    const constant = ramp.mode.value === "constant";
    const end = constant ? null : rampEnd();
    if (!constant && end === null) return;
    state.autoLength = constant ? els.duration.defaultValue : String(Math.ceil((end + RAMP_TAIL_S) * 10 - 1e-9) / 10);
    els.duration.value = state.autoLength;
  }

  function showRampFields() {
    const mode = ramp.mode.value;
    ramp.box.hidden = mode === "constant";
    $("motion-ramp-what").textContent = mode === "up" ? "Run up from the start speed to the rig's speed"
      : "Run down from the rig's speed to a stop";
    ramp.from.closest(".field").hidden = mode !== "up";
    ramp.time.closest(".field").hidden = ramp.by.value !== "time";
    ramp.rate.closest(".field").hidden = ramp.by.value !== "rate";
    followRamp();
  }

  function frameRate(seconds) {
    const perCycle = state.frequencyHz ? FRAMES_PER_CYCLE * state.frequencyHz : MIN_FRAME_RATE_HZ;
    return Math.round(Math.max(MIN_FRAME_RATE_HZ, Math.min(perCycle, MAX_FRAMES / Math.max(seconds, 1e-3))));
  }

  // ------------------------------------------------------------ running

  const status = statusLine(els.status, els.progress);
  const busy = busyMark(els.cancel, els.anim);

  /** Run the panel's scenario; with `knock`, the shown run again plus that knock. */
  async function run(knock = null) {
    const { rig, problems, request } = read();
    if (!rig) return;
    state.runKey = JSON.stringify(rig);
    if (!knock) showProblems(problems);
    if (problems.length && !knock) return;
    let startAt = 0;
    let req = request;
    if (knock) {
      // a knock while an earlier knock is still worked out adds to that one
      const before = runner.running && state.pending ? state.pending : state.shown.request;
      req = { ...before, knocks: [...before.knocks, knock] };
      const end = state.shown.reply.summary.end_t_s;
      if (knock.t_s + KNOCK_TAIL_S > end) {
        req.duration_s = `${Number((knock.t_s + KNOCK_TAIL_S).toFixed(4))} s`;
        req.frame_rate_hz = Math.min(req.frame_rate_hz, frameRate(knock.t_s + KNOCK_TAIL_S));
      }
      startAt = knock.t_s;
    }
    state.pending = req;
    busy(true);
    status(knock ? `Knock at ${num(knock.t_s, 5)} s: working out the motion from there…`
      : "Simulating the motion…", 0);
    const reply = await runner.start("simulate", { rig, ...req },
      (step) => status(`${knock ? "Knocked run" : "Simulating"}: ${Math.round(step.fraction * 100)}%`, step.fraction));
    if (reply === null) return; // stopped: a newer run, a cancel or a rig edit
    busy(false);
    if (!reply.ok) {
      if (reply.problems) showProblems(reply.problems);
      else status(`The motion could not be worked out: ${reply.error}`);
      return;
    }
    showProblems([]);
    show(reply, req, JSON.stringify(rig), startAt);
    // the frames twice (as numbers and as the CSV) may not fit the browser's store: then once
    kept.keep(state.runKey, { reply, request: req }, { reply: { ...reply, csv: null }, request: req });
    if (knock) play();
  }

  function knockNow() {
    if (!state.shown) return;
    const t = Number(state.time.toFixed(4));
    pause();
    seek(t);
    run({ t_s: t, rate_rad_s: withUnit(els.knock.value, "rad/s"), link: 1 });
  }

  // ------------------------------------------------------------ showing a run

  function show(reply, request, rigKey, startAt) {
    state.shown = { reply, request, rigKey };
    const end = reply.summary.end_t_s;
    els.anim.dataset.request = JSON.stringify(request);
    els.anim.dataset.summary = JSON.stringify(reply.summary);
    els.anim.dataset.events = JSON.stringify(reply.events);
    els.anim.dataset.endAngles = JSON.stringify(reply.frames.angles_rad.at(-1) ?? null);
    markFresh(els.anim);
    animation.build(reply);
    els.anim.setAttribute("aria-label", `The rig drawn to scale, moving as simulated over ${num(end, 4)} s`);
    els.time.max = String(Math.max(0, reply.frames.t_s.length - 1)); // the slider steps through the frames
    for (const c of [els.time, els.play, els.knockGo]) c.disabled = false;
    showPlot(reply);
    showEvents(reply);
    status(`Run of ${num(end, 4)} s: ${reply.frames.t_s.length} frames (${num(reply.frame_rate_hz, 4)} per second), `
      + `${reply.strobe.t_s.length} once-per-cycle samples.`, 1);
    seek(startAt);
  }

  /** The core's plot with a line at the time on show, drawn from the plot's own time axis. */
  function plot(svgText, axes, label) {
    const svg = svgNode(svgText, label);
    if (axes?.x?.unit === "s") {
      const line = document.createElementNS(SVG_NS, "line");
      line.setAttribute("class", "playhead");
      line.setAttribute("y1", axes.y.px_max);
      line.setAttribute("y2", axes.y.px_min);
      svg.append(line);
      state.playheads.push({ line, axis: axes.x });
    }
    return svg;
  }

  function showPlot(reply) {
    state.playheads = [];
    if (!reply.svg) {
      replaceChildren(els.plot, h("p", { class: "empty" }, "No plot: the run has no frames."));
      return;
    }
    els.plot.replaceChildren(plot(reply.svg, reply.axes, "Link angles against time"),
      reply.strobe_svg ? plot(reply.strobe_svg, reply.strobe_axes, "Link angles once per drive cycle") : "");
    els.plot.dataset.state = "fresh";
    els.plot.dataset.axes = JSON.stringify(reply.axes);
  }

  function showEvents(reply) {
    const { summary, events } = reply;
    const fell = summary.fell;
    const where = state.shown.request.reference === "hanging" ? "hanging" : "upright";
    const items = events.map((e) => h("li", { "data-kind": e.kind },
      h("strong", {}, `${num(e.t_s, 5)} s`), ` ${e.kind}: ${e.message || ""}`));
    replaceChildren(els.events,
      h("p", { class: `runup-summary ${fell ? "is-not-met" : "is-met"}`, role: "status" },
        fell ? "It fell: a link passed the horizontal, away from the start position."
          : `It stayed within a quarter turn of the ${where} position for the whole run.`),
      summary.success ? null : h("p", { class: "msg is-problem" }, `The run stopped early: ${summary.message}`),
      items.length ? h("ol", { class: "event-list" }, items) : h("p", { class: "hint" }, "No events in this run."),
      h("details", { class: "report-text" },
        h("summary", {}, "The run in the command line's words"), h("pre", {}, reply.report_text)));
  }

  // ------------------------------------------------------------ playback

  function seek(time) {
    if (!state.shown) return;
    const end = state.shown.reply.summary.end_t_s;
    state.time = Math.min(end, Math.max(0, time));
    const p = animation.at(state.time, els.strobe.checked);
    const frames = state.shown.reply.frames.t_s;
    const k = frameIndex(frames, state.time);
    const rpm = state.shown.reply.frames.speed_rpm[k]; // the core's drive speed at the frame on show
    els.time.value = String(k);
    els.time.setAttribute("aria-valuetext", `${state.time.toFixed(3)} seconds, drive at ${num(rpm, 4)} rpm`);
    speedOut.textContent = `${num(rpm, 4)} rpm`;
    els.anim.dataset.speedRpm = String(rpm);
    els.clock.textContent = els.strobe.checked && p
      ? `${state.time.toFixed(3)} s (sample at ${p.t.toFixed(3)} s)` : `${state.time.toFixed(3)} s`;
    els.anim.dataset.time = String(state.time);
    for (const { line, axis: a } of state.playheads) {
      const x = a.px_min + ((Math.min(state.time, a.max) - a.min) / (a.max - a.min)) * (a.px_max - a.px_min);
      line.setAttribute("x1", x);
      line.setAttribute("x2", x);
    }
  }

  function tick(now) {
    if (!state.playing) return;
    const slow = Number(els.slow.value) || 1;
    const dt = Math.min(0.1, (now - state.last) / 1000); // a hidden tab does not leap ahead
    state.last = now;
    seek(state.time + dt / slow);
    if (state.time >= state.shown.reply.summary.end_t_s) {
      pause();
      return;
    }
    state.raf = requestAnimationFrame(tick);
  }

  function play() {
    if (!state.shown || state.playing) return;
    if (state.time >= state.shown.reply.summary.end_t_s) seek(0);
    state.playing = true;
    state.last = performance.now();
    els.play.textContent = "Pause";
    els.play.setAttribute("aria-pressed", "true");
    els.anim.dataset.playing = "true";
    state.raf = requestAnimationFrame(tick);
  }

  function pause() {
    state.playing = false;
    cancelAnimationFrame(state.raf);
    els.play.textContent = "Play";
    els.play.setAttribute("aria-pressed", "false");
    els.anim.dataset.playing = "false";
  }

  // ------------------------------------------------------------ controls

  for (const f of Object.values(fields)) {
    f.input.addEventListener("input", () => {
      // a message about what was typed before goes once the text changes
      f.input.removeAttribute("aria-invalid");
      f.msg.hidden = true;
    });
  }
  ramp.mode.addEventListener("change", showRampFields);
  ramp.by.addEventListener("change", showRampFields);
  for (const input of [ramp.from, ramp.time, ramp.rate, ramp.delay]) input.addEventListener("input", followRamp);
  showRampFields();
  els.form.addEventListener("submit", (event) => {
    event.preventDefault();
    pause();
    run();
  });
  els.play.addEventListener("click", () => (state.playing ? pause() : play()));
  els.time.addEventListener("input", () => seek(state.shown.reply.frames.t_s[Number(els.time.value)] ?? 0));
  els.time.addEventListener("keydown", (event) => {
    // Page Up / Page Down: a twentieth of the run (arrow keys step one frame)
    if (!state.shown || !["PageUp", "PageDown"].includes(event.key)) return;
    event.preventDefault();
    const end = state.shown.reply.summary.end_t_s;
    seek(state.time + (event.key === "PageUp" ? 1 : -1) * end / 20);
  });
  els.strobe.addEventListener("change", () => seek(state.time));
  els.knockGo.addEventListener("click", knockNow);
  // the run's frames as the command line's `simulate -o` writes them (saved by export.js)
  registerCsv(els.plot.id, () => state.shown?.reply.csv || null);
  const kept = lastSession("motion", els.anim, els.events);
  const lastRig = kept.restore(({ reply, request }) => show(reply, request, "", 0));
  if (state.shown) state.shown.rigKey = lastRig;
  els.cancel.addEventListener("click", async () => {
    await runner.stop();
    busy(false);
    status(state.shown ? "Run cancelled: the run shown before is kept." : "Run cancelled.");
  });

  return {
    /** As on a first visit (the tests' reset): work under way stopped, playback paused, no run kept. */
    forget() {
      runner.stop();
      pause();
      animation.clear();
      Object.assign(state, { shown: null, pending: null, runKey: "", time: 0, playing: false, last: 0,
        raf: 0, playheads: [] });
    },
    /** The rig on the sheet changed: running work stops; a shown run is of the old rig. */
    rigChanged(rig) {
      const key = JSON.stringify(rig);
      if (runner.running && state.runKey !== key) {
        runner.stop();
        busy(false);
        status("The rig changed while the motion was worked out: run it again.");
      }
      if (state.shown && state.shown.rigKey !== key && isCurrent(els.anim)) {
        els.anim.dataset.state = "stale";
        status("This motion is of the rig before your last edit: run it again for the rig on the sheet.");
      }
    },
    /** The last check's numbers: the drive frequency sets the frame rate, the speed a ramp's run length. */
    setOperatingPoint(result) {
      state.frequencyHz = Number.isFinite(result.frequency_hz) ? result.frequency_hz : null;
      state.operatingRpm = Number.isFinite(result.speed_rpm) ? result.speed_rpm : null;
      followRamp();
    },
    get reference() {
      return els.start.value;
    },
  };
}
