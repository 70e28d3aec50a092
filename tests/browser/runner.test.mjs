// The page, the command-line runner and graph files, in headless Chromium from file://:
// - on a real open table (palmerpenguins 0.1.6, penguins, from $NERVURE_DATA; written by
//   tests/data/open_tables.py) the page's exports and results equal the runner's output
//   for the same table and the settings the page exported: the graph file, the diagram,
//   the resampling test, the grid of settings and the explanation of a group of nodes;
// - a graph file written by the runner (without member rows) opens in the page with no
//   table: drawn, coloured by any column from its statistics, inspected, exported;
// - a bad or foreign graph file, and settings files the page refuses (a column the table
//   lacks, a column listed twice, JSON nested 100 000 deep), leave the page as it was.
// The Python package's equality with the runner is in python/tests.

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { spawnSync } from "node:child_process";
import { existsSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { outDir, root, runCli, usePage, waitForGraph, waitForIdle } from "./harness.mjs";

const ctx = usePage({ viewport: { width: 1600, height: 900 } });
let page;
beforeEach(() => { page = ctx.page; });

const shots = process.env.NERVURE_SHOTS || null;

/** The open table `name`, or null (the test then says it was skipped) when NERVURE_DATA is unset. */
function openTable(t, name) {
  const dir = process.env.NERVURE_DATA;
  if (!dir) {
    t.skip("SKIPPED, not a pass: NERVURE_DATA is not set (tests/run.sh sets it)");
    return null;
  }
  const path = join(dir, name + ".csv");
  assert.ok(existsSync(path), path + " is missing: run tests/data/open_tables.py");
  return path;
}

async function exportVia(format) {
  await page.click("#export-button");
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(`[data-export="${format}"]`)]);
  const path = join(outDir, "runner-" + download.suggestedFilename());
  await download.saveAs(path);
  return { name: download.suggestedFilename(), path, text: readFileSync(path, "utf8") };
}

const cli = (...args) => JSON.parse(runCli([...args.map(String), "--quiet"]));

test("on a real open table the page's exports and results equal the runner's", async (t) => {
  const data = openTable(t, "penguins");
  if (!data) return;
  await page.setInputFiles("#file-input", data);
  await waitForGraph(page);
  await waitForIdle(page);
  const settings = await exportVia("settings");
  const graph = await exportVia("json");
  assert.equal(graph.name, "penguins.graph.json");
  const fromRunner = cli("graph", data, "--settings", settings.path);
  assert.deepEqual(JSON.parse(graph.text), fromRunner, "the page's graph file is the runner's, value for value");
  assert.deepEqual(fromRunner.summary, await page.evaluate(() => window.nervure.summary()));

  await page.waitForFunction(() => window.nervureShape.diagram() !== null, null, { timeout: 30000 });
  const diagram = await page.evaluate(() => window.nervureShape.diagram());
  assert.deepEqual(diagram, cli("diagram", data, "--settings", settings.path));

  await page.fill("#sp-draws", "12");
  await page.fill("#sp-alpha", "0.1");
  await page.fill("#sp-seed", "4");
  await page.click("#sp-boot-run");
  await page.waitForFunction(() => window.nervureShape.confidence() !== null && !window.nervureShape.running().boot, null, { timeout: 120000 });
  const confidence = await page.evaluate(() => window.nervureShape.confidence());
  assert.deepEqual(confidence, cli("resample", data, "--settings", settings.path, "--draws", 12, "--alpha", 0.1, "--seed", 4));

  await page.fill("#sp-grid-intervals", "3, 5");
  await page.fill("#sp-grid-overlaps", "0.25, 0.4");
  await page.fill("#sp-grid-draws", "0");
  await page.click("#sp-grid-run");
  await page.waitForFunction(() => window.nervureShape.grid() !== null && !window.nervureShape.running().grid, null, { timeout: 120000 });
  const grid = await page.evaluate(() => window.nervureShape.grid());
  const gridCli = cli("grid", data, "--settings", settings.path, "--intervals", "3,5", "--overlaps", "0.25,0.4", "--seed", 4);
  assert.deepEqual(grid.cells, gridCli.cells);

  // The explanation's p-values go through exp and log, whose last bits the page's
  // WebAssembly maths and the native library may round differently (seen: 2 units in the
  // last place of a chi-squared p-value): equal to 1e-12 relative, everything else exactly.
  await page.evaluate(() => window.nervure.select([0, 1]));
  const explained = cli("explain", data, "--settings", settings.path, "--nodes", "0,1");
  assertClose(await page.evaluate(() => window.nervure.contrast()), explained.columns, "contrast");
  assertClose(await page.evaluate(() => window.nervure.categoryContrast()), explained.categories, "categoryContrast");
});

