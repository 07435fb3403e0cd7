// The rig animation: draws the pivot carriage and the links, to scale, at a
// given time from the frames the core computed (`simulate` reply). Between two
// frames the positions are blended linearly; in stroboscopic view the latest
// once-per-cycle sample is drawn as it is. No physics here: every position
// comes from the core; this file only maps metres to the picture. A drive off
// vertical (the reply's axis_tilt_deg) turns the rails and the carriage onto its
// axis, and the held orbit's mean lean (the reply's held_orbit) is drawn dashed.

const SVG_NS = "http://www.w3.org/2000/svg";
const SIZE_PX = 400; // the picture's user space is SIZE_PX x SIZE_PX
const MARGIN_PX = 24; // room round the swept circle for the carriage and rails
const CARRIAGE = { w: 56, h: 16 }; // px: a sign of the carriage, not to scale
const JOINT_R = 5; // px
const TIP_R = 9; // px

function el(tag, attrs = {}, parent = null) {
  const node = document.createElementNS(SVG_NS, tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (parent) parent.append(node);
  return node;
}

/** Index i with t[i] <= time < t[i + 1] (clamped to the ends): binary search. */
export function frameIndex(t, time) {
  let lo = 0;
  let hi = t.length - 1;
  if (time <= t[0]) return 0;
  if (time >= t[hi]) return hi;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (t[mid] <= time) lo = mid;
    else hi = mid;
  }
  return lo;
}

/**
 * The scale of a run: metres to SVG user units, fixed for the whole run so the
 * picture does not jump. The box holds the circle the chain can sweep about
 * every pivot height of the run (the chain's reach is read off the first frame).
 */
export function sceneScale(frames) {
  const xs = frames.x_m[0];
  const ys = frames.y_m[0];
  let reach = 0;
  for (let k = 1; k < xs.length; k += 1) reach += Math.hypot(xs[k] - xs[k - 1], ys[k] - ys[k - 1]);
  reach = reach || 0.1;
  const low = frames.pivot_y_m.reduce((a, b) => Math.min(a, b), Infinity);
  const high = frames.pivot_y_m.reduce((a, b) => Math.max(a, b), -Infinity);
  const span = Math.max(2 * reach, 2 * reach + (high - low));
  const k = (SIZE_PX - 2 * MARGIN_PX) / span;
  const mid = (low + high) / 2;
  return { px_per_m: k, x0_px: SIZE_PX / 2, y0_px: SIZE_PX / 2 + mid * k, size_px: SIZE_PX,
           pivot_low_m: low, pivot_high_m: high, reach_m: reach };
}

export const toPx = (s, x, y) => [s.x0_px + x * s.px_per_m, s.y0_px - y * s.px_per_m];

/** The held orbit's mean lean of the first link, dashed from the middle pivot position. */
function leanLine(svg, reply, scale, cx, cy) {
  const held = reply.held_orbit;
  const lean = (held.lean_deg[0] * Math.PI) / 180;
  const angle = held.equilibrium === "hanging" ? Math.PI + lean : lean; // from the upward vertical
  const r = scale.reach_m * scale.px_per_m;
  const line = el("line", { x1: cx, y1: cy, x2: cx + r * Math.sin(angle), y2: cy - r * Math.cos(angle),
                            class: "anim-lean", "data-lean-deg": held.lean_deg[0] }, svg);
  el("title", {}, line).textContent = `mean lean of the held orbit: ${held.lean_deg[0].toFixed(2)}°`;
}

