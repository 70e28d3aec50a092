// Browser tests of the controls hooks.js adds: the lens kinds with a neighbour count, the
// balanced cover, the second filter, the colour statistic, colouring by the filter, the
// map centred on zero with its range, and the lens histogram. Each is driven from the
// form of dist/nervure.html opened from file://; a setting that changes the graph is
// checked against the command-line runner's summary for the same settings document (set
// NERVURE_CLI to a built `nervure` binary to skip cargo). The harness fails a test on any
// request other than the page itself or blob:/data:, and on any console or page error.

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { circleCsv, usePage, waitForGraph, waitForIdle, cliSummary } from "./harness.mjs";

const ctx = usePage();
let page;
beforeEach(() => { page = ctx.page; });


async function openCircle() {
  await page.setInputFiles("#file-input", circleCsv);
  await waitForGraph(page);
  await waitForIdle(page, 1);
}

/** Builds done so far. */
const builds = () => page.evaluate(() => window.nervure.status().builds);

/** Runs `change` (a form action), waits for the rebuild; returns settings and summary. */
async function rebuiltAfter(change) {
  const before = await builds();
  await change();
  await waitForIdle(page, before + 1);
  return page.evaluate(() => ({ settings: window.nervure.settings(), summary: window.nervure.summary(), message: window.nervure.message() }));
}

async function assertSameAsCli(got) {
  assert.equal(got.message, null, "the page shows no error");
  assert.deepEqual(got.summary, cliSummary(circleCsv, got.settings), "the page's summary equals the command-line runner's for the same settings");
}

test("each added lens kind is a lens option, its k reaches the settings, and the graph matches the runner", async () => {
  await openCircle();
  let got = await rebuiltAfter(() => page.selectOption("#s-lens", "distanceToMeasure"));
  assert.deepEqual(got.settings.lens, { kind: "distanceToMeasure", k: 10 });
  assert.ok(await page.isVisible("#s-dtm-k") && !(await page.isVisible("#s-component")), "only the k field of this kind shows");
  got = await rebuiltAfter(async () => { await page.fill("#s-dtm-k", "7"); await page.dispatchEvent("#s-dtm-k", "change"); });
  assert.deepEqual(got.settings.lens, { kind: "distanceToMeasure", k: 7 });
  await assertSameAsCli(got);

  got = await rebuiltAfter(() => page.selectOption("#s-lens", "neighbourDistance"));
  got = await rebuiltAfter(async () => { await page.fill("#s-nd-k", "4"); await page.dispatchEvent("#s-nd-k", "change"); });
  assert.deepEqual(got.settings.lens, { kind: "neighbourDistance", k: 4 });
  await assertSameAsCli(got);

  got = await rebuiltAfter(() => page.selectOption("#s-lens", "lInfinityCentrality"));
  assert.deepEqual(got.settings.lens, { kind: "lInfinityCentrality" });
  await assertSameAsCli(got);

  // Switching back restores the parameters the kind had (state.lensMemory).
  got = await rebuiltAfter(() => page.selectOption("#s-lens", "distanceToMeasure"));
  assert.deepEqual(got.settings.lens, { kind: "distanceToMeasure", k: 7 });
  assert.equal(await page.inputValue("#s-dtm-k"), "7");
});

