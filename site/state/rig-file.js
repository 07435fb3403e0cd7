// Rig files on disk: save (a download) and open (a file the user picks).

/** A file name from the rig's title: "Bench demo" -> "bench-demo.rig.json". */
export function fileNameFor(title) {
  const base = String(title || "").toLowerCase().normalize("NFKD")
    .replace(/[^a-z0-9]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 60);
  return `${base || "rig"}.rig.json`;
}

/** Offer text (or a Blob) as a download with the given file name. */
export function download(fileName, data, type = "application/json") {
  const url = URL.createObjectURL(data instanceof Blob ? data : new Blob([data], { type }));
  const a = document.createElement("a");
  a.href = url;
  a.download = fileName;
  a.hidden = true;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/**
 * Read a picked file as a rig object. Resolves {rig} or {problem} with words
 * for the user (not JSON, not a rig file); the core validates the rest.
 */
export async function readRigFile(file) {
  let text;
  try {
    text = await file.text();
  } catch (err) {
    return { problem: `${file.name} could not be read: ${err.message || err}` };
  }
  let data;
  try {
    data = JSON.parse(text);
  } catch (err) {
    return { problem: `${file.name} is not a rig file: it is not valid JSON (${err.message}).` };
  }
  if (!data || typeof data !== "object" || Array.isArray(data) || data.format !== "shakestill-rig") {
    return { problem: `${file.name} is not a rig file: it has no "format": "shakestill-rig".` };
  }
  return { rig: data };
}
