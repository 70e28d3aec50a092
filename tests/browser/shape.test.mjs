// Browser tests of the "How solid is this shape?" panel (www/shape-panel.js) in the built
// page, dist/nervure.html, opened from file:// in headless Chromium and driven as a person
// would: the features list, resampling (bootstrap) with progress and Stop, suggested
// settings, the grid of settings, and the comparison with a second table.
//
//   cargo run --release --features page-builder --bin nervure-build
//   node --test tests/browser/shape.test.mjs
//
// Every test fails on any request other than the page itself or a blob:/data: URL, and on
// any console error or uncaught page error (tests/browser/harness.mjs). Shapes are known by construction: the fixture
// circle.csv is a noisy circle (one component, one loop; fixtures/make-circle.mjs), and the
// segment written below is a noisy straight piece (one component, no loop).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { usePage, outDir, circleCsv } from "./harness.mjs";

const ctx = usePage({ viewport: { width: 1600, height: 1000 } });
/** The current test's page (harness.mjs opens a fresh one for each test). */
let page;
beforeEach(() => { page = ctx.page; });

// Settings under which the circle's graph has one loop (as tests/shape.rs uses for its
// circles; radius 1, noise 0.05 here): lens = x, so both tables' lens values mean the same.
const CIRCLE_SETTINGS = {
  version: 1, columns: ["x", "y"], scaling: "none", missing: { fillValues: [] },
  lens: { kind: "column", column: "x" }, cover: { intervals: 6, overlap: 0.3 },
  clustering: { kind: "dbscan", eps: 0.35, minPoints: 3 }, edges: { minShared: 1 }, seed: 1,
};

async function openCircle() {
  await page.setInputFiles("#file-input", circleCsv);
  await page.waitForFunction(() => window.nervure.summary() !== null, null, { timeout: 60000 });
  await page.evaluate((s) => window.nervure.applySettings(s), CIRCLE_SETTINGS);
  const summary = await page.evaluate(() => window.nervure.run());
  assert.equal(summary.loops, 1, "the circle's graph has its loop under these settings");
  await page.waitForFunction(() => { const d = window.nervureShape.diagram(); return d && d.features.some((f) => f.kind === "loop"); }, null, { timeout: 30000 });
}

async function resample(draws) {
  await page.fill("#sp-draws", String(draws));
  await page.click("#sp-boot-run");
  await page.waitForFunction(() => window.nervureShape.running().boot, null, { timeout: 10000 }).catch(() => {});
  await page.waitForFunction(() => !window.nervureShape.running().boot, null, { timeout: 300000 });
}

test("resampling the circle says its loop holds up, and marks the loop's nodes", async () => {
  await openCircle();
  const rows = await page.$$eval("#sp-features-body tr", (trs) => trs.map((t) => ({ kind: t.dataset.kind, verdict: t.lastChild.dataset.verdict })));
  assert.equal(rows.filter((r) => r.kind === "loop").length, 1);
  assert.equal(rows.filter((r) => r.kind === "component").length, 1);
  assert.ok(rows.every((r) => r.verdict === "unknown"), "nothing is judged before a test");
  await page.fill("#sp-alpha", "0.1");
  await page.fill("#sp-seed", "3");
  await resample(20);
  const c = await page.evaluate(() => window.nervureShape.confidence());
  assert.equal(c.draws, 20);
  assert.equal(c.alpha, 0.1);
  assert.equal(c.distances.length, 20);
  const loopRow = await page.$("#sp-features-body tr[data-kind=loop]");
  assert.equal(await loopRow.$eval("td:last-child", (td) => td.dataset.verdict), "yes", "the circle's loop holds up");
  // Its length along the lens is well above twice the threshold (Carrière, Michel, Oudot 2018: significant when |d - b| / 2 > c).
  const loop = c.features.find((f) => f.kind === "loop");
  assert.ok(loop.significant && loop.persistence > 2 * c.threshold);
  assert.match(await page.textContent("#sp-features-note"), /After 20 resamples at level α = 0.1/);
  // Pointing at the loop marks its nodes on the graph; a click keeps them marked.
  const d = await page.evaluate(() => window.nervureShape.diagram());
  const loopNodes = d.features.find((f) => f.kind === "loop").nodes;
  assert.ok(loopNodes.length >= 3, "a loop goes through at least three nodes");
  await loopRow.hover();
  assert.deepEqual(await page.evaluate(() => window.nervureShape.marked()), loopNodes);
  await loopRow.click();
  await page.mouse.move(5, 5);
  assert.deepEqual(await page.evaluate(() => window.nervureShape.marked()), loopNodes);
  assert.ok(await page.isVisible("#sp-caution"), "the caution about settings is shown");
});

