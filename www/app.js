/* app.js: the page's one state object, the render functions that read it, the events that
 * change it, the conversation with the engine's worker, and the `window.nervure` scripting
 * hook. It computes nothing about the data: every number shown comes from the engine.
 *
 * Every path into the page (drop, file button, demo button, window.nervure) goes through
 * the same functions, so a script sees exactly what a person sees, errors included.
 */

/* HOOK(node statistics): the engine will offer median, spread and the share of rows above a
 * threshold besides the mean; add them here as [stat, words] and the colour card shows a
 * choice (the worker passes `stat` to Engine.node_values unchanged). */
const COLOUR_STATS = [["mean", "Mean"], ["median", "Median"], ["spread", "Spread"], ["shareAbove", "Share above"]];

function statWords(stat) {
  if (stat && stat.kind) stat = stat.kind;
  const hit = COLOUR_STATS.find((s) => s[0] === stat);
  return hit ? hit[1] : stat;
}

/** Wait after the last settings change before building again. */
const RERUN_DELAY_MS = 350;

/** How long a cancel by message may wait for the worker's answer before the worker is ended. */
const SOFT_CANCEL_MS = 3000;

const state = {
  phase: "empty",          // "empty" | "reading" | "building" | "ready" | "failed"
  table: null,             // {name, rows, columns: [ColumnSummary]}
  settings: null,          // the settings document, as the engine reads it
  summary: null,           // the last build's summary
  help: null,              // the engine's help for a graph of noise or dust (scale_help), or null
  leftOut: [],             // numeric columns the automatic settings left out: {column, reason, why}
  graph: null,             // typed arrays from the engine
  stale: false,            // the graph on screen does not match the settings (last build failed)
  colour: { column: null, stat: "mean", values: null, min: NaN, max: NaN },
  selected: null,          // the one selected node, or the group's ringed node (see inspector.js)
  selection: new Set(),    // every selected node
  primary: null,
  detail: null,
  contrast: null,          // the engine's ranking of columns for the selection
  categoryContrast: null,  // the same for text columns (by total variation distance)
  groupRows: null,         // Uint32Array: the selection's rows
  rowPage: 0,
  rowCells: null,
  members: null,           // node -> rows (CSR) of the current graph
  membersPromise: null,
  inspectSeq: 0,
  progress: null,          // {label, fraction}
  firstLook: null,         // the graph shown is a first look: {sampled, of, cancelled}
  wantFirstLook: false,    // the next build is a new table's first: try a first look
  message: null,           // the last error, as the engine worded it
  timing: { start: 0, tableRead: 0, firstDraw: 0, pendingFirstDraw: false },
  builds: 0,               // graphs built since the page opened
  lensMemory: {},          // parameters of lens kinds not in use, so switching back restores them
  lensMemory2: {},         // the same for the second filter
  clusteringMemory: {},
  files: null,             // the file list from the engine: {files, plan, alignment, differences} (files.js)
  builtSettings: null,     // the settings of the graph on screen (recovery.js puts them back)
  nodeLimit: NODE_LIMIT,   // graphs over this many nodes wait for the user's yes (recovery.js)
  opened: null,            // a graph opened from a graph file, with no table: {name, version, rowsKnown, builtFrom} (graph-file.js)
  // How the graph is shown, apart from the settings (it changes no graph): components
  // holding fewer rows than hideBelow are left out of the drawing (0: none). Carried by
  // the address's fragment (exports.js), not the settings document (DEVELOPERS.md).
  view: { hideBelow: 0 },
  hiding: null,            // what the last hiding left out: {components, rows, of} or null
};

/* ---------------------------------------------------------------- worker */

const engine = (function () {
  let worker = null;
  let nextId = 1;
  const waiting = new Map();

  function start() {
    const source = byId("nervure-worker-source").textContent;
    const url = URL.createObjectURL(new Blob([source], { type: "text/javascript" }));
    worker = new Worker(url);
    URL.revokeObjectURL(url);
    // The worker starts its clustering helpers from the same script.
    worker.postMessage({ type: "helper-source", source });
    worker.onmessage = function (event) {
      const msg = event.data;
      const w = waiting.get(msg.id);
      if (!w) return;
      if (msg.type === "progress") {
        if (msg.pool) w.onPool = true;
        if (w.onProgress) w.onProgress(msg.stage, msg.fraction, msg);
        return;
      }
      waiting.delete(msg.id);
      if (msg.type === "result") w.resolve(msg.value);
      else {
        if (msg.fatal) restart();
        const err = new Error(msg.message);
        err.cancelled = !!msg.cancelled;
        w.reject(err);
      }
    };
    worker.onerror = function (event) {
      event.preventDefault();
      const message = "The engine stopped unexpectedly" + (event.message ? " (" + event.message + ")" : "") + " and was restarted; the table is read again.";
      restart();
      for (const w of waiting.values()) w.reject(new Error(message));
      waiting.clear();
    };
  }

  function restart() {
    if (worker) worker.terminate();
    start();
    onEngineLost();
  }

  /** Ends the worker and whatever it is doing; its requests fail with `message`. */
  function cancel(message) {
    if (worker) worker.terminate();
    const pending = Array.from(waiting.values());
    waiting.clear();
    start();
    for (const w of pending) w.reject(new Error(message));
    onEngineLost();
  }

  /** Stops the build under way. While its cover elements are on the worker's pool of
   *  helpers, by a message: the worker drops that build's outstanding elements and keeps
   *  its table, caches and helpers, and the build's request fails with `cancelled` set.
   *  Otherwise (a synchronous engine call cannot see a message) by ending the worker, as
   *  cancel() does; also when a message gets no answer within SOFT_CANCEL_MS. Returns
   *  "message" or "ended". */
  function cancelBuild(message) {
    const onPool = Array.from(waiting.entries()).find(([, w]) => w.onPool);
    if (!onPool || !worker) { cancel(message); return "ended"; }
    const id = onPool[0];
    worker.postMessage({ type: "cancel", target: id });
    setTimeout(function () { if (waiting.has(id)) cancel(message); }, SOFT_CANCEL_MS);
    return "message";
  }

  function request(type, payload, onProgress) {
    if (!worker) start();
    const id = nextId++;
    return new Promise(function (resolve, reject) {
      waiting.set(id, { resolve, reject, onProgress });
      worker.postMessage(Object.assign({ id, type }, payload || {}));
    });
  }

  /** A step-wise job (worker.js): {done: Promise, cancel()}; a cancelled job rejects
   *  with an error whose `cancelled` is true. */
  function job(payload, onProgress) {
    const id = nextId;
    const done = request("job", payload, onProgress);
    return { done, cancel: function () { if (worker) worker.postMessage({ type: "cancel", target: id }); } };
  }

  /** Whether a request is waiting on the worker's pool of helpers (cancellable by message). */
  function onPool() {
    return Array.from(waiting.values()).some((w) => w.onPool);
  }

  return { request, start, cancel, cancelBuild, onPool, job };
})();