test("a balanced cover and a second filter with its own cover reach the settings and match the runner", async () => {
  await openCircle();
  let got = await rebuiltAfter(() => page.selectOption("#s-cover-kind", "balanced"));
  assert.equal(got.settings.cover.kind, "balanced");
  await assertSameAsCli(got);

  assert.ok(!(await page.isVisible("#s2-lens")), "the second filter's fields are hidden until asked for");
  got = await rebuiltAfter(() => page.check("#s-second"));
  assert.ok(await page.isVisible("#s2-lens"));
  assert.deepEqual(got.settings.lens2, { kind: "principal", component: 2 });
  assert.equal(got.settings.cover2.intervals, got.settings.cover.intervals);
  got = await rebuiltAfter(async () => { await page.fill("#s2-intervals", "4"); await page.dispatchEvent("#s2-intervals", "change"); });
  got = await rebuiltAfter(() => page.selectOption("#s2-cover-kind", "balanced"));
  assert.deepEqual(got.settings.cover2, { intervals: 4, overlap: got.settings.cover.overlap, kind: "balanced" });
  await assertSameAsCli(got);

  got = await rebuiltAfter(() => page.selectOption("#s2-lens", "column"));
  got = await rebuiltAfter(() => page.selectOption("#s2-column", "angle_deg"));
  assert.deepEqual(got.settings.lens2, { kind: "column", column: "angle_deg" });
  await assertSameAsCli(got);
  got = await rebuiltAfter(() => page.selectOption("#s2-lens", "density"));
  assert.ok(await page.isVisible("#s2-bandwidth") && !(await page.isVisible("#s2-norm")));
  got = await rebuiltAfter(async () => { await page.fill("#s2-bandwidth", "0.5"); await page.dispatchEvent("#s2-bandwidth", "change"); });
  assert.deepEqual(got.settings.lens2, { kind: "density", bandwidth: 0.5 });
  await assertSameAsCli(got);
  got = await rebuiltAfter(() => page.selectOption("#s2-lens", "eccentricity"));
  got = await rebuiltAfter(() => page.selectOption("#s2-norm", "max"));
  assert.deepEqual(got.settings.lens2, { kind: "eccentricity", norm: "max" });
  await assertSameAsCli(got);
  got = await rebuiltAfter(() => page.selectOption("#s2-lens", "column"));
  assert.deepEqual(got.settings.lens2, { kind: "column", column: "angle_deg" }, "the column chosen before is kept");
  // The second filter's histogram holds the same rows as the first's.
  const hs = await page.evaluate(() => window.nervure.lensHistograms());
  assert.equal(hs[1].intervals.length, 4);
  assert.equal(hs[1].counts.reduce((a, b) => a + b, 0), got.summary.rows);

  got = await rebuiltAfter(() => page.uncheck("#s-second"));
  assert.ok(!("lens2" in got.settings) && !("cover2" in got.settings), "unticking removes the second filter");
  await assertSameAsCli(got);
});

test("the colour statistic changes the legend; the share above a threshold stays in [0, 1]", async () => {
  await openCircle();
  await page.selectOption("#colour-select", "x");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent.startsWith("Mean of x"));
  const legend = () => page.evaluate(() => ({
    title: document.getElementById("legend-title").textContent,
    min: Number(document.getElementById("legend-min").textContent.replace("\u2212", "-")),
    max: Number(document.getElementById("legend-max").textContent.replace("\u2212", "-")),
  }));
  const mean = await legend();
  // The statistic and the scale are folded under the legend's bar: unfold them.
  await page.click("#colour-options > summary");
  await page.selectOption("#colour-stat", "median");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent === "Median of x in each node");
  await page.selectOption("#colour-stat", "spread");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent === "Spread of x in each node");
  const spread = await legend();
  // The GraphML export carries the statistic shown, under its own attribute name, with the
  // values the legend spans.
  const spreadValues = (text, name) => {
    const key = new RegExp('<key id="(colour\\d+)" for="node" attr.name="' + name.replace(/[()]/g, "\\$&") + '" attr.type="double"/>').exec(text);
    assert.ok(key, "GraphML has a key named " + name);
    return [...text.matchAll(new RegExp('<data key="' + key[1] + '">([^<]*)</data>', "g"))].map((m) => Number(m[1]));
  };
  const sd = spreadValues(await page.evaluate(() => window.nervure.exportText("graphml")), "x (spread)");
  assert.equal(sd.length, (await page.evaluate(() => window.nervure.layout())).sizes.length);
  assert.ok(Math.abs(Math.min(...sd) - spread.min) <= 1e-3 * Math.max(1, Math.abs(spread.min)) + 1e-3, "GraphML spread " + Math.min(...sd) + " vs legend " + spread.min);
  // A standard deviation is never negative (definition); node means of x on a circle of
  // radius about 1 around 0 take both signs (by construction of the fixture).
  assert.ok(spread.min >= 0, JSON.stringify(spread));
  assert.ok(mean.min < 0 && mean.max > 0, JSON.stringify(mean));
  await page.selectOption("#colour-stat", "shareAbove");
  assert.ok(await page.isVisible("#colour-threshold"));
  await page.fill("#colour-threshold", "0.5");
  await page.dispatchEvent("#colour-threshold", "change");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent === "Share of rows with x above 0.5, in each node");
  const share = await legend();
  assert.ok(share.min >= 0 && share.max <= 1 && share.max > share.min, JSON.stringify(share));
  const shares = spreadValues(await page.evaluate(() => window.nervure.exportText("graphml")), "x (share above 0.5)");
  assert.ok(shares.every((v) => v >= 0 && v <= 1) && shares.some((v) => v > 0), "shares in [0, 1]");

  // Colouring by the filter: each node's mean lens value; the statistic does not apply.
  await page.selectOption("#colour-select", { label: "The filter (lens value)" });
  await page.waitForFunction(() => document.getElementById("legend-title").textContent === "Mean filter value in each node");
  assert.ok(await page.isDisabled("#colour-stat"));
  // It survives a rebuild, and the export leaves out the column (there is none).
  const got = await rebuiltAfter(async () => { await page.fill("#s-intervals", "9"); await page.dispatchEvent("#s-intervals", "change"); });
  assert.equal(got.message, null);
  assert.equal(await page.evaluate(() => document.getElementById("legend-title").textContent), "Mean filter value in each node");
});

