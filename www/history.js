/* history.js: the runs of this session. After each build the settings, the summary and
 * the drawn graph (positions, sizes, edges, node colours) are kept, newest first, so a
 * user can look back, compare two side by side (two canvases, and the settings that
 * differ), and restore any. Kept in memory only: closing the tab forgets them.
 *
 * Each run's thumbnail is drawn once, into a canvas the run keeps, in slices (slices.js):
 * a graph of 19 000 nodes takes about 150 ms to draw, too long for one task.
 */

/** Runs kept; older ones are dropped first. */
const HISTORY_LIMIT = 40;

const runs = [];
let runSeq = 0;
const compareTicks = new Set();

/** A copy of a graph's typed arrays (Engine.graph). */
function copyGraph(g) {
  const out = {};
  for (const [name, values] of Object.entries(g)) out[name] = values.slice();
  return out;
}

/** Keeps the run just built (the same settings twice in a row are kept once). */
function recordRun() {
  if (!state.graph || !state.summary) return;
  const settings = JSON.parse(JSON.stringify(state.settings));
  const last = runs[0];
  if (last && JSON.stringify(last.settings) === JSON.stringify(settings) && last.fileName === state.table.name) return;
  runs.unshift({
    id: ++runSeq, time: new Date(), fileName: state.table.name, settings,
    summary: JSON.parse(JSON.stringify(state.summary)), graph: copyGraph(state.graph),
    fills: view.fills ? view.fills.slice() : null, colour: state.colour.column, thumb: null,
  });
  while (runs.length > HISTORY_LIMIT) { const gone = runs.pop(); compareTicks.delete(gone.id); }
  renderHistory();
}

/** The run's thumbnail canvas, made (and its drawing begun) on first use. */
function thumbnail(r) {
  if (r.thumb) return r.thumb;
  const thumb = el("canvas", "thumb");
  thumb.width = 132;
  thumb.height = 92;
  thumb.setAttribute("aria-hidden", "true");
  r.thumb = thumb;
  const ctx = thumb.getContext("2d");
  let d = null, next = 0;
  r.thumbDrawing = inSlices(function (deadline) {
    // The first slice only plans (bounds, the discs' order); then items in runs of 64
    // between looks at the clock.
    if (!d) { d = staticDrawing(thumb.width, thumb.height, r.graph, r.fills, 4); return d.total === 0; }
    while (next < d.total && performance.now() < deadline) {
      const to = Math.min(d.total, next + 64);
      d.draw(ctx, next, to);
      next = to;
    }
    return next >= d.total;
  });
  return thumb;
}

/** For the tests: once run `id`'s thumbnail is drawn, whether it is the same picture as
 *  the one drawGraphStatic makes in one go. */
async function thumbnailMatchesOneGo(id) {
  const r = runs.find((x) => x.id === id);
  if (!r) throw new Error("there is no run " + id + " in this session");
  const thumb = thumbnail(r);
  await r.thumbDrawing.done;
  const c = document.createElement("canvas");
  c.width = thumb.width;
  c.height = thumb.height;
  drawGraphStatic(c.getContext("2d"), c.width, c.height, r.graph, r.fills, 4);
  return samePixels(thumb, c);
}

function historyList() {
  return runs.map((r) => ({ id: r.id, fileName: r.fileName, summary: JSON.parse(JSON.stringify(r.summary)), settings: JSON.parse(JSON.stringify(r.settings)) }));
}

function summaryText(s) {
  return plural(s.nodes, "node", "nodes") + " · " + plural(s.edges, "edge", "edges") + " · " + plural(s.components, "component", "components") + " · " + plural(s.loops, "loop", "loops");
}

/** Short words for the settings that differ between two runs, e.g. "intervals 8 → 11". */
function settingsDiff(a, b) {
  const flat = function (o, prefix, out) {
    for (const k of Object.keys(o)) {
      const v = o[k], key = prefix ? prefix + "." + k : k;
      if (v && typeof v === "object" && !Array.isArray(v)) flat(v, key, out);
      else out[key] = JSON.stringify(v);
    }
    return out;
  };
  const fa = flat(a, "", {}), fb = flat(b, "", {});
  const keys = Array.from(new Set(Object.keys(fa).concat(Object.keys(fb)))).sort();
  return keys.filter((k) => fa[k] !== fb[k]).map((k) => k + ": " + (fa[k] === undefined ? "—" : fa[k]) + " → " + (fb[k] === undefined ? "—" : fb[k]));
}