function onEngineLost() {
  // A fresh engine holds no table: recovery.js reads it again and keeps the graph shown;
  // step-wise jobs of the shape panel died with the old engine.
  recoverEngine();
  shapePanel.tableChanged();
}

/* ---------------------------------------------------------------- loading */

const STAGE_LABELS = {
  reading: "Reading the file",
  rows: "Keeping the rows asked for",
  points: "Preparing the points",
  lens: "Computing the lens",
  cover: "Covering the lens range",
  clusters: "Clustering each interval",
  graph: "Joining clusters that share rows",
  layout: "Laying out the graph",
};

/** Share of a build's bar each stage takes, in stage order (rough, for a steady bar). */
const STAGE_SHARES = [["rows", 0.02], ["points", 0.05], ["lens", 0.15], ["cover", 0.05], ["clusters", 0.6], ["graph", 0.1], ["layout", 0.05]];

function overallFraction(stage, fraction) {
  let before = 0;
  for (const [name, share] of STAGE_SHARES) {
    if (name === stage) return before + share * fraction;
    before += share;
  }
  return fraction;
}

function progressHandler(building) {
  return function (stage, fraction) {
    const label = STAGE_LABELS[stage] || stage;
    state.progress = building && stage !== "reading"
      ? { label: "Building: " + label.charAt(0).toLowerCase() + label.slice(1), fraction: overallFraction(stage, fraction) }
      : { label, fraction };
    renderProgress();
  };
}

let loadSeq = 0;

/** Reads a table (a File, or text with a name), then builds its first graph with the
 *  engine's automatic settings. Resolves with the table's description. */
async function loadTable(source, ask) {
  const tooBig = source ? sizeRefusal(source) : null;
  if (tooBig) { fail(tooBig); throw new Error(tooBig); }
  const seq = ++loadSeq;
  state.timing = { start: performance.now(), tableRead: 0, firstDraw: 0, pendingFirstDraw: true };
  state.phase = "reading";
  state.message = null;
  resetSelection();
  state.selected = null;
  state.progress = { label: "Reading the file", fraction: 0 };
  renderAll();
  let loaded;
  try {
    loaded = await (ask ? ask(progressHandler(false)) : engine.request("load", source, progressHandler(false)));
  } catch (e) {
    if (seq === loadSeq) fail(e.message);
    throw e;
  }
  if (seq !== loadSeq) throw new Error("another file was opened meanwhile");
  if (source) rememberSource(source);
  state.opened = null;
  recovery.graphSource = null;
  state.timing.tableRead = performance.now();
  state.table = loaded.table;
  state.settings = loaded.settings;
  state.leftOut = loaded.leftOut || [];
  state.files = loaded.files || null;
  state.restored = null;
  if (typeof restoreSettingsFor === "function") await restoreSettingsFor(loaded);
  state.summary = null;
  state.graph = null;
  state.lensMemory = {};
  state.lensMemory2 = {};
  state.clusteringMemory = {};
  state.colour = { column: defaultColourColumn(), stat: "mean", values: null, min: NaN, max: NaN };
  view.setGraph(null);
  rowsTableChanged();
  renderAll();
  shapePanel.tableChanged();
  // A large table is drawn first from a sample (the engine decides when: first_look.rs).
  state.firstLook = null;
  state.wantFirstLook = true;
  await buildNow();
  return state.table;
}

function loadFile(file) {
  return loadTable({ file, name: file.name });
}

function loadText(text, name) {
  return loadTable({ text: String(text), name: name || "table.csv" });
}

function fail(message) {
  state.message = message;
  state.progress = null;
  state.phase = state.table ? "ready" : "failed";
  if (state.graph) state.stale = true;
  renderAll();
}

/* ---------------------------------------------------------------- building */

let buildSeq = 0;
let rerunTimer = null;

function scheduleBuild() {
  clearTimeout(rerunTimer);
  rerunTimer = setTimeout(function () {
    rerunTimer = null;
    buildNow().catch(function () { /* shown on the page */ });
  }, RERUN_DELAY_MS);
}

let latestBuild = null;

/** Builds the graph for the current settings now. Resolves with its summary; a build
 *  overtaken by a newer one resolves as the newer one does. */
function buildNow(nodeLimit) {
  clearTimeout(rerunTimer);
  rerunTimer = null;
  if (!state.table) return Promise.reject(new Error("no table is loaded yet; open a CSV file first"));
  const refusal = openedGraphRefusal();
  if (refusal) { state.message = refusal; renderMessage(); return Promise.reject(new Error(refusal)); }
  const seq = ++buildSeq;
  latestBuild = build(seq, nodeLimit === undefined ? state.nodeLimit : nodeLimit);
  return latestBuild;
}

async function build(seq, nodeLimit) {
  const settings = JSON.parse(JSON.stringify(state.settings));
  state.phase = "building";
  state.message = null;
  state.progress = { label: "Building", fraction: 0 };
  renderProgress();
  renderMessage();
  renderChrome();
  let out;
  if (state.wantFirstLook) {
    state.wantFirstLook = false;
    await showFirstLook(seq, settings);
  }
  const asked = performance.now();
  try {
    out = await engine.request("run", { settings, nodeLimit, colour: state.colour.column ? colourRequest() : null }, progressHandler(true));
  } catch (e) {
    if (seq !== buildSeq) return latestBuild;
    if (e.cancelled) {
      // Cancelled on the pool: the engine kept the graph shown; so do its settings.
      if (state.builtSettings) state.settings = JSON.parse(JSON.stringify(state.builtSettings));
      state.phase = "ready";
      state.progress = null;
      if (state.firstLook) state.firstLook.cancelled = true;
      state.message = state.firstLook ? null : e.message;
      renderAll();
      throw e;
    }
    fail(e.message);
    throw e;
  }
  if (seq !== buildSeq) return latestBuild;  // a newer build was asked for meanwhile
  if (out.confirm) return handleBigGraph(out.confirm);
  state.builtSettings = settings;
  state.firstLook = null;
  state.phase = "ready";
  state.progress = null;
  state.builds++;
  state.summary = out.summary;
  state.help = out.help || null;
  state.graph = out.graph;
  state.stale = false;
  resetSelection();
  state.selected = null;
  applyColour(out.colour);
  renderAll();
  view.setGraph(out.graph, false);
  applyHiding();
  shapePanel.graphChanged();
  const shown = performance.now();
  if (typeof afterBuild === "function") await afterBuild(out);
  // Where the time of this build went (window.nervure.timings().lastBuild).
  state.lastBuild = Object.assign({}, out.times || {}, { requestMs: shown - asked, afterMs: performance.now() - shown });
  return out.summary;
}

