// Browser tests of the linked scatter, the history of runs and the keyboard: driven from
// file:// as a person would (see harness.mjs). Expected values come from the page's engine
// results (memberships via the graph JSON export) and the fixture's construction
// (tests/browser/fixtures/make-circle.mjs: 600 rows on a noisy unit circle).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { circleCsv, outDir, usePage, waitForGraph, waitForIdle, uncoveredNode, openCircleIn } from "./harness.mjs";

const ctx = usePage();
let page;
beforeEach(() => { page = ctx.page; });

const openCircle = () => openCircleIn(page);

test("the scatter lights up a node's rows, and a rectangle of points selects the nodes holding them", async () => {
  await openCircle();
  await page.click("#tab-scatter");
  await page.waitForFunction(() => window.nervure.scatter() !== null);
  let info = await page.evaluate(() => window.nervure.scatter());
  assert.equal(info.total, 600, "every row of the circle has both principal components");
  assert.equal(info.shown, 600, "under the limit nothing is sampled");
  assert.match(await page.textContent("#scatter-note"), /all 600 rows/);

  // Columns x against y.
  await page.selectOption("#scatter-axes", "x");
  await page.selectOption("#scatter-y", "y");
  await page.waitForFunction(() => window.nervure.scatter().xLabel === "x" && window.nervure.scatter().yLabel === "y");

  // A node clicked in the graph: its rows light up in the scatter.
  const layout = await page.evaluate(() => window.nervure.layout());
  const { target, pos } = uncoveredNode(layout, true);
  const box = await page.locator("#graph-canvas").boundingBox();
  await page.mouse.click(box.x + pos(target).x, box.y + pos(target).y);
  await page.waitForFunction((n) => window.nervure.scatter().lit === n, layout.sizes[target]);

  // A rectangle over the right-hand part of the circle (x > 0.6) in data units.
  info = await page.evaluate(() => window.nervure.scatter());
  const b = info.box;
  const sx = (v) => b.left + (v - b.x0) / (b.x1 - b.x0) * b.width;
  const sy = (v) => b.top + (1 - (v - b.y0) / (b.y1 - b.y0)) * b.height;
  const cbox = await page.locator("#scatter-canvas").boundingBox();
  await page.mouse.move(cbox.x + sx(0.6), cbox.y + sy(b.y1));
  await page.mouse.down();
  await page.mouse.move(cbox.x + sx(b.x1), cbox.y + sy(b.y0), { steps: 6 });
  await page.mouse.up();
  await page.waitForFunction(() => window.nervure.contrast() !== null && window.nervure.selection().length > 0);
  // Expected: the nodes with at least one member row whose x is at least 0.6 (the rectangle
  // spans the whole y range and reaches the largest x). Pointer positions are whole pixels,
  // so rows within 0.02 of the edge may fall either way.
  const g = JSON.parse(await page.evaluate(() => window.nervure.exportText("json")));
  const xOf = readFileSync(circleCsv, "utf8").trim().split("\n").slice(1).map((l) => Number(l.split(",")[0]));
  const holds = (lo) => g.nodes.filter((n) => n.rows.some((r) => xOf[r - 1] >= lo)).map((n) => n.id);
  const sure = holds(0.62), possible = holds(0.58);
  const got = await page.evaluate(() => window.nervure.selection());
  for (const id of sure) assert.ok(got.includes(id), "node " + id + " holds a point in the rectangle");
  for (const id of got) assert.ok(possible.includes(id), "node " + id + " holds no point in the rectangle");
  assert.ok(got.length < g.nodes.length, "not every node");
  // The lit points are the selection's rows that the scatter shows (here all rows).
  const rows = new Set(await page.evaluate(() => window.nervure.selectionRows()));
  await page.waitForFunction((n) => window.nervure.scatter().lit === n, rows.size);
  await page.waitForTimeout(150);
  await page.screenshot({ path: join(outDir, "scatter.png") });
});

