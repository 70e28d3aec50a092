// The pool of clustering helpers (www/worker.js): the graph built with the cover elements
// clustered by several helper workers equals the graph built in one worker (common
// practice: the pool only moves work, so the check is equality of summary, node sizes,
// edges and layout). Opened from file:// in headless Chromium, as tests/browser/page.test.mjs.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { existsSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

const here = dirname(fileURLToPath(import.meta.url));
const pagePath = join(here, "..", "..", "dist", "nervure.html");
const pageUrl = pathToFileURL(pagePath).href;
const CHROMIUM = process.env.CHROMIUM || "/usr/bin/chromium";
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

let context, userDataDir, scratch;

before(async () => {
  assert.ok(existsSync(pagePath), `${pagePath} is missing: build it with cargo run --release --features page-builder --bin nervure-build`);
  userDataDir = mkdtempSync(join(tmpdir(), "nervure-chromium-"));
  scratch = mkdtempSync(join(tmpdir(), "nervure-pool-"));
  context = await chromium.launchPersistentContext(userDataDir, { executablePath: CHROMIUM, headless: true, args: FLAGS });
});

after(async () => {
  if (context) await context.close();
  for (const d of [userDataDir, scratch]) if (d) rmSync(d, { recursive: true, force: true });
});

/** Three noisy rings in 3-D plus uniform background (seeded), 6000 rows: DBSCAN finds core, border and noise rows. */
function ringsCsv() {
  let s = 12345;
  const rand = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
  const lines = ["a,b,c"];
  for (let i = 0; i < 6000; i++) {
    const t = rand() * 2 * Math.PI, k = i % 3;
    // Every 25th row uniform over the box: DBSCAN noise.
    if (i % 25 === 0) { lines.push([rand() * 12 - 6, rand() * 12 - 6, rand() * 2].map((v) => v.toFixed(5)).join(",")); continue; }
    lines.push([Math.cos(t) * (3 + k) + rand() * 0.3, Math.sin(t) * (3 + k) + rand() * 0.3, k * 0.5 + rand() * 0.3].map((v) => v.toFixed(5)).join(","));
  }
  return lines.join("\n") + "\n";
}

test("elements clustered by the pool give the graph one worker gives", async () => {
  const problems = [];
  const page = await context.newPage();
  page.on("console", (m) => { if (m.type() === "error") problems.push("console error: " + m.text()); });
  page.on("pageerror", (e) => problems.push("page error: " + e.message));
  page.on("request", (r) => { if (!(r.url() === pageUrl || r.url().startsWith("blob:") || r.url().startsWith("data:"))) problems.push("request to " + r.url()); });
  await page.goto(pageUrl);
  const csv = join(scratch, "rings.csv");
  writeFileSync(csv, ringsCsv());
  await page.setInputFiles("#file-input", csv);
  await page.waitForFunction(() => window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null, null, { timeout: 60000 });

  const result = await page.evaluate(async () => {
    const n = window.nervure;
    const base = n.settings();
    const s = Object.assign({}, base, { clustering: { kind: "dbscan", eps: 0.35, minPoints: 5 }, cover: { intervals: 12, overlap: 0.4 } });
    const other = Object.assign({}, s, { clustering: { kind: "dbscan", eps: 0.3, minPoints: 5 } });
    const snapshot = (summary) => ({ summary, layout: n.layout() });
    const out = {};
    for (const [name, helpers] of [["one", 0], ["pool", 3]]) {
      await n.pool({ helpers, minPoints: 0 });
      // Build another clustering first, so the cached clusters cannot be re-used.
      await n.applySettings(other);
      await n.run();
      await n.applySettings(s);
      out[name] = snapshot(await n.run());
      out[name].onPool = (await n.pool({})).elementsOnPool;
    }
    return out;
  });
  assert.ok(result.one.summary.nodes > 3, JSON.stringify(result.one.summary));
  assert.ok(result.one.summary.noiseRows > 0, "the data should have noise rows");
  assert.equal(result.one.onPool, 0, "no helper should be used with 0 helpers");
  assert.ok(result.pool.onPool >= 12, `the pool clustered ${result.pool.onPool} elements`);
  assert.deepEqual(result.pool.summary, result.one.summary);
  assert.deepEqual(result.pool.layout.sizes, result.one.layout.sizes);
  assert.deepEqual(result.pool.layout.positions, result.one.layout.positions);
  assert.deepEqual(problems, []);
  await page.close();
});