/** The first look at a large table: the graph of a seeded sample, drawn while the full
 *  graph is built (the engine makes it, or answers null for a table that needs none). It
 *  stays until the full graph replaces it, and after a Cancel. Its failure is not the
 *  build's: the full graph follows anyway. */
async function showFirstLook(seq, settings) {
  let out;
  try {
    out = await engine.request("firstLook", { settings, colour: state.colour.column ? colourRequest() : null }, progressHandler(true));
  } catch (e) {
    return;
  }
  if (!out || seq !== buildSeq) return;
  state.firstLook = { sampled: out.summary.firstLook.sampled, of: out.summary.firstLook.of, cancelled: false };
  state.builtSettings = settings;
  state.summary = out.summary;
  state.help = null;
  state.graph = out.graph;
  state.stale = false;
  resetSelection();
  state.selected = null;
  applyColour(out.colour);
  state.progress = { label: "Building the full graph", fraction: 0 };
  renderAll();
  view.setGraph(out.graph, false);
  applyHiding();
}

function renderFirstLook() {
  const note = byId("first-look-note");
  const f = state.firstLook;
  note.hidden = !f;
  if (!f) return;
  note.textContent = "A first look at " + formatCount(f.sampled) + " of " + formatCount(f.of) + " rows (a seeded sample; the clustering's minimum points scaled to the sample's share, its radius unchanged). "
    + (f.cancelled ? "The full graph was cancelled: this is still the sample's graph. Change a setting (or press R) to build the full graph." : "The full graph follows.");
}

/** What follows every build: derived columns into the column list, settings kept
 *  (local storage, fragment), the run recorded, the scatter refreshed. */
async function afterBuild() {
  await syncDerivedColumns();
  recordRun();
  renderChrome();
  await refreshLensHistogram();
  // After the histogram's round trip: writing the address makes the browser lay the page
  // out at once. In the task that received a big graph (its panels just rebuilt) that cost
  // 20 to 40 ms; by now the histogram has had the page laid out.
  storeSettings();
  writeFragment();
  if (state.tab === "scatter") { renderScatterControls(); refreshScatter(); }
}

function applyColour(colour) {
  if (!colour) {
    state.colour.values = null;
    state.colour.min = state.colour.max = NaN;
    view.setFills(null);
    return;
  }
  let lo = Infinity, hi = -Infinity;
  for (const v of colour.values) if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
  state.colour.column = colour.column;
  state.colour.values = colour.values;
  state.colour.min = lo === Infinity ? NaN : lo;
  state.colour.max = hi === -Infinity ? NaN : hi;
  const scale = colourScale(state.colour.min, state.colour.max);
  state.colour.min = scale.lo;
  state.colour.max = scale.hi;
  const fills = new Array(colour.values.length);
  for (let i = 0; i < fills.length; i++) fills[i] = scale.fill(colour.values[i]);
  view.setFills(fills);
}

async function setColourColumn(column) {
  const known = column === LENS_COLOUR || numericColumns().indexOf(column) >= 0;
  if (!known) throw new Error("cannot colour by '" + column + "': it is not a numeric column of this table");
  state.colour.column = column;
  renderColourControls();
  if (!state.graph) return;
  try {
    const colour = await engine.request("colour", colourRequest());
    if (state.colour.column !== column) return;
    applyColour(colour);
    renderLegend();
    if (state.selection.size) renderDetail();
    if (typeof onColourChanged === "function") onColourChanged();
  } catch (e) {
    fail(e.message);
    throw e;
  }
}

/* ---------------------------------------------------------------- settings */

/** Columns the engine reads as numbers: number columns and time columns (seconds since
 *  1970 UTC): the lens, colour and scatter choices. */
function numericColumns() {
  return state.table ? state.table.columns.filter((c) => c.kind === "number" || c.kind === "time").map((c) => c.name) : [];
}

/** Number columns alone (not time): the defaults a first choice falls back on. */
function measureColumns() {
  return state.table ? state.table.columns.filter((c) => c.kind === "number").map((c) => c.name) : [];
}

/** The column list's summary of column `name`, or null. */
function columnSummary(name) {
  return state.table ? state.table.columns.find((c) => c.name === name) || null : null;
}

/** The `time` part of column `name`'s summary when it is a time column, else null. */
function timeOf(name) {
  const c = columnSummary(name);
  return c && c.kind === "time" ? c.time : null;
}

/** A value of column `name` as the page writes it: an instant for a time column, else a number. */
function formatValueOf(name, x, precision) {
  const t = timeOf(name);
  return t ? formatInstant(x, t, precision) : formatNumber(x);
}

function defaultColourColumn() {
  const numeric = numericColumns();
  if (state.settings && state.settings.lens && state.settings.lens.kind === "column" && numeric.indexOf(state.settings.lens.column) >= 0) return state.settings.lens.column;
  const used = state.settings ? state.settings.columns.filter((c) => numeric.indexOf(c) >= 0) : [];
  return used[0] || measureColumns()[0] || numeric[0] || null;
}

/** Replaces the settings after the engine has checked them; rebuilds after a pause. */
async function applySettings(candidate) {
  if (!state.table) throw new Error("no table is loaded yet; open a CSV file first");
  const refusal = openedGraphRefusal();
  if (refusal) { fail(refusal); throw new Error(refusal); }
  let checked;
  try {
    checked = await engine.request("check", { settings: candidate });
  } catch (e) {
    fail(e.message);
    throw e;
  }
  const fillChanged = JSON.stringify((checked.missing || {}).fillValues || []) !== JSON.stringify(((state.settings || {}).missing || {}).fillValues || []);
  state.settings = checked;
  state.message = null;
  renderSettings();
  renderMessage();
  if (fillChanged) await refreshColumnSummaries();
  scheduleBuild();
  return JSON.parse(JSON.stringify(checked));
}

