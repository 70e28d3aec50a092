/* rows.js: the "Keep rows where …" panel. The settings document holds one condition text
 * (`keepRows`); this panel edits that text and nothing else, so what it shows as applied is
 * exactly what the engine applies. A condition is typed, or written by the builder from one
 * column: a range of numbers, values of a text column ticked (with their row counts), a
 * window of date-times; the builder adds its clause to the condition (with `and`) and
 * applies it at once.
 *
 * The engine parses and evaluates the condition; a mistake comes back as the engine's
 * message with a caret line under the part at fault, shown here in a monospace block, and
 * the previous condition (and its graph) stays, as a condition that keeps no row or one
 * row does. After each build the line above the form says how many rows the condition kept
 * and did not keep (the summary's counts).
 */

/** Text values listed with tick boxes at most; a column with more is written by hand. */
const ROW_LEVELS_LISTED = 60;

const rowsPanel = {
  overview: null,     // the engine's overview of the builder's column
  overviewSeq: 0,
  draft: null,        // the text typed and not yet applied (or refused), or null
};

/** A column name as the condition language reads it: bare when it can be, else quoted. */
function conditionName(name) {
  const plain = /^[A-Za-z_][A-Za-z0-9_]*$/.test(name) && ["and", "or", "not", "in"].indexOf(name) < 0;
  return plain ? name : '"' + name.replace(/"/g, '""') + '"';
}

/** A text value in a condition, in double quotes (a double quote doubled). */
function conditionValue(text) {
  return '"' + String(text).replace(/"/g, '""') + '"';
}

/** The applied condition, or null when every row is kept. */
function appliedCondition() {
  return (state.settings && state.settings.keepRows) || null;
}

function renderRows() {
  const panel = byId("rows-panel");
  panel.hidden = !state.settings;
  if (!state.settings) return;
  const applied = appliedCondition();
  const line = byId("k-applied");
  line.textContent = "";
  const s = state.summary;
  if (!applied) {
    line.append(document.createTextNode("Every row takes part" + (state.table ? " (" + plural(state.table.rows, "row", "rows") + ")." : ".")));
  } else {
    line.append(document.createTextNode("Applied: rows where "), el("code", "mono", applied));
    if (s && state.builtSettings && state.builtSettings.keepRows === applied) {
      const kept = state.table.rows - s.rowsNotKept;
      let counts = " · " + plural(kept, "row kept", "rows kept") + ", " + formatCount(s.rowsNotKept) + " not kept";
      if (s.rowsNotKeptMissing > 0) counts += " (" + formatCount(s.rowsNotKeptMissing) + " of them for a missing value the condition reads)";
      // Narrow no-break spaces: a count is never cut across two lines.
      line.append(el("span", "k-counts", counts.replace(/\u2009/g, "\u202f")));
    }
  }
  const input = byId("k-condition");
  if (input !== document.activeElement && rowsPanel.draft === null) input.value = applied || "";
  const draft = rowsPanel.draft !== null && rowsPanel.draft.trim() !== (applied || "");
  byId("k-draft").hidden = !draft || !byId("k-error").hidden;
  byId("k-clear").disabled = !applied;
  renderRowColumns();
}

function showRowsError(message) {
  const box = byId("k-error");
  box.hidden = !message;
  showCaretMessage(box, message);
  if (message) box.scrollIntoView({ block: "nearest" });
  byId("k-draft").hidden = true;
}

/** Applies `text` as the condition (blank: every row), checks and builds; on error the
 *  previous condition and its graph come back and the message shows under the line. */
async function setKeepRows(text) {
  const t = String(text).trim();
  rowsPanel.draft = t;
  showRowsError(null);
  const summary = await applyOrRestore(function (s) {
    if (t) s.keepRows = t; else delete s.keepRows;
  }, showRowsError);
  rowsPanel.draft = null;
  renderRows();
  return summary;
}

/* ---------------------------------------------------------------- the builder */

function renderRowColumns() {
  const select = byId("k-column");
  const names = state.table ? state.table.columns.map((c) => c.name) : [];
  const key = JSON.stringify(names);
  if (select.dataset.key === key) return;
  select.dataset.key = key;
  const keep = select.value;
  setOptions(select, [["", "Choose a column…"]].concat(names.map((n) => [n, n])), names.indexOf(keep) >= 0 ? keep : "");
  if (select.value !== keep) showOverview(null);
}

async function chooseRowColumn(name) {
  const seq = ++rowsPanel.overviewSeq;
  if (!name) { showOverview(null); return null; }
  const o = await engine.request("overview", { column: name, maxLevels: ROW_LEVELS_LISTED });
  if (seq !== rowsPanel.overviewSeq) return null;
  showOverview(o);
  return o;
}

function showOverview(o) {
  rowsPanel.overview = o;
  byId("k-builder").dataset.column = o ? o.name : "";
  const kind = o ? o.kind : null;
  byId("k-range").hidden = kind !== "number";
  byId("k-levels-wrap").hidden = kind !== "category";
  byId("k-window").hidden = kind !== "time";
  byId("k-add").hidden = !o;
  const note = byId("k-builder-note");
  note.textContent = "";
  if (!o) return;
  const gap = o.missing > 0 ? " " + plural(o.missing, "row has", "rows have") + " no value here and is never kept by a clause on this column." : "";
  if (kind === "number") {
    byId("k-lo").value = "";
    byId("k-hi").value = "";
    byId("k-lo").placeholder = formatNumber(o.min);
    byId("k-hi").placeholder = formatNumber(o.max);
    note.textContent = "Values from " + formatNumber(o.min) + " to " + formatNumber(o.max) + "; both ends are kept." + gap;
  } else if (kind === "time") {
    byId("k-from").value = o.first || "";
    byId("k-to").value = o.last || "";
    const clock = o.clock && o.clock !== "+00:00" ? "on the column's clock (" + o.clock + ")" : "UTC";
    note.textContent = "From " + o.first + " to " + o.last + ". The window keeps its start and not its end; a time written without an offset is read " + clock + "." + gap;
  } else {
    const list = byId("k-levels");
    list.textContent = "";
    for (const [value, rows] of o.levels) {
      const li = el("li");
      const label = el("label");
      const box = el("input");
      box.type = "checkbox";
      box.dataset.value = value;
      label.append(box, el("span", "k-level", value), el("span", "k-level-count", formatCount(rows)));
      li.append(label);
      list.append(li);
    }
    note.textContent = (o.moreLevels > 0 ? "The " + o.levels.length + " most common values of " + (o.levels.length + o.moreLevels) + ", with their rows; write others in the condition by hand." : "Each value with its rows in the file.") + gap;
  }
}

/** The clause the builder makes for its column, or an error saying what is missing. */
function builderClause() {
  const o = rowsPanel.overview;
  if (!o) throw new Error("choose a column first");
  const name = conditionName(o.name);
  if (o.kind === "number") {
    const read = (id) => {
      const text = byId(id).value.trim().replace("−", "-");
      if (text === "") return null;
      if (!Number.isFinite(Number(text))) throw new Error("'" + byId(id).value + "' is not a number");
      return text;
    };
    const lo = read("k-lo"), hi = read("k-hi");
    if (lo === null && hi === null) throw new Error("give the lowest value kept, the highest, or both");
    const parts = [];
    if (lo !== null) parts.push(name + " >= " + lo);
    if (hi !== null) parts.push(name + " <= " + hi);
    return parts.join(" and ");
  }
  if (o.kind === "time") {
    const from = byId("k-from").value.trim(), to = byId("k-to").value.trim();
    if (!from && !to) throw new Error("give the start of the window, its end, or both");
    const parts = [];
    if (from) parts.push(name + " >= " + conditionValue(from));
    if (to) parts.push(name + " < " + conditionValue(to));
    return parts.join(" and ");
  }
  const ticked = Array.from(document.querySelectorAll("#k-levels input:checked")).map((b) => b.dataset.value);
  if (ticked.length === 0) throw new Error("tick at least one value to keep");
  if (ticked.length === 1) return name + " == " + conditionValue(ticked[0]);
  return name + " in (" + ticked.map(conditionValue).join(", ") + ")";
}

/** The condition with `clause` added: `and` binds tighter than `or`, so a condition with
 *  an `or` in it is put in parentheses first. */
function withClause(condition, clause) {
  const c = (condition || "").trim();
  if (!c) return clause;
  return (/\bor\b/.test(c) ? "(" + c + ")" : c) + " and " + clause;
}

async function addBuilderClause() {
  let clause;
  try {
    clause = builderClause();
  } catch (e) {
    showRowsError(e.message);
    throw e;
  }
  const next = withClause(rowsPanel.draft !== null ? rowsPanel.draft : appliedCondition(), clause);
  byId("k-condition").value = next;
  return setKeepRows(next);
}

function wireRows() {
  byId("k-form").addEventListener("submit", function (ev) {
    ev.preventDefault();
    setKeepRows(byId("k-condition").value).catch(function () { /* shown under the line */ });
  });
  byId("k-condition").addEventListener("input", function () {
    rowsPanel.draft = byId("k-condition").value;
    byId("k-draft").hidden = rowsPanel.draft.trim() === (appliedCondition() || "");
  });
  byId("k-clear").addEventListener("click", function () {
    byId("k-condition").value = "";
    setKeepRows("").catch(function () { /* shown under the line */ });
  });
  byId("k-column").addEventListener("change", function () {
    chooseRowColumn(byId("k-column").value).catch(function (e) { showRowsError(e.message); });
  });
  byId("k-add").addEventListener("click", function () {
    addBuilderClause().catch(function () { /* shown under the line */ });
  });
}

/** A new table: the builder's column and any draft belong to the old one. */
function rowsTableChanged() {
  rowsPanel.draft = null;
  rowsPanel.overviewSeq++;
  byId("k-column").dataset.key = "";
  showOverview(null);
  showRowsError(null);
}
