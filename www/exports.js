/* exports.js: handing a result on and getting it back. Downloads (settings, graph JSON,
 * GraphML, memberships CSV, PNG and SVG pictures with their legend, the text report) as
 * Blob URLs clicked through an <a download>, which is a navigation to a local object, not
 * a request; settings read back from a file; settings kept in local storage and in the
 * page address's fragment.
 *
 * What is kept where:
 * - local storage ("nervure.lastSettings"): the settings of the last graph built, with the
 *   file name and the file's column names. They are used again only when a file of the
 *   same name with the same columns is opened; any other file starts from the engine's
 *   automatic settings. Never any data.
 * - the fragment: `#s=` + the settings JSON, URI-encoded (with `#demo&s=...` when the page
 *   was opened on the demo), then `&v=` + the view state JSON when it is not the default
 *   (`{"hideBelow": rows}`: components under that many rows hidden; see DEVELOPERS.md for
 *   why this is not in the settings). Never data; a fragment is not sent anywhere. The
 *   settings win over local storage when both apply, and are used on the first file
 *   opened after the address was given, not on later files.
 *
 * The graph formats are written by the engine (src/export.rs); the SVG is written here,
 * every text escaped.
 */

const STORE_KEY = "nervure.lastSettings";

/* ---------------------------------------------------------------- downloads */

function download(name, blob) {
  const a = el("a");
  a.href = URL.createObjectURL(blob);
  a.download = name;
  a.hidden = true;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(function () { URL.revokeObjectURL(a.href); }, 4000);
}

function baseName() {
  return state.table ? state.table.name.replace(/\.[^.]*$/, "") : "nervure";
}

const EXPORTS = {
  settings: { suffix: ".settings.json", type: "application/json" },
  json: { suffix: ".graph.json", type: "application/json" },
  graphml: { suffix: ".graphml", type: "application/xml" },
  memberships: { suffix: ".memberships.csv", type: "text/csv" },
  report: { suffix: ".report.txt", type: "text/plain" },
  svg: { suffix: ".graph.svg", type: "image/svg+xml" },
};

/** The text of an export. */
async function exportText(format) {
  if (format === "settings") {
    if (!state.settings) throw new Error("no settings yet: open a CSV file first");
    return JSON.stringify(state.settings, null, 2) + "\n";
  }
  if (!state.graph) throw new Error("no graph has been built yet");
  if (format === "svg") return graphSvg();
  if (!EXPORTS[format]) throw new Error("unknown export '" + format + "'");
  const byColumn = state.colour.values && state.colour.column !== LENS_COLOUR;
  return engine.request("export", { format, colour: byColumn ? state.colour.column : "", stat: state.colour.stat, fileName: state.table.name });
}

async function exportFile(format) {
  byId("export-menu").open = false;
  try {
    if (format === "png") {
      const blob = await graphPng();
      download(baseName() + ".graph.png", blob);
      return;
    }
    const text = await exportText(format);
    download(baseName() + EXPORTS[format].suffix, new Blob([text], { type: EXPORTS[format].type + ";charset=utf-8" }));
  } catch (e) {
    fail(e.message);
  }
}

function renderExportChrome() {
  for (const b of document.querySelectorAll("[data-export]")) {
    b.disabled = b.dataset.export === "settings" ? !state.settings : !state.graph;
  }
}

/* ---------------------------------------------------------------- pictures */

function xmlEscape(text) {
  return String(text).replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&apos;" })[c])
    // Characters XML 1.0 forbids (controls other than tab, newline, carriage return).
    .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, "\ufffd");
}

const n2 = (v) => (Math.round(v * 100) / 100).toString();

/** The graph as drawn now (same view, colours, sizes and hidden components) as SVG text:
 *  the legend in a band above the graph and the summary in a line under it, never over
 *  a disc; when components are hidden, the line under it says how many. */
