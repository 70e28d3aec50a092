/* inspector.js: the selection of nodes and the panel that explains it. One node or a group
 * (shift-click, lasso, or points picked in the scatter): its size, a per-column summary,
 * its member rows as a paged table with their data row numbers, and the columns ranked by
 * how much the group's rows differ from all other rows (the engine's `explain`): numeric
 * columns by KS in `state.contrast`, text columns by total variation distance in
 * `state.categoryContrast`, shown as a second table under the first.
 *
 * It owns `state.selection` and the memberships cache (`state.members`, node -> rows as
 * CSR arrays from the engine, used to link the graph and the scatter). It computes no
 * statistic itself: every number shown comes from the engine.
 */

/** Rows shown per page of the row table: at most this many table rows in the DOM. */
const ROWS_PER_PAGE = 100;

/** The memberships of the current graph, fetched once per build. */
function memberships() {
  if (!state.graph) return Promise.reject(new Error("no graph has been built yet"));
  if (!state.membersPromise) {
    const graph = state.graph;
    state.membersPromise = engine.request("memberships").then(function (m) {
      if (state.graph === graph) state.members = m;
      return m;
    });
  }
  return state.membersPromise;
}

/** Forgets the selection and memberships (a new graph was drawn). */
function resetSelection() {
  state.selection = new Set();
  state.primary = null;
  state.detail = null;
  state.contrast = null;
  state.categoryContrast = null;
  state.groupRows = null;
  state.rowPage = 0;
  state.rowCells = null;
  state.members = null;
  state.membersPromise = null;
  state.inspectSeq = (state.inspectSeq || 0) + 1;
}

/** Union of the member rows of `nodes` (0-based, increasing), from the memberships. */
function rowsOfNodes(m, nodes) {
  const n = state.table ? state.table.rows : 0;
  const mark = new Uint8Array(n);
  let count = 0;
  for (const k of nodes) {
    for (let j = m.offsets[k]; j < m.offsets[k + 1]; j++) {
      const r = m.rows[j];
      if (!mark[r]) { mark[r] = 1; count++; }
    }
  }
  const out = new Uint32Array(count);
  for (let r = 0, w = 0; r < n; r++) if (mark[r]) out[w++] = r;
  return { rows: out, mark };
}

/** Nodes holding at least one row of `mark` (Uint8Array over table rows). */
function nodesHoldingRows(m, mark) {
  const out = [];
  for (let k = 0; k + 1 < m.offsets.length; k++) {
    for (let j = m.offsets[k]; j < m.offsets[k + 1]; j++) if (mark[m.rows[j]]) { out.push(k); break; }
  }
  return out;
}

/** Makes `nodes` the selection (an array or Set), `primary` the ringed node; fetches what
 *  the inspector shows. Resolves when the panel is filled. */
async function setSelection(nodes, primary) {
  const sel = new Set(nodes);
  state.selection = sel;
  state.primary = primary !== undefined ? primary : (sel.size === 1 ? sel.values().next().value : null);
  state.selected = sel.size === 1 ? sel.values().next().value : (sel.size === 0 ? null : state.primary);
  state.detail = null;
  state.contrast = null;
  state.categoryContrast = null;
  state.groupRows = null;
  state.rowCells = null;
  state.rowPage = 0;
  const seq = ++state.inspectSeq;
  view.setSelected(sel, state.primary);
  renderDetail();
  if (typeof scatterSelectionChanged === "function") scatterSelectionChanged();
  if (sel.size === 0) return null;
  const list = Array.from(sel).sort((a, b) => a - b);
  try {
    if (state.opened) {
      // A graph file with no table: the file's statistics for one node; no rows to compare.
      const detail = list.length === 1 ? await engine.request("detail", { node: list[0] }) : null;
      if (seq !== state.inspectSeq) return null;
      state.detail = detail;
      renderDetail();
      return { detail, contrast: null };
    }
    const m = await memberships();
    if (seq !== state.inspectSeq) return null;
    state.groupRows = rowsOfNodes(m, list).rows;
    if (typeof scatterSelectionChanged === "function") scatterSelectionChanged();
    const [detail, contrast] = await Promise.all([
      list.length === 1 ? engine.request("detail", { node: list[0] }) : Promise.resolve(null),
      engine.request("explain", { nodes: list }),
    ]);
    if (seq !== state.inspectSeq) return null;
    state.detail = detail;
    // The engine gives {columns: numeric by KS, categories: text by TV distance}.
    state.contrast = contrast.columns;
    state.categoryContrast = contrast.categories;
    await loadRowPage(0, seq);
    renderDetail();
    return { detail, contrast };
  } catch (e) {
    if (seq === state.inspectSeq) fail(e.message);
    throw e;
  }
}

