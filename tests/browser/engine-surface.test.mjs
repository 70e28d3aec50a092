// The wasm surface added for two filters, balanced covers, per-column missing rules, node
// statistics and the lens histogram, called inside the page's own worker (built page
// dist/nervure.html from file://, headless Chromium) and compared with the command-line
// runner on the same settings: the same engine compiled twice must give the same graph.
//
//   cargo run --release --features page-builder --bin nervure-build && npm ci
//   node --test tests/browser/engine-surface.test.mjs
//
// Fails on any request that is not the page itself or a blob:/data: URL, and on any
// console error. Set NERVURE_CLI to a built `nervure` binary to skip cargo.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { existsSync, mkdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";
import { cliSummary } from "./harness.mjs";

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, "..", "..");
const pagePath = join(root, "dist", "nervure.html");
const pageUrl = pathToFileURL(pagePath).href;
const outDir = join(here, "out");
const circleCsv = join(here, "fixtures", "circle.csv");
mkdirSync(outDir, { recursive: true });
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

let context, userDataDir;

before(async () => {
  assert.ok(existsSync(pagePath), `${pagePath} is missing: build it first`);
  userDataDir = mkdtempSync(join(tmpdir(), "nervure-chromium-"));
  context = await chromium.launchPersistentContext(userDataDir, { executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true, args: FLAGS });
});

after(async () => {
  if (context) await context.close();
  if (userDataDir) rmSync(userDataDir, { recursive: true, force: true });
});


test("two filters, a balanced cover, median fill, new statistics and the histogram through the worker", async () => {
  const problems = [];
  const page = await context.newPage();
  const allowed = (url) => url === pageUrl || url.startsWith("blob:") || url.startsWith("data:");
  page.on("request", (r) => { if (!allowed(r.url())) problems.push("request to " + r.url()); });
  page.on("console", (m) => { if (m.type() === "error") problems.push("console error: " + m.text()); });
  page.on("pageerror", (e) => problems.push("page error: " + e.message));
  await page.goto(pageUrl);
  await page.setInputFiles("#file-input", circleCsv);
  await page.waitForFunction(() => window.nervure.summary() !== null, null, { timeout: 60000 });
  const settings = {
    version: 1,
    columns: ["x", "y"],
    scaling: "none",
    missing: { fillValues: [], perColumn: { angle_deg: { policy: "median" } } },
    lens: { kind: "column", column: "x" },
    lens2: { kind: "column", column: "y" },
    cover: { intervals: 3, overlap: 0.2, kind: "balanced" },
    cover2: { intervals: 3, overlap: 0.2 },
    clustering: { kind: "dbscan", eps: 0.3, minPoints: 3 },
    edges: { minShared: 1 },
    seed: 1,
  };
  const [worker] = page.workers();
  assert.ok(worker, "the page runs its engine in a worker");
  const got = await worker.evaluate(async (s) => {
    // `ready` is the worker's promise of its engine (www/worker.js).
    const engine = await ready;
    const summary = engine.run(s, () => {});
    const nodes = summary.nodes;
    return {
      summary,
      nodes,
      median: Array.from(engine.node_values("x", "median")),
      mean: Array.from(engine.node_values("x", "mean")),
      share: Array.from(engine.node_values("x", { kind: "shareAbove", threshold: 0 })),
      lens2: Array.from(engine.node_lens_values(1)),
      lens1: Array.from(engine.node_lens_values()),
      hist: engine.lens_histogram(12),
      hist2: engine.lens_histogram(5, 1),
      badStat: (() => { try { engine.node_values("x", "mode"); return null; } catch (e) { return String(e.message || e); } })(),
    };
  }, settings);
  const cli = cliSummary(circleCsv, settings);
  assert.deepEqual(got.summary, cli, "the page's engine and the command-line runner agree");
  assert.ok(got.nodes >= 4);
  for (const key of ["median", "mean", "share", "lens1", "lens2"]) assert.equal(got[key].length, got.nodes, key);
  assert.ok(got.share.every((v) => v >= 0 && v <= 1));
  // The node's mean first-lens value is the mean of its x values: the lens is x itself.
  got.mean.forEach((m, i) => assert.ok(Math.abs(m - got.lens1[i]) < 1e-12, `node ${i}`));
  assert.equal(got.hist.edges.length, 13);
  assert.equal(got.hist.counts.reduce((a, b) => a + b, 0), got.summary.rows);
  assert.equal(got.hist.intervals.length, 3);
  assert.equal(got.hist2.counts.length, 5);
  assert.match(got.badStat, /setting 'stat'/);
  await page.close();
  assert.deepEqual(problems, []);
});