test("a long resampling can be stopped; the previous result stays and the page keeps working", async () => {
  await openCircle();
  await resample(8);
  const first = await page.evaluate(() => window.nervureShape.confidence());
  assert.equal(first.draws, 8);
  await page.fill("#sp-draws", "10000");
  await page.click("#sp-boot-run");
  await page.waitForFunction(() => /Resample [1-9]\d* of 10000/.test(document.getElementById("sp-boot-label").textContent), null, { timeout: 30000 });
  assert.ok(await page.isVisible("#sp-boot-cancel"));
  // While it runs, the graph can still be rebuilt: requests run between its steps.
  const s = await page.evaluate(() => { const s = window.nervure.settings(); s.cover.intervals = 7; return s; });
  await page.evaluate((s) => window.nervure.applySettings(s), s);
  const summary = await page.evaluate(() => window.nervure.run());
  assert.ok(summary.nodes > 0);
  assert.ok(await page.evaluate(() => window.nervureShape.running().boot), "the resampling was still running");
  await page.click("#sp-boot-cancel");
  await page.waitForFunction(() => !window.nervureShape.running().boot, null, { timeout: 20000 });
  assert.match(await page.textContent("#sp-boot-result"), /Stopped before the end; the previous result stays/);
  assert.deepEqual(await page.evaluate(() => window.nervureShape.confidence()), first);
  assert.ok(await page.isHidden("#sp-boot-progress"));
  // The engine still answers, and a new test runs to its end.
  await resample(4);
  assert.equal((await page.evaluate(() => window.nervureShape.confidence())).draws, 4);
});

test("a small grid of settings, and a click on a cell uses its settings", async () => {
  await openCircle();
  await page.fill("#sp-grid-intervals", "4, 6, 9");
  await page.fill("#sp-grid-overlaps", "0.2, 0.4");
  await page.fill("#sp-grid-draws", "0");
  await page.click("#sp-grid-run");
  await page.waitForFunction(() => window.nervureShape.grid() !== null && !window.nervureShape.running().grid, null, { timeout: 60000 });
  const grid = await page.evaluate(() => window.nervureShape.grid());
  assert.equal(grid.cells.length, 6);
  assert.deepEqual(grid.cells.map((c) => [c.intervals, c.overlap]), [[4, 0.2], [4, 0.4], [6, 0.2], [6, 0.4], [9, 0.2], [9, 0.4]]);
  const target = grid.cells.find((c) => c.intervals === 9 && c.overlap === 0.4);
  const layout = await page.evaluate(() => window.nervureShape.gridLayout());
  const where = layout.cells.find((q) => q.cell.intervals === 9 && q.cell.overlap === 0.4);
  await page.locator("#sp-grid-canvas").scrollIntoViewIfNeeded();
  const box = await page.locator("#sp-grid-canvas").boundingBox();
  const builds = await page.evaluate(() => window.nervure.status().builds);
  await page.mouse.click(box.x + where.cx, box.y + where.cy);
  await page.waitForFunction((b) => window.nervure.status().builds > b && window.nervure.status().phase === "ready", builds, { timeout: 60000 });
  const settings = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual([settings.cover.intervals, settings.cover.overlap], [9, 0.4]);
  // The cell's numbers are those of the graph it stands for (built again by the page).
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.deepEqual([summary.nodes, summary.components, summary.loops], [target.nodes, target.components, target.loops]);
  assert.equal(await page.inputValue("#s-intervals"), "9");
});

test("suggested settings show the rule's values and can be taken", async () => {
  await openCircle();
  await page.click("#sp-suggest");
  await page.waitForSelector("#sp-suggest-out:not([hidden])", { timeout: 60000 });
  const text = await page.textContent("#sp-suggest-values");
  assert.match(text, /Scale δ = /);
  assert.match(text, /random subsets of \d+ rows/);
  await page.click("#sp-suggest-accept");
  await page.waitForFunction(() => window.nervure.settings().clustering.minPoints === 1 && window.nervure.status().phase === "ready" && !window.nervure.status().pending, null, { timeout: 60000 });
  const s = await page.evaluate(() => window.nervure.settings());
  // The rule (Carrière, Michel, Oudot 2018, as src/shape/suggest.rs states it): gain 0.4, DBSCAN at scale δ with one point.
  assert.equal(s.cover.overlap, 0.4);
  assert.equal(s.clustering.kind, "dbscan");
  assert.ok(s.clustering.eps > 0);
});

/** A noisy segment along x from -1 to 1 (seeded; common practice LCG), as CSV. */
function segmentCsv(n) {
  let state = 12345;
  const u = () => { state = (1103515245 * state + 12345) % 2147483648; return state / 2147483648; };
  const lines = ["x,y,angle_deg,half"];
  for (let i = 0; i < n; i++) lines.push([(-1 + 2 * u()).toFixed(5), (0.05 * (u() - 0.5)).toFixed(5), "0", "upper"].join(","));
  return lines.join("\n") + "\n";
}

