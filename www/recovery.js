/* recovery.js: keeps the page usable when the input or the engine goes wrong. It holds the
 * last table's source (File or text) so that a restarted engine can read it again; refuses
 * files too big for the tab before reading them; restarts the engine when the user cancels a
 * long build (a synchronous wasm call cannot be interrupted, so cancelling ends the worker),
 * after a crash or after running out of memory, and puts back the graph that was on screen;
 * asks before laying out a graph with too many nodes; shows the reader's notices and offers to
 * read text in a mostly numeric column as missing; and filters a long column list.
 *
 * It decides nothing about the data (the engine does) and draws nothing on the canvas. It
 * reads and changes app.js's `state`, and calls its functions (loadTable, buildNow, render*).
 */

/** Graphs with more nodes than this are not drawn before the user says so. */
const NODE_LIMIT = 50000;

/** Column rows shown at once in the column list; a filter box finds the others. */
const COLUMN_ROWS_SHOWN = 200;

/** Bytes of engine memory per byte of file, estimated: a value of about 5 text bytes becomes
 *  an 8-byte number, the chosen columns are copied once more as points, and the stages keep
 *  their results (measured order of magnitude, rounded up). */
const MEMORY_PER_FILE_BYTE = 2.5;

const recovery = {
  source: null,         // the last table read: {file | text, name, options}
  steps: [],            // changes of its file list since, as {type, payload} requests
  recovering: false,    // a restarted engine is reading the table again
  budgetOverride: null, // test hook: the memory budget in bytes
  columnFilter: "",
  askResolve: null,     // the pending "draw a graph this big?" question
};

/** The memory the engine may use: WebAssembly's 32-bit memory holds at most 4 GiB, and a
 *  tab is safe well below it; with navigator.deviceMemory (GiB, rounded down by the
 *  browser) known, at most half of it. */
function memoryBudget() {
  if (recovery.budgetOverride !== null) return recovery.budgetOverride;
  const gib = 1024 * 1024 * 1024;
  let budget = 2 * gib;
  if (typeof navigator !== "undefined" && navigator.deviceMemory) budget = Math.min(budget, navigator.deviceMemory * gib / 2);
  return budget;
}

function formatBytes(b) {
  if (b >= 1e9) return (b / 1e9).toFixed(1) + " GB";
  if (b >= 1e6) return (b / 1e6).toFixed(1) + " MB";
  if (b >= 1e3) return (b / 1e3).toFixed(1) + " kB";
  return b + " bytes";
}

/** A message refusing a file too big for the tab, or null. */
function sizeRefusal(source) {
  const size = source.file ? source.file.size : source.text ? source.text.length : 0;
  const need = size * MEMORY_PER_FILE_BYTE;
  const budget = memoryBudget();
  if (need <= budget) return null;
  return source.name + " is " + formatBytes(size) + "; reading it would need about " + formatBytes(need) +
    " of memory, more than this tab can safely hold (about " + formatBytes(budget) + "). Nothing was read. " +
    "Keep only the columns you need, or split the rows into smaller files, and open one of those.";
}

/** Called by loadTable once a table is read: its source can be read again after a restart. */
function rememberSource(source) {
  recovery.source = source;
  recovery.steps = [];
}

/** Called once a change of the file list (an addition, a removal, a sheet, an alignment)
 *  has been made: after a restart it is made again, in order, after the source is read. */
function rememberStep(type, payload) {
  if (recovery.source) recovery.steps.push({ type, payload });
}

/** Reads `source` into the engine and makes the `steps` again; resolves with the last
 *  table message. */
async function readWithSteps(source, steps, progress) {
  let loaded = await engine.request("load", source, progress);
  for (const step of steps) loaded = await engine.request(step.type, step.payload, progress);
  return loaded;
}

/* ---------------------------------------------------------------- engine restarts */

/** The worker was replaced (crash, out of memory, cancel). Reads the table again into the new
 *  one and rebuilds the graph that is on screen, so selection, colouring and details work
 *  again; the settings go back to those of that graph. */
function recoverEngine() {
  if (state.opened && recovery.graphSource) {
    Promise.resolve().then(reopenGraphInNewEngine);
    return;
  }
  if (!recovery.source || !state.table) {
    state.table = null;
    state.graph = null;
    state.summary = null;
    state.settings = null;
    state.phase = "failed";
    view.setGraph(null);
    renderAll();
    return;
  }
  // After the page has rejected the requests of the old worker.
  Promise.resolve().then(reloadIntoNewEngine);
}

