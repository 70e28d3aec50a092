// Browser tests of the built page, dist/nervure.html, opened from file:// in headless
// Chromium (Debian's /usr/bin/chromium) and driven as a person would.
//
//   cargo run --release --features page-builder --bin nervure-build   # builds the page
//   npm ci && node --test tests/browser/
//
// Every test fails on any request that is not the page itself or a blob:/data: URL, and on
// any console error or uncaught page error. Summaries are compared with the command-line
// runner's for the same settings (set NERVURE_CLI to a built `nervure` binary to skip cargo).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { copyFileSync, existsSync, mkdirSync, readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { here, root, outDir, circleCsv, usePage, waitForGraph as waitFor, uncoveredNode, cliSummary, cliAutoSettings } from "./harness.mjs";

const ctx = usePage();
let page;
beforeEach(() => { page = ctx.page; });



async function waitForGraph() {
  await waitFor(page);
}

async function loadCircleThroughInput() {
  await page.setInputFiles("#file-input", circleCsv);
  await waitForGraph();
}

test("the demo button draws a graph with no request", async (t) => {
  if (!(await page.isVisible("#demo-button"))) {
    t.skip("the page was built without demo/river-sensors.csv");
    return;
  }
  const t0 = Date.now();
  await page.click("#demo-button");
  await waitForGraph();
  const wall = Date.now() - t0;
  const summary = await page.evaluate(() => window.nervure.summary());
  const timings = await page.evaluate(() => window.nervure.timings());
  assert.ok(summary.nodes > 0, "the demo graph has no node");
  assert.ok(summary.rows > 0);
  // The summary line shows the engine's counts.
  const line = await page.textContent("#summary-line");
  assert.match(line.replace(/\u2009/g, ""), new RegExp("\\b" + summary.nodes + " node"));
  assert.ok(await page.isVisible("#caution"), "the caution about settings is not shown");
  console.log(`demo: first graph drawn ${timings.firstGraphMs.toFixed(0)} ms after the button (table read at ${timings.tableReadMs.toFixed(0)} ms; ${wall} ms as the test saw it); ${summary.rows} rows, ${summary.nodes} nodes, ${summary.edges} edges`);
  // A picture with a node selected, for people to look at (and for the README).
  const layout = await page.evaluate(() => window.nervure.layout());
  const { target, pos } = uncoveredNode(layout, true);
  const box = await page.locator("#graph-canvas").boundingBox();
  await page.mouse.click(box.x + pos(target).x, box.y + pos(target).y);
  await page.waitForFunction(() => document.querySelectorAll("#rows-body tr").length > 0);
  await page.mouse.move(box.x + 5, box.y + box.height - 5);
  await page.waitForTimeout(300);
  await page.screenshot({ path: join(outDir, "page.png") });
  // docs/screenshot.png is committed: refreshed only when asked, so test runs leave the tree clean.
  const docsShot = join(root, "docs", "screenshot.png");
  if (process.env.NERVURE_UPDATE_SCREENSHOT || !existsSync(docsShot)) {
    mkdirSync(dirname(docsShot), { recursive: true });
    copyFileSync(join(outDir, "page.png"), docsShot);
  }
});

test("a file picked with the file input gives the command-line runner's graph", async () => {
  await loadCircleThroughInput();
  const timings = await page.evaluate(() => window.nervure.timings());
  console.log(`circle.csv: first graph drawn ${timings.firstGraphMs.toFixed(0)} ms after the file was given`);
  assert.ok(/^600 rows used · 0 rows left out/.test((await page.textContent("#summary-rows")).replace(/\u2009/g, "")));

  // The automatic first settings are the runner's automatic settings for the same file.
  const autoSettings = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(autoSettings, cliAutoSettings(circleCsv));
  // ... and the automatic graph has the runner's summary for them.
  const autoSummary = await page.evaluate(() => window.nervure.summary());
  assert.deepEqual(autoSummary, cliSummary(circleCsv, autoSettings));

  // Settings chosen by hand: a noisy circle is one component with one loop by construction.
  const chosen = {
    version: 1, columns: ["x", "y"], scaling: "zscore", missing: { fillValues: [] },
    lens: { kind: "principal", component: 1 }, cover: { intervals: 8, overlap: 0.3 },
    clustering: { kind: "dbscan", eps: 0.3, minPoints: 5 }, edges: { minShared: 1 }, seed: 1,
  };
  await page.evaluate((s) => window.nervure.applySettings(s), chosen);
  const summary = await page.evaluate(() => window.nervure.run());
  assert.deepEqual(summary, cliSummary(circleCsv, chosen));
  assert.equal(summary.rows, 600);
  assert.equal(summary.components, 1, "a circle is one piece");
  assert.equal(summary.loops, 1, "a circle has one loop");
  // The form shows what was applied.
  assert.equal(await page.inputValue("#s-intervals"), "8");
  assert.equal(await page.inputValue("#s-eps"), "0.3");
});