function renderHistory() {
  byId("history-count").textContent = runs.length ? "(" + runs.length + ")" : "";
  const list = byId("history-list");
  list.textContent = "";
  runs.forEach(function (r, k) {
    const li = el("li", "history-item" + (k === 0 ? " current" : ""));
    const thumb = thumbnail(r);
    const text = el("div", "history-text");
    text.append(el("strong", null, "Run " + r.id + (k === 0 ? " (on screen)" : "")), el("span", null, summaryText(r.summary)));
    if (r.settings.keepRows) text.append(el("span", "history-rows", "rows where " + r.settings.keepRows));
    const prev = runs[k + 1];
    if (prev) {
      const diff = settingsDiff(prev.settings, r.settings);
      text.append(el("span", "history-diff", diff.length ? diff.slice(0, 3).join("; ") + (diff.length > 3 ? "; …" : "") : "same settings, other file"));
    }
    const tick = el("label", "tick");
    const box = el("input");
    box.type = "checkbox";
    box.checked = compareTicks.has(r.id);
    box.setAttribute("aria-label", "Compare run " + r.id);
    box.addEventListener("change", function () {
      if (box.checked) compareTicks.add(r.id); else compareTicks.delete(r.id);
      while (compareTicks.size > 2) compareTicks.delete(compareTicks.values().next().value);
      renderHistory();
    });
    tick.append(box, document.createTextNode(" compare"));
    const restore = el("button", "small", "Restore");
    restore.type = "button";
    restore.disabled = k === 0;
    restore.setAttribute("aria-label", "Restore the settings of run " + r.id);
    restore.addEventListener("click", function () { restoreRun(r.id).catch(function () { /* shown */ }); });
    const actions = el("div", "history-buttons");
    actions.append(tick, restore);
    li.append(thumb, text, actions);
    list.append(li);
  });
  byId("history-compare").disabled = compareTicks.size !== 2;
}

async function restoreRun(id) {
  const r = runs.find((x) => x.id === id);
  if (!r) throw new Error("there is no run " + id + " in this session");
  if (r.fileName !== state.table.name) {
    const message = "run " + id + " was built from " + r.fileName + "; open that file to restore it";
    fail(message);
    throw new Error(message);
  }
  await applySettings(r.settings);
  return buildNow();
}

/** Opens the comparison of two runs (ids; the ticked ones by default). */
function compareRuns(ids) {
  const pair = (ids || Array.from(compareTicks)).map((id) => runs.find((x) => x.id === id)).filter(Boolean).sort((a, b) => a.id - b.id);
  if (pair.length !== 2) throw new Error("tick two runs to compare");
  [["compare-a", pair[0]], ["compare-b", pair[1]]].forEach(function ([id, r]) {
    const c = byId(id);
    drawGraphStatic(c.getContext("2d"), c.width, c.height, r.graph, r.fills, 10);
    byId(id + "-text").textContent = "Run " + r.id + ": " + summaryText(r.summary) + " · " + plural(r.summary.rows, "row", "rows") + " · " + r.fileName +
      (r.settings.keepRows ? " · rows where " + r.settings.keepRows : "");
  });
  const diff = byId("compare-diff");
  diff.textContent = "";
  const lines = settingsDiff(pair[0].settings, pair[1].settings);
  if (lines.length === 0) diff.append(el("li", null, "The settings are the same."));
  for (const line of lines) diff.append(el("li", "mono", line));
  byId("compare").showModal();
  return pair.map((r) => r.id);
}

function wireHistory() {
  byId("history-compare").addEventListener("click", function () {
    try { compareRuns(); } catch (e) { fail(e.message); }
  });
  byId("compare-close").addEventListener("click", function () { byId("compare").close(); });
}
