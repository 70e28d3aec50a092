/* derived.js: the panel where a user adds, edits and removes derived columns (a name and
 * an expression over other columns). The engine parses and evaluates them; this panel
 * only edits the settings' `derived` list and shows the engine's message, whose second
 * line puts carets under the part of the expression at fault, in a monospace block.
 *
 * After a build whose derived list changed, the column summaries are fetched again, so
 * derived columns appear in the column list, the colour choices and the lens column list.
 */

let derivedEditing = null;   // index being edited, or null when adding

function derivedNames() {
  return new Set(((state.settings && state.settings.derived) || []).map((d) => d.name));
}

function renderDerived() {
  const panel = byId("derived-panel");
  panel.hidden = !state.settings;
  if (!state.settings) return;
  const list = byId("derived-list");
  list.textContent = "";
  (state.settings.derived || []).forEach(function (d, i) {
    const li = el("li", "derived-item" + (derivedEditing === i ? " editing" : ""));
    const text = el("div", "derived-text");
    text.append(el("strong", null, d.name), el("code", "mono", d.expression));
    const info = (state.derivedInfo || []).find((x) => x.name === d.name);
    if (info && info.missing > 0) text.append(el("span", "derived-missing", plural(info.missing, "row", "rows") + " without a value"));
    const edit = el("button", "small", "Edit");
    edit.type = "button";
    edit.setAttribute("aria-label", "Edit derived column " + d.name);
    edit.addEventListener("click", function () { startEditDerived(i); });
    const remove = el("button", "small", "Remove");
    remove.type = "button";
    remove.setAttribute("aria-label", "Remove derived column " + d.name);
    remove.addEventListener("click", function () { removeDerived(i).catch(function () { /* shown */ }); });
    li.append(text, edit, remove);
    list.append(li);
  });
  byId("d-add").textContent = derivedEditing === null ? "Add column" : "Save change";
  byId("d-cancel").hidden = derivedEditing === null;
}

function startEditDerived(i) {
  const d = state.settings.derived[i];
  derivedEditing = i;
  byId("d-name").value = d.name;
  byId("d-expression").value = d.expression;
  showDerivedError(null);
  renderDerived();
  byId("d-expression").focus();
}

function showDerivedError(message) {
  const box = byId("d-error");
  box.hidden = !message;
  // The engine's message: "setting 'derived[0].expression': <expression>\n<carets> <what>".
  showCaretMessage(box, message);
  if (message) box.scrollIntoView({ block: "nearest" });
}

/** Replaces the derived list, checks and builds; on error the previous list comes back
 *  (the graph on screen still matches it) and the message shows under the form. */
async function setDerivedList(list) {
  return applyOrRestore(function (s) { s.derived = list; }, showDerivedError);
}

/** Adds a derived column (or replaces the one being edited). */
async function addDerived(name, expression) {
  const list = ((state.settings && state.settings.derived) || []).slice();
  const entry = { name: String(name).trim(), expression: String(expression) };
  if (derivedEditing !== null) {
    const old = list[derivedEditing].name;
    list[derivedEditing] = entry;
    // A renamed column: the other settings that used the old name follow it.
    if (old !== entry.name) renameColumnInSettings(old, entry.name);
  } else list.push(entry);
  await setDerivedList(list);
  derivedEditing = null;
  byId("d-name").value = "";
  byId("d-expression").value = "";
  renderDerived();
  return state.summary;
}

function renameColumnInSettings(from, to) {
  const s = state.settings;
  s.columns = s.columns.map((c) => (c === from ? to : c));
  if (s.lens.kind === "column" && s.lens.column === from) s.lens.column = to;
  if (state.colour.column === from) state.colour.column = to;
}

/** Removes derived column `i`, and the settings' uses of it (a coordinate, the lens). */
async function removeDerived(i) {
  const list = state.settings.derived.slice();
  const [gone] = list.splice(i, 1);
  const s = state.settings;
  s.columns = s.columns.filter((c) => c !== gone.name);
  if (s.columns.length === 0) s.columns = measureColumns().filter((c) => !derivedNames().has(c)).slice(0, 1);
  if (s.lens.kind === "column" && s.lens.column === gone.name) s.lens = { kind: "principal", component: 1 };
  if (state.colour.column === gone.name) state.colour.column = null;
  if (derivedEditing === i) derivedEditing = null;
  await setDerivedList(list);
  renderDerived();
  return state.summary;
}

/** After each build: if the derived list changed, fetch the columns again. */
async function syncDerivedColumns() {
  const key = JSON.stringify((state.settings && state.settings.derived) || []);
  if (key === state.derivedKey) return;
  state.derivedKey = key;
  await refreshColumnSummaries();
  state.derivedInfo = await engine.request("derivedInfo");
  if (!state.colour.column) state.colour.column = defaultColourColumn();
  renderSettings();
  renderColourControls();
  renderDerived();
}

function wireDerived() {
  byId("derived-form").addEventListener("submit", function (ev) {
    ev.preventDefault();
    const name = byId("d-name").value, expression = byId("d-expression").value;
    if (!name.trim()) { showDerivedError("Give the new column a name."); byId("d-name").focus(); return; }
    if (!expression.trim()) { showDerivedError("Write an expression, e.g. a - b."); byId("d-expression").focus(); return; }
    addDerived(name, expression).catch(function () { /* shown under the form */ });
  });
  byId("d-cancel").addEventListener("click", function () {
    derivedEditing = null;
    byId("d-name").value = "";
    byId("d-expression").value = "";
    showDerivedError(null);
    renderDerived();
  });
}