test("history keeps each run; two compare side by side; any restores", async () => {
  await openCircle();
  const first = await page.evaluate(() => window.nervure.summary());
  const s = await page.evaluate(() => window.nervure.settings());
  await page.fill("#s-intervals", String(s.cover.intervals + 4));
  await page.press("#s-intervals", "Tab");
  await waitForIdle(page, 2);
  await page.waitForFunction(() => window.nervure.history().length === 2);
  const h = await page.evaluate(() => window.nervure.history());
  assert.equal(h[1].settings.cover.intervals, s.cover.intervals);
  assert.equal(h[0].settings.cover.intervals, s.cover.intervals + 4);
  await page.click("#tab-history");
  assert.equal(await page.locator("#history-list li").count(), 2);
  assert.match(await page.textContent("#history-list li:first-child .history-diff"), /cover\.intervals: \d+ → \d+/);
  for (const id of [1, 2]) await page.check(`input[aria-label="Compare run ${id}"]`);
  await page.click("#history-compare");
  await page.waitForSelector("#compare[open]");
  // Both canvases hold a drawing (some pixel is not transparent).
  const drawn = await page.evaluate(() => ["compare-a", "compare-b"].map((id) => {
    const c = document.getElementById(id);
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 3; i < d.length; i += 4) if (d[i] > 0) n++;
    return n;
  }));
  assert.ok(drawn[0] > 100 && drawn[1] > 100, "both runs are drawn: " + drawn);
  assert.match(await page.textContent("#compare-diff"), /cover\.intervals/);
  await page.screenshot({ path: join(outDir, "compare.png") });
  await page.keyboard.press("Escape");
  await page.waitForFunction(() => !document.getElementById("compare").open);
  await page.screenshot({ path: join(outDir, "history.png") });
  // Restore the first run: same settings, same summary.
  const builds = await page.evaluate(() => window.nervure.status().builds);
  await page.click('button[aria-label="Restore the settings of run 1"]');
  await waitForIdle(page, builds + 1);
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), first);
  assert.equal((await page.evaluate(() => window.nervure.settings())).cover.intervals, s.cover.intervals);
});

test("shortcuts: help, colour, fit, run, tabs, export; everything reachable by Tab with a visible focus", async () => {
  await openCircle();
  await page.locator("body").press("?");
  await page.waitForSelector("#help[open]");
  const keys = await page.$$eval("#help-keys kbd", (ks) => ks.map((k) => k.textContent));
  for (const k of ["r", "c", "f", "Escape", "?", "e", "l"]) assert.ok(keys.includes(k), "help lists " + k);
  await page.screenshot({ path: join(outDir, "help.png") });
  await page.keyboard.press("Escape");
  await page.waitForFunction(() => !document.getElementById("help").open);

  const colour = await page.inputValue("#colour-select");
  await page.locator("body").press("c");
  await page.waitForFunction((c) => document.getElementById("colour-select").value !== c && document.getElementById("legend-title").textContent.includes(document.getElementById("colour-select").value), colour);

  const builds = await page.evaluate(() => window.nervure.status().builds);
  await page.locator("body").press("r");
  await waitForIdle(page, builds + 1);

  await page.locator("body").press("p");
  assert.ok(await page.isVisible("#pane-scatter"));
  await page.locator("body").press("h");
  assert.ok(await page.isVisible("#pane-history"));
  await page.locator("body").press("i");
  assert.ok(await page.isVisible("#pane-inspect"));

  await page.locator("body").press("e");
  assert.equal(await page.evaluate(() => document.getElementById("export-menu").open), true);
  assert.equal(await page.evaluate(() => document.activeElement.dataset.export), "settings");
  await page.keyboard.press("Escape");
  assert.equal(await page.evaluate(() => document.getElementById("export-menu").open), false);

  // Typing in a field is never taken for a shortcut.
  await page.focus("#d-name");
  await page.keyboard.type("cfr");
  assert.equal(await page.inputValue("#d-name"), "cfr");
  assert.equal(await page.inputValue("#colour-select"), await page.evaluate(() => document.getElementById("colour-select").value));

  // Tab order reaches the main controls, each with a visible focus outline.
  await page.focus("#file-input").catch(() => {});
  await page.evaluate(() => document.activeElement && document.activeElement.blur());
  const reached = new Set();
  const unoutlined = new Set();
  for (let k = 0; k < 80; k++) {
    await page.keyboard.press("Tab");
    const f = await page.evaluate(() => {
      const e = document.activeElement;
      const cs = getComputedStyle(e);
      return { id: e.id || e.dataset.export || e.getAttribute("aria-label") || e.tagName, outline: cs.outlineStyle !== "none" && parseFloat(cs.outlineWidth) >= 2 };
    });
    reached.add(f.id);
    if (!f.outline && f.id !== "BODY") unoutlined.add(f.id);  // BODY: past the last control, focus leaves the page
  }
  for (const id of ["export-button", "help-button", "s-intervals", "graph-canvas", "tab-inspect", "colour-select", "d-expression"]) assert.ok(reached.has(id), "Tab reaches #" + id + " (reached: " + Array.from(reached).join(", ") + ")");
  assert.deepEqual(Array.from(unoutlined), [], "every focused control shows an outline of at least 2 px");
});