function graphSvg() {
  const g = state.graph;
  const w = Math.round(view.width), gh = Math.round(view.height);
  const top = state.colour.values ? 64 : 0, foot = 30, h = top + gh + foot;
  const s = view.view.scale, ox = view.view.x, oy = view.view.y + top, p = g.positions;
  const out = [];
  out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push('<svg xmlns="http://www.w3.org/2000/svg" width="' + w + '" height="' + h + '" viewBox="0 0 ' + w + " " + h + '" font-family="system-ui, sans-serif">');
  out.push("<title>" + xmlEscape("Nervure graph of " + state.table.name) + "</title>");
  out.push('<rect width="100%" height="100%" fill="#fffdf8"/>');
  let maxShared = 1;
  for (const v of g.edgeShared) maxShared = Math.max(maxShared, v);
  // The graph, clipped to its own band as on the page.
  out.push('<defs><clipPath id="graph-band"><rect x="0" y="' + top + '" width="' + w + '" height="' + gh + '"/></clipPath></defs>');
  out.push('<g clip-path="url(#graph-band)">');
  out.push('<g stroke="rgb(62,74,86)" stroke-opacity="0.42" stroke-linecap="round">');
  for (let e = 0; e < g.edgeA.length; e++) {
    const a = g.edgeA[e], b = g.edgeB[e];
    if (!view.shown(a) || !view.shown(b)) continue;
    out.push('<line x1="' + n2(p[2 * a] * s + ox) + '" y1="' + n2(p[2 * a + 1] * s + oy) + '" x2="' + n2(p[2 * b] * s + ox) + '" y2="' + n2(p[2 * b + 1] * s + oy) + '" stroke-width="' + n2(1 + 5 * Math.sqrt(g.edgeShared[e] / maxShared)) + '"/>');
  }
  out.push("</g>");
  out.push('<g stroke="#ffffff" stroke-width="1.25">');
  for (const i of view.order) {
    const fill = view.fills ? view.fills[i] : "rgb(120, 134, 150)";
    out.push('<circle cx="' + n2(p[2 * i] * s + ox) + '" cy="' + n2(p[2 * i + 1] * s + oy) + '" r="' + n2(view.radii[i]) + '" fill="' + fill.replace(/ /g, "") + '"><title>' + xmlEscape("Node " + i + ": " + g.nodeSizes[i] + " rows") + "</title></circle>");
  }
  out.push("</g></g>");
  if (state.colour.values) {
    const title = colourTitle() + colourZoneNote();
    const lw = Math.min(w - 24, Math.max(240, Math.min(420, 14 + 7.4 * title.length)));
    const x = 12, y = 8;
    out.push('<defs><linearGradient id="legend-map" x1="0" x2="1" y1="0" y2="0">');
    for (let k = 0; k <= 16; k++) out.push('<stop offset="' + (k / 16).toFixed(4) + '" stop-color="' + legendColourAt(k / 16).replace(/ /g, "") + '"/>');
    out.push("</linearGradient></defs>");
    out.push('<g class="legend"><rect x="' + n2(x) + '" y="' + y + '" width="' + n2(lw) + '" height="50" rx="8" fill="#fffdf8" stroke="#dcd7cd"/>');
    out.push('<text x="' + n2(x + 12) + '" y="' + (y + 19) + '" font-size="13" fill="#56616b">' + xmlEscape(title) + "</text>");
    const span = state.colour.max - state.colour.min;
    const minText = colourValueText(state.colour.min, span), maxText = colourValueText(state.colour.max, span);
    out.push('<text x="' + n2(x + 12) + '" y="' + (y + 41) + '" font-size="13" font-weight="600" fill="#1c242c">' + xmlEscape(minText) + "</text>");
    const bx = x + 20 + 8 * minText.length, bw = lw - 40 - 8 * (minText.length + maxText.length);
    out.push('<rect x="' + n2(bx) + '" y="' + (y + 29) + '" width="' + n2(Math.max(40, bw)) + '" height="14" rx="4" fill="url(#legend-map)" stroke="rgba(0,0,0,0.15)"/>');
    out.push('<text x="' + n2(x + lw - 12) + '" y="' + (y + 41) + '" font-size="13" font-weight="600" fill="#1c242c" text-anchor="end">' + xmlEscape(maxText) + "</text></g>");
  }
  out.push('<text x="12" y="' + (h - 11) + '" font-size="13" fill="#56616b">' + xmlEscape(pictureCaption()) + "</text>");
  out.push("</svg>");
  return out.join("\n") + "\n";
}

/** The line under an exported picture: the file, the counts, and what was hidden. */
function pictureCaption() {
  const sm = state.summary, h = state.hiding;
  const rows = state.builtSettings && state.builtSettings.keepRows ? "rows where " + state.builtSettings.keepRows : null;
  const parts = [state.table.name].concat(rows ? [rows] : [], [plural(sm.nodes, "node", "nodes"), plural(sm.edges, "edge", "edges"),
    plural(sm.components, "component", "components") + singleNodesNote(sm), plural(sm.loops, "loop", "loops")]);
  if (h && h.components > 0) {
    parts.push(plural(h.components, "component", "components") + " smaller than " + plural(state.view.hideBelow, "row", "rows") + " hidden (" + plural(h.rows, "row", "rows") + ")");
  }
  return parts.join(" · ");
}

