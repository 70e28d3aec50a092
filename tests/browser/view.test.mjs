// The graph as drawn: nothing over it, discs that do not bury it, small components that do
// not take it, and the count of single-node components. Shapes of known topology, seeded
// (fixtures/shapes.mjs): three loops in a chain, and a loop among 40 stray clumps. What is
// measured is what the page draws (window.nervure.layout(): screen positions, disc radii in
// pixels, the drawing order without hidden nodes), at 1600 × 900 and at 1024 × 768:
//
// - no disc overlaps another, no edge crosses another or runs under a disc, and every
//   disc lies whole inside the canvas (Fit fits every disc) — the readability counts of
//   common practice in graph drawing, as in tests/layout.rs for the layout alone;
// - the colour controls, the legend and the view's tools lie outside the canvas, and
//   none of them is cut at the left or right;
// - hiding components smaller than a number of rows hides them, says how many, fits the
//   rest, and the picture export and the address say so.

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { outDir, usePage, waitForIdle, cliSummary } from "./harness.mjs";
import { splitMix, circle, pointsCsv } from "./fixtures/shapes.mjs";

const ctx = usePage();
let page;
beforeEach(() => { page = ctx.page; });

const SIZES = [[1600, 900], [1024, 768]];

/** Three unit circles centred at x = 0, 2, 4, each touching the next (tests/layout.rs). */
function chainedLoops() {
  const rng = splitMix(1);
  return [...circle(rng, 700, 0, 0, 1, 0.03), ...circle(rng, 700, 2, 0, 1, 0.03), ...circle(rng, 700, 4, 0, 1, 0.03)];
}

/** A unit circle and 40 tight clumps of 8 points above and below it (tests/layout.rs). */
function loopAmongClumps() {
  const rng = splitMix(2);
  const pts = circle(rng, 800, 0, 0, 1, 0.03);
  const centres = [];
  while (centres.length < 40) {
    const y = 1.8 + 5 * rng.uniform();
    const c = [1.9 * rng.uniform() - 0.95, rng.uniform() < 0.5 ? -y : y];
    if (centres.every((q) => Math.hypot(c[0] - q[0], c[1] - q[1]) > 0.6)) centres.push(c);
  }
  for (const c of centres) for (let k = 0; k < 8; k++) pts.push([c[0] + 0.01 * rng.normal(), c[1] + 0.01 * rng.normal()]);
  return pts;
}

/** The settings of tests/layout.rs: the points as they are, filter c0, DBSCAN. */
function shapeSettings(base, intervals, eps) {
  return Object.assign({}, base, {
    columns: ["c0", "c1"], scaling: "none", lens: { kind: "column", column: "c0" },
    cover: { intervals, overlap: 0.3 }, clustering: { kind: "dbscan", eps, minPoints: 5 },
  });
}

async function loadShape(points, name, intervals, eps) {
  const csv = pointsCsv(points);
  await page.evaluate(([text, n]) => window.nervure.loadCsv(text, n), [csv, name]);
  const settings = shapeSettings(await page.evaluate(() => window.nervure.settings()), intervals, eps);
  await page.evaluate(async (s) => { await window.nervure.applySettings(s); return window.nervure.run(); }, settings);
  await waitForIdle(page, 2);
  await page.waitForTimeout(150);
  return { csv, settings };
}

/** The readability counts of what is drawn, in CSS pixels. */
function measure(layout) {
  const shown = new Set(layout.order);
  const at = (i) => [layout.positions[2 * i] * layout.scale + layout.offsetX, layout.positions[2 * i + 1] * layout.scale + layout.offsetY];
  const nodes = layout.order;
  let overlaps = 0, crossings = 0, underDiscs = 0, outside = 0;
  for (let a = 0; a < nodes.length; a++) {
    const i = nodes[a], p = at(i), r = layout.radii[i];
    if (p[0] - r < 0 || p[1] - r < 0 || p[0] + r > layout.width || p[1] + r > layout.height) outside++;
    for (let b = a + 1; b < nodes.length; b++) {
      const j = nodes[b], q = at(j);
      if (Math.hypot(p[0] - q[0], p[1] - q[1]) < r + layout.radii[j]) overlaps++;
    }
  }
  const edges = [];
  for (let e = 0; e < layout.edgeA.length; e++) if (shown.has(layout.edgeA[e]) && shown.has(layout.edgeB[e])) edges.push([layout.edgeA[e], layout.edgeB[e]]);
  const orient = (p, q, r) => (q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]);
  for (let k = 0; k < edges.length; k++) {
    const [a, b] = edges[k], pa = at(a), pb = at(b);
    for (let l = k + 1; l < edges.length; l++) {
      const [c, d] = edges[l];
      if (a === c || a === d || b === c || b === d) continue;
      const pc = at(c), pd = at(d);
      if (orient(pc, pd, pa) * orient(pc, pd, pb) < 0 && orient(pa, pb, pc) * orient(pa, pb, pd) < 0) crossings++;
    }
    for (const v of nodes) {
      if (v === a || v === b) continue;
      const pv = at(v), vx = pb[0] - pa[0], vy = pb[1] - pa[1];
      const t = Math.max(0, Math.min(1, ((pv[0] - pa[0]) * vx + (pv[1] - pa[1]) * vy) / (vx * vx + vy * vy || 1)));
      if (Math.hypot(pv[0] - pa[0] - t * vx, pv[1] - pa[1] - t * vy) < layout.radii[v]) underDiscs++;
    }
  }
  return { overlaps, crossings, underDiscs, outside };
}

