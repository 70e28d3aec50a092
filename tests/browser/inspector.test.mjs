// Browser tests of the inspector, the selection (click, shift-click, lasso, keyboard) and
// the derived-columns panel, on the built page from file:// (see harness.mjs). Expected
// values come from the page's own engine results (memberships, sizes) or from the fixture's
// construction (tests/browser/fixtures/make-circle.mjs: 600 rows, columns x, y, angle_deg, half).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { join } from "node:path";
import { readFileSync } from "node:fs";
import { circleCsv, outDir, usePage, waitForGraph, waitForIdle, uncoveredNode, openCircleIn } from "./harness.mjs";

const ctx = usePage();
let page;
beforeEach(() => { page = ctx.page; });

const openCircle = () => openCircleIn(page);

/** Node members from the GraphML-independent JSON export (1-based data rows). */
async function graphJson() {
  return JSON.parse(await page.evaluate(() => window.nervure.exportText("json")));
}

test("shift-click builds a group; the inspector ranks columns and pages the member rows", async () => {
  await openCircle();
  const layout = await page.evaluate(() => window.nervure.layout());
  const { pos, uncovered } = uncoveredNode(layout);
  assert.ok(uncovered.length >= 2, "two visible nodes to click");
  const [a, b] = uncovered;
  const box = await page.locator("#graph-canvas").boundingBox();
  await page.mouse.click(box.x + pos(a).x, box.y + pos(a).y);
  await page.waitForFunction(() => window.nervure.contrast() !== null);
  await page.keyboard.down("Shift");
  await page.mouse.click(box.x + pos(b).x, box.y + pos(b).y);
  await page.keyboard.up("Shift");
  await page.waitForFunction(() => window.nervure.selection().length === 2 && window.nervure.contrast() !== null && document.querySelectorAll("#rows-body tr").length > 0);
  assert.deepEqual(await page.evaluate(() => window.nervure.selection()), [a, b].sort((x, y) => x - y));
  assert.match(await page.textContent("#detail-title"), /^2 nodes selected/);

  // The group's rows are the union of the two nodes' members (graph JSON export).
  const g = await graphJson();
  const union = Array.from(new Set([...g.nodes[a].rows, ...g.nodes[b].rows])).sort((x, y) => x - y);
  const rows = (await page.evaluate(() => window.nervure.selectionRows())).map((r) => r + 1);
  assert.deepEqual(rows, union);
  assert.match((await page.textContent("#detail-sub")).replace(/\u2009/g, ""), new RegExp("^" + union.length + " rows?"));

  // Member rows: the first page of at most 100, numbered by data row, in order.
  const shown = await page.$$eval("#rows-body tr th", (ths) => ths.map((t) => Number(t.textContent)));
  assert.deepEqual(shown, union.slice(0, 100));
  assert.ok(shown.length <= 100, "at most 100 rows in the DOM");
  const head = await page.$$eval("#rows-head th", (ths) => ths.map((t) => t.textContent));
  assert.deepEqual(head, ["Data row", "x", "y", "angle_deg", "half"]);
  if (union.length > 100) {
    await page.click("#rows-next");
    await page.waitForFunction((first) => Number(document.querySelector("#rows-body tr th").textContent) === first, union[100]);
  }

  // Ranking: the three numeric columns, by KS largest first, with the caution about p-values.
  const contrast = await page.evaluate(() => window.nervure.contrast());
  assert.deepEqual(contrast.map((c) => c.name).sort(), ["angle_deg", "x", "y"]);
  for (let k = 1; k < contrast.length; k++) assert.ok(contrast[k - 1].ks >= contrast[k].ks, "ranked by KS");
  const names = await page.$$eval("#contrast-body th", (ths) => ths.map((t) => t.textContent));
  assert.deepEqual(names, contrast.map((c) => c.name));
  assert.match(await page.textContent("#contrast-note"), /not evidence/);

  // Shift-click on a selected node takes it out again.
  await page.keyboard.down("Shift");
  await page.mouse.click(box.x + pos(b).x, box.y + pos(b).y);
  await page.keyboard.up("Shift");
  await page.waitForFunction((n) => JSON.stringify(window.nervure.selection()) === JSON.stringify([n]), a);
  await page.waitForFunction(() => document.getElementById("detail-title").textContent.startsWith("Node "));
  await page.screenshot({ path: join(outDir, "inspector.png") });
});

