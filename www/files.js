/* files.js: the file list (several files stacked into one table, each with its report, a
 * sheet choice for spreadsheets and a remove button), the dialog that aligns a model table
 * onto the measurement rows by time, and the one-step differences (measurement minus
 * model, as derived columns). It decides nothing about the data: the engine merges,
 * aligns and reports; this module shows what it said and sends the user's choices.
 *
 * It reads and writes app.js's `state` (state.files holds the engine's file list) and goes
 * through app.js's loadTable, so every change streams with progress and rebuilds the graph
 * as a new file would. After an engine restart the files first read are read again and
 * every later change of the list (additions, removals, sheets, the alignment) is made again
 * in order (recovery.js). Only function declarations at the top level: app.js calls
 * renderFiles() before this part of the page's script has run.
 */

/** Loads several files at once (added to the list when `add`), then builds the graph. */
function loadFiles(files, add) {
  const started = performance.now();
  // A fresh set is a source that can be read again after an engine restart (recovery.js);
  // an addition is a step made again after it.
  const loading = add
    ? loadTable(null, function (progress) {
      return engine.request("load", { files, add: true }, progress).then(function (out) { rememberStep("load", { files, add: true }); return out; });
    })
    : loadTable({ files, add: false, name: files.length + " files" });
  return loading.then(function (table) {
    state.fileTimings = Object.assign({}, state.fileTimings, { mergeMs: state.timing.tableRead - started });
    return table;
  });
}

/** Sends one change of the file list (remove, sheet, plan) and rebuilds from the result. */
function changeFiles(op, payload) {
  const request = Object.assign({ op }, payload);
  return loadTable(null, function (progress) {
    return engine.request("files", request, progress).then(function (out) { rememberStep("files", request); return out; });
  });
}

/** " (units: ppbv)" for the legend of a column whose file stated its units, else "". */
function unitNote(name) {
  const c = state.table && state.table.columns.find((x) => x.name === name);
  return c && c.unit ? " (units: " + c.unit + ")" : "";
}

/** " (unit)" for a column whose file stated its units, else "". */
function unitSuffix(name) {
  const c = state.table && state.table.columns.find((x) => x.name === name);
  return c && c.unit ? " (" + c.unit + ")" : "";
}

function fileNames() {
  return state.files ? state.files.files.map((f) => f.name) : [];
}

function renderFiles() {
  const block = byId("files-block");
  const info = state.files;
  block.hidden = !(info && state.table);
  if (block.hidden) return;
  const list = byId("file-list");
  list.textContent = "";
  const several = info.files.length > 1;
  for (const f of info.files) {
    const li = el("li", "file-item");
    const head = el("div", "file-head");
    head.append(el("strong", "file-name", f.name), el("span", "file-meta", " " + f.format + " · " + plural(f.rows, "row", "rows") + " · " + plural(f.columns, "column", "columns")));
    if (several) {
      const remove = el("button", "quiet file-remove", "Remove");
      remove.type = "button";
      remove.dataset.file = f.name;
      remove.setAttribute("aria-label", "Remove " + f.name);
      head.append(remove);
    }
    li.append(head);
    const lines = [];
    if (f.lacked.length) lines.push("lacks " + f.lacked.join(", ") + " (missing on its rows)");
    if (f.madeText.length) lines.push("numbers kept as text, as another file holds text there: " + f.madeText.join(", "));
    if (f.otherUnits.length) lines.push("units differ from the first file's: " + f.otherUnits.join(", "));
    if (f.rowsLeftOut) lines.push(plural(f.rowsLeftOut, "row", "rows") + " left out: " + f.leftOutWhy.join("; "));
    for (const n of f.notes) lines.push(n);
    for (const line of lines) li.append(el("p", "file-note", line));
    if (f.sheets && f.sheets.length > 1) {
      const label = el("label", "field file-sheet");
      label.append(el("span", null, "Sheet"));
      const sel = el("select");
      sel.dataset.file = f.name;
      for (const s of f.sheets) {
        const o = el("option", null, s);
        o.value = s;
        o.selected = s === f.sheet;
        sel.append(o);
      }
      label.append(sel);
      li.append(label);
    }
    list.append(li);
  }
  byId("align-open").hidden = !several;
  if (!several) byId("align-box").hidden = true;
  renderAlignResult();
}