/** Draws one run; `at(time, strobe)` moves the picture. */
export function createAnimation(holder, label) {
  let run = null; // {frames, strobe, scale, parts}

  function build(reply) {
    const { frames } = reply;
    const scale = sceneScale(frames);
    const svg = el("svg", { viewBox: `0 0 ${SIZE_PX} ${SIZE_PX}`, class: "rig-anim", role: "img",
                            "aria-label": label });
    const [, top] = toPx(scale, 0, scale.pivot_high_m);
    const [, bottom] = toPx(scale, 0, scale.pivot_low_m);
    const [cx, cy] = toPx(scale, 0, (scale.pivot_low_m + scale.pivot_high_m) / 2);
    // the swept circle about the middle pivot height, the rails, the stroke
    el("circle", { cx, cy, r: scale.reach_m * scale.px_per_m, class: "anim-reach" }, svg);
    const tilt = reply.axis_tilt_deg || 0; // degrees, clockwise on screen as in the core's sketch
    const guide = tilt ? el("g", { transform: `rotate(${tilt} ${cx} ${cy})`, class: "anim-axis" }, svg) : svg;
    // the stroke bar shows the vertical travel; on a tilted axis the travel along it is longer
    const along = tilt ? 1 / Math.cos((tilt * Math.PI) / 180) : 1;
    el("line", { x1: cx - CARRIAGE.w / 2 - 6, y1: MARGIN_PX / 2, x2: cx - CARRIAGE.w / 2 - 6,
                 y2: SIZE_PX - MARGIN_PX / 2, class: "anim-rail" }, guide);
    el("line", { x1: cx + CARRIAGE.w / 2 + 6, y1: MARGIN_PX / 2, x2: cx + CARRIAGE.w / 2 + 6,
                 y2: SIZE_PX - MARGIN_PX / 2, class: "anim-rail" }, guide);
    el("rect", { x: cx - CARRIAGE.w / 2 - 10, y: cy - ((cy - top) * along),
                 width: 4, height: Math.max(1, (bottom - top) * along), class: "anim-stroke" }, guide);
    if (reply.held_orbit && reply.held_orbit.lean_deg.length) leanLine(svg, reply, scale, cx, cy);
    const carriage = el("rect", { width: CARRIAGE.w, height: CARRIAGE.h, rx: 3, class: "anim-carriage" }, svg);
    const n = frames.x_m[0].length - 1;
    const links = Array.from({ length: n }, () => el("line", { class: "anim-link" }, svg));
    const joints = Array.from({ length: n }, () => el("circle", { r: JOINT_R, class: "anim-joint" }, svg));
    const tip = el("circle", { r: TIP_R, class: "anim-tip" }, svg);
    holder.replaceChildren(svg);
    holder.dataset.scale = JSON.stringify(scale);
    run = { frames, strobe: reply.strobe, scale, carriage, links, joints, tip, tilt,
            sideways: Boolean(frames.pivot_x_m) };
  }

  /** Positions at `time`: blended frames, or the last strobe sample at or before it. */
  function pose(time, strobe) {
    if (strobe && run.strobe && run.strobe.t_s.length) {
      const s = run.strobe;
      const i = frameIndex(s.t_s, time);
      return { index: i, source: "strobe", t: s.t_s[i], x: s.x_m[i], y: s.y_m[i], pivot: s.pivot_y_m };
    }
    const f = run.frames;
    const i = frameIndex(f.t_s, time);
    const j = Math.min(i + 1, f.t_s.length - 1);
    const w = j > i ? Math.min(1, Math.max(0, (time - f.t_s[i]) / (f.t_s[j] - f.t_s[i]))) : 0;
    const mix = (a, b) => a.map((v, k) => v + w * (b[k] - v));
    return { index: i + w, source: "frames", t: time, x: mix(f.x_m[i], f.x_m[j]), y: mix(f.y_m[i], f.y_m[j]),
             pivot: f.pivot_y_m[i] + w * (f.pivot_y_m[j] - f.pivot_y_m[i]) };
  }

  function at(time, strobe = false) {
    if (!run) return null;
    const p = pose(time, strobe);
    const s = run.scale;
    const pts = p.x.map((x, k) => toPx(s, x, p.y[k]));
    const [px, py] = run.sideways ? pts[0] : toPx(s, 0, p.pivot); // off vertical it moves sideways too
    run.carriage.setAttribute("x", px - CARRIAGE.w / 2);
    run.carriage.setAttribute("y", py - CARRIAGE.h / 2);
    if (run.tilt) run.carriage.setAttribute("transform", `rotate(${run.tilt} ${px} ${py})`);
    run.links.forEach((line, k) => {
      line.setAttribute("x1", pts[k][0]);
      line.setAttribute("y1", pts[k][1]);
      line.setAttribute("x2", pts[k + 1][0]);
      line.setAttribute("y2", pts[k + 1][1]);
    });
    run.joints.forEach((c, k) => {
      c.setAttribute("cx", pts[k][0]);
      c.setAttribute("cy", pts[k][1]);
    });
    const last = pts[pts.length - 1];
    run.tip.setAttribute("cx", last[0]);
    run.tip.setAttribute("cy", last[1]);
    holder.dataset.frame = String(p.index);
    holder.dataset.source = p.source;
    return p;
  }

  return { build, at, clear: () => { run = null; } };
}
