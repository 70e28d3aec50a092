/* keys.js: keyboard shortcuts, the help panel that lists them, and the dock's tabs.
 * Shortcuts act only when the focus is not in a text field, a select or a dialog's
 * field, so typing is never taken over. Every action here also has a button.
 */

const SHORTCUTS = [
  ["r", "Build the graph now", () => buildNow().catch(() => {})],
  ["c", "Colour by the next column", () => stepColour(1)],
  ["Shift+C", "Colour by the previous column", () => stepColour(-1)],
  ["f", "Fit the graph in view", () => view.fit()],
  ["Escape", "Clear the selection (or close a panel)", () => setSelection([])],
  ["l", "Lasso mode on or off", () => setLassoMode(!view.lassoMode)],
  ["g", "Put the focus on the graph (then arrows move, Enter selects, Shift+Enter adds)", () => byId("graph-canvas").focus()],
  ["i", "Show the inspector", () => showTab("inspect")],
  ["p", "Show the scatter", () => showTab("scatter")],
  ["h", "Show the history of runs", () => showTab("history")],
  ["e", "Open the export menu", () => { const m = byId("export-menu"); m.open = true; const b = m.querySelector("button:not([disabled])"); if (b) b.focus(); }],
  ["s", "Save the settings as a file", () => exportFile("settings")],
  ["Ctrl+O", "Open a settings file", () => byId("import-settings").click()],
  ["?", "This list", () => openHelp()],
];

function stepColour(delta) {
  const names = numericColumns();
  if (!names.length) return;
  const k = names.indexOf(state.colour.column);
  const next = names[(k + delta + names.length) % names.length];
  byId("colour-select").value = next;
  setColourColumn(next).catch(() => {});
}

function keyName(ev) {
  if (ev.key === "?" ) return "?";
  if ((ev.ctrlKey || ev.metaKey) && ev.key.toLowerCase() === "o") return "Ctrl+O";
  if (ev.ctrlKey || ev.metaKey || ev.altKey) return null;
  if (ev.key.length === 1 && ev.shiftKey && /[a-z]/i.test(ev.key)) return "Shift+" + ev.key.toUpperCase();
  return ev.key.length === 1 ? ev.key.toLowerCase() : ev.key;
}

function typingIn(target) {
  if (!target || !target.tagName) return false;
  const tag = target.tagName;
  if (tag === "TEXTAREA" || target.isContentEditable) return true;
  if (tag === "SELECT") return true;
  if (tag === "INPUT") return !/^(checkbox|radio|button|range|file)$/.test(target.type);
  return false;
}

function openHelp() {
  const body = byId("help-keys");
  body.textContent = "";
  for (const [key, what] of SHORTCUTS) {
    const tr = el("tr");
    const th = el("th");
    th.append(el("kbd", null, key));
    tr.append(th, el("td", null, what));
    body.append(tr);
  }
  const d = byId("help");
  if (!d.open) d.showModal();
  byId("help-close").focus();
}

const TABS = ["inspect", "scatter", "history"];

function showTab(name) {
  for (const t of TABS) {
    const on = t === name;
    const tab = byId("tab-" + t);
    tab.setAttribute("aria-selected", on ? "true" : "false");
    tab.tabIndex = on ? 0 : -1;
    byId("pane-" + t).hidden = !on;
  }
  state.tab = name;
  if (name === "scatter") { renderScatterControls(); refreshScatter(); }
}

function wireKeys() {
  document.addEventListener("keydown", function (ev) {
    if (ev.defaultPrevented) return;
    if (document.querySelector("dialog[open]")) return;   // a dialog handles its own keys (Escape closes it)
    if (typingIn(ev.target) && ev.key !== "Escape") return;
    const name = keyName(ev);
    const hit = SHORTCUTS.find((s) => s[0] === name);
    if (!hit) return;
    if (name === "Escape" && byId("export-menu").open) { byId("export-menu").open = false; byId("export-button").focus(); return; }
    if (!state.table && !["?", "Ctrl+O", "Escape"].includes(name)) return;
    ev.preventDefault();
    hit[2]();
  });
  byId("help-button").addEventListener("click", openHelp);
  byId("help-close").addEventListener("click", function () { byId("help").close(); });
  byId("fit-view").addEventListener("click", function () { view.fit(); });
  const tablist = document.querySelector(".tabs");
  for (const t of TABS) byId("tab-" + t).addEventListener("click", function () { showTab(t); });
  tablist.addEventListener("keydown", function (ev) {
    const k = TABS.indexOf(state.tab || "inspect");
    const step = ev.key === "ArrowRight" ? 1 : ev.key === "ArrowLeft" ? -1 : 0;
    if (!step) return;
    ev.preventDefault();
    const next = TABS[(k + step + TABS.length) % TABS.length];
    showTab(next);
    byId("tab-" + next).focus();
  });
}