function renderAlignResult() {
  const info = state.files;
  const report = byId("align-report");
  const a = info && info.alignment;
  report.hidden = !a;
  byId("align-undo").hidden = !(info && info.plan);
  if (a) {
    const parts = [plural(a.matched, "row", "rows") + " of " + formatCount(a.rows) + " received model values"];
    if (a.noTime) parts.push(plural(a.noTime, "row has", "rows have") + " no time");
    if (a.noGroup) parts.push(plural(a.noGroup, "row's group has", "rows' groups have") + " no model rows");
    report.textContent = "Aligned: " + parts.join("; ") + ".";
  }
  const diffs = (info && info.differences) || [];
  const box = byId("diff-box");
  box.hidden = diffs.length === 0;
  const list = byId("diff-list");
  list.textContent = "";
  const have = new Set(((state.settings && state.settings.derived) || []).map((d) => d.name));
  for (const d of diffs) list.append(el("li", have.has(d.name) ? "added" : null, d.name + " = " + d.expression));
  byId("diff-add").disabled = diffs.every((d) => have.has(d.name));
}

/* ---------------------------------------------------------------- alignment dialog */

function roleOf(name) {
  const sel = document.querySelector('#align-roles select[data-file="' + CSS.escape(name) + '"]');
  return sel ? sel.value : "measurement";
}

function defaultRoles() {
  const names = fileNames();
  const plan = state.files && state.files.plan;
  if (plan) return names.map((n) => (plan.model.indexOf(n) >= 0 ? "model" : plan.measurement.indexOf(n) >= 0 ? "measurement" : "unused"));
  const modelish = names.map((n) => /model|forecast|simulat/i.test(n));
  if (!modelish.some(Boolean)) modelish[names.length - 1] = true;
  return modelish.map((m) => (m ? "model" : "measurement"));
}

function renderRoles() {
  const box = byId("align-roles");
  box.textContent = "";
  const roles = defaultRoles();
  fileNames().forEach(function (name, i) {
    const label = el("label", "field align-role");
    label.append(el("span", null, name));
    const sel = el("select");
    sel.dataset.file = name;
    for (const [v, t] of [["measurement", "measurements"], ["model", "model"], ["unused", "not used"]]) {
      const o = el("option", null, t);
      o.value = v;
      o.selected = v === roles[i];
      sel.append(o);
    }
    label.append(sel);
    box.append(label);
  });
}

/** The column an alignment most likely matches on: the first time column, else one named
 *  like a time. */
function guessTime(cols) {
  const names = cols.map((c) => c.name);
  const time = cols.find((c) => c.kind === "time");
  return (time && time.name) || names.find((n) => n === "time_utc") || names.find((n) => /time|date|when|stamp/i.test(n)) || names[0];
}

function fill(select, names, value, withNone) {
  select.textContent = "";
  if (withNone) {
    const o = el("option", null, "none");
    o.value = "";
    select.append(o);
  }
  for (const n of names) {
    const o = el("option", null, n + unitSuffix(n));
    o.value = n;
    select.append(o);
  }
  select.value = value !== undefined && value !== null ? value : (withNone ? "" : names[0] || "");
}

/** Fills the column choices from the files in each role. */
async function refreshAlignColumns() {
  const names = fileNames();
  const meas = names.filter((n) => roleOf(n) === "measurement");
  const model = names.filter((n) => roleOf(n) === "model");
  if (!meas.length || !model.length) {
    for (const id of ["align-mtime", "align-otime", "align-key"]) byId(id).textContent = "";
    byId("align-run").disabled = true;
    return;
  }
  byId("align-run").disabled = false;
  const [mc, oc] = await Promise.all([
    engine.request("files", { op: "columns", names: meas }),
    engine.request("files", { op: "columns", names: model }),
  ]);
  const plan = state.files && state.files.plan;
  fill(byId("align-mtime"), mc.map((c) => c.name), plan ? plan.align.measurementTime : guessTime(mc));
  fill(byId("align-otime"), oc.map((c) => c.name), plan ? plan.align.modelTime : guessTime(oc));
  const modelNames = new Set(oc.map((c) => c.name));
  const shared = mc.filter((c) => c.kind === "category" && modelNames.has(c.name) && c.name !== "source_file").map((c) => c.name);
  const guess = plan ? plan.align.measurementKey : shared.find((n) => /site|station|platform|location/i.test(n));
  fill(byId("align-key"), shared, guess || "", true);
}