/** The bars round the canvas: none overlaps it, and nothing in them is cut off. */
async function barsBesideTheCanvas() {
  return page.evaluate(() => {
    const rect = (e) => e.getBoundingClientRect();
    const canvas = rect(document.getElementById("graph-canvas"));
    const over = (r) => r.left < canvas.right && r.right > canvas.left && r.top < canvas.bottom && r.bottom > canvas.top;
    const out = [];
    for (const id of ["colour-block", "view-tools"]) {
      const bar = document.getElementById(id);
      const b = rect(bar);
      if (over(b)) out.push(id + " overlaps the canvas");
      if (bar.scrollWidth > bar.clientWidth + 1) out.push(id + " is wider than its box");
      for (const e of bar.querySelectorAll("label > span, select, input, button, summary, .legend-title, .legend-min, .legend-max, .legend-bar")) {
        const r = rect(e);
        if (r.width === 0) continue; // not shown (a folded option)
        if (r.left < b.left - 0.5 || r.right > b.right + 0.5) out.push(id + ": '" + (e.textContent || e.id || e.tagName).trim().slice(0, 30) + "' is cut (" + Math.round(r.left) + "–" + Math.round(r.right) + " in " + Math.round(b.left) + "–" + Math.round(b.right) + ")");
      }
    }
    return out;
  });
}

test("three chained loops: no disc over another, no edge crossing or under a disc, every disc in view, the bars beside the canvas", async () => {
  await loadShape(chainedLoops(), "three-loops.csv", 18, 0.15);
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.equal(summary.components, 1);
  assert.equal(summary.loops, 3);
  for (const [w, h] of SIZES) {
    await page.setViewportSize({ width: w, height: h });
    await page.waitForTimeout(300);
    const layout = await page.evaluate(() => window.nervure.layout());
    const m = measure(layout);
    console.log(`three chained loops at ${w} × ${h}: ${summary.nodes} nodes, canvas ${Math.round(layout.width)} × ${Math.round(layout.height)}, ${JSON.stringify(m)}`);
    assert.deepEqual(m, { overlaps: 0, crossings: 0, underDiscs: 0, outside: 0 }, `at ${w} × ${h}`);
    assert.deepEqual(await barsBesideTheCanvas(), [], `at ${w} × ${h}`);
    // The statistic and the scale, unfolded, stay in the bar too.
    await page.click("#colour-options > summary");
    assert.deepEqual(await barsBesideTheCanvas(), [], `at ${w} × ${h}, options open`);
    await page.click("#colour-options > summary");
    await page.screenshot({ path: join(outDir, `view-three-loops-${w}.png`) });
    // Discs are drawn where the page says: the pixel at each centre is not the background.
    const lit = await page.evaluate(() => {
      const l = window.nervure.layout(), c = document.getElementById("graph-canvas");
      const g = c.getContext("2d"), dpr = c.width / l.width;
      return l.order.filter((i) => {
        const x = (l.positions[2 * i] * l.scale + l.offsetX) * dpr, y = (l.positions[2 * i + 1] * l.scale + l.offsetY) * dpr;
        return g.getImageData(Math.round(x), Math.round(y), 1, 1).data[3] > 0;
      }).length;
    });
    assert.equal(lit, layout.order.length, "every disc is drawn at its centre");
  }
});