/** Applies the settings `change(copy)` makes and builds at once. On error the settings of
 *  the graph on screen come back, and `showError(message)` shows the engine's message beside
 *  the control that made the change (with its caret line) instead of above the graph;
 *  `showError(null)` clears it after a success. Resolves with the summary. */
async function applyOrRestore(change, showError) {
  const before = JSON.parse(JSON.stringify(state.settings));
  const candidate = JSON.parse(JSON.stringify(state.settings));
  change(candidate);
  try {
    await applySettings(candidate);
    await buildNow();
  } catch (e) {
    state.settings = before;
    state.stale = false;
    state.message = null;
    renderAll();
    showError(e.message);
    throw e;
  }
  showError(null);
  return state.summary;
}

async function refreshColumnSummaries() {
  const fill = (state.settings.missing && state.settings.missing.fillValues) || [];
  const info = await engine.request("summaries", { fillValues: fill });
  state.table = info;
  renderColumns();
}

/** Reads the form into a copy of the settings (fields the form does not show are kept). */
function settingsFromForm() {
  const s = JSON.parse(JSON.stringify(state.settings));
  s.columns = chosenColumns(s.columns, Array.from(document.querySelectorAll("#columns-body input[type=checkbox]:checked")).map((c) => c.dataset.column));
  s.scaling = byId("s-scaling").value;
  s.missing = { fillValues: parseNumberList(byId("s-fill").value) };
  const dn = byId("s-denoise").value;
  if (!dn) delete s.denoise;
  else {
    const was = s.denoise || { k: 10, quantile: 0.95 };
    const k = byId("s-denoise-k").value === "" ? was.k : intValue("s-denoise-k");
    const q = byId("s-denoise-q").value === "" ? was.quantile : Number(byId("s-denoise-q").value);
    s.denoise = { measure: dn, k, quantile: q };
  }

  const kind = byId("s-lens").value;
  if (s.lens.kind !== kind) {
    state.lensMemory[s.lens.kind] = s.lens;
    s.lens = state.lensMemory[kind] || defaultLens(kind);
  } else if (kind === "principal") s.lens = { kind, component: intValue("s-component") };
  else if (kind === "column") s.lens = { kind, column: byId("s-lens-column").value };
  else if (kind === "density") s.lens = { kind, bandwidth: byId("s-bandwidth").value.trim() === "" ? null : Number(byId("s-bandwidth").value) };
  else if (kind === "eccentricity") s.lens = { kind, norm: byId("s-norm").value };
  else s.lens = hookLensFromForm(kind, s.lens);

  s.cover = { intervals: intValue("s-intervals"), overlap: Number(byId("s-overlap").value) };
  hookCoverFromForm(s);

  const ck = byId("s-clustering").value;
  if (s.clustering.kind !== ck) {
    state.clusteringMemory[s.clustering.kind] = s.clustering;
    s.clustering = state.clusteringMemory[ck] || (ck === "dbscan" ? { kind: ck, eps: 0.5, minPoints: 5 } : { kind: ck, gapBins: 10 });
  } else if (ck === "dbscan") s.clustering = { kind: ck, eps: Number(byId("s-eps").value), minPoints: intValue("s-minpoints") };
  else s.clustering = { kind: ck, gapBins: intValue("s-gapbins") };

  s.edges = { minShared: intValue("s-minshared") };
  return s;
}

function intValue(id) {
  const v = Number(byId(id).value);
  return Number.isFinite(v) ? Math.round(v) : 0;
}

function defaultLens(kind) {
  if (kind === "principal") return { kind, component: 1 };
  if (kind === "column") return { kind, column: measureColumns()[0] || numericColumns()[0] || "" };
  if (kind === "density") return { kind, bandwidth: null };
  if (hookDefaultLens(kind)) return hookDefaultLens(kind);
  return { kind: "eccentricity", norm: "rms" };
}

function onFormChange() {
  if (!state.settings) return;
  let next;
  try {
    next = settingsFromForm();
  } catch (e) {
    fail(e.message);
    return;
  }
  applySettings(next).catch(function () { /* shown on the page */ });
}

/* ---------------------------------------------------------------- rendering */

function renderAll() {
  renderData();
  renderFiles();
  renderNotices();
  renderColumns();
  renderSettings();
  renderSummary();
  renderColourControls();
  renderLegend();
  renderProgress();
  renderMessage();
  renderScaleHelp();
  renderFirstLook();
  renderDetail();
  renderDerived();
  renderRows();
  renderRestored();
  renderOpenedNote();
  renderChrome();
}

function renderData() {
  const line = byId("file-line");
  if (state.table) {
    line.hidden = false;
    line.textContent = "";
    line.append(el("strong", null, state.table.name), document.createTextNode(" · " + plural(state.table.rows, "row", "rows") + " · " + plural(state.table.columns.length, "column", "columns")));
  } else line.hidden = true;
  byId("drop-zone").classList.toggle("compact", !!state.table);
}

function renderColumns() {
  const wrap = byId("columns-wrap");
  const body = byId("columns-body");
  body.textContent = "";
  if (!state.table || state.opened) { wrap.hidden = true; return; }
  wrap.hidden = false;
  const used = new Set(state.settings ? state.settings.columns : []);
  for (const c of visibleColumns(state.table.columns)) {
    const tr = el("tr");
    const tdUse = el("td", "use");
    const box = el("input");
    box.type = "checkbox";
    box.dataset.column = c.name;
    box.checked = used.has(c.name);
    box.disabled = c.kind !== "number" && c.kind !== "time";
    box.setAttribute("aria-label", "Use column " + c.name);
    if (box.disabled) box.title = "Only numeric and time columns can be coordinates";
    tdUse.append(box);
    // Name on the first line, what it holds under it, and a mark or a note on a third.
    const tdName = el("td", "name");
    tdName.append(el("span", "column-name", c.name));
    const derived = derivedNames().has(c.name);
    const words = columnWords(c, derived);
    tdName.append(el("span", "kind", words.kind));
    // The automatic rule's reason for leaving a numeric column out (naming its mark when it
    // has one); else the column's mark, or why its dates stayed text.
    const out = (state.leftOut || []).find((l) => l.column === c.name);
    if (out && !box.checked) tdName.append(el("span", "left-out", "left out: " + out.why));
    else if (words.note) tdName.append(el("span", "column-note" + (words.noteClass ? " " + words.noteClass : ""), words.note));
    tdName.title = words.title;
    tr.dataset.kind = c.kind;
    if (c.mark) tr.dataset.mark = c.mark.kind;
    const tdMissing = el("td", "num" + (c.missing > 0 ? " has-missing" : ""), formatCount(c.missing));
    tr.append(tdUse, tdName, tdMissing);
    if (c.kind === "time") tr.append(timeRangeCell(c));
    else tr.append(el("td", "num", formatNumber(c.min)), el("td", "num", formatNumber(c.max)));
    tr.classList.toggle("unused", !box.checked);
    body.append(tr);
  }
}