function readPlan() {
  const names = fileNames();
  const key = byId("align-key").value || null;
  const tolText = byId("align-tol").value.trim();
  let seconds = null;
  if (tolText !== "") {
    seconds = Number(tolText.replace("−", "-"));
    if (!Number.isFinite(seconds) || seconds < 0) throw new Error("Alignment: '" + tolText + "' is not a number of seconds (0 or more); leave the field empty for no limit");
  }
  const method = byId("align-method").value === "linear" ? { kind: "linear", maxGap: seconds } : { kind: "nearest", tolerance: seconds };
  return {
    measurement: names.filter((n) => roleOf(n) === "measurement"),
    model: names.filter((n) => roleOf(n) === "model"),
    align: { measurementTime: byId("align-mtime").value, modelTime: byId("align-otime").value, measurementKey: key, modelKey: key, method, prefix: "model_" },
  };
}

async function runAlignment(plan) {
  const started = performance.now();
  await changeFiles("plan", { plan });
  state.fileTimings = Object.assign({}, state.fileTimings, { alignMs: state.timing.tableRead - started });
}

/** Adds the offered differences to the settings' derived columns, builds, and colours
 *  the graph by the first difference. */
async function addDifferences() {
  const diffs = (state.files && state.files.differences) || [];
  const s = JSON.parse(JSON.stringify(state.settings));
  const have = new Set((s.derived || []).map((d) => d.name));
  s.derived = (s.derived || []).concat(diffs.filter((d) => !have.has(d.name)));
  await applySettings(s);
  await buildNow();
  await refreshColumnSummaries();
  renderAll();
  if (diffs.length) await setColourColumn(diffs[0].name);
  return diffs.map((d) => d.name);
}

function wireFiles() {
  const add = byId("files-add-input");
  add.addEventListener("change", function () {
    const files = Array.from(add.files || []);
    if (files.length) loadFiles(files, true).catch(function () { /* shown on the page */ });
    add.value = "";
  });
  byId("file-list").addEventListener("click", function (ev) {
    const b = ev.target.closest("button.file-remove");
    if (b) changeFiles("remove", { name: b.dataset.file }).catch(function () { /* shown on the page */ });
  });
  byId("file-list").addEventListener("change", function (ev) {
    const sel = ev.target.closest("select[data-file]");
    if (sel) changeFiles("sheet", { name: sel.dataset.file, sheet: sel.value }).catch(function () { /* shown on the page */ });
  });
  byId("align-open").addEventListener("click", function () {
    const box = byId("align-box");
    box.hidden = !box.hidden;
    if (!box.hidden) {
      renderRoles();
      refreshAlignColumns().catch(function (e) { fail(e.message); });
    }
  });
  byId("align-roles").addEventListener("change", function () { refreshAlignColumns().catch(function (e) { fail(e.message); }); });
  byId("align-method").addEventListener("change", function () {
    byId("align-tol-label").textContent = byId("align-method").value === "linear"
      ? "Largest gap between model rows (seconds; empty: any)"
      : "Tolerance (seconds; empty: any)";
  });
  byId("align-run").addEventListener("click", function () {
    let plan;
    try { plan = readPlan(); } catch (e) { fail(e.message); return; }
    runAlignment(plan).catch(function () { /* shown on the page */ });
  });
  byId("align-undo").addEventListener("click", function () {
    changeFiles("plan", { plan: null }).catch(function () { /* shown on the page */ });
  });
  byId("diff-add").addEventListener("click", function () {
    addDifferences().catch(function () { /* shown on the page */ });
  });
}

wireFiles();