/** Deep equality, numbers that are not whole equal to `rel` relative. */
function assertClose(got, want, where, rel = 1e-12) {
  if (typeof want === "number" && typeof got === "number" && !(Number.isInteger(want) && Number.isInteger(got))) {
    assert.ok(Math.abs(got - want) <= rel * Math.max(Math.abs(got), Math.abs(want)), `${where}: ${got} vs ${want}`);
    return;
  }
  if (want !== null && typeof want === "object") {
    assert.equal(typeof got, "object", where);
    assert.deepEqual(Object.keys(got), Object.keys(want), where);
    for (const k of Object.keys(want)) assertClose(got[k], want[k], where + "." + k, rel);
    return;
  }
  assert.equal(got, want, where);
}

test("a graph file written by the runner opens without its table: drawn, coloured, inspected, exported", async (t) => {
  const data = openTable(t, "penguins");
  if (!data) return;
  const file = join(outDir, "penguins-runner.graph.json");
  runCli(["graph", data, "--no-rows", "--out", file, "--quiet"]);
  const doc = JSON.parse(readFileSync(file, "utf8"));
  await page.setInputFiles("#open-graph", file);
  await page.waitForFunction(() => window.nervure.opened() !== null && window.nervure.colour() !== null, null, { timeout: 30000 });
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), doc.summary);
  assert.deepEqual(await page.evaluate(() => window.nervure.settings()), doc.settings);
  const opened = await page.evaluate(() => window.nervure.opened());
  assert.deepEqual(opened, { name: "penguins-runner.graph.json", version: 2, rowsKnown: false, builtFrom: "penguins.csv" });
  const layout = await page.evaluate(() => window.nervure.layout());
  assert.deepEqual(layout.positions, doc.nodes.flatMap((n) => [n.x, n.y]), "the file's layout is drawn");
  assert.deepEqual(layout.sizes, doc.nodes.map((n) => n.size));

  // Coloured by any number column, with the statistic the page offers, from the file.
  const stat = (name) => doc.statistics.find((c) => c.name === name);
  // (The column is named as soon as it is chosen; its values follow from the worker.)
  const colouredBy = (want) => page.waitForFunction((w) => JSON.stringify((window.nervure.colour() || {}).values) === JSON.stringify(w), want, { timeout: 30000 });
  await page.selectOption("#colour-select", "body_mass_g");
  await colouredBy(stat("body_mass_g").mean);
  await page.selectOption("#colour-select", "flipper_length_mm");
  await colouredBy(stat("flipper_length_mm").mean);
  assert.equal((await page.evaluate(() => window.nervure.colour())).column, "flipper_length_mm");
  assert.equal(await page.locator("#opened-note").isVisible(), true);
  assert.match(await page.textContent("#opened-note"), /member rows are not in this tab/);

  // The inspector: the file's statistics, and the member rows said to be elsewhere.
  await page.evaluate(() => window.nervure.select([0]));
  assert.match(await page.textContent("#detail-file-note"), /Member rows are not in this tab/);
  const cells = await page.$$eval("#detail-stats tr", (trs) => trs.map((tr) => tr.textContent));
  assert.ok(cells.some((c) => c.includes("body_mass_g")), "the node's columns are listed: " + cells.join(" | "));
  assert.equal(await page.isVisible("#rows-wrap"), false);
  assert.equal(await page.evaluate(() => window.nervure.message()), null);
  if (shots) {
    await page.screenshot({ path: join(shots, "graph-file-1600.png") });
    await page.setViewportSize({ width: 1024, height: 768 });
    await page.screenshot({ path: join(shots, "graph-file-1024.png") });
    await page.setViewportSize({ width: 1600, height: 900 });
  }

  // Exports: the graph file again (the same document), GraphML with the colouring, the report.
  assert.deepEqual(JSON.parse((await exportVia("json")).text), doc);
  const graphml = (await exportVia("graphml")).text;
  assert.ok(graphml.includes('attr.name="flipper_length_mm"'), "the colouring goes into the GraphML file");
  const py = process.env.NERVURE_PYTHON;
  if (py && existsSync(py)) {
    const gpath = join(outDir, "opened.graphml");
    writeFileSync(gpath, graphml);
    const sharedSum = doc.edges.reduce((s, e) => s + e.shared, 0);
    const r = spawnSync(py, [join(root, "tests", "reference", "check_graphml.py"), gpath, String(doc.summary.nodes), String(doc.summary.edges), "flipper_length_mm", String(sharedSum)], { encoding: "utf8" });
    assert.equal(r.status, 0, "NetworkX reads the GraphML export: " + r.stdout + r.stderr);
  }
  assert.match((await exportVia("report")).text, /hypothesis/);
  await page.click("#export-button");
  await page.click('[data-export="memberships"]');
  await page.waitForFunction(() => (window.nervure.message() || "").includes("without its member rows"));

  // Its settings cannot be rebuilt without the table: refused, nothing changed.
  const refused = await page.evaluate((s) => window.nervure.applySettings({ ...s, cover: { ...s.cover, intervals: 4 } }).then(() => null, (e) => e.message), doc.settings);
  assert.match(refused, /opened from the graph file penguins-runner\.graph\.json, without its table/);
  assert.deepEqual(await page.evaluate(() => window.nervure.settings()), doc.settings);
  assert.equal(await page.evaluate(() => document.getElementById("settings-form").inert), true);

  // Opening the table again leaves the graph file behind.
  await page.setInputFiles("#file-input", data);
  await page.waitForFunction(() => window.nervure.opened() === null && window.nervure.status().phase === "ready" && window.nervure.summary() !== null, null, { timeout: 60000 });
  await waitForIdle(page);
  assert.equal(await page.evaluate(() => document.getElementById("settings-form").inert), false);
});