test("a change in the settings form rebuilds the graph by itself", async () => {
  await loadCircleThroughInput();
  const before = await page.evaluate(() => window.nervure.status().builds);
  const intervals = (await page.evaluate(() => window.nervure.settings().cover.intervals)) + 3;
  await page.fill("#s-intervals", String(intervals));
  await page.press("#s-intervals", "Tab");
  await page.waitForFunction((b) => { const s = window.nervure.status(); return s.builds > b && !s.pending && s.phase === "ready"; }, before, { timeout: 60000 });
  const settings = await page.evaluate(() => window.nervure.settings());
  assert.equal(settings.cover.intervals, intervals);
  // One column fewer: untick angle_deg.
  assert.ok(settings.columns.includes("angle_deg"), "the automatic settings use every numeric column of the circle");
  const builds = await page.evaluate(() => window.nervure.status().builds);
  await page.uncheck('#columns-body input[data-column="angle_deg"]');
  await page.waitForFunction((b) => { const s = window.nervure.status(); return s.builds > b && !s.pending && s.phase === "ready"; }, builds, { timeout: 60000 });
  const after = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(after.columns, settings.columns.filter((c) => c !== "angle_deg"));
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), cliSummary(circleCsv, after));
});

test("the column table shows the file's columns and types", async () => {
  await loadCircleThroughInput();
  const rows = await page.$$eval("#columns-body tr", (trs) => trs.map((tr) => [tr.querySelector(".column-name").textContent, tr.querySelector(".kind").textContent, ...Array.from(tr.cells).slice(2).map((c) => c.textContent)]));
  assert.deepEqual(rows.map((r) => r[0]), ["x", "y", "angle_deg", "half"]);
  // Kinds by construction of the fixture (make-circle.mjs): three numeric columns, one of two labels.
  assert.deepEqual(rows.map((r) => r[1]), ["number", "number", "number", "category · 2 values"]);
  assert.deepEqual(rows.map((r) => r[2]), ["0", "0", "0", "0"]);
  // Ranges: angles are drawn in [0, 360) degrees.
  const angle = rows[2].slice(3).map((v) => Number(v.replace("−", "-")));
  assert.ok(angle[0] >= 0 && angle[1] <= 360 && angle[0] < angle[1], "angle_deg range " + angle);  // shown to 4 digits, so 359.99 reads 360
  // The category column cannot be a coordinate.
  assert.equal(await page.isDisabled('#columns-body input[data-column="half"]'), true);
});

test("changing the colouring changes the legend and the drawing", async () => {
  await loadCircleThroughInput();
  const legendOf = () => page.evaluate(() => ["legend-title", "legend-min", "legend-max"].map((id) => document.getElementById(id).textContent));
  const before = await legendOf();
  const canvasBefore = await page.locator("#graph-canvas").screenshot();
  const current = await page.inputValue("#colour-select");
  const next = current === "angle_deg" ? "y" : "angle_deg";
  await page.selectOption("#colour-select", next);
  await page.waitForFunction((c) => document.getElementById("legend-title").textContent.includes(c), next);
  const afterLegend = await legendOf();
  assert.notDeepEqual(afterLegend, before);
  assert.ok(afterLegend[0].includes(next));
  // Angles run over [0, 360): node means of angle_deg stay inside that range.
  if (next === "angle_deg") {
    const lo = Number(afterLegend[1].replace("−", "-")), hi = Number(afterLegend[2].replace("−", "-"));
    assert.ok(lo >= 0 && hi <= 360 && lo < hi, `legend range ${lo}..${hi}`);
  }
  await page.waitForTimeout(100);
  const canvasAfter = await page.locator("#graph-canvas").screenshot();
  assert.ok(!canvasBefore.equals(canvasAfter), "the nodes were not recoloured");
});