test("a text column tied to part of the graph: its value is named as over-represented in the group", async () => {
  // By construction (make-circle.mjs): column "half" is "upper" exactly where y >= 0. A
  // group of nodes made only of upper rows must show "upper" as over-represented, with
  // counts that follow from the file.
  await openCircle();
  const half = readFileSync(circleCsv, "utf8").trim().split("\n").slice(1).map((l) => l.split(",")[3]);
  const g = await graphJson();
  const upperNodes = g.nodes.map((n, i) => [n, i]).filter(([n]) => n.rows.every((r) => half[r - 1] === "upper")).map(([, i]) => i);
  assert.ok(upperNodes.length > 0 && upperNodes.length < g.nodes.length, "some nodes hold upper rows only");
  await page.evaluate((nodes) => window.nervure.select(nodes), upperNodes);
  await page.waitForFunction(() => window.nervure.categoryContrast() !== null && window.nervure.contrast() !== null);

  // The numeric part keeps its shape: an array ranked by KS.
  const numeric = await page.evaluate(() => window.nervure.contrast());
  assert.deepEqual(numeric.map((c) => c.name).sort(), ["angle_deg", "x", "y"]);

  const cats = await page.evaluate(() => window.nervure.categoryContrast());
  assert.deepEqual(cats.map((c) => c.name), ["half"]);
  const h = cats[0];
  const inGroup = new Set(upperNodes.flatMap((i) => g.nodes[i].rows));
  const outside = half.map((v, k) => [v, k + 1]).filter(([, r]) => !inGroup.has(r)).map(([v]) => v);
  const upperOut = outside.filter((v) => v === "upper").length;
  const lowerOut = outside.length - upperOut;
  const at = (level, counts) => counts[h.levels.indexOf(level)];
  assert.deepEqual([at("upper", h.countsIn), at("lower", h.countsIn)], [inGroup.size, 0]);
  assert.deepEqual([at("upper", h.countsOut), at("lower", h.countsOut)], [upperOut, lowerOut]);
  assert.equal(h.topLevel, "upper");
  assert.equal(h.topShareIn, 1);
  assert.ok(Math.abs(h.topShareOut - upperOut / outside.length) < 1e-12);
  // TV = ½ (|1 − upperOut/nOut| + |0 − lowerOut/nOut|) = lowerOut / nOut (the definition).
  assert.ok(Math.abs(h.tv - lowerOut / outside.length) < 1e-12, `tv ${h.tv}`);
  assert.equal(h.dof, 1);
  assert.ok(h.pValue < 1e-3, `p ${h.pValue}`);

  // Shown under the numeric table, with the share here and elsewhere and the caution.
  assert.ok(await page.isVisible("#category-wrap"));
  assert.deepEqual(await page.$$eval("#category-body th", (ths) => ths.map((t) => t.textContent)), ["half"]);
  const text = await page.textContent("#category-body tr td.top");
  assert.equal(text, "“upper” 100 % here vs " + Math.round(100 * upperOut / outside.length) + " % elsewhere");
  assert.match(await page.textContent("#category-note"), /not evidence/);
  await page.locator("#category-wrap").scrollIntoViewIfNeeded();
  await page.screenshot({ path: join(outDir, "inspector-categories.png") });
});

test("a shift-drag lasso selects the nodes whose centres it encloses", async () => {
  await openCircle();
  const layout = await page.evaluate(() => window.nervure.layout());
  const box = await page.locator("#graph-canvas").boundingBox();
  const pos = (i) => ({ x: layout.positions[2 * i] * layout.scale + layout.offsetX, y: layout.positions[2 * i + 1] * layout.scale + layout.offsetY });
  // A rectangle over the left half of the canvas, drawn as a lasso path.
  // Below the colour card, which sits over the top of the canvas (the graph is fitted below it).
  const card = await page.locator("#colour-block").boundingBox();
  const x0 = 20, y0 = card.y + card.height - box.y + 12, x1 = box.width / 2, y1 = box.height - 40;
  assert.ok(y0 < y1 - 40, "room under the colour card");
  const expected = layout.sizes.map((_, i) => i).filter((i) => { const p = pos(i); return p.x > x0 && p.x < x1 && p.y > y0 && p.y < y1; });
  assert.ok(expected.length > 0 && expected.length < layout.sizes.length, "the rectangle holds some nodes, not all");
  await page.keyboard.down("Shift");
  await page.mouse.move(box.x + x0, box.y + y0);
  await page.mouse.down();
  for (const [x, y] of [[x1, y0], [x1, y1], [x0, y1], [x0, y0 + 1]]) await page.mouse.move(box.x + x, box.y + y, { steps: 8 });
  await page.mouse.up();
  await page.keyboard.up("Shift");
  await page.waitForFunction((n) => window.nervure.selection().length === n && window.nervure.contrast() !== null, expected.length);
  assert.deepEqual(await page.evaluate(() => window.nervure.selection()), expected);

  // The lasso button does the same without a modifier; Escape clears.
  await page.click("#lasso-mode");
  assert.equal(await page.getAttribute("#lasso-mode", "aria-pressed"), "true");
  await page.keyboard.press("Escape");
  await page.waitForFunction(() => window.nervure.selection().length === 0);
  assert.ok(await page.isHidden("#detail"));
});