test("labels stay readable at a projector's resolution (1024 × 768)", async () => {
  await page.setViewportSize({ width: 1024, height: 768 });
  await openCircle();
  const smallest = await page.evaluate(() => {
    let min = Infinity, which = null;
    for (const e of document.querySelectorAll("body *")) {
      if (!e.offsetParent || !e.childNodes.length || ![...e.childNodes].some((n) => n.nodeType === 3 && n.textContent.trim())) continue;
      const px = parseFloat(getComputedStyle(e).fontSize);
      if (px < min) { min = px; which = e.className || e.tagName; }
    }
    return { min, which };
  });
  // 12 px is the smallest size commonly recommended for projected text (common practice).
  assert.ok(smallest.min >= 12, "smallest visible text " + smallest.min + "px (" + smallest.which + ")");
  await page.screenshot({ path: join(outDir, "projector.png") });
});

test("a large table: the scatter draws a seeded sample of 50 000 points and says so", async () => {
  // 60 000 rows on two noisy concentric circles (known by construction), seeded LCG.
  let seed = 12345;
  const uniform = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const lines = ["a,b"];
  for (let i = 0; i < 60000; i++) {
    const t = 2 * Math.PI * uniform(), r = i % 2 ? 1 : 2;
    lines.push((r * Math.cos(t) + 0.05 * (uniform() - 0.5)).toFixed(4) + "," + (r * Math.sin(t) + 0.05 * (uniform() - 0.5)).toFixed(4));
  }
  await page.evaluate((text) => window.nervure.loadCsv(text, "rings.csv"), lines.join("\n") + "\n");
  await waitForGraph(page);
  await page.click("#tab-scatter");
  const t0 = Date.now();
  await page.waitForFunction(() => window.nervure.scatter() !== null, null, { timeout: 60000 });
  const info = await page.evaluate(() => window.nervure.scatter());
  assert.equal(info.total, 60000);
  assert.equal(info.shown, 50000);
  assert.match((await page.textContent("#scatter-note")).replace(/\u2009/g, " "), /Showing 50 000 of 60 000 rows: a random sample/);
  // Selecting the largest node lights its sampled rows: no more than its size.
  const layout = await page.evaluate(() => window.nervure.layout());
  const big = layout.sizes.indexOf(Math.max(...layout.sizes));
  await page.evaluate((n) => window.nervure.select([n]), big);
  await page.waitForFunction(() => window.nervure.scatter().lit > 0);
  const lit = (await page.evaluate(() => window.nervure.scatter())).lit;
  assert.ok(lit <= layout.sizes[big] && lit >= 0.6 * layout.sizes[big], `lit ${lit} of ${layout.sizes[big]} rows (a 5/6 sample)`);
  console.log(`rings.csv: 60 000 rows; scatter sample fetched and drawn in ${Date.now() - t0} ms as the test saw it`);
});

