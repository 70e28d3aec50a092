// The main thread's long tasks while the benchmark's big graph is built and shown (the
// "big graph" phase of page.mjs: the benchmark's settings with a cover of 1500 intervals
// at overlap 0.3 and DBSCAN eps 0.15, minPoints 3, about 19,000 nodes on the 1.5-million-row
// demo file). One or more builds of the page are measured alternately in one run, so two
// builds are compared side by side on the same machine at the same time.
//
//   node tests/bench/big-graph-tasks.mjs DATA.csv SETTINGS.json [PAGE.html ...]
//
// With no page given, dist/nervure.html. NERVURE_ROUNDS (default 1) rounds of all pages.
// NERVURE_PROFILE=FILE.json also writes a DevTools CPU profile of the phase's main thread
// (the last round of the first page) and prints its heaviest functions by self time.
// Prints one JSON line per page and round: nodes, edges, the long tasks (ms, in order),
// the longest and how many were over 50 and 100 ms.

import { readFileSync, writeFileSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

const here = dirname(fileURLToPath(import.meta.url));
const [data, settingsPath, ...pages] = process.argv.slice(2);
if (!data || !settingsPath) { console.error("usage: node tests/bench/big-graph-tasks.mjs DATA.csv SETTINGS.json [PAGE.html ...]"); process.exit(2); }
if (pages.length === 0) pages.push(join(here, "..", "..", "dist", "nervure.html"));
const settings = JSON.parse(readFileSync(settingsPath, "utf8"));
const big = Object.assign({}, settings, { cover: { intervals: 1500, overlap: 0.3 }, clustering: { kind: "dbscan", eps: 0.15, minPoints: 3 } });
const rounds = Number(process.env.NERVURE_ROUNDS || 1);
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

async function measure(pagePath, profileTo) {
  const userDataDir = mkdtempSync(join(tmpdir(), "nervure-bigtasks-"));
  const context = await chromium.launchPersistentContext(userDataDir, { executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true, args: FLAGS, viewport: { width: 1600, height: 900 } });
  try {
    const page = await context.newPage();
    await page.addInitScript(() => {
      window.__tasks = [];
      window.__phase = "load";
      new PerformanceObserver((list) => { for (const e of list.getEntries()) window.__tasks.push([window.__phase, e.duration]); }).observe({ type: "longtask", buffered: true });
    });
    await page.goto(pathToFileURL(resolve(pagePath)).href);
    await page.setInputFiles("#file-input", data);
    await page.waitForFunction(() => window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null, null, { timeout: 900000, polling: 50 });
    // As page.mjs does before: the benchmark's settings once, so the lens is the same.
    await page.evaluate(async (s) => { await window.nervure.applySettings(s); return window.nervure.run(); }, settings);
    await page.waitForTimeout(500);
    let cdp = null;
    if (profileTo) {
      cdp = await context.newCDPSession(page);
      await cdp.send("Profiler.enable");
      await cdp.send("Profiler.setSamplingInterval", { interval: 200 });
      await cdp.send("Profiler.start");
    }
    await page.evaluate(() => { window.__phase = "big graph"; });
    const t0 = Date.now();
    const summary = await page.evaluate(async (s) => { window.nervure.test.nodeLimit(1e9); await window.nervure.applySettings(s); return window.nervure.run(); }, big);
    const runMs = Date.now() - t0;
    await page.waitForTimeout(1000);
    if (cdp) {
      const { profile } = await cdp.send("Profiler.stop");
      writeFileSync(profileTo, JSON.stringify(profile));
      printHeaviest(profile);
    }
    const tasks = (await page.evaluate(() => window.__tasks)).filter((t) => t[0] === "big graph").map((t) => Math.round(t[1]));
    const history = await page.evaluate(() => window.nervure.history().length);
    return { nodes: summary.nodes, edges: summary.edges, runMs, history, longTasksMs: tasks, longestMs: tasks.length ? Math.max(...tasks) : 0, over50: tasks.length, over100: tasks.filter((d) => d > 100).length };
  } finally {
    await context.close();
    rmSync(userDataDir, { recursive: true, force: true });
  }
}

/** The functions with the most self time in a CPU profile (its samples are 200 µs apart). */
function printHeaviest(profile) {
  const byId = new Map(profile.nodes.map((n) => [n.id, n]));
  const self = new Map();
  const dt = profile.timeDeltas;
  for (let i = 0; i < profile.samples.length; i++) {
    const n = byId.get(profile.samples[i]);
    const f = n.callFrame;
    const key = (f.functionName || "(anonymous)") + " " + f.url.split("/").pop().slice(0, 30) + ":" + (f.lineNumber + 1);
    self.set(key, (self.get(key) || 0) + (dt[i + 1] || 0) / 1000);
  }
  const top = Array.from(self.entries()).filter((e) => !e[0].startsWith("(idle)")).sort((a, b) => b[1] - a[1]).slice(0, 30);
  for (const [k, ms] of top) console.error(ms.toFixed(1).padStart(8) + " ms  " + k);
}

for (let r = 0; r < rounds; r++) {
  for (let p = 0; p < pages.length; p++) {
    const profileTo = process.env.NERVURE_PROFILE && p === 0 && r === rounds - 1 ? process.env.NERVURE_PROFILE : null;
    const out = await measure(pages[p], profileTo);
    console.log(JSON.stringify(Object.assign({ page: pages[p], round: r + 1 }, out)));
  }
}