async function reloadIntoNewEngine() {
  const keep = state.builtSettings || null;
  recovery.recovering = true;
  state.progress = { label: "Restarting the engine: reading the table again", fraction: 0 };
  renderProgress();
  try {
    const progress = function (stage, fraction) {
      state.progress = { label: "Restarting the engine: reading the table again", fraction };
      renderProgress();
    };
    const loaded = await readWithSteps(recovery.source, recovery.steps, progress);
    state.table = loaded.table;
    state.files = loaded.files || null;
    if (keep && state.graph) {
      state.progress = { label: "Restarting the engine: rebuilding the graph shown", fraction: 0 };
      renderProgress();
      await engine.request("run", { settings: keep, nodeLimit: 0, colour: null });
      state.settings = keep;
      state.stale = false;
    } else if (!state.settings) state.settings = loaded.settings;
    state.phase = "ready";
    if (!state.message) state.message = "The engine stopped and was restarted; the table was read again and the graph shown is kept.";
  } catch (e) {
    state.message = (state.message ? state.message + " " : "") + "The table could not be read again (" + e.message + "); open the file again.";
  } finally {
    recovery.recovering = false;
    state.progress = null;
    if (state.phase === "building" || state.phase === "reading") state.phase = state.table ? "ready" : "failed";
    renderAll();
  }
}

/** The cancel button: a build whose elements are on the worker's pool is stopped by a
 *  message (the worker, its table and its helpers stay); otherwise the worker (and the
 *  build or read in it) is ended and a fresh one started. */
function cancelWork() {
  if (state.phase !== "building" && state.phase !== "reading") return false;
  if (state.phase === "reading") {
    engine.cancel("Reading cancelled; the table and graph shown are the previous ones.");
    return true;
  }
  state.lastCancel = engine.cancelBuild("Build cancelled; the graph shown is the previous one, with its settings.");
  return true;
}

/* ---------------------------------------------------------------- big graphs */

/** A build stopped before layout because the graph is large: asks the user in the page (no
 *  browser dialog). Resolves true to draw it, false to keep the previous graph. */
function askBeforeDrawing(confirm) {
  const box = byId("big-graph");
  byId("big-graph-text").textContent = "These settings give a graph of " + confirm.confirmNodes.toLocaleString("en") +
    " nodes, more than " + confirm.limit.toLocaleString("en") + ": slow to lay out and hard to read. Fewer intervals, " +
    "a larger radius or fewer rows give a smaller graph.";
  box.hidden = false;
  return new Promise(function (resolve) {
    recovery.askResolve = function (yes) {
      recovery.askResolve = null;
      box.hidden = true;
      resolve(yes);
    };
  });
}

/** What build() does with a {confirm} answer: draws after a yes, or keeps the previous graph. */
async function handleBigGraph(confirm) {
  state.progress = null;
  renderProgress();
  const yes = await askBeforeDrawing(confirm);
  if (yes) return buildNow(0);
  if (state.builtSettings) state.settings = JSON.parse(JSON.stringify(state.builtSettings));
  state.phase = state.table ? "ready" : "failed";
  state.message = "Not drawn: the graph would have " + confirm.confirmNodes.toLocaleString("en") + " nodes. The settings are back to those of the graph shown.";
  renderAll();
  return state.summary;
}

/* ---------------------------------------------------------------- notices, text columns */

function renderNotices() {
  const box = byId("read-notices");
  box.textContent = "";
  const t = state.table;
  if (!t) { box.hidden = true; return; }
  const items = [];
  for (const n of t.notices || []) items.push(el("li", null, n));
  for (const w of (state.summary && state.summary.warnings) || []) items.push(el("li", "warning", w));
  // A wholly text column is a category and says so in the column list: no notice. Only a
  // mostly numeric column with some text cells (the engine's rule, `textInNumbers`) gets
  // the offer, with its share of numbers and its first text cell.
  const textual = t.columns.filter((c) => c.kind === "category" && c.textInNumbers);
  for (const c of textual.slice(0, 5)) {
    const li = el("li", "text-column");
    const m = c.textInNumbers;
    const pct = Math.floor(1000 * m.share) / 10;
    li.append(document.createTextNode("Column “" + c.name + "” was read as text: " + pct.toFixed(1) + " % numbers; data row " + m.row + " holds “" + m.text + "”. "));
    const b = el("button", "quiet small", "Read its text values as missing");
    b.type = "button";
    b.dataset.column = c.name;
    b.addEventListener("click", function () { readTextAsMissing(c.name).catch(function () { /* shown on the page */ }); });
    li.append(b);
    items.push(li);
  }
  box.hidden = items.length === 0;
  for (const li of items) box.append(li);
}