/** A click (toggle: shift held) on node `i`, or on the background (i === null). */
function selectNode(i, options) {
  const toggle = options && options.toggle;
  if (i === null || i === undefined) return toggle ? Promise.resolve(null) : setSelection([]);
  if (toggle) {
    const next = new Set(state.selection);
    if (next.has(i)) next.delete(i); else next.add(i);
    return setSelection(next, next.has(i) ? i : null);
  }
  return setSelection([i], i);
}

function lassoNodes(nodes, options) {
  const next = options && options.add ? new Set(state.selection) : new Set();
  for (const i of nodes) next.add(i);
  return setSelection(next);
}

async function loadRowPage(pageIndex, seq) {
  const rows = state.groupRows;
  if (!rows) return;
  const pages = Math.max(1, Math.ceil(rows.length / ROWS_PER_PAGE));
  const p = Math.max(0, Math.min(pages - 1, pageIndex));
  const slice = Array.from(rows.subarray(p * ROWS_PER_PAGE, (p + 1) * ROWS_PER_PAGE));
  const cells = await engine.request("rowValues", { rows: slice, columns: null });
  if (seq !== undefined && seq !== state.inspectSeq) return;
  state.rowPage = p;
  state.rowCells = cells;
}

function turnRowPage(delta) {
  const seq = state.inspectSeq;
  loadRowPage(state.rowPage + delta, seq).then(function () { if (seq === state.inspectSeq) renderRowTable(); }).catch(function (e) { fail(e.message); });
}

/* ---------------------------------------------------------------- rendering */

function renderDetail() {
  const box = byId("detail");
  const sel = state.selection || new Set();
  byId("detail-empty").hidden = sel.size > 0;
  if (sel.size === 0 || !state.graph) { box.hidden = true; return; }
  box.hidden = false;
  const list = Array.from(sel).sort((a, b) => a - b);
  const single = list.length === 1;
  const d = state.detail;
  byId("detail-title").textContent = single ? "Node " + list[0] : plural(list.length, "node", "nodes") + " selected";
  let size = 0;
  for (const k of list) size += state.graph.nodeSizes[k];
  const facts = [];
  if (state.groupRows) facts.push(plural(state.groupRows.length, "row", "rows"));
  else facts.push(plural(single ? state.graph.nodeSizes[list[0]] : size, "row", "rows") + (single ? "" : " (counted once per node)"));
  if (single && d) facts.push(plural(d.degree, "edge", "edges"));
  if (single) facts.push("lens interval " + ((d ? d.element : state.graph.nodeElements[list[0]]) + 1) + (d && d.interval ? " [" + lensValueText(d.interval[0]) + ", " + lensValueText(d.interval[1]) + "]" : ""));
  else facts.push("nodes " + (list.length <= 8 ? list.join(", ") : list.slice(0, 8).join(", ") + ", …"));
  byId("detail-sub").textContent = facts.join(" · ");
  const fileNote = byId("detail-file-note");
  fileNote.hidden = !state.opened;
  if (state.opened) {
    fileNote.textContent = "Member rows are not in this tab: this graph was opened from the graph file " + state.opened.name +
      (single ? ". The statistics below are the file's (mean, range, missing and the most common value over the node's rows)."
        : ". Select one node to see the statistics the file carries; ranking the columns of a group needs the table.");
  }
  renderStats(single ? d : null);
  renderContrast();
  renderRowTable();
}