test("a graph file given as data opens as a graph; a bad or foreign file changes nothing", async () => {
  const csv = join(root, "tests", "browser", "fixtures", "circle.csv");
  const g = join(outDir, "circle.graph.json");
  runCli(["graph", csv, "--out", g, "--quiet"]);
  const doc = JSON.parse(readFileSync(g, "utf8"));
  await page.setInputFiles("#file-input", g);
  await page.waitForFunction(() => window.nervure.opened() !== null, null, { timeout: 30000 });
  assert.equal((await page.evaluate(() => window.nervure.opened())).rowsKnown, true);
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), doc.summary);
  // With the rows in the file, the memberships export is the runner's.
  const m = await exportVia("memberships");
  const fromRunner = join(outDir, "circle.memberships.csv");
  runCli(["graph", csv, "--memberships", fromRunner, "--quiet", "--out", join(outDir, "circle-again.graph.json")]);
  assert.equal(m.text, readFileSync(fromRunner, "utf8"));

  const before = await page.evaluate(() => ({ summary: window.nervure.summary(), settings: window.nervure.settings(), layout: window.nervure.layout().positions }));
  const bad = [
    ["foreign.json", JSON.stringify({ format: "other-graphs", nodes: [] }), /not a Nervure graph file: its "format" is "other-graphs"/],
    ["newer.json", JSON.stringify({ ...doc, version: 7 }), /graph format version 7, written by a newer Nervure/],
    ["broken.json", JSON.stringify(doc).slice(0, 500), /not valid JSON/],
    ["edited.json", JSON.stringify({ ...doc, edges: [{ source: 0, target: 99999, shared: 1 }, ...doc.edges.slice(1)] }), /does not join two of the/],
    ["deep.json", "[".repeat(100000) + "]".repeat(100000), /nests 100000 levels deep/],
  ];
  for (const [name, text, expected] of bad) {
    await page.setInputFiles("#open-graph", { name, mimeType: "application/json", buffer: Buffer.from(text) });
    await page.waitForFunction((n) => (window.nervure.message() || "").includes(n), name, { timeout: 30000 });
    const message = await page.evaluate(() => window.nervure.message());
    assert.match(message, expected, name);
    assert.match(message, /^The graph file was not opened: .* The graph shown is unchanged\.$/s, name);
    assert.ok(!/postMessage|call stack/.test(message), name + ": " + message);
    const now = await page.evaluate(() => ({ summary: window.nervure.summary(), settings: window.nervure.settings(), layout: window.nervure.layout().positions }));
    assert.deepEqual(now, before, name + ": the page kept what it had");
  }
});