/** What the column list says of column `c`: its kind line, an optional note (a mark, or
 *  why dates were not read as time) and the row's tooltip. */
function columnWords(c, derived) {
  let kind, title;
  if (c.kind === "time") {
    kind = "time · " + (!c.time.zoned ? "no zone" : typeof c.time.offset !== "number" ? "offsets differ, shown in UTC" : c.time.zone);
    title = c.name + " (time: " + (c.time.first || "—") + " to " + (c.time.last || "—") + ", " + c.time.zone + ")";
  } else if (c.kind === "number") {
    kind = derived ? "derived number" : "number";
    title = c.name + " (numbers)";
  } else {
    // A narrow no-break space inside the count: "4 043 values" never breaks after the 4.
    kind = "category" + (c.levels !== null && c.levels !== undefined ? " · " + plural(c.levels, "value", "values").replace(/\u2009/g, "\u202f") : "");
    title = c.name + " (text values)";
    if (c.textInNumbers) title += "; read as text because data row " + c.textInNumbers.row + " holds “" + c.textInNumbers.text + "”";
  }
  if (c.unit) kind += " · " + c.unit;
  let note = null, noteClass = null;
  if (c.notTime) {
    note = "not read as time: " + c.notTime;
    noteClass = "not-time";
    title += "; not read as time: " + c.notTime;
  } else if (c.mark && c.mark.kind === "identifier") {
    note = "identifier: " + c.mark.why;
    title += "; looks like an identifier (" + c.mark.why + "), so it is not chosen automatically";
  } else if (c.mark && c.mark.kind === "constant") {
    note = "constant: " + c.mark.value;
    title += "; one value throughout (" + c.mark.value + "), so it is not chosen automatically";
  }
  return { kind, title, note, noteClass };
}

/** The Min and Max cells of a time column as one: its first instant over its last. */
function timeRangeCell(c) {
  const td = el("td", "num time-range");
  td.colSpan = 2;
  if (c.min === null || c.min === undefined) { td.textContent = "—"; return td; }
  td.append(el("span", null, formatInstant(c.min, c.time)), el("span", null, formatInstant(c.max, c.time)));
  td.title = "first " + c.time.first + ", last " + c.time.last + " (" + c.time.zone + ")";
  return td;
}

function setOptions(select, options, value) {
  select.textContent = "";
  for (const [v, label] of options) {
    const o = el("option", null, label);
    o.value = v;
    select.append(o);
  }
  if (value !== undefined && value !== null) select.value = value;
}

function renderSettings() {
  const panel = byId("settings-panel");
  const s = state.settings;
  if (!s) { panel.hidden = true; return; }
  panel.hidden = false;
  const active = document.activeElement;
  const put = (id, value) => { const e = byId(id); if (e !== active) e.value = value === undefined || value === null ? "" : value; };

  put("s-scaling", s.scaling);
  put("s-fill", ((s.missing && s.missing.fillValues) || []).join(", "));
  put("s-denoise", s.denoise ? s.denoise.measure : "");
  byId("denoise-fields").hidden = !s.denoise;
  if (s.denoise) { put("s-denoise-k", s.denoise.k); put("s-denoise-q", s.denoise.quantile); }
  put("s-lens", s.lens.kind);
  if (s.lens.kind === "principal") put("s-component", s.lens.component);
  const numeric = numericColumns();
  setOptions(byId("s-lens-column"), numeric.map((n) => [n, n]), s.lens.kind === "column" ? s.lens.column : undefined);
  if (s.lens.kind === "density") put("s-bandwidth", s.lens.bandwidth === null || s.lens.bandwidth === undefined ? "" : s.lens.bandwidth);
  if (s.lens.kind === "eccentricity") put("s-norm", s.lens.norm || "rms");
  for (const e of document.querySelectorAll("[data-lens]")) e.hidden = e.dataset.lens !== s.lens.kind;
  hookRenderSettings(s, put);

  put("s-intervals", s.cover.intervals);
  put("s-overlap", s.cover.overlap);
  byId("s-overlap-out").textContent = Math.round(s.cover.overlap * 100) + " %";

  put("s-clustering", s.clustering.kind);
  if (s.clustering.kind === "dbscan") { put("s-eps", s.clustering.eps); put("s-minpoints", s.clustering.minPoints); }
  else put("s-gapbins", s.clustering.gapBins);
  for (const e of document.querySelectorAll("[data-clustering]")) e.hidden = e.dataset.clustering !== s.clustering.kind;
  put("s-minshared", (s.edges && s.edges.minShared) || 1);

  for (const box of document.querySelectorAll("#columns-body input[type=checkbox]")) {
    box.checked = s.columns.indexOf(box.dataset.column) >= 0;
    box.closest("tr").classList.toggle("unused", !box.checked);
  }
}

