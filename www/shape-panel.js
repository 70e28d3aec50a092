/* shape-panel.js: the "How solid is this shape?" panel. It lists the features of the graph
 * on screen (components, loops, branches: the points of its extended persistence
 * diagram), marks a feature's nodes on the graph, and runs the engine's checks of them:
 * resampling the rows (bootstrap), settings suggested by rule, a grid of settings, and a
 * comparison with a second table (another file, other columns of this one standing in, or
 * other rows of this one: a second row condition, the rest of the settings the same). Every number shown comes from the engine; this file only
 * asks, waits and writes. It owns its own state and the elements under #shape-panel; the
 * page's state, settings and graph view come in through `deps` (see createShapePanel).
 *
 * Long checks run as step-wise jobs in the worker (worker.js), so they show progress and
 * stop on "Stop" between steps; a stopped check leaves the previous result in place.
 */

const FEATURE_WORDS = {
  component: "Component",
  loop: "Loop",
  downBranch: "Branch to a low end",
  upBranch: "Branch to a high end",
};

/** deps: {request(type, payload, onProgress), job(payload, onProgress) -> {done, cancel},
 *  settings(), graph(), table(), applySettings(obj), buildNow(), view (GraphView)} */
function createShapePanel(deps) {
  const sp = {
    diagram: null,        // {features: [{kind, birth, death, persistence, nodes}]} of the graph on screen
    confidence: null,     // last finished resampling test, as the engine returned it
    running: { boot: null, grid: null, compare: null },   // jobs in flight: {cancel}
    bootNote: null,       // {text, error}
    suggestion: null,
    suggestNote: null,
    grid: null,           // {cells, intervals, overlaps, measure}
    gridNote: null,
    second: null,         // {table, summary, graph} of the comparison's second table
    comparison: null,
    compareNote: null,
    marked: null,         // index of the feature kept marked on the graph
    diagramSeq: 0,
  };

  const miniA = new GraphView(byId("sp-a-canvas"), quietCallbacks());
  const miniB = new GraphView(byId("sp-b-canvas"), quietCallbacks());
  for (const [v, wrap] of [[miniA, "sp-a-canvas"], [miniB, "sp-b-canvas"]]) {
    new ResizeObserver(function () { v.resize(); }).observe(byId(wrap).parentElement);
  }

  function quietCallbacks() {
    return { onHover: function () {}, onSelect: function () {}, onDraw: function () {} };
  }

  function readNumber(id, what, min, max, whole) {
    const v = Number(byId(id).value);
    if (!Number.isFinite(v) || v < min || v > max || (whole && !Number.isInteger(v))) {
      throw new Error(what + ": '" + byId(id).value + "' is not " + (whole ? "a whole number" : "a number") + " from " + min + " to " + max);
    }
    return v;
  }

  function testArguments() {
    return {
      draws: readNumber("sp-draws", "Resamples (B)", 1, 10000, true),
      alpha: readNumber("sp-alpha", "Level α", 0.001, 0.5, false),
      seed: readNumber("sp-seed", "Seed", 0, Number.MAX_SAFE_INTEGER, true),
    };
  }

  function copySettings() {
    return JSON.parse(JSON.stringify(deps.settings()));
  }

  /* ---------------------------------------------------------------- features */

  /** The last test's verdict for each feature on screen, or null when it was made for
   *  another graph (the two diagrams are compared point by point). */
  function verdicts() {
    const c = sp.confidence, d = sp.diagram;
    if (!c || !d || c.features.length !== d.features.length) return null;
    for (let i = 0; i < d.features.length; i++) {
      const a = c.features[i], b = d.features[i];
      if (a.kind !== b.kind || a.birth !== b.birth || a.death !== b.death) return null;
    }
    return c.features.map((f) => f.significant);
  }

  /** The most features the table lists. */
  const FEATURES_LISTED = 200;

  function renderFeatures() {
    const body = byId("sp-features-body");
    body.textContent = "";
    const d = sp.diagram;
    const note = byId("sp-features-note");
    if (!d) { note.textContent = deps.graph() ? "…" : ""; return; }
    const v = verdicts();
    // A graph of thousands of nodes has thousands of features: the longest are listed (all
    // of them are counted below), so the table stays quick to draw.
    let shown = d.features.map((f, i) => i);
    if (shown.length > FEATURES_LISTED) {
      // Lengths read once into an array: the sort compares thousands of pairs.
      const len = new Float64Array(shown.length);
      d.features.forEach(function (f, i) { len[i] = Number.isFinite(f.persistence) ? f.persistence : Infinity; });
      const order = Uint32Array.from(shown).sort((a, b) => len[b] - len[a] || a - b);
      shown = Array.from(order.subarray(0, FEATURES_LISTED)).sort((a, b) => a - b);
    }
    shown.forEach(function (i) {
      const f = d.features[i];
      const tr = el("tr");
      tr.dataset.feature = String(i);
      tr.dataset.kind = f.kind;
      tr.classList.toggle("marked", sp.marked === i);
      const verdict = v ? (v[i] ? "yes" : "no") : (sp.confidence ? "—" : "not tested");
      const td = el("td", v ? (v[i] ? "yes" : "no") : "no", verdict);
      td.dataset.verdict = v ? (v[i] ? "yes" : "no") : "unknown";
      tr.append(el("td", null, FEATURE_WORDS[f.kind] || f.kind), el("td", "num", formatNumber(f.birth)), el("td", "num", formatNumber(f.death)), el("td", "num", formatNumber(f.persistence)), td);
      tr.title = plural(f.to - f.from, "node", "nodes") + "; point to mark them on the graph, click to keep them marked";
      body.append(tr);
    });
    if (shown.length < d.features.length) {
      const tr = el("tr");
      const td = el("td", "more", (d.features.length - shown.length) + " shorter features are not listed (the " + FEATURES_LISTED + " longest are).");
      td.colSpan = 5;
      tr.append(td);
      body.append(tr);
    }
    const counts = {};
    for (const f of d.features) counts[f.kind] = (counts[f.kind] || 0) + 1;
    const count = (k) => counts[k] || 0;
    const branches = count("downBranch") + count("upBranch");
    let text = plural(count("component"), "component", "components") + ", " + plural(count("loop"), "loop", "loops") + ", " + plural(branches, "branch", "branches") + ".";
    if (v) {
      const held = (k) => sp.confidence.features.filter((f, i) => v[i] && (k === "branch" ? f.kind === "downBranch" || f.kind === "upBranch" : f.kind === k)).length;
      text += " After " + plural(sp.confidence.draws, "resample", "resamples") + " at level α = " + sp.confidence.alpha + ", a feature holds up when its length exceeds " + formatNumber(2 * sp.confidence.threshold) +
        " (twice the " + Math.round(100 * (1 - sp.confidence.alpha)) + " % point of the resamples' distances): " + held("loop") + " of the loops, " + held("component") + " of the components and " + held("branch") + " of the branches do.";
    } else if (sp.confidence) text += " The last resampling test was made for other settings; run it again for these.";
    note.textContent = text;
  }

  function mark(i, keep) {
    if (keep) sp.marked = sp.marked === i ? null : i;
    const show = i !== null && sp.diagram ? i : sp.marked;
    deps.view.setHighlight(show !== null && sp.diagram && sp.diagram.features[show] ? featureNodes(show) : null);
    for (const tr of byId("sp-features-body").children) tr.classList.toggle("marked", Number(tr.dataset.feature) === sp.marked);
  }

  async function refreshDiagram() {
    const seq = ++sp.diagramSeq;
    sp.marked = null;
    // The previous graph's features name its nodes, not this graph's: not listed (nor
    // marked) while this graph's are on their way.
    sp.diagram = null;
    if (!deps.graph()) { render(); return; }
    try {
      const d = unpackDiagram(await deps.request("diagram"));
      if (seq !== sp.diagramSeq) return;
      sp.diagram = d;
    } catch (e) {
      if (seq !== sp.diagramSeq) return;
      sp.diagram = null;
      sp.bootNote = { text: e.message, error: true };
    }
    render();
  }

  /* ---------------------------------------------------------------- jobs */

  function showProgress(name, label, fraction) {
    const box = byId("sp-" + name + "-progress");
    box.hidden = label === null;
    if (label === null) return;
    byId("sp-" + name + "-label").textContent = label + " · " + Math.round(100 * fraction) + " %";
    byId("sp-" + name + "-fill").style.width = (100 * fraction).toFixed(1) + "%";
  }

  /** Runs a job; resolves with its value, or null when stopped. The button pair and the
   *  progress bar of `name` follow it. */
  async function runJob(name, payload, label) {
    const job = deps.job(payload, function (stage, fraction, msg) {
      showProgress(name, label(msg.done, msg.total), fraction);
    });
    sp.running[name] = job;
    showProgress(name, label(0, 0), 0);
    renderButtons();
    try {
      return await job.done;
    } catch (e) {
      if (e.cancelled) return null;
      throw e;
    } finally {
      sp.running[name] = null;
      showProgress(name, null, 0);
      renderButtons();
    }
  }

  function cancel(name) {
    if (sp.running[name]) sp.running[name].cancel();
  }

  async function runBootstrap() {
    let args;
    try { args = testArguments(); } catch (e) { sp.bootNote = { text: e.message, error: true }; render(); throw e; }
    sp.bootNote = null;
    render();
    try {
      const value = await runJob("boot", Object.assign({ job: "bootstrap", settings: copySettings() }, args), (done, total) => "Resample " + done + " of " + (total || args.draws));
      if (value === null) sp.bootNote = { text: "Stopped before the end; " + (sp.confidence ? "the previous result stays." : "no result yet.") };
      else sp.confidence = value;
    } catch (e) {
      sp.bootNote = { text: e.message, error: true };
      render();
      throw e;
    }
    render();
    return value_or_null(sp.confidence);
  }

  function value_or_null(x) { return x ? JSON.parse(JSON.stringify(x)) : null; }

  /** The diagram from the engine's columns (Engine::diagram in src/web.rs): {features: [{kind,
   *  birth, death, birthNode, deathNode, persistence, from, to}], nodes}, feature i's nodes
   *  being nodes[from] to nodes[to - 1] (featureNodes); thousands of features then cost
   *  thousands of small objects, not as many arrays besides. */
  function unpackDiagram(p) {
    if (!p) return null;
    const features = new Array(p.kind.length);
    for (let i = 0; i < features.length; i++) {
      features[i] = {
        kind: p.kinds[p.kind[i]], birth: p.birth[i], death: p.death[i], birthNode: p.birthNode[i], deathNode: p.deathNode[i],
        persistence: p.persistence[i], from: p.offsets[i], to: p.offsets[i + 1],
      };
    }
    return { features, nodes: p.nodes };
  }

  /** The nodes of feature `i` of the diagram on screen. */
  function featureNodes(i) {
    const f = sp.diagram.features[i];
    return sp.diagram.nodes.subarray(f.from, f.to);
  }

  /** The diagram as the engine words it ({features: [{kind, birth, death, birthNode,
   *  deathNode, persistence, nodes}]}), for scripts. */
  function diagramValue() {
    if (!sp.diagram) return null;
    return {
      features: sp.diagram.features.map((f, i) => ({
        kind: f.kind, birth: f.birth, death: f.death, birthNode: f.birthNode, deathNode: f.deathNode, persistence: f.persistence, nodes: Array.from(featureNodes(i)),
      })),
    };
  }

  /* ---------------------------------------------------------------- suggestion */

  async function suggest() {
    sp.suggestNote = null;
    sp.suggestion = null;
    render();
    try {
      sp.suggestion = await deps.request("suggest", { settings: copySettings(), seed: readNumber("sp-seed", "Seed", 0, Number.MAX_SAFE_INTEGER, true) });
    } catch (e) {
      sp.suggestNote = { text: e.message, error: true };
      render();
      throw e;
    }
    render();
    return value_or_null(sp.suggestion);
  }

  function renderSuggestion() {
    const out = byId("sp-suggest-out");
    const g = sp.suggestion;
    out.hidden = !g;
    note("sp-suggest-note", sp.suggestNote);
    if (!g) return;
    const values = byId("sp-suggest-values");
    values.textContent = "";
    const add = (list, text) => list.append(el("li", null, text));
    add(values, "Scale δ = " + formatNumber(g.delta) + ": mean distance from all rows to " + g.hausdorff.length + " random subsets of " + g.subsampleSize + " rows.");
    add(values, "Largest lens change between rows within δ: " + formatNumber(g.largestLensJump) + "; overlap " + g.gain + ", so intervals at most " + formatNumber(g.resolution) + " long.");
    if (g.fallback) add(values, "The paper's rule gives " + plural(g.paperIntervals, "interval", "intervals") + ", too few to draw a shape (see below); the automatic rule's cover is proposed instead: " + plural(g.settings.cover.intervals, "interval", "intervals") + ", overlap " + g.settings.cover.overlap + ", DBSCAN eps " + formatNumber(g.settings.clustering.eps) + ".");
    else add(values, "That gives " + plural(g.settings.cover.intervals, "interval", "intervals") + ", overlap " + g.settings.cover.overlap + ", and clusters joined within δ (DBSCAN, radius δ, 1 point).");
    if (g.changes.length === 0) add(values, "These are the settings already in use.");
    const warnings = byId("sp-suggest-warnings");
    warnings.textContent = "";
    for (const w of g.warnings) add(warnings, w);
  }

  async function acceptSuggestion() {
    if (!sp.suggestion) throw new Error("ask for suggested settings first");
    const s = sp.suggestion.settings;
    sp.suggestion = null;
    sp.suggestNote = { text: "Suggested settings in use; the settings above show them." };
    render();
    await deps.applySettings(s);
    return deps.buildNow();
  }

  /* ---------------------------------------------------------------- grid */

  function parseList(id, what, whole) {
    const out = [];
    for (const part of byId(id).value.split(/[,;\s]+/)) {
      if (part === "") continue;
      const v = Number(part);
      if (!Number.isFinite(v) || (whole && !Number.isInteger(v))) throw new Error(what + ": '" + part + "' is not " + (whole ? "a whole number" : "a number") + "; list values separated by commas");
      out.push(v);
    }
    if (out.length === 0) throw new Error(what + ": give at least one value");
    if (out.length > 40) throw new Error(what + ": at most 40 values");
    return out;
  }

  async function runGrid() {
    let grid, draws, args;
    try {
      grid = { intervals: parseList("sp-grid-intervals", "Interval counts", true), overlaps: parseList("sp-grid-overlaps", "Overlaps", false), eps: [] };
      draws = readNumber("sp-grid-draws", "Resamples per cell", 0, 1000, true);
      args = testArguments();
    } catch (e) {
      sp.gridNote = { text: e.message, error: true };
      render();
      throw e;
    }
    sp.gridNote = null;
    render();
    let cells;
    try {
      cells = await runJob("grid", { job: "sweep", settings: copySettings(), grid, draws, alpha: args.alpha, seed: args.seed }, (done, total) => "Cell " + done + " of " + (total || grid.intervals.length * grid.overlaps.length));
    } catch (e) {
      sp.gridNote = { text: e.message, error: true };
      render();
      throw e;
    }
    if (cells === null) sp.gridNote = { text: "Stopped before the end; " + (sp.grid ? "the previous grid stays." : "no grid yet.") };
    else {
      sp.grid = { cells, intervals: grid.intervals, overlaps: grid.overlaps, draws };
      if (draws === 0 && byId("sp-grid-measure").value === "significant") byId("sp-grid-measure").value = "loops";
    }
    render();
    return cells;
  }

  /** Where each cell is drawn, in CSS pixels of the grid canvas. */
  function gridLayout() {
    const g = sp.grid, c = byId("sp-grid-canvas");
    if (!g) return null;
    const w = c.clientWidth, h = c.clientHeight, left = 46, top = 26, right = 8, bottom = 8;
    const cw = (w - left - right) / g.overlaps.length, ch = (h - top - bottom) / g.intervals.length;
    const cells = g.cells.map(function (cell) {
      const col = g.overlaps.indexOf(cell.overlap), row = g.intervals.indexOf(cell.intervals);
      return { x: left + col * cw, y: top + row * ch, w: cw, h: ch, cx: left + (col + 0.5) * cw, cy: top + (row + 0.5) * ch, cell };
    });
    return { left, top, cw, ch, cells };
  }

  function measureOf(cell, measure) {
    if (measure === "components") return cell.components;
    if (measure === "significant") return cell.significant === null || cell.significant === undefined ? NaN : cell.significant;
    return cell.loops;
  }

  function drawGrid() {
    const wrap = byId("sp-grid-wrap");
    wrap.hidden = !sp.grid;
    if (!sp.grid) return;
    const c = byId("sp-grid-canvas");
    const dpr = window.devicePixelRatio || 1;
    c.width = Math.max(1, Math.round(c.clientWidth * dpr));
    c.height = Math.max(1, Math.round(c.clientHeight * dpr));
    const ctx = c.getContext("2d");
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.clearRect(0, 0, c.clientWidth, c.clientHeight);
    const L = gridLayout();
    const measure = byId("sp-grid-measure").value;
    let lo = Infinity, hi = -Infinity;
    for (const q of L.cells) { const v = measureOf(q.cell, measure); if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); } }
    const s = deps.settings();
    ctx.font = "12px system-ui, sans-serif";
    ctx.textAlign = "center";
    ctx.textBaseline = "middle";
    for (const q of L.cells) {
      const v = measureOf(q.cell, measure);
      const t = Number.isFinite(v) ? (hi > lo ? (v - lo) / (hi - lo) : 0.5) : NaN;
      ctx.fillStyle = Number.isFinite(t) ? colourAt(t) : "#e4e0d8";
      ctx.fillRect(q.x + 1, q.y + 1, q.w - 2, q.h - 2);
      ctx.fillStyle = Number.isFinite(t) && t < 0.55 ? "#ffffff" : "#1c242c";
      ctx.fillText(Number.isFinite(v) ? String(v) : "—", q.cx, q.cy);
      if (s && s.cover.intervals === q.cell.intervals && Math.abs(s.cover.overlap - q.cell.overlap) < 1e-9) {
        ctx.strokeStyle = "#d0501f";
        ctx.lineWidth = 3;
        ctx.strokeRect(q.x + 2, q.y + 2, q.w - 4, q.h - 4);
      }
    }
    ctx.fillStyle = "#56616b";
    sp.grid.overlaps.forEach((g, k) => ctx.fillText(String(g), L.left + (k + 0.5) * L.cw, L.top / 2));
    ctx.textAlign = "right";
    sp.grid.intervals.forEach((n, k) => ctx.fillText(String(n), L.left - 8, L.top + (k + 0.5) * L.ch));
    const words = { loops: "loops", components: "components", significant: "features that hold up (" + sp.grid.draws + " resamples per cell)" };
    const range = Number.isFinite(lo) ? (hi > lo ? " Dark cells have the fewest (" + lo + "), light ones the most (" + hi + ")." : " Every cell has " + lo + ".") : "";
    if (!sp.gridNote) byId("sp-grid-note").textContent = "Rows: interval counts; columns: overlaps; each cell shows its graph's " + words[measure] + "." + range + " The framed cell is the graph on screen; click a cell to use its settings.";
  }

  async function useCell(cell) {
    const s = copySettings();
    s.cover = Object.assign({}, s.cover, { intervals: cell.intervals, overlap: cell.overlap });
    if (cell.eps !== null && cell.eps !== undefined && s.clustering.kind === "dbscan") s.clustering.eps = cell.eps;
    await deps.applySettings(s);
    const summary = await deps.buildNow();
    drawGrid();
    return summary;
  }

  /* ---------------------------------------------------------------- comparison */

  /** Makes a second table (`make` resolves with its description), builds its graph, and
   *  shows either or the error. */
  async function setSecond(make) {
    sp.compareNote = null;
    sp.comparison = null;
    sp.second = null;
    render();
    try {
      const table = await make();
      sp.second = { table, summary: null, graph: null };
      await buildSecond();
    } catch (e) {
      sp.compareNote = { text: "Second table: " + e.message, error: true };
      render();
      throw e;
    }
    render();
    return sp.second.table;
  }

  function loadSecond(source) {
    return setSecond(() => deps.request("loadB", source));
  }

  /** The swap rows: one per column the settings use, each with a choice of stand-in. */
  function renderSwap() {
    const body = byId("sp-swap-body");
    const s = deps.settings(), t = deps.table();
    const cols = s ? s.columns : [];
    const key = JSON.stringify([cols, t ? t.name : null]);
    if (body.dataset.key === key) return;
    body.dataset.key = key;
    body.textContent = "";
    const numeric = t ? t.columns.filter((c) => c.kind === "number").map((c) => c.name) : [];
    for (const c of cols) {
      const tr = el("tr");
      const select = el("select");
      select.dataset.column = c;
      select.setAttribute("aria-label", "Values for " + c + " in the second table");
      for (const n of numeric) { const o = el("option", null, n === c ? n + " (itself)" : n); o.value = n; select.append(o); }
      select.value = c;
      tr.append(el("td", null, c), el("td", null));
      tr.lastChild.append(select);
      body.append(tr);
    }
  }

  /** The second table made of the rows of this one where `condition` holds; the engine
   *  checks the condition (a caret under a mistake, shown under the line). */
  function useRows(condition) {
    const text = String(condition).trim();
    const box = byId("sp-rows-error");
    box.hidden = true;
    return setSecond(async () => {
      if (!text) throw new Error("write the condition the second table's rows meet, e.g. origin == \"LGA\"");
      return deps.request("rowsB", { condition: text, settings: copySettings() });
    }).catch(function (e) {
      box.hidden = false;
      showCaretMessage(box, e.message);
      throw e;
    });
  }

  /** What the first table of a comparison of two subsets is. */
  function renderRowsChoice() {
    const s = deps.settings();
    byId("sp-rows-first").textContent = s && s.keepRows
      ? "The first table is the graph above: the rows where " + s.keepRows + ". Both graphs use the settings above; only the rows differ."
      : "The first table is the graph above: every row. Both graphs use the settings above; only the rows differ.";
  }

  function useSwap() {
    const pairs = Array.from(document.querySelectorAll("#sp-swap-body select")).filter((s) => s.value !== s.dataset.column).map((s) => [s.value, s.dataset.column]);
    return setSecond(async () => {
      if (pairs.length === 0) throw new Error("choose, for at least one column, another column whose values it takes");
      return deps.request("swapB", { pairs, settings: copySettings() });
    });
  }

  /** Builds the second table's graph with the settings in force (called after each build). */
  async function buildSecond() {
    if (!sp.second) return;
    const out = await deps.request("runB", { settings: copySettings() });
    sp.second.summary = out.summary;
    sp.second.graph = out.graph;
    sp.comparison = null;
    render();
  }

  async function runCompare() {
    if (!sp.second) throw new Error("open a second table first");
    let args;
    try { args = testArguments(); } catch (e) { sp.compareNote = { text: e.message, error: true }; render(); throw e; }
    sp.compareNote = null;
    render();
    let value;
    try {
      value = await runJob("compare", Object.assign({ job: "compare", settings: copySettings() }, args), (done, total) => "Resample " + done + " of " + (total || 2 * args.draws) + " (both tables)");
    } catch (e) {
      sp.compareNote = { text: e.message, error: true };
      render();
      throw e;
    }
    if (value === null) sp.compareNote = { text: "Stopped before the end; " + (sp.comparison ? "the previous result stays." : "no result yet.") };
    else sp.comparison = value;
    render();
    return value_or_null(sp.comparison);
  }

  function renderCompare() {
    const pair = byId("sp-pair");
    const table = deps.table();
    const settings = deps.settings();
    const subset = sp.second && sp.second.table.keepRows;
    byId("sp-b-line").textContent = !sp.second
      ? "Open a second table with the same columns (for example, model output beside measurements), or take other rows of this one."
      : subset
      ? "Second table: the rows of " + table.name + " where " + subset + " · " + plural(sp.second.table.rows, "row", "rows") + ". Both graphs use the settings above; only the rows differ."
      : "Second table: " + sp.second.table.name + " · " + plural(sp.second.table.rows, "row", "rows") + ". Both graphs use the settings above.";
    renderRowsChoice();
    pair.hidden = !sp.second || !sp.second.graph;
    if (!pair.hidden) {
      const sum = (s) => s ? plural(s.rows, "row", "rows") + " · " + plural(s.nodes, "node", "nodes") + " · " + plural(s.components, "component", "components") + " · " + plural(s.loops, "loop", "loops") : "";
      const cond = settings && settings.keepRows;
      const rows = cond ? " (rows where " + cond + ")" : subset ? " (every row)" : "";
      byId("sp-a-caption").textContent = (table ? table.name : "") + rows + ": " + sum(deps.summary());
      byId("sp-b-caption").textContent = sp.second.table.name + ": " + sum(sp.second.summary);
      miniA.resize();
      miniB.resize();
      if (miniA.graph !== deps.graph()) miniA.setGraph(deps.graph());
      if (miniB.graph !== sp.second.graph) miniB.setGraph(sp.second.graph);
    }
    const out = byId("sp-compare-result");
    out.textContent = "";
    out.classList.toggle("error", !!(sp.compareNote && sp.compareNote.error));
    if (sp.compareNote) { out.textContent = sp.compareNote.text; return; }
    const c = sp.comparison;
    if (!c) return;
    const level = Math.round(100 * (1 - c.alpha));
    out.append(document.createTextNode("The two graphs' diagrams are " + formatNumber(c.distance) + " apart (bottleneck distance). Resampling each table (" + c.a.draws + " times each) gives a reference of " + formatNumber(c.threshold) +
      ": two tables drawn from the same source would be that far apart or less in at least " + level + " % of cases. "));
    out.append(el("strong", null, c.differ
      ? "The difference is larger than chance alone gives: the shapes differ at level α = " + c.alpha + "."
      : "The difference is within what chance alone gives: these tables do not show that the shapes differ."));
    out.append(document.createTextNode(" This holds for these settings only, and only when the lens means the same for both tables (a column lens, say)."));
  }

  /* ---------------------------------------------------------------- rendering */

  function note(id, n) {
    const p = byId(id);
    p.textContent = n ? n.text : "";
    p.classList.toggle("error", !!(n && n.error));
  }

  function renderButtons() {
    const busy = (n) => sp.running[n] !== null;
    const hasGraph = !!deps.graph();
    byId("sp-boot-run").disabled = busy("boot") || !hasGraph;
    byId("sp-boot-cancel").hidden = !busy("boot");
    byId("sp-grid-run").disabled = busy("grid") || !hasGraph;
    byId("sp-grid-cancel").hidden = !busy("grid");
    byId("sp-compare-run").disabled = busy("compare") || !sp.second || !sp.second.graph;
    byId("sp-compare-cancel").hidden = !busy("compare");
    byId("sp-suggest").disabled = !hasGraph;
  }

  function render() {
    byId("shape-panel").hidden = !deps.table();
    renderFeatures();
    note("sp-boot-result", sp.bootNote);
    renderSuggestion();
    drawGrid();
    if (sp.gridNote) note("sp-grid-note", sp.gridNote);
    renderSwap();
    renderCompare();
    renderButtons();
  }

  /* ---------------------------------------------------------------- events */

  const body = byId("sp-features-body");
  const rowOf = (ev) => { const tr = ev.target.closest("tr"); return tr && body.contains(tr) ? Number(tr.dataset.feature) : null; };
  body.addEventListener("mouseover", (ev) => { const i = rowOf(ev); if (i !== null) mark(i, false); });
  body.addEventListener("mouseleave", () => mark(null, false));
  body.addEventListener("click", (ev) => { const i = rowOf(ev); if (i !== null) mark(i, true); });
  const quiet = function () { /* shown in the panel */ };
  byId("sp-boot-run").addEventListener("click", () => runBootstrap().catch(quiet));
  byId("sp-boot-cancel").addEventListener("click", () => cancel("boot"));
  byId("sp-suggest").addEventListener("click", () => suggest().catch(quiet));
  byId("sp-suggest-accept").addEventListener("click", () => acceptSuggestion().catch(quiet));
  byId("sp-grid-run").addEventListener("click", () => runGrid().catch(quiet));
  byId("sp-grid-cancel").addEventListener("click", () => cancel("grid"));
  byId("sp-grid-measure").addEventListener("change", drawGrid);
  byId("sp-grid-canvas").addEventListener("click", function (ev) {
    const L = gridLayout();
    if (!L) return;
    const r = ev.currentTarget.getBoundingClientRect();
    const x = ev.clientX - r.left, y = ev.clientY - r.top;
    const q = L.cells.find((q) => x >= q.x && x < q.x + q.w && y >= q.y && y < q.y + q.h);
    if (q) useCell(q.cell).catch(quiet);
  });
  new ResizeObserver(drawGrid).observe(byId("sp-grid-wrap"));
  const file = byId("sp-b-file");
  file.addEventListener("change", function () {
    const f = file.files && file.files[0];
    if (f) loadSecond({ file: f, name: f.name }).catch(quiet);
    file.value = "";
  });
  byId("sp-swap-use").addEventListener("click", () => useSwap().catch(quiet));
  byId("sp-rows-form").addEventListener("submit", function (ev) {
    ev.preventDefault();
    useRows(byId("sp-rows-condition").value).catch(quiet);
  });
  byId("sp-compare-run").addEventListener("click", () => runCompare().catch(quiet));
  byId("sp-compare-cancel").addEventListener("click", () => cancel("compare"));

  // For scripts and tests: what the panel shows, as data.
  window.nervureShape = Object.freeze({
    diagram: () => value_or_null(diagramValue()),
    confidence: () => value_or_null(sp.confidence),
    verdicts: () => verdicts(),
    grid: () => value_or_null(sp.grid),
    gridLayout: () => value_or_null(gridLayout()),
    second: () => (sp.second ? { table: value_or_null(sp.second.table), summary: value_or_null(sp.second.summary) } : null),
    comparison: () => value_or_null(sp.comparison),
    /** Nodes marked on the graph now, increasing, or null. */
    marked: () => (deps.view.highlight ? Array.from(deps.view.highlight).sort((a, b) => a - b) : null),
    running: () => ({ boot: !!sp.running.boot, grid: !!sp.running.grid, compare: !!sp.running.compare }),
    loadSecondCsv: (text, name) => loadSecond({ text: String(text), name: name || "second.csv" }),
    /** Takes the rows of this table where `condition` holds as the second table. */
    useSecondRows: (condition) => useRows(condition).then(() => value_or_null(sp.second.table)),
  });

  return {
    /** A new table: results for the old one no longer apply. */
    tableChanged: function () {
      for (const n of ["boot", "grid", "compare"]) cancel(n);
      sp.diagram = null;
      sp.confidence = null;
      sp.bootNote = sp.suggestion = sp.suggestNote = sp.grid = sp.gridNote = sp.comparison = sp.compareNote = null;
      sp.second = null;
      render();
    },
    /** A new graph is on screen. */
    graphChanged: function () {
      refreshDiagram();
      buildSecond().catch(function (e) { sp.compareNote = { text: "Second table: " + e.message, error: true }; render(); });
      render();
    },
    render,
  };
}