/** Loads a line of 8 000 evenly spaced rows and returns settings that put it under 2 000
 *  intervals: one node per interval by construction (each interval's rows are a run of
 *  neighbours closer than eps), so about 2 000 nodes. */
async function loadLine(page) {
  const rows = ["x,y"];
  for (let i = 0; i < 8000; i++) rows.push(`${i},${(i % 7) * 0.01}`);
  await page.evaluate(([t]) => window.nervure.loadCsv(t, "line.csv"), [rows.join("\n") + "\n"]);
  await waitForGraph(page);
  const settings = await page.evaluate(() => window.nervure.settings());
  return Object.assign(settings, { columns: ["x", "y"], scaling: "none", lens: { kind: "column", column: "x" }, cover: { intervals: 2000, overlap: 0.25 }, clustering: { kind: "dbscan", eps: 1.5, minPoints: 1 } });
}

test("zooming a large graph shows stretched copies while the wheel turns, then the exact drawing", async () => {
  const settings = await loadLine(page);
  await page.evaluate((s) => window.nervure.applySettings(s), settings);
  const summary = await page.evaluate(() => window.nervure.run());
  assert.ok(summary.nodes >= 1500, `${summary.nodes} nodes`);
  await waitForIdle(page);
  const box = await page.locator("#graph-canvas").boundingBox();
  await page.mouse.move(box.x + box.width / 2, box.y + box.height * 0.75);
  const before = await page.evaluate(() => window.nervure.test.drawStats());
  for (let i = 0; i < 6; i++) await page.mouse.wheel(0, -60);
  const turning = await page.evaluate(() => window.nervure.test.drawStats());
  assert.ok(turning.zooming, "the view knows the wheel is turning");
  await page.waitForFunction((n) => window.nervure.test.drawStats().previews > n, before.previews);
  await page.waitForFunction(() => !window.nervure.test.drawStats().zooming);
  const rested = await page.evaluate(() => window.nervure.test.drawStats());
  assert.ok(rested.count > turning.count, "an exact drawing follows the rest");
  const layout = await page.evaluate(() => window.nervure.layout());
  assert.ok(layout.scale > 0);
});

test("a big graph is drawn in slices that end in the whole picture, and so is its history thumbnail", async () => {
  // The line of the zoom test: about 2 000 nodes, drawn over many frames when each slice
  // aims at half a millisecond.
  const settings = await loadLine(page);
  await page.evaluate(() => window.nervure.test.sliceMs(0.5));
  await page.evaluate((s) => window.nervure.applySettings(s), settings);
  const before = await page.evaluate(() => window.nervure.test.drawStats().count);
  const summary = await page.evaluate(() => window.nervure.run());
  assert.ok(summary.nodes >= 1500, `${summary.nodes} nodes`);
  await waitForIdle(page);
  await page.waitForFunction(() => !window.nervure.test.drawStats().drawing, null, { timeout: 60000 });
  const after = await page.evaluate(() => window.nervure.test.drawStats());
  assert.ok(after.count - before >= 3, `the layer took several frames (${after.count - before})`);
  assert.equal(await page.evaluate(() => window.nervure.test.layerMatches()), true, "the finished layer is the drawing made in one go");
  // The history's thumbnail of this run, drawn in slices too.
  const id = (await page.evaluate(() => window.nervure.history()))[0].id;
  assert.equal(await page.evaluate((i) => window.nervure.test.thumbnailMatches(i), id), true, "the thumbnail is the drawing made in one go");
  // A selection dims the other nodes: the layer is drawn again, again whole in the end.
  await page.evaluate(() => window.nervure.select([0, 1, 2]));
  await page.waitForFunction(() => window.nervure.test.layerMatches() !== null, null, { timeout: 60000 });
  assert.equal(await page.evaluate(() => window.nervure.test.layerMatches()), true);
});