/** Reads the file again with `column`'s text cells as missing values. */
function readTextAsMissing(column) {
  if (!recovery.source) return Promise.reject(new Error("no table is loaded yet; open a CSV file first"));
  const options = Object.assign({ textAsMissing: [] }, recovery.source.options || {});
  if (options.textAsMissing.indexOf(column) < 0) options.textAsMissing = options.textAsMissing.concat([column]);
  const source = Object.assign({}, recovery.source, { options });
  const steps = recovery.steps.slice();
  if (!steps.length) return loadTable(source);
  // Files added or changed since: made again on the re-read table, and kept as its steps.
  return loadTable(null, function (progress) {
    return readWithSteps(source, steps, progress).then(function (out) { recovery.source = source; recovery.steps = steps; return out; });
  });
}

/* ---------------------------------------------------------------- long column lists */

/** The columns the list shows: those matching the filter, at most COLUMN_ROWS_SHOWN. */
function visibleColumns(columns) {
  const filterBox = byId("column-filter-wrap");
  const many = columns.length > COLUMN_ROWS_SHOWN;
  filterBox.hidden = !many;
  const f = recovery.columnFilter.trim().toLowerCase();
  const matching = f ? columns.filter((c) => c.name.toLowerCase().indexOf(f) >= 0) : columns;
  const shown = matching.slice(0, COLUMN_ROWS_SHOWN);
  byId("column-filter-count").textContent = many
    ? "showing " + shown.length.toLocaleString("en") + " of " + matching.length.toLocaleString("en") + (f ? " matching" : "") + " columns (" + columns.length.toLocaleString("en") + " in all)"
    : "";
  return shown;
}

/** The chosen columns after a change in the list: the ticked rows shown, plus the chosen
 *  columns the filter hides, in file order. */
function chosenColumns(previous, tickedShown) {
  const shown = new Set(Array.from(document.querySelectorAll("#columns-body input[type=checkbox]")).map((b) => b.dataset.column));
  const keep = new Set(previous.filter((c) => !shown.has(c)).concat(tickedShown));
  const order = state.table ? state.table.columns.map((c) => c.name) : [];
  const inTable = order.filter((c) => keep.has(c));
  // Names the table does not have (derived columns) keep their place at the end.
  return inTable.concat(Array.from(keep).filter((c) => order.indexOf(c) < 0));
}

function wireRecovery() {
  byId("cancel-button").addEventListener("click", cancelWork);
  byId("big-graph-draw").addEventListener("click", function () { if (recovery.askResolve) recovery.askResolve(true); });
  byId("big-graph-keep").addEventListener("click", function () { if (recovery.askResolve) recovery.askResolve(false); });
  const filter = byId("column-filter");
  filter.addEventListener("input", function () { recovery.columnFilter = filter.value; renderColumns(); renderSettings(); });
}

/** Hooks for the browser tests of this file (not for users: they bypass no check). */
const recoveryTestHooks = Object.freeze({
  setMemoryBudget: function (bytes) { recovery.budgetOverride = bytes === null ? null : Number(bytes); },
  exhaustMemory: function () { return engine.request("testExhaustMemory", {}).then(() => "survived", (e) => e.message); },
  crashWorker: function () { return engine.request("testCrash", {}); },
  busy: function (ms) { return engine.request("testBusy", { ms }).catch((e) => e.message); },
  recovering: function () { return recovery.recovering; },
  nodeLimit: function (n) { state.nodeLimit = n; },
  /** Whether the build under way has its elements on the pool, and how the last cancel
   *  was done ("message": the worker kept; "ended": the worker restarted). */
  onPool: function () { return engine.onPool(); },
  lastCancel: function () { return state.lastCancel || null; },
  /** The graph view's drawings so far: {count, lastMs, totalMs} (the benchmark's frame times);
   *  layerMs: the last finished layer, its slices together; drawing: a layer is being drawn. */
  drawStats: function () { return { count: view.drawCount, previews: view.previewCount, zooming: view.zooming, lastMs: view.lastDrawMs, totalMs: view.drawTotalMs, layerMs: view.lastLayerMs, drawing: view.layerPending }; },
  /** Milliseconds a slice of the graph's layer aims at (small: many slices, for the tests). */
  sliceMs: function (ms) { GraphView.SLICE_MS = Number(ms); },
  /** Whether the graph's finished layer is, pixel for pixel, the drawing made in one go
   *  (null while it is being drawn). */
  layerMatches: function () { return view.layerMatchesOneGo(); },
  /** Resolves, once the thumbnail of run `id` is drawn, with whether it is pixel for pixel
   *  the drawing made in one go. */
  thumbnailMatches: function (id) { return thumbnailMatchesOneGo(id); },
});