function renderStats(d) {
  const wrap = byId("detail-stats-wrap");
  const body = byId("detail-stats");
  body.textContent = "";
  byId("detail-stats-title").textContent = d ? "Columns in this node" : "Columns in these rows (mean in the group and out of it)";
  const head = byId("detail-stats-head");
  head.textContent = "";
  const cols = d ? ["Column", "Mean", "Min", "Max"] : ["Column", "Mean in", "Mean out"];
  cols.forEach(function (c, k) { const th = el("th", k ? "num" : null, c); th.scope = "col"; head.append(th); });
  if (d) {
    for (const c of d.columns) {
      const tr = el("tr");
      const th = el("th", null, c.name);
      th.title = c.name;
      tr.append(th);
      if (c.kind === "number") tr.append(el("td", "num", formatNumber(c.mean)), el("td", "num", formatNumber(c.min)), el("td", "num", formatNumber(c.max)));
      else if (c.kind === "time") {
        // A time column: the node's first and last instants.
        const t = timeOf(c.name);
        const td = el("td", "top time-span", c.min === null || c.min === undefined ? "—" : formatInstant(c.min, t) + " to " + formatInstant(c.max, t));
        td.title = c.first ? "first " + c.first + ", last " + c.last : "no value in this node";
        td.colSpan = 3;
        tr.append(td);
      } else {
        const pct = c.topShare === null || c.topShare === undefined ? null : 100 * c.topShare;
        const share = pct === null ? "" : " (" + (pct > 0 && pct < 0.5 ? "under 1" : Math.round(pct)) + " %)";
        const td = el("td", "top", c.top === null || c.top === undefined ? "—" : "mostly “" + c.top + "”" + share);
        td.colSpan = 3;
        tr.append(td);
      }
      body.append(tr);
    }
  } else if (state.contrast) {
    const byName = state.contrast.slice().sort((a, b) => columnOrder(a.name) - columnOrder(b.name));
    for (const c of byName) {
      const tr = el("tr");
      const th = el("th", null, c.name);
      th.title = c.name;
      tr.append(th, el("td", "num", formatValueOf(c.name, c.meanIn)), el("td", "num", formatValueOf(c.name, c.meanOut)));
      body.append(tr);
    }
  }
  wrap.hidden = !d && !state.contrast;
}

/** A value of the filter of the graph on screen: an instant when the filter is a time column. */
function lensValueText(x) {
  const lens = (state.builtSettings || state.settings || {}).lens;
  return lens && lens.kind === "column" ? formatValueOf(lens.column, x) : formatNumber(x);
}

function columnOrder(name) {
  const k = state.table ? state.table.columns.findIndex((c) => c.name === name) : -1;
  return k < 0 ? 1e9 : k;
}

function formatP(p) {
  if (p === null || p === undefined) return "—";
  if (p < 1e-4) return "< 0.0001";
  return p.toPrecision(2);
}

function renderContrast() {
  const body = byId("contrast-body");
  body.textContent = "";
  const c = state.contrast;
  byId("contrast-wrap").hidden = !c;
  if (!c) return;
  for (const r of c) {
    const tr = el("tr");
    const th = el("th", null, r.name);
    th.title = r.name + ": " + formatCount(r.nIn) + " rows here, " + formatCount(r.nOut) + " elsewhere have a value";
    const ks = el("td", "num", formatNumber(r.ks));
    const bar = el("span", "ks-bar");
    bar.style.width = (r.ks === null ? 0 : Math.round(100 * r.ks)) + "%";
    ks.prepend(bar);
    const p = el("td", "num", formatP(r.pValue));
    if (r.pMethod) p.title = r.pMethod + " p-value (as scipy.stats.ks_2samp computes it)";
    // Means in and out are in the column table below (or the node's own statistics).
    tr.append(th, ks, p, el("td", "num", formatNumber(r.smd)));
    body.append(tr);
  }
  renderCategoryContrast();
}