function renderSummary() {
  const line = byId("summary-line");
  const caution = byId("caution");
  const s = state.summary;
  line.textContent = "";
  if (!s) {
    line.textContent = state.table ? "\u00a0" : "Open a table to see its graph.";
    byId("summary-rows").hidden = true;
    caution.hidden = true;
    return;
  }
  const shape = [
    plural(s.nodes, "node", "nodes"),
    plural(s.edges, "edge", "edges"),
    plural(s.components, "component", "components") + singleNodesNote(s),
    plural(s.loops, "loop", "loops") + (s.filledLoops !== undefined && s.filledLoops !== s.loops ? " (" + s.filledLoops + " once triangles are filled)" : ""),
  ];
  shape.forEach(function (p, k) {
    if (k > 0) line.append(el("span", "sep", "·"));
    const fact = el("span", "fact", p);
    if (k === 3 && s.filledLoops !== s.loops) {
      fact.title = "Where three nodes share rows the graph has a triangle, and a loop round it is counted as a loop of the graph " +
        "but is not a loop of the nerve. Three cover elements meet when the overlap is above one half or at the corners of a grid of cells.";
    }
    line.append(fact);
  });
  const rows = [plural(s.rows, "row used", "rows used"), plural(s.rowsLeftOut, "row left out", "rows left out")];
  if (state.builtSettings && state.builtSettings.keepRows) rows.splice(1, 0, formatCount(s.rowsNotKept) + " not kept by the condition");
  if (s.noiseRows > 0) rows.push(plural(s.noiseRows, "row in no cluster", "rows in no cluster"));
  if (s.rowsSetAside > 0) rows.push(plural(s.rowsSetAside, "far row set aside", "far rows set aside"));
  const rowLine = byId("summary-rows");
  rowLine.textContent = rows.join(" · ");
  rowLine.hidden = false;
  const why = [];
  if (state.builtSettings && state.builtSettings.keepRows) {
    why.push("Rows not kept: the condition " + state.builtSettings.keepRows + " does not hold there" +
      (s.rowsNotKeptMissing > 0 ? " (for " + formatCount(s.rowsNotKeptMissing) + " of them, a value it reads is missing)" : "") + ".");
  }
  if (s.rowsLeftOut > 0 && s.leftOutByColumn && s.leftOutByColumn.length) {
    why.push("Rows left out for missing values: " + s.leftOutByColumn.map((p) => p[0] + " " + p[1]).join(", "));
  }
  for (const e of [line, rowLine]) if (why.length) e.title = why.join(" "); else e.removeAttribute("title");
  if (state.stale) line.append(el("span", "stale-note", "(graph not updated: see the message)"));
  caution.hidden = false;
}

/** ", 9 of them single nodes" after a count of components (the report says the same). */
function singleNodesNote(s) {
  const k = s.singleNodeComponents || 0;
  if (k === 0) return "";
  if (k === s.components) return s.components === 1 ? ", a single node" : ", all single nodes";
  return k === 1 ? ", 1 of them a single node" : ", " + formatCount(k) + " of them single nodes";
}

/** What hiding components under `below` rows leaves out of `graph`: a mask per node (null
 *  when nothing is hidden) and the counts. Every component under the threshold would
 *  leave nothing to draw: then nothing is hidden, and `all` says why. */
function hidingFor(graph, below) {
  const none = { mask: null, components: 0, rows: 0, all: false };
  if (!graph || !(below > 0) || !graph.componentRows) return none;
  const rows = graph.componentRows, small = new Uint8Array(rows.length);
  let components = 0, hiddenRows = 0;
  for (let c = 0; c < rows.length; c++) if (rows[c] < below) { small[c] = 1; components++; hiddenRows += rows[c]; }
  if (components === 0) return none;
  if (components === rows.length) return Object.assign(none, { all: true });
  const mask = new Uint8Array(graph.nodeComponent.length);
  for (let i = 0; i < mask.length; i++) mask[i] = small[graph.nodeComponent[i]];
  return { mask, components, rows: hiddenRows, all: false };
}

/** Hides the components under the threshold in force, drops hidden nodes from the
 *  selection, and says how many were hidden. */
function applyHiding() {
  const h = hidingFor(state.graph, state.view.hideBelow);
  state.hiding = state.graph ? { components: h.components, rows: h.rows, all: h.all, of: state.graph.componentRows ? state.graph.componentRows.length : 0 } : null;
  view.setHidden(h.mask);
  if (h.mask && state.selection.size) {
    const kept = Array.from(state.selection).filter((i) => !h.mask[i]);
    if (kept.length !== state.selection.size) setSelection(kept).catch(function () { /* shown on the page */ });
  }
  renderHiding();
}

function renderHiding() {
  const input = byId("hide-rows");
  if (document.activeElement !== input) input.value = state.view.hideBelow > 0 ? String(state.view.hideBelow) : "";
  const note = byId("hidden-note"), h = state.hiding;
  note.textContent = "";
  if (!h || !(state.view.hideBelow > 0)) return;
  if (h.all) note.textContent = "every component is smaller: all shown";
  else if (h.components === 0) note.textContent = "none hidden";
  else note.textContent = formatCount(h.components) + " of " + formatCount(h.of) + " components hidden (" + plural(h.rows, "row", "rows") + ")";
}

/** Sets the hiding threshold (rows; 0 or less shows every component). */
function setHideBelow(rows) {
  const n = Number(rows);
  if (!Number.isFinite(n) || n < 0) throw new Error("hide components smaller than " + rows + " rows: give a whole number of rows, 0 to show every component");
  state.view.hideBelow = Math.floor(n);
  if (state.graph) applyHiding(); else renderHiding();
  writeFragment();
}

function renderColourControls() {
  const block = byId("colour-block");
  if (!state.table) { block.hidden = true; return; }
  block.hidden = false;
  const numeric = numericColumns();
  setOptions(byId("colour-select"), numeric.map((n) => [n, n]), state.colour.column);
  hookColourControls();
}

function renderLegend() {
  const legend = byId("legend");
  const has = state.colour.values && state.graph;
  legend.hidden = !has;
  if (!has) return;
  byId("legend-title").textContent = colourTitle() + unitNote(state.colour.column) + colourZoneNote();
  byId("legend-min").textContent = colourValueText(state.colour.min, state.colour.max - state.colour.min);
  byId("legend-max").textContent = colourValueText(state.colour.max, state.colour.max - state.colour.min);
  byId("legend-bar").style.backgroundImage = legendGradient();
}

function renderProgress() {
  const box = byId("progress");
  const p = state.progress;
  box.hidden = !p;
  if (!p) return;
  byId("progress-label").textContent = p.label + " · " + Math.round(100 * Math.max(0, Math.min(1, p.fraction))) + " %";
  byId("cancel-button").hidden = !(state.phase === "building" || state.phase === "reading") || recovery.recovering;
  byId("progress-fill").style.width = (100 * Math.max(0, Math.min(1, p.fraction))).toFixed(1) + "%";
}

/** Above the canvas: the graph is mostly noise or dust, what the engine proposes, one button. */
function renderScaleHelp() {
  const box = byId("scale-help");
  const h = state.help;
  box.hidden = !h || !state.graph;
  if (box.hidden) return;
  byId("scale-help-what").textContent = h.what;
  byId("scale-help-how").textContent = h.how;
  byId("scale-help-apply").textContent = "Use eps " + formatNumber(h.eps) + (h.minPoints !== undefined ? ", minimum points " + h.minPoints : "");
}