/** The SVG picture drawn at twice the size into a canvas, as a PNG blob. The SVG goes in
 *  as a data: image, which the page's policy allows (img-src data:). */
function graphPng() {
  const svg = graphSvg();
  return new Promise(function (resolve, reject) {
    const img = new Image();
    img.onload = function () {
      const c = document.createElement("canvas");
      c.width = img.naturalWidth * 2;
      c.height = img.naturalHeight * 2;
      const ctx = c.getContext("2d");
      ctx.drawImage(img, 0, 0, c.width, c.height);
      c.toBlob(function (blob) { if (blob) resolve(blob); else reject(new Error("the picture could not be made")); }, "image/png");
    };
    img.onerror = function () { reject(new Error("the picture could not be made")); };
    img.src = "data:image/svg+xml;charset=utf-8," + encodeURIComponent(svg);
  });
}

/* ---------------------------------------------------------------- settings back in */

/** Reads a settings file and builds its graph. The file's settings take over only once
 *  their graph is built: a document the engine refuses (not JSON, nested deeper than any
 *  settings document, a field out of range) or whose graph cannot be built on this table
 *  (a column it lacks, a column listed twice) leaves the settings, the form, the export
 *  and the graph shown as they were, and the message says why. The text is read by the
 *  engine, never parsed here. */
async function importSettingsText(text, fileName) {
  const refuse = function (why) {
    const message = "The settings in " + fileName + " were not used: " + why + (/[.!?]$/.test(why) ? "" : ".") +
      (state.graph ? " The settings and the graph shown are unchanged." : "");
    state.message = message;
    renderMessage();
    throw new Error(message);
  };
  if (state.opened) refuse(openedGraphRefusal());
  if (!state.table) refuse("open the data file first, then its settings");
  let checked;
  try {
    checked = await engine.request("readSettings", { text: String(text), name: fileName });
  } catch (e) {
    refuse(e.message);
  }
  const before = { settings: state.settings, stale: state.stale, built: state.builtSettings };
  const fillChanged = JSON.stringify((checked.missing || {}).fillValues || []) !== JSON.stringify(((state.settings || {}).missing || {}).fillValues || []);
  state.settings = checked;
  let summary;
  try {
    summary = await buildNow();
  } catch (e) {
    if (e.cancelled) throw e;
    state.settings = before.settings;
    state.stale = before.stale;
    state.phase = "ready";
    state.progress = null;
    renderSettings();
    renderSummary();
    renderProgress();
    renderChrome();
    // The engine went ahead to the refused settings' derived columns: take those of the
    // graph shown again (cached stages: nothing is recomputed).
    if (before.built) await engine.request("run", { settings: before.built, nodeLimit: 0, colour: null }).catch(function () { /* the graph shown stays */ });
    refuse(e.message);
  }
  if (fillChanged) await refreshColumnSummaries();
  renderSettings();
  return summary;
}

/* ---------------------------------------------------------------- local storage and fragment */

function fileColumnNames(table) {
  const derived = derivedNames();
  return table.columns.map((c) => c.name).filter((n) => !derived.has(n));
}

function storeSettings() {
  if (!state.settings || !state.table) return;
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify({ fileName: state.table.name, columns: fileColumnNames(state.table), settings: state.settings }));
  } catch (e) { /* storage full or refused: nothing to keep */ }
}

function storedSettingsFor(table) {
  let saved;
  try { saved = JSON.parse(localStorage.getItem(STORE_KEY) || "null"); } catch (e) { return null; }
  if (!saved || saved.fileName !== table.name) return null;
  const names = table.columns.map((c) => c.name);
  if (JSON.stringify(saved.columns) !== JSON.stringify(names)) return null;
  return saved.settings;
}