test("comparing two tables: the same table is within chance, a segment is not", async () => {
  await openCircle();
  await page.setInputFiles("#sp-b-file", circleCsv);
  await page.waitForFunction(() => { const s = window.nervureShape.second(); return s && s.summary; }, null, { timeout: 60000 });
  assert.ok(await page.isVisible("#sp-pair"), "the two graphs are shown side by side");
  await page.fill("#sp-draws", "10");
  await page.click("#sp-compare-run");
  await page.waitForFunction(() => window.nervureShape.comparison() !== null, null, { timeout: 120000 });
  let c = await page.evaluate(() => window.nervureShape.comparison());
  assert.equal(c.distance, 0, "a table is at distance 0 from itself");
  assert.equal(c.differ, false);
  assert.match(await page.textContent("#sp-compare-result"), /within what chance alone gives/);

  const segPath = join(outDir, "segment.csv");
  writeFileSync(segPath, segmentCsv(600));
  await page.setInputFiles("#sp-b-file", segPath);
  await page.waitForFunction(() => { const s = window.nervureShape.second(); return s && s.table.name === "segment.csv" && s.summary; }, null, { timeout: 60000 });
  const second = await page.evaluate(() => window.nervureShape.second());
  assert.equal(second.summary.loops, 0, "a segment's graph has no loop");
  await page.click("#sp-compare-run");
  await page.waitForFunction(() => window.nervureShape.comparison() !== null, null, { timeout: 120000 });
  c = await page.evaluate(() => window.nervureShape.comparison());
  assert.ok(c.differ, `circle against segment: distance ${c.distance}, reference ${c.threshold}`);
  assert.ok(c.distance > c.threshold);
  assert.match(await page.textContent("#sp-compare-result"), /larger than chance alone gives/);
  await page.screenshot({ path: join(outDir, "shape-compare.png"), fullPage: true });
});

test("comparing two column sets of one table: the circle against its mirror image", async () => {
  await openCircle();
  await page.click("#sp-swap summary");
  // x takes y's values and y takes x's: the circle mirrored in the diagonal, still one loop.
  await page.selectOption("#sp-swap-body select[data-column=x]", "y");
  await page.selectOption("#sp-swap-body select[data-column=y]", "x");
  await page.click("#sp-swap-use");
  await page.waitForFunction(() => { const s = window.nervureShape.second(); return s && s.summary; }, null, { timeout: 60000 });
  const second = await page.evaluate(() => window.nervureShape.second());
  assert.equal(second.table.name, "circle.csv (x ← y, y ← x)");
  assert.equal(second.table.rows, 600);
  assert.equal(second.summary.loops, 1, "the mirrored circle keeps its loop");
  await page.fill("#sp-draws", "10");
  await page.click("#sp-compare-run");
  await page.waitForFunction(() => window.nervureShape.comparison() !== null, null, { timeout: 120000 });
  const c = await page.evaluate(() => window.nervureShape.comparison());
  assert.ok(c.distance > 0, "the lens now reads the other coordinate, so the diagrams are not identical");
  assert.equal(c.differ, false, `mirror image: distance ${c.distance}, reference ${c.threshold}`);
  assert.match(await page.textContent("#sp-compare-result"), /within what chance alone gives/);
  // Asking with no column changed says what to do.
  await page.selectOption("#sp-swap-body select[data-column=x]", "x");
  await page.selectOption("#sp-swap-body select[data-column=y]", "y");
  await page.click("#sp-swap-use");
  assert.match(await page.textContent("#sp-compare-result"), /choose, for at least one column, another column/);
});

test("time for B = 100 resamples on the demo, in the page", async (t) => {
  if (!(await page.isVisible("#demo-button"))) { t.skip("the page was built without the demo"); return; }
  await page.click("#demo-button");
  await page.waitForFunction(() => window.nervure.summary() !== null && window.nervureShape.diagram() !== null, null, { timeout: 120000 });
  await page.fill("#sp-draws", "100");
  const t0 = Date.now();
  await page.click("#sp-boot-run");
  await page.waitForFunction(() => { const c = window.nervureShape.confidence(); return c && c.draws === 100; }, null, { timeout: 600000 });
  const ms = Date.now() - t0;
  const c = await page.evaluate(() => window.nervureShape.confidence());
  const s = await page.evaluate(() => window.nervure.summary());
  console.log(`demo: ${s.rows} rows, ${s.nodes} nodes; B = 100 resamples in the page: ${ms} ms; threshold ${c.threshold.toFixed(4)}; ${c.features.filter((f) => f.significant).length} of ${c.features.length} features hold up`);
  assert.equal(c.distances.length, 100);
});