function renderMessage() {
  const m = byId("message");
  m.hidden = !state.message;
  m.textContent = state.message || "";
}

function renderChrome() {
  const working = state.phase === "reading" || state.phase === "building";
  byId("empty-hint").hidden = !!state.graph;
  byId("empty-hint-title").textContent = working ? (state.phase === "reading" ? "Reading the file…" : "Building the first graph…") : "No graph yet.";
  byId("empty-hint-text").hidden = working;
  byId("view-help").hidden = !state.graph;
  byId("view-tools").hidden = !state.graph;
  byId("dock").hidden = !state.graph;
  renderExportChrome();
  byId("canvas-wrap").classList.toggle("stale", state.stale);
}

/* ---------------------------------------------------------------- the view */

const tooltip = byId("tooltip");

const view = new GraphView(byId("graph-canvas"), {
  onHover: function (i, x, y) {
    if (i === null || !state.graph) { tooltip.hidden = true; return; }
    tooltip.hidden = false;
    tooltip.style.left = "0px";   // measure at full width
    tooltip.textContent = "";
    tooltip.append(el("strong", null, "Node " + i), el("span", null, plural(state.graph.nodeSizes[i], "row", "rows")));
    if (state.colour.values) tooltip.append(el("span", null, colourShort() + ": " + colourValueText(state.colour.values[i])));
    const wrap = byId("canvas-wrap").getBoundingClientRect();
    const left = Math.min(x + 16, wrap.width - tooltip.offsetWidth - 8);
    const top = y + 16 + tooltip.offsetHeight > wrap.height ? y - tooltip.offsetHeight - 12 : y + 16;
    tooltip.style.left = Math.max(4, left) + "px";
    tooltip.style.top = Math.max(4, top) + "px";
  },
  onSelect: function (i, options) {
    selectNode(i, options).catch(function () { /* shown on the page */ });
  },
  onLasso: function (nodes, options) {
    lassoNodes(nodes, options).catch(function () { /* shown on the page */ });
  },
  onDraw: function (count, complete) {
    // A big graph is drawn in slices over a few frames: the first graph counts as drawn
    // with its last slice.
    // A first look counts apart: the first graph is the full one.
    if (state.timing.pendingFirstDraw && state.graph && complete && state.firstLook && !state.timing.firstLookDraw) {
      state.timing.firstLookDraw = performance.now();
    } else if (state.timing.pendingFirstDraw && state.graph && complete && !state.firstLook) {
      state.timing.pendingFirstDraw = false;
      state.timing.firstDraw = performance.now();
    }
  },
});

new ResizeObserver(function () { tooltip.hidden = true; view.resize(); }).observe(byId("canvas-wrap"));

/* ---------------------------------------------------------------- events */

function wire() {
  wireRecovery();
  const input = byId("file-input");
  input.addEventListener("change", function () {
    const files = Array.from(input.files || []);
    if (files.length > 1) loadFiles(files, false).catch(function () { /* shown on the page */ });
    else if (files[0]) openDataFile(files[0]).catch(function () { /* shown on the page */ });
    input.value = "";
  });

  const demo = document.getElementById("nervure-demo");
  const demoButton = byId("demo-button");
  demoButton.hidden = !demo;
  if (demo) byId("empty-hint-text").textContent = "Choose a CSV file, drop one on this page, or try the demo.";
  demoButton.addEventListener("click", function () {
    loadText(demo.textContent, demo.dataset.name || "demo.csv").catch(function () { /* shown on the page */ });
  });

  const zone = byId("drop-zone");
  let depth = 0;
  document.addEventListener("dragenter", function (ev) { ev.preventDefault(); depth++; zone.classList.add("over"); });
  document.addEventListener("dragleave", function () { depth = Math.max(0, depth - 1); if (depth === 0) zone.classList.remove("over"); });
  document.addEventListener("dragover", function (ev) { ev.preventDefault(); });
  document.addEventListener("drop", function (ev) {
    ev.preventDefault();
    depth = 0;
    zone.classList.remove("over");
    const files = Array.from((ev.dataTransfer && ev.dataTransfer.files) || []);
    if (files.length > 1) loadFiles(files, false).catch(function () { /* shown on the page */ });
    else if (files[0]) openDataFile(files[0]).catch(function () { /* shown on the page */ });
  });
  zone.addEventListener("keydown", function (ev) {
    if (ev.key === "Enter" || ev.key === " ") { ev.preventDefault(); input.click(); }
  });

  const form = byId("settings-form");
  form.addEventListener("submit", function (ev) { ev.preventDefault(); });
  form.addEventListener("change", onFormChange);
  byId("s-overlap").addEventListener("input", function () {
    byId("s-overlap-out").textContent = Math.round(Number(byId("s-overlap").value) * 100) + " %";
  });
  byId("columns-body").addEventListener("change", onFormChange);
  byId("scale-help-apply").addEventListener("click", function () {
    if (!state.help) return;
    const next = JSON.parse(JSON.stringify(state.help.settings));
    state.help = null;
    renderScaleHelp();
    applySettings(next).catch(function () { /* shown on the page */ });
  });

  byId("colour-select").addEventListener("change", function () {
    setColourColumn(byId("colour-select").value).catch(function () { /* shown on the page */ });
  });
  byId("hide-rows").addEventListener("change", function () {
    const text = byId("hide-rows").value.trim();
    try { setHideBelow(text === "" ? 0 : text); } catch (e) { fail(e.message); }
  });
  wireInspector();
  wireDerived();
  wireRows();
  wireExports();
  wireScatter();
  wireHistory();
  wireKeys();
  wireHooks();
  wireGraphFile();
}

/* ---------------------------------------------------------------- scripting hook */