/** A share in [0, 1] as a whole percentage ("under 1" for a small non-zero share). */
function formatShare(x) {
  const pct = 100 * x;
  return (pct > 0 && pct < 0.5 ? "under 1" : Math.round(pct)) + " %";
}

/** The text columns: total variation distance, chi-squared p-value, the level most
 *  over-represented in the group with its share here and elsewhere. */
function renderCategoryContrast() {
  const body = byId("category-body");
  body.textContent = "";
  const c = state.categoryContrast;
  byId("category-wrap").hidden = !c || c.length === 0;
  if (!c) return;
  for (const r of c) {
    const tr = el("tr");
    const th = el("th", null, r.name);
    th.title = r.name + ": " + formatCount(r.nIn) + " rows here, " + formatCount(r.nOut) + " elsewhere have a value"
      + (r.missingIn || r.missingOut ? " (" + formatCount(r.missingIn) + " and " + formatCount(r.missingOut) + " without one, left out)" : "")
      + "; " + plural(r.levels.length, "value", "values") + " seen";
    const tv = el("td", "num", formatNumber(r.tv));
    const bar = el("span", "ks-bar");
    bar.style.width = (r.tv === null ? 0 : Math.round(100 * r.tv)) + "%";
    tv.prepend(bar);
    const p = el("td", "num", formatP(r.pValue));
    if (r.chi2 !== null) {
      p.title = "Pearson's chi-squared test of independence, no continuity correction (as scipy.stats.chi2_contingency(table, correction=False)): χ² = "
        + formatNumber(r.chi2) + " with " + r.dof + " degrees of freedom"
        + (r.minExpected !== null && r.minExpected < 5 ? "; some expected counts are below 5, so this p-value is rough" : "");
    }
    const top = el("td", "top", r.topLevel === null ? "—" : "“" + r.topLevel + "” " + formatShare(r.topShareIn) + " here vs " + formatShare(r.topShareOut) + " elsewhere");
    tr.append(th, tv, p, top);
    body.append(tr);
  }
}

function renderRowTable() {
  const wrap = byId("rows-wrap");
  const rows = state.groupRows;
  const cells = state.rowCells;
  wrap.hidden = !rows;
  if (!rows) return;
  const head = byId("rows-head");
  const body = byId("rows-body");
  head.textContent = "";
  body.textContent = "";
  const pages = Math.max(1, Math.ceil(rows.length / ROWS_PER_PAGE));
  const first = state.rowPage * ROWS_PER_PAGE;
  byId("rows-range").textContent = rows.length === 0 ? "no rows" : "rows " + formatCount(first + 1) + "–" + formatCount(Math.min(rows.length, first + ROWS_PER_PAGE)) + " of " + formatCount(rows.length);
  byId("rows-prev").disabled = state.rowPage === 0;
  byId("rows-next").disabled = state.rowPage >= pages - 1;
  if (!cells) return;
  const th0 = el("th", "num", "Data row");
  th0.scope = "col";
  th0.title = "Row number in the file, counting data rows from 1 (the header not counted)";
  head.append(th0);
  for (const c of cells.columns) { const th = el("th", null, c); th.scope = "col"; th.title = c; head.append(th); }
  cells.cells.forEach(function (row, i) {
    const tr = el("tr");
    tr.append(el("th", "num", cells.dataRows[i]));
    for (const v of row) tr.append(el("td", typeof v === "number" ? "num" : null, v === null ? "—" : typeof v === "number" ? formatNumber(v) : v));
    body.append(tr);
  });
}

function wireInspector() {
  byId("detail-close").addEventListener("click", function () { setSelection([]); });
  byId("rows-prev").addEventListener("click", function () { turnRowPage(-1); });
  byId("rows-next").addEventListener("click", function () { turnRowPage(1); });
  byId("lasso-mode").addEventListener("click", function () { setLassoMode(!view.lassoMode); });
}

function setLassoMode(on) {
  view.lassoMode = on;
  const b = byId("lasso-mode");
  b.setAttribute("aria-pressed", on ? "true" : "false");
  b.classList.toggle("on", on);
  byId("canvas-wrap").classList.toggle("lasso", on);
}