test("settings files the table refuses leave the settings, the form, Export → Settings and the graph as they were", async () => {
  const csv = join(root, "tests", "browser", "fixtures", "circle.csv");
  await page.setInputFiles("#file-input", csv);
  await waitForGraph(page);
  await waitForIdle(page);
  const before = await page.evaluate(() => ({ summary: window.nervure.summary(), settings: window.nervure.settings() }));
  const exported = (await exportVia("settings")).text;
  const form = () => page.evaluate(() => ({ intervals: document.getElementById("s-intervals").value, overlap: document.getElementById("s-overlap").value }));
  const formBefore = await form();
  const s = before.settings;
  const cases = [
    ["lacks.settings.json", JSON.stringify({ ...s, columns: ["x", "depth"], cover: { ...s.cover, intervals: 7 } }), /were not used: setting 'columns': no column named 'depth' in circle\.csv/],
    ["twice.settings.json", JSON.stringify({ ...s, columns: ["x", "x"], cover: { ...s.cover, intervals: 7 } }), /were not used: setting 'columns': column 'x' is listed twice/],
    ["deep.settings.json", "{\"a\":".repeat(100000) + "1" + "}".repeat(100000), /were not used: setting '\(document\)': deep\.settings\.json nests 100000 levels deep/],
    ["graph.settings.json", JSON.stringify({ format: "nervure-graph", version: 2 }), /is a graph file, not a settings document: open it with Open graph…/],
  ];
  for (const [name, text, expected] of cases) {
    await page.setInputFiles("#import-settings", { name, mimeType: "application/json", buffer: Buffer.from(text) });
    await page.waitForFunction((n) => (window.nervure.message() || "").includes(n), name, { timeout: 30000 });
    await waitForIdle(page);
    const message = await page.evaluate(() => window.nervure.message());
    assert.match(message, expected, name);
    assert.match(message, /The settings and the graph shown are unchanged\.$/, name);
    assert.ok(!/postMessage|call stack/.test(message), name + ": " + message);
    assert.deepEqual(await page.evaluate(() => window.nervure.settings()), before.settings, name + ": the settings in force");
    assert.deepEqual(await page.evaluate(() => window.nervure.summary()), before.summary, name + ": the graph");
    assert.deepEqual(await form(), formBefore, name + ": the form");
    assert.equal((await exportVia("settings")).text, exported, name + ": Export → Settings");
    assert.equal(await page.evaluate(() => document.getElementById("summary-line").textContent.includes("not updated")), false, name + ": not marked stale");
    if (shots && name === "lacks.settings.json") await page.screenshot({ path: join(shots, "settings-refused-1600.png") });
  }
  // A good file still takes over.
  const good = { ...s, cover: { ...s.cover, intervals: 7 } };
  await page.setInputFiles("#import-settings", { name: "good.settings.json", mimeType: "application/json", buffer: Buffer.from(JSON.stringify(good)) });
  await page.waitForFunction(() => window.nervure.settings().cover.intervals === 7 && window.nervure.status().phase === "ready");
  await waitForIdle(page);
  assert.equal(await page.evaluate(() => window.nervure.message()), null);
});