test("clicking a node shows its size and rows", async () => {
  await loadCircleThroughInput();
  const layout = await page.evaluate(() => window.nervure.layout());
  const { target, pos } = uncoveredNode(layout);
  const box = await page.locator("#graph-canvas").boundingBox();
  const p = pos(target);
  assert.ok(p.x > 0 && p.y > 0 && p.x < box.width && p.y < box.height, "the node lies inside the canvas");
  await page.mouse.click(box.x + p.x, box.y + p.y);
  await page.waitForSelector("#detail:not([hidden])");
  assert.equal(await page.evaluate(() => window.nervure.selected()), target);
  await page.waitForFunction(() => document.querySelectorAll("#rows-body tr").length > 0);
  const sub = (await page.textContent("#detail-sub")).replace(/\u2009/g, "");
  const size = layout.sizes[target];
  assert.match(sub, new RegExp("^" + size + " rows?\\b"));
  const listed = await page.$$eval("#rows-body tr th", (ths) => ths.map((t) => Number(t.textContent)));
  assert.equal(listed.length, Math.min(size, 100), "the inspector shows the node's first rows, 100 to a page");
  assert.ok(listed.every((r, k) => Number.isInteger(r) && r >= 1 && r <= 600 && (k === 0 || r > listed[k - 1])), "data row numbers, increasing");
  const statNames = await page.$$eval("#detail-stats th", (ths) => ths.map((th) => th.textContent));
  assert.deepEqual(statNames, ["x", "y", "angle_deg", "half"]);
});

test("a bad setting is refused with the engine's message, shown on the page", async () => {
  await loadCircleThroughInput();
  const s = await page.evaluate(() => window.nervure.settings());
  s.cover.overlap = 1.5;
  const message = await page.evaluate((bad) => window.nervure.applySettings(bad).then(() => null, (e) => e.message), s);
  assert.equal(message, "setting 'cover.overlap': 1.5 is outside [0, 1)");
  assert.equal(await page.textContent("#message"), message);
  assert.ok(await page.isVisible("#message"));
});

test("a malformed file is refused with the engine's message, through the input and the hook", async () => {
  // ragged.csv: data row 2 has two fields under a three-column header.
  await page.setInputFiles("#file-input", join(here, "fixtures", "ragged.csv"));
  await page.waitForSelector("#message:not([hidden])");
  const shown = await page.textContent("#message");
  assert.match(shown, /data row 2/);
  assert.equal(await page.evaluate(() => window.nervure.summary()), null);
  const text = readFileSync(join(here, "fixtures", "ragged.csv"), "utf8");
  const rejected = await page.evaluate((t) => window.nervure.loadCsv(t, "ragged.csv").then(() => null, (e) => e.message), text);
  assert.equal(rejected, shown);
  assert.equal(await page.textContent("#message"), rejected);
});

test("text from the file is shown as text, never as markup", async () => {
  const name = '<img src=x id=injected>';
  const info = await page.evaluate((n) => window.nervure.loadCsv(n + ",b\n1,2\n2,3\n3,5\n4,4\n5,1\n6,2\n7,3\n8,1\n", "<b>odd</b>.csv").catch((e) => ({ error: e.message })), name);
  assert.equal(await page.$("#injected"), null, "a column name became an element");
  const cell = await page.textContent("#columns-body tr .column-name");
  assert.equal(cell, name);
  assert.ok((await page.textContent("#file-line")).includes("<b>odd</b>.csv"));
  assert.ok(info.columns || info.error, "loadCsv resolved with the table or rejected with a message");
});