test("a loop among stray clumps: single nodes counted apart, the loop gets the room, hiding the small components says how many", async () => {
  const { csv, settings } = await loadShape(loopAmongClumps(), "loop-and-clumps.csv", 10, 0.15);
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.equal(summary.loops, 1);
  assert.ok(summary.components > 30 && summary.singleNodeComponents >= 20, JSON.stringify(summary));
  // The same count from the command-line runner (--summary), and in the report.
  const path = join(outDir, "loop-and-clumps.csv");
  writeFileSync(path, csv);
  assert.deepEqual(summary, cliSummary(path, settings));
  const line = (await page.textContent("#summary-line")).replace(/\u2009/g, "");
  assert.ok(line.includes(`${summary.components} components, ${summary.singleNodeComponents} of them single nodes`), line);
  const report = await page.evaluate(() => window.nervure.exportText("report"));
  assert.ok(report.includes(`connected components: ${summary.components} (${summary.singleNodeComponents} of them single nodes)`), report);

  // The loop's component (the largest) is drawn large, the strays in a band beside or under it.
  const loopBox = (l) => {
    const big = l.component[l.sizes.indexOf(Math.max(...l.sizes))];
    const box = [Infinity, Infinity, -Infinity, -Infinity];
    for (const i of l.order) {
      if (l.component[i] !== big) continue;
      const x = l.positions[2 * i] * l.scale + l.offsetX, y = l.positions[2 * i + 1] * l.scale + l.offsetY, r = l.radii[i];
      box[0] = Math.min(box[0], x - r); box[1] = Math.min(box[1], y - r); box[2] = Math.max(box[2], x + r); box[3] = Math.max(box[3], y + r);
    }
    return { big, box, share: Math.max((box[2] - box[0]) / l.width, (box[3] - box[1]) / l.height) };
  };
  for (const [w, h] of SIZES) {
    await page.setViewportSize({ width: w, height: h });
    await page.waitForTimeout(300);
    const l = await page.evaluate(() => window.nervure.layout());
    const { share } = loopBox(l);
    const m = measure(l);
    console.log(`loop among clumps at ${w} × ${h}: the loop spans ${(100 * share).toFixed(0)} % of the canvas; ${JSON.stringify(m)}`);
    assert.ok(share >= 0.6, `at ${w} × ${h} the loop spans only ${share.toFixed(2)} of the canvas`);
    assert.deepEqual(m, { overlaps: 0, crossings: 0, underDiscs: 0, outside: 0 }, `at ${w} × ${h}`);
    await page.screenshot({ path: join(outDir, `view-clumps-${w}.png`) });
  }

  // Hide the components under 20 rows, as a person would.
  await page.fill("#hide-rows", "20");
  await page.dispatchEvent("#hide-rows", "change");
  const l = await page.evaluate(() => window.nervure.layout());
  const { big, share } = loopBox(l);
  assert.ok(l.order.every((i) => l.component[i] === big), "only the loop's nodes are drawn");
  const note = await page.textContent("#hidden-note");
  const hiddenCount = summary.components - 1;
  assert.match(note.replace(/\u2009/g, ""), new RegExp("^" + hiddenCount + " of " + summary.components + " components hidden \\(\\d+ rows\\)$"));
  assert.ok(share >= 0.85, "the loop is fitted to the canvas once the rest is hidden: " + share.toFixed(2));
  assert.deepEqual(measure(l), { overlaps: 0, crossings: 0, underDiscs: 0, outside: 0 });
  await page.screenshot({ path: join(outDir, "view-clumps-hidden-1024.png") });
  // The picture says what was hidden and draws only what is shown; the graph exports stay whole.
  const svg = await page.evaluate(() => window.nervure.exportText("svg"));
  assert.equal((svg.match(/<circle /g) || []).length, l.order.length);
  assert.ok(svg.includes(`${hiddenCount} components smaller than 20 rows hidden`), "the picture says components were hidden");
  const graph = JSON.parse(await page.evaluate(() => window.nervure.exportText("json")));
  assert.equal(graph.nodes.length, summary.nodes, "the graph export keeps every node");
  // The address carries the view apart from the settings; a reload brings both back.
  const hash = await page.evaluate(() => location.hash);
  assert.ok(hash.includes("&v=" + encodeURIComponent(JSON.stringify({ hideBelow: 20 }))), hash);
  assert.ok(!decodeURIComponent(hash.split("&v=")[0]).includes("hideBelow"), "the settings document does not carry the hiding");
  await ctx.reload();
  await page.evaluate(([text]) => window.nervure.loadCsv(text, "loop-and-clumps.csv"), [csv]);
  await waitForIdle(page, 1);
  assert.equal(await page.inputValue("#hide-rows"), "20");
  assert.equal(await page.evaluate(() => window.nervure.restored()), "fragment");
  assert.equal((await page.evaluate(() => window.nervure.layout())).order.length, l.order.length);
  // 0 shows every component again.
  await page.fill("#hide-rows", "0");
  await page.dispatchEvent("#hide-rows", "change");
  assert.equal((await page.evaluate(() => window.nervure.layout())).order.length, summary.nodes);
  assert.equal(await page.textContent("#hidden-note"), "");
  assert.ok(!(await page.evaluate(() => location.hash)).includes("&v="));
});

test("a hiding threshold above every component shows them all and says so; a bad one is refused", async () => {
  await loadShape(chainedLoops(), "three-loops.csv", 18, 0.15);
  const nodes = (await page.evaluate(() => window.nervure.summary())).nodes;
  const h = await page.evaluate(() => window.nervure.hideSmallerThan(1e9));
  assert.equal(h.all, true);
  assert.equal((await page.evaluate(() => window.nervure.layout())).order.length, nodes);
  assert.match(await page.textContent("#hidden-note"), /all shown/);
  await assert.rejects(page.evaluate(() => window.nervure.hideSmallerThan(-3)), /whole number of rows/);
});
