/* graph-file.js: a graph computed elsewhere (the command-line runner, the Python package,
 * or this page's Export → Graph) opened from its graph file (docs/graph-file.md), with no
 * table: drawn with the file's own layout, coloured by any column from the per-node
 * statistics the file carries, inspected (statistics, not rows: the member rows are not
 * in the tab) and exported. The engine reads and checks the file (src/graphfile.rs); a
 * file it refuses changes nothing on the page.
 *
 * Also here: telling a JSON file (a graph or settings) from a table when one is chosen
 * or dropped as data, and the guard that keeps an opened graph from being rebuilt
 * without its table. Nothing in this file may be a top-level const: app.js calls these
 * functions while the page's scripts are still being run in order.
 */

/** Whether a file's first bytes are JSON (an object or a list) rather than a table. */
async function looksLikeJson(file) {
  const head = await file.slice(0, 256).text();
  return /^\s*[[{]/.test(head.replace(/^\uFEFF/, ""));
}

/** A single file given as data: a graph file is opened as a graph; a settings file is
 *  sent to Open settings… (refused with what to do if no table is open); anything else
 *  is read as a table. */
async function openDataFile(file) {
  if (!(await looksLikeJson(file))) return loadFile(file);
  const text = await file.text();
  if (/"format"\s*:\s*"nervure-graph"/.test(text.slice(0, 4096)) || !/"columns"/.test(text.slice(0, 4096))) {
    return openGraphText(text, file.name);
  }
  if (!state.table || state.opened) {
    const message = file.name + " is a settings document, not a table: open the table first (CSV, ICARTT or .xlsx), then the settings with Open settings….";
    state.message = message;
    renderMessage();
    throw new Error(message);
  }
  return importSettingsText(text, file.name);
}

async function openGraphFile(file) {
  return openGraphText(await file.text(), file.name);
}

/** Opens a graph file's text; resolves with its summary. On refusal the page keeps the
 *  table, graph and settings it had, and says why. */
async function openGraphText(text, name) {
  const seq = ++loadSeq;
  let out;
  try {
    out = await engine.request("openGraph", { text: String(text), name: name || "graph.json" });
  } catch (e) {
    const message = "The graph file was not opened: " + e.message + (state.graph ? " The graph shown is unchanged." : "");
    if (seq === loadSeq) {
      state.message = message;
      renderMessage();
    }
    throw new Error(message);
  }
  // The engine holds the opened graph in place of any table from here on.
  recovery.source = null;
  recovery.steps = [];
  recovery.graphSource = { text: String(text), name };
  resetSelection();
  state.selected = null;
  state.opened = { name, version: out.version, rowsKnown: out.rowsKnown, builtFrom: out.table ? out.table.name : null };
  const t = out.table || { name: name, rows: out.summary.rows + out.summary.rowsLeftOut, columns: [] };
  state.table = {
    name: t.name, rows: t.rows, notices: [], encoding: "",
    columns: t.columns.map((c) => ({ name: c.name, kind: c.kind, unit: c.unit || null, time: c.time || null, missing: null, min: null, max: null, mean: null, levels: null })),
  };
  state.files = null;
  state.settings = out.settings;
  state.builtSettings = out.settings;
  state.autoSettings = null;
  state.restored = null;
  state.restoreProblem = null;
  state.summary = out.summary;
  state.graph = out.graph;
  state.stale = false;
  state.phase = "ready";
  state.progress = null;
  state.message = null;
  state.derivedInfo = [];
  state.colour = { column: defaultColourColumn(), stat: "mean", values: null, min: NaN, max: NaN };
  shapePanel.tableChanged();
  renderAll();
  // As a build does: the graph is fitted below the colour card.
  const card = byId("colour-block");
  view.insetTop = card.hidden ? 0 : card.offsetTop + card.offsetHeight;
  view.setGraph(out.graph, false);
  if (state.colour.column) await setColourColumn(state.colour.column).catch(function () { /* shown on the page */ });
  shapePanel.graphChanged();
  return JSON.parse(JSON.stringify(out.summary));
}

/** The reason an opened graph cannot be rebuilt, or null when a table is open. */
function openedGraphRefusal() {
  if (!state.opened) return null;
  return "This graph was opened from the graph file " + state.opened.name + ", without its table, so it cannot be built again: open the table" +
    (state.opened.builtFrom ? " (" + state.opened.builtFrom + ")" : "") + " to change the settings (Export → Settings keeps these).";
}

/** The note in the data panel while an opened graph is shown. */
function renderOpenedNote() {
  const note = byId("opened-note");
  note.hidden = !state.opened;
  byId("settings-form").inert = !!state.opened;
  if (!state.opened) return;
  const o = state.opened;
  note.textContent = "";
  note.append(el("strong", null, "Graph file " + o.name));
  note.append(document.createTextNode(
    (o.builtFrom ? ", built from " + o.builtFrom + " (" + plural(state.table.rows, "row", "rows") + ")" : "") +
    ". The member rows are not in this tab: colours and the inspector use the per-node statistics the file carries" +
    (o.rowsKnown ? "; the file lists which rows each node holds" : "; the file was written without the rows each node holds") +
    ". The settings are shown as they were; to change them, open the table."));
}

/** After an engine restart: the opened graph is opened again in the new engine. */
async function reopenGraphInNewEngine() {
  const src = recovery.graphSource;
  try {
    await engine.request("openGraph", { text: src.text, name: src.name });
    if (state.colour.column) await setColourColumn(state.colour.column).catch(function () { /* shown */ });
    if (!state.message) state.message = "The engine stopped and was restarted; the graph file was opened again.";
  } catch (e) {
    state.message = "The graph file could not be opened again (" + e.message + "); open it again.";
  }
  renderAll();
}

function wireGraphFile() {
  const input = byId("open-graph");
  input.addEventListener("change", function () {
    const file = input.files && input.files[0];
    input.value = "";
    if (file) openGraphFile(file).catch(function () { /* shown on the page */ });
  });
}