test("the keyboard alone reaches a node and selects it", async () => {
  await openCircle();
  await page.focus("#graph-canvas");
  await page.keyboard.press("ArrowRight");
  await page.keyboard.press("Enter");
  await page.waitForFunction(() => window.nervure.selection().length === 1 && window.nervure.contrast() !== null);
  const layout = await page.evaluate(() => window.nervure.layout());
  const sel = await page.evaluate(() => window.nervure.selected());
  assert.ok(sel !== null && sel < layout.sizes.length);
  // Shift+Enter toggles the node under the cursor: out, then in again.
  await page.keyboard.press("Shift+Enter");
  await page.waitForFunction(() => window.nervure.selection().length === 0);
  await page.keyboard.press("Shift+Enter");
  await page.waitForFunction((n) => JSON.stringify(window.nervure.selection()) === JSON.stringify([n]), sel);
  // The cursor moves on: another node for the next Shift+Enter.
  await page.keyboard.press("ArrowLeft");
  await page.keyboard.press("Shift+Enter");
  const n = await page.evaluate(() => window.nervure.selection().length);
  assert.ok(n === 2 || n === 0, "a second node joined (or the cursor stayed and toggled it off)");
});

test("a derived column: a bad expression shows the caret line; a good one joins the column lists", async () => {
  await openCircle();
  await page.fill("#d-name", "r2");
  await page.fill("#d-expression", "x * x + y *");
  await page.click("#d-add");
  await page.waitForSelector("#d-error:not([hidden])");
  const error = await page.textContent("#d-error");
  // The engine's message: the expression, then carets under the fault (src/derive/parse.rs).
  const lines = error.split("\n");
  assert.equal(lines[0], "setting 'derived[0].expression':");
  assert.equal(lines[1], "x * x + y *");
  // The caret sits under the end of the expression, where an operand is missing.
  assert.match(lines[2], /^\s*\^+ /);
  assert.ok(lines[2].indexOf("^") >= "x * x + y".length, error);
  assert.equal(await page.evaluate(() => window.nervure.settings().derived.length), 0, "the bad column was not kept");
  assert.equal(await page.$eval("#d-error", (e) => getComputedStyle(e).fontFamily.includes("mono")), true);
  await page.screenshot({ path: join(outDir, "derived-error.png") });

  // An unknown column is found when evaluating, and also pointed at.
  await page.fill("#d-expression", "x - zz");
  await page.click("#d-add");
  await page.waitForFunction(() => document.getElementById("d-error").textContent.includes("zz"));
  const unknown = (await page.textContent("#d-error")).split("\n");
  assert.equal(unknown[1], "x - zz");
  assert.equal(unknown[2].indexOf("^^ "), "x - ".length, "carets under 'zz'");

  await page.fill("#d-expression", "x * x + y * y");
  await page.click("#d-add");
  await page.waitForFunction(() => Array.from(document.querySelectorAll("#colour-select option")).some((o) => o.value === "r2"));
  assert.ok(await page.isHidden("#d-error"));
  const s = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(s.derived, [{ name: "r2", expression: "x * x + y * y" }]);
  const rows = await page.$$eval("#columns-body tr", (trs) => trs.map((tr) => [tr.querySelector(".column-name").textContent, tr.querySelector(".kind").textContent]));
  assert.deepEqual(rows.at(-1), ["r2", "derived number"]);
  const lensColumns = await page.$$eval("#s-lens-column option", (os) => os.map((o) => o.value));
  assert.ok(lensColumns.includes("r2"));
  // Points of the noisy unit circle: r² stays near 1 (make-circle.mjs draws radius 1 ± noise).
  await page.selectOption("#colour-select", "r2");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent.includes("r2"));
  const lo = Number((await page.textContent("#legend-min")).replace("−", "-"));
  const hi = Number((await page.textContent("#legend-max")).replace("−", "-"));
  assert.ok(lo > 0.3 && hi < 2, `node means of r² in ${lo}..${hi}`);
  await page.screenshot({ path: join(outDir, "derived.png") });

  // Use it as the lens, then remove it: the lens falls back and the column leaves the lists.
  await page.selectOption("#s-lens", "column");
  await page.selectOption("#s-lens-column", "r2");
  await waitForIdle(page);
  await page.waitForFunction(() => window.nervure.settings().lens.column === "r2" && !window.nervure.status().pending);
  await page.click('button[aria-label="Remove derived column r2"]');
  await page.waitForFunction(() => !Array.from(document.querySelectorAll("#colour-select option")).some((o) => o.value === "r2"));
  const after = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(after.derived, []);
  assert.notEqual(after.lens.column, "r2");
});