window.nervure = Object.freeze({
  /** Reads CSV text as if it were a dropped file; resolves with {name, rows, columns}
   *  once the first graph is built. */
  loadCsv: function (text, name) { return loadText(text, name).then((t) => JSON.parse(JSON.stringify(t))); },
  /** Opens a graph file's text as Open graph… does; resolves with its summary. */
  openGraph: function (text, name) { return openGraphText(text, name); },
  /** The graph file shown ({name, version, rowsKnown, builtFrom}), or null when a table is open. */
  opened: function () { return state.opened ? JSON.parse(JSON.stringify(state.opened)) : null; },
  /** Reads a settings file's text as Open settings… does; resolves with the summary of the
   *  graph built with it, or rejects (the settings and graph shown then stay). */
  importSettings: function (text, name) { return importSettingsText(text, name || "settings.json"); },
  /** The settings document in force (a copy). */
  settings: function () { return state.settings ? JSON.parse(JSON.stringify(state.settings)) : null; },
  /** Checks and takes new settings (the graph is rebuilt after a pause, or by run()). */
  applySettings: function (obj) { return applySettings(obj); },
  /** Builds now; resolves with the summary. */
  run: function () { return buildNow().then((s) => JSON.parse(JSON.stringify(s))); },
  /** The last build's summary (a copy), or null. */
  summary: function () { return state.summary ? JSON.parse(JSON.stringify(state.summary)) : null; },
  /** The colouring shown: {column, stat, values: one per node (null for none)}, or null. */
  colour: function () {
    if (!state.colour.values) return null;
    return { column: state.colour.column, stat: state.colour.stat, values: Array.from(state.colour.values, (v) => (Number.isFinite(v) ? v : null)) };
  },
  /** Colours the nodes by the mean of a numeric column. */
  colourBy: function (column) { return setColourColumn(column); },
  /** Where each node is drawn: world positions and the view (screen = world * scale + offset,
   *  CSS pixels from the canvas's top left), the disc radii in CSS pixels, the drawing order
   *  (hidden nodes left out), the edges, each node's component, and the canvas's size. */
  layout: function () {
    if (!state.graph) return null;
    return {
      positions: Array.from(state.graph.positions),
      sizes: Array.from(state.graph.nodeSizes),
      radii: Array.from(view.radii),
      order: Array.from(view.order),
      edgeA: Array.from(state.graph.edgeA), edgeB: Array.from(state.graph.edgeB),
      component: Array.from(state.graph.nodeComponent),
      scale: view.view.scale, offsetX: view.view.x, offsetY: view.view.y,
      width: view.width, height: view.height,
    };
  },
  /** Hides components holding fewer than `rows` rows (0 shows all); returns what is hidden:
   *  {components, rows, of, all}. */
  hideSmallerThan: function (rows) { setHideBelow(rows); return Object.assign({}, state.hiding); },
  /** The selected node (with several, the last one picked), or null. */
  selected: function () { return state.selected; },
  /** Every selected node, increasing. */
  selection: function () { return Array.from(state.selection).sort((a, b) => a - b); },
  /** Selects nodes as a lasso would; resolves when the inspector is filled. */
  select: function (nodes) { return setSelection(nodes).then(() => Array.from(state.selection).sort((a, b) => a - b)); },
  /** The inspector's ranking of columns for the selection (a copy), or null. */
  contrast: function () { return state.contrast ? JSON.parse(JSON.stringify(state.contrast)) : null; },
  /** The inspector's text columns for the selection, by total variation distance (a copy), or null. */
  categoryContrast: function () { return state.categoryContrast ? JSON.parse(JSON.stringify(state.categoryContrast)) : null; },
  /** Rows of the selection (0-based table rows), or null. */
  selectionRows: function () { return state.groupRows ? Array.from(state.groupRows) : null; },
  /** Text of an export ("json", "graphml", "memberships", "report", "svg", "settings"). */
  exportText: function (format) { return exportText(format); },
  /** The runs of this session: [{id, summary, settings}] (copies). */
  history: function () { return historyList(); },
  /** The scatter's state: {shown, total, lit, xLabel, yLabel} or null. */
  scatter: function () { return scatterInfo(); },
  /** Where settings came from on the last load: "fragment", "stored", or null (automatic). */
  restored: function () { return state.restored; },
  /** Milliseconds from the start of the last load to the table read and the first graph drawn. */
  timings: function () {
    const t = state.timing;
    return {
      tableReadMs: t.tableRead ? t.tableRead - t.start : null, firstGraphMs: t.firstDraw ? t.firstDraw - t.start : null,
      // The first look's graph drawn (null when the table needed none).
      firstLookMs: t.firstLookDraw ? t.firstLookDraw - t.start : null,
      // The last build's parts: the worker's (prepareMs, poolMs, buildMs, graphAndColourMs),
      // the round trip with the page's first rendering (requestMs), what follows (afterMs),
      // the last drawing of the graph (drawMs: one frame) and the last layer drawn whole
      // (layerMs: its slices together; a big graph's layer is drawn over a few frames).
      lastBuild: state.lastBuild ? Object.assign({ drawMs: view.lastDrawMs, layerMs: view.lastLayerMs }, state.lastBuild) : null,
    };
  },
  /** What the page is doing: {phase, builds, pending} (pending: a rebuild is scheduled). */
  status: function () { return { phase: state.phase, builds: state.builds, pending: rerunTimer !== null, recovering: recovery.recovering }; },
  /** Sets the worker's pool of clustering helpers: {helpers (0: none), minPoints}. */
  pool: function (options) { return engine.request("pool", options || {}); },
  /** The message shown on the page, or null. */
  message: function () { return state.message; },
  /** The file list (reports, alignment plan and report, differences offered), or null. */
  files: function () { return state.files ? JSON.parse(JSON.stringify(state.files)) : null; },
  /** Milliseconds the last many-files load and the last alignment took (read, merge or align). */
  fileTimings: function () { return Object.assign({}, state.fileTimings || {}); },
  /** The column list's summaries (copies): {name, kind ("number", "category", "time"),
   *  missing, min, max, levels, time: {zone, offset, zoned, precision, first, last},
   *  mark: {kind, why | value}, textInNumbers, notTime, ...}. */
  columns: function () { return state.table ? JSON.parse(JSON.stringify(state.table.columns)) : []; },
  /** How the last table was read: the reader's notices (decoding, decimal commas...). */
  notices: function () { return state.table && state.table.notices ? state.table.notices.slice() : []; },
  /** Stops the build or read under way (the engine restarts; the graph shown stays). */
  cancel: function () { return cancelWork(); },
  /** The last lens histograms [first filter, second filter or null] (hooks.js). */
  lensHistograms: function () { return lensHistogramInfo(); },
  /** Hooks for the recovery tests (recovery.js). */
  test: recoveryTestHooks,
});

const shapePanel = createShapePanel({
  request: engine.request, job: engine.job, view, applySettings, buildNow,
  settings: () => state.settings, graph: () => state.graph, table: () => state.table, summary: () => state.summary,
});

wire();
engine.start();
renderAll();
// dist/nervure.html#demo opens with the demo loaded (also with settings: #demo&s=...).
if (fragmentParts().demo && document.getElementById("nervure-demo")) byId("demo-button").click();