test("centre on zero uses the diverging map over a symmetric range; a fixed range is shown as given", async () => {
  await openCircle();
  await page.selectOption("#colour-select", "x");
  await page.waitForFunction(() => document.getElementById("legend-title").textContent.startsWith("Mean of x"));
  const read = () => page.evaluate(() => ({
    min: Number(document.getElementById("legend-min").textContent.replace("\u2212", "-")),
    max: Number(document.getElementById("legend-max").textContent.replace("\u2212", "-")),
    bar: document.getElementById("legend-bar").style.backgroundImage,
  }));
  const plain = await read();
  await page.click("#colour-options > summary");
  await page.check("#colour-centre");
  const centred = await read();
  assert.equal(centred.min, -centred.max, "an automatic range centred on zero is symmetric");
  assert.equal(centred.max, Math.max(Math.abs(plain.min), Math.abs(plain.max)));
  // The ends and middle of Crameri's vik (cmcrameri 1.10, vik.txt rows 0, 128 and 255, x 255 rounded).
  assert.ok(centred.bar.includes("rgb(0, 18, 97)") && centred.bar.includes("rgb(236, 229, 224)") && centred.bar.includes("rgb(89, 0, 8)"), centred.bar);
  assert.notEqual(centred.bar, plain.bar);
  await page.selectOption("#colour-range", "fixed");
  await page.fill("#colour-lo", "-2");
  await page.fill("#colour-hi", "3");
  await page.dispatchEvent("#colour-hi", "change");
  const fixed = await read();
  assert.deepEqual([fixed.min, fixed.max], [-2, 3]);
});

test("the lens histogram is drawn with the cover's intervals and holds every row used", async () => {
  await openCircle();
  const s = await page.evaluate(() => ({ settings: window.nervure.settings(), summary: window.nervure.summary() }));
  const h = await page.evaluate(() => window.nervure.lensHistograms()[0]);
  assert.ok(h, "a histogram after the first build");
  assert.equal(h.counts.length, 40);
  assert.equal(h.counts.reduce((a, b) => a + b, 0), s.summary.rows, "the bins count each used row once (numpy.histogram semantics)");
  assert.equal(h.intervals.length, s.settings.cover.intervals);
  // Overlapping intervals: together they hold at least every row.
  assert.ok(h.intervals.reduce((a, iv) => a + iv[2], 0) >= s.summary.rows);
  assert.ok(await page.isVisible("#lens-hist"));
  const painted = await page.evaluate(() => {
    const c = document.getElementById("lens-hist");
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 3; i < d.length; i += 4) if (d[i] > 0) n++;
    return { n, total: d.length / 4 };
  });
  assert.ok(painted.n > painted.total * 0.05, "bars and bands cover part of the canvas: " + JSON.stringify(painted));
  // A new cover redraws with the new number of intervals.
  const before = await builds();
  await page.fill("#s-intervals", "5");
  await page.dispatchEvent("#s-intervals", "change");
  await waitForIdle(page, before + 1);
  await page.waitForFunction(() => window.nervure.lensHistograms()[0].intervals.length === 5);
  assert.match(await page.getAttribute("#lens-hist", "aria-label"), /5 intervals; rows in each interval: \d+/);
});