/** {demo, settings, view, error} read from the address's fragment. */
function fragmentParts() {
  const out = { demo: false, settings: null, view: null, error: null };
  const hash = location.hash.replace(/^#/, "");
  for (const part of hash.split("&")) {
    if (part === "demo") out.demo = true;
    else if (part.startsWith("s=")) {
      try { out.settings = JSON.parse(decodeURIComponent(part.slice(2))); }
      catch (e) { out.error = "the settings in the page address (after #s=) are not readable JSON: " + e.message; }
    } else if (part.startsWith("v=")) {
      try { out.view = viewStateFrom(JSON.parse(decodeURIComponent(part.slice(2)))); }
      catch (e) { out.error = "the view in the page address (after &v=) was not used: " + e.message; }
    }
  }
  return out;
}

/** The view state in a fragment, checked: {hideBelow: whole number of rows ≥ 0}. */
function viewStateFrom(obj) {
  if (!obj || typeof obj !== "object" || Array.isArray(obj)) throw new Error("it is not a JSON object");
  for (const key of Object.keys(obj)) if (key !== "hideBelow") throw new Error("unknown field '" + key + "' (known: hideBelow)");
  const h = obj.hideBelow === undefined ? 0 : obj.hideBelow;
  if (!Number.isInteger(h) || h < 0) throw new Error("hideBelow must be a whole number of rows, 0 or more");
  return { hideBelow: h };
}

function writeFragment() {
  if (!state.settings) return;
  const f = fragmentParts();
  const view = state.view.hideBelow > 0 ? "&v=" + encodeURIComponent(JSON.stringify({ hideBelow: state.view.hideBelow })) : "";
  const hash = "#" + (f.demo ? "demo&" : "") + "s=" + encodeURIComponent(JSON.stringify(state.settings)) + view;
  if (location.hash === hash) return;
  state.writingFragment = hash;
  try { history.replaceState(null, "", hash); } catch (e) { /* some browsers refuse on file://: the address stays */ }
}

/** On each load: the fragment's settings, else the stored ones for this file, else the
 *  engine's automatic ones (already in state.settings). */
async function restoreSettingsFor(loaded) {
  state.derivedKey = "[]";
  state.derivedInfo = [];
  const f = fragmentParts();
  const tries = [];
  // The fragment counts only when it came with the address (or was typed in), not when
  // this page wrote it for the previous file.
  const given = location.hash !== state.writingFragment;
  if (f.settings && given) tries.push(["fragment", f.settings]);
  if (f.view && given) state.view = f.view;
  const stored = storedSettingsFor(loaded.table);
  if (stored) tries.push(["stored", stored]);
  const notes = [];
  if (f.error) notes.push(f.error);
  for (const [source, candidate] of tries) {
    try {
      state.settings = await engine.request("check", { settings: candidate });
      state.restored = source;
      state.autoSettings = loaded.settings;
      break;
    } catch (e) {
      notes.push((source === "fragment" ? "The settings in the page address were not used: " : "Your saved settings for this file were not used: ") + e.message);
    }
  }
  state.restoreProblem = notes.length ? notes.join(" ") : null;
  renderRestored();
}

function renderRestored() {
  const note = byId("restored-note");
  note.hidden = !state.restored && !state.restoreProblem;
  note.classList.toggle("problem", !!state.restoreProblem);
  byId("restored-undo").hidden = !state.restored;
  if (note.hidden) return;
  const text = state.restored === "fragment"
    ? "Settings taken from the page address."
    : state.restored === "stored" ? "Settings restored from your last session with " + state.table.name + "." : "";
  byId("restored-text").textContent = [state.restoreProblem, text].filter(Boolean).join(" ");
}

function wireExports() {
  for (const b of document.querySelectorAll("[data-export]")) {
    b.addEventListener("click", function () { exportFile(b.dataset.export); });
  }
  const input = byId("import-settings");
  input.addEventListener("change", function () {
    const file = input.files && input.files[0];
    input.value = "";
    if (!file) return;
    file.text().then(function (text) { return importSettingsText(text, file.name); }).catch(function () { /* shown on the page */ });
  });
  byId("restored-undo").addEventListener("click", function () {
    const auto = state.autoSettings;
    state.restored = null;
    state.restoreProblem = null;
    renderRestored();
    if (auto) applySettings(auto).then(buildNow).catch(function () { /* shown */ });
  });
  document.addEventListener("click", function (ev) {
    const menu = byId("export-menu");
    if (menu.open && !menu.contains(ev.target)) menu.open = false;
  });
  window.addEventListener("hashchange", function () {
    if (location.hash === state.writingFragment) return;
    const f = fragmentParts();
    if (f.view) { state.view = f.view; if (state.graph) applyHiding(); }
    if (f.settings && state.table) applySettings(f.settings).then(buildNow).catch(function () { /* shown */ });
  });
}
