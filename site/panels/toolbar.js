// The toolbar: demo rig, rig files (save, open), the share link and print.

import { rigFromDraft } from "../state/draft.js";
import { download, fileNameFor, readRigFile } from "../state/rig-file.js";
import { copyText, linkFor } from "../state/share.js";
import { Cancelled } from "../engine/worker-client.js";

/**
 * Wire the toolbar's buttons. ``page`` gives: engine, getDraft(), getView(), form,
 * notice(text, actions), replaceRig(rig, view, what), loadDemo(announce), undo(), redo(),
 * lastCheck() the engine's check reply for exactly the rig on the sheet, or null.
 */
export function wireToolbar($, page) {
  const { engine, getDraft, getView, form, notice, replaceRig, loadDemo, undo, redo, lastCheck } = page;
  $("undo").addEventListener("click", undo);
  $("redo").addEventListener("click", redo);
  // Ctrl/Cmd+Z and Ctrl/Cmd+Shift+Z (or Ctrl+Y) outside text fields, whose own undo stays theirs.
  document.addEventListener("keydown", (event) => {
    if (!(event.ctrlKey || event.metaKey) || event.altKey) return;
    if (event.target.closest("input, textarea, select, [contenteditable]")) return;
    const key = event.key.toLowerCase();
    if (key === "z" && !event.shiftKey) undo();
    else if ((key === "z" && event.shiftKey) || key === "y") redo();
    else return;
    event.preventDefault();
  });
  $("load-demo").addEventListener("click", () => loadDemo(true));

  $("save-file").addEventListener("click", async () => {
    const draft = getDraft();
    if (!draft) return;
    const asTyped = rigFromDraft(draft);
    const name = fileNameFor(draft.title);
    let reply = null;
    try {
      reply = await engine.request("validate", { rig: asTyped });
    } catch (err) {
      if (err instanceof Cancelled) return;
    }
    if (reply && reply.ok) {
      download(name, `${JSON.stringify(reply.rig, null, 2)}\n`);
      notice(`Saved ${name} (all values in SI units).`);
    } else {
      download(name, `${JSON.stringify(asTyped, null, 2)}\n`);
      notice(reply
        ? `Saved ${name} as typed, with ${reply.problems ? reply.problems.length : "some"} problem(s) still marked; `
          + "Shakestill points them out again when you open it."
        : `Saved ${name} as typed; the engine has not checked it yet.`);
    }
  });

  $("open-file").addEventListener("change", async (event) => {
    const file = event.target.files[0];
    event.target.value = "";
    if (!file) return;
    const { rig, problem } = await readRigFile(file);
    if (problem) notice(`${problem} Your rig is unchanged.`);
    else replaceRig(rig, null, `Opened ${file.name}`);
  });

  $("copy-link").addEventListener("click", async () => {
    const draft = getDraft();
    if (!draft) return;
    let reply;
    try {
      // the result travels only when it was computed for exactly this rig
      reply = await engine.request("share_encode", { rig: rigFromDraft(draft), view: getView(),
        result: lastCheck() || undefined });
    } catch (err) {
      if (!(err instanceof Cancelled)) notice(`No link: ${err.message}`);
      return;
    }
    if (!reply.ok) {
      const why = reply.problems ? "fix the marked fields first." : reply.error;
      if (reply.problems) form.showProblems(reply.problems);
      notice(`No link yet: ${why}`);
      return;
    }
    const box = $("share-box");
    if (location.protocol === "file:") {
      // A file:// address opens only on this computer: never hand out a link that cannot work.
      const fragment = `#${String(reply.fragment).replace(/^#/, "")}`;
      box.value = fragment;
      const copied = await copyText(fragment, box);
      notice("This page was opened from a file on this computer, so a link to it would open only "
        + `here. ${copied ? "The rig's fragment is copied" : "The rig's fragment is in the box"}: `
        + "a colleague adds it to the end of the address of their own copy of Shakestill "
        + "(served, or their single file). Or send the rig file itself.",
      [{ label: "Save the rig file to send", run: () => $("save-file").click() }]);
      return;
    }
    const link = linkFor(reply.fragment);
    box.value = link;
    const copied = await copyText(link, box);
    notice(copied ? "Link copied. It holds the whole rig; nothing is sent to a server."
      : "The link is selected in the box beside the button: copy it from there.");
  });

  $("print-report").addEventListener("click", () => window.print());
  // Every printed copy says when it was printed and for which rig (the browser's own
  // print command too).
  window.addEventListener("beforeprint", () => {
    const draft = getDraft();
    const when = new Date().toLocaleString(undefined, { dateStyle: "medium", timeStyle: "short" });
    const left = markEarlierResults($("print-earlier").checked);
    $("print-stamp").textContent = `Printed ${when}. Rig: ${(draft && draft.title) || "(untitled)"}.`
      + (left ? ` ${left} result${left === 1 ? "" : "s"} of an earlier rig left out.` : "");
  });
  window.addEventListener("afterprint", () => {
    for (const el of document.querySelectorAll("[data-earlier]")) delete el.dataset.earlier;
  });
}

// The results a panel keeps after the rig changed (data-state "stale"): they are of an
// earlier rig. The map has its own "incomplete" words (print.css).
const EARLIER_RESULTS = "#check-report, #plan-result, #runup-result, #lean-chart, #loads-result, "
  + "#tolerance-result, #basin-map, #fit-result";

/** Mark each result of an earlier rig for print; returns how many are left out. */
function markEarlierResults(keep) {
  document.documentElement.classList.toggle("print-earlier", keep);
  const earlier = [...document.querySelectorAll(EARLIER_RESULTS)]
    .filter((el) => el.dataset.state === "stale");
  for (const el of earlier) {
    el.dataset.earlier = keep
      ? "From an earlier rig: worked out before the last change to the sheet, not for the sheet as printed."
      : "Left out: this was worked out for an earlier rig (work it out again, or tick \u201cPrint results of an earlier rig too\u201d).";
  }
  return keep ? 0 : earlier.length;
}
