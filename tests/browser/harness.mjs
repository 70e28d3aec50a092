// Shared setup of the browser tests: one headless Chromium (Debian's /usr/bin/chromium)
// per test file, a fresh page per test opened from file://, and a record of every request
// that is not the page itself or a blob:/data: URL, every console error and every uncaught
// page error; a test fails when that record is not empty.
//
// Usage in a test file:
//   import { usePage } from "./harness.mjs";
//   const ctx = usePage();             // ctx.page is the current test's page
//
// Local storage is cleared when each page opens, so tests do not see each other's saved
// settings; `ctx.reload()` reloads keeping it, as a person's reload would.

import { before, after, beforeEach, afterEach } from "node:test";
import assert from "node:assert/strict";
import { spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

export const here = dirname(fileURLToPath(import.meta.url));
export const root = join(here, "..", "..");
export const pagePath = join(root, "dist", "nervure.html");
export const pageUrl = pathToFileURL(pagePath).href;
export const outDir = join(here, "out");
export const circleCsv = join(here, "fixtures", "circle.csv");
mkdirSync(outDir, { recursive: true });

const CHROMIUM = process.env.CHROMIUM || "/usr/bin/chromium";
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

/** True for the URLs a page may load: itself (with any fragment), blob: and data:. */
export function allowedUrl(url) {
  return url === pageUrl || url.startsWith(pageUrl + "#") || url.startsWith("blob:") || url.startsWith("data:");
}

/** Registers before/after hooks; returns an object whose `page` is the current page. */
export function usePage(options = {}) {
  const ctx = { context: null, page: null, problems: [], requests: [] };
  let userDataDir;
  before(async () => {
    assert.ok(existsSync(pagePath), `${pagePath} is missing: build it with cargo run --release --features page-builder --bin nervure-build`);
    userDataDir = mkdtempSync(join(tmpdir(), "nervure-chromium-"));
    ctx.context = await chromium.launchPersistentContext(userDataDir, {
      executablePath: CHROMIUM,
      headless: true,
      args: FLAGS,
      viewport: options.viewport || { width: 1600, height: 900 },
      deviceScaleFactor: 1,
      acceptDownloads: true,
    });
  });
  after(async () => {
    if (ctx.context) await ctx.context.close();
    if (userDataDir) rmSync(userDataDir, { recursive: true, force: true });
  });
  beforeEach(async () => {
    ctx.problems = [];
    ctx.requests = [];
    ctx.page = await openPage(ctx, pageUrl + (options.hash || ""));
    await ctx.page.evaluate(() => localStorage.clear());
  });
  afterEach(async () => {
    await ctx.page.close();
    assert.deepEqual(ctx.problems, [], "the page made requests or reported errors");
  });
  /** Reloads the page (local storage kept), at `url` if given. */
  ctx.reload = async (url) => {
    if (url) await ctx.page.goto(url);
    else await ctx.page.reload();
  };
  return ctx;
}

/** Opens a page at `url` that records into `ctx.problems` and `ctx.requests`. */
export async function openPage(ctx, url) {
  const page = await ctx.context.newPage();
  page.on("request", (r) => { ctx.requests.push(r.url()); if (!allowedUrl(r.url())) ctx.problems.push("request to " + r.url()); });
  page.on("console", (m) => { if (m.type() === "error") ctx.problems.push("console error: " + m.text()); });
  page.on("pageerror", (e) => ctx.problems.push("page error: " + e.message));
  page.on("worker", (w) => w.on("console", (m) => { if (m.type() === "error") ctx.problems.push("worker console error: " + m.text()); }));
  await page.goto(url);
  return page;
}

/** Waits until the page has built and drawn a graph. */
export async function waitForGraph(page) {
  await page.waitForFunction(() => window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null, null, { timeout: 60000 });
}

/** Waits until no build is running or scheduled, and at least `builds` have finished. */
export async function waitForIdle(page, builds = 0) {
  await page.waitForFunction((b) => { const s = window.nervure.status(); return s.builds >= b && !s.pending && s.phase === "ready"; }, builds, { timeout: 60000 });
}

/** The last-drawn node whose centre no disc drawn above it covers, and the screen mapping
 *  of the page's layout (screen = world * scale + offset, CSS pixels in the canvas). */
export function uncoveredNode(layout, preferLargest = false) {
  const pos = (i) => ({ x: layout.positions[2 * i] * layout.scale + layout.offsetX, y: layout.positions[2 * i + 1] * layout.scale + layout.offsetY });
  const uncovered = [];
  for (let k = layout.order.length - 1; k >= 0; k--) {
    const i = layout.order[k], p = pos(i);
    const covered = layout.order.slice(k + 1).some((j) => Math.hypot(pos(j).x - p.x, pos(j).y - p.y) <= layout.radii[j] + 2);
    if (!covered) uncovered.push(i);
  }
  assert.ok(uncovered.length > 0, "every node is hidden under another");
  const target = preferLargest ? uncovered.reduce((a, b) => (layout.sizes[b] > layout.sizes[a] ? b : a)) : uncovered[0];
  return { target, pos, uncovered };
}

/** The path of the open table `name` in $NERVURE_DATA (tests/data/open_tables.py writes
 *  them; tests/run.sh sets it), and the reason to skip (false when it is there): pass it as
 *  a test's `skip` option. */
export function openTableFile(name) {
  const dir = process.env.NERVURE_DATA || null;
  const path = dir ? join(dir, name + ".csv") : null;
  const skip = !path || !existsSync(path) ? `skipped: NERVURE_DATA is not set or holds no ${name}.csv (tests/run.sh writes it)` : false;
  if (skip) console.log(skip);
  return { path, skip };
}

/** Runs the command-line runner (NERVURE_CLI, or `cargo run --release`) with `args`;
 * fails the test when it fails. */
export function runCli(args) {
  const r = process.env.NERVURE_CLI
    ? spawnSync(process.env.NERVURE_CLI, args, { encoding: "utf8" })
    : spawnSync("cargo", ["run", "-q", "--release", "--bin", "nervure", "--", ...args], { cwd: root, encoding: "utf8", timeout: 20 * 60 * 1000 });
  assert.equal(r.status, 0, "the command-line runner failed: " + r.stderr);
  return r.stdout;
}

let cliFiles = 0;

/** The summary the command-line runner prints for a file and a settings document. */
export function cliSummary(csvPath, settings) {
  mkdirSync(outDir, { recursive: true });
  const settingsPath = join(outDir, "cli-settings-" + process.pid + "-" + cliFiles++ + ".json");
  writeFileSync(settingsPath, JSON.stringify(settings, null, 2));
  return JSON.parse(runCli([csvPath, "--settings", settingsPath, "--summary"]));
}

/** The automatic settings the command-line runner chooses for a file. */
export function cliAutoSettings(csvPath) {
  mkdirSync(outDir, { recursive: true });
  const path = join(outDir, "cli-auto-settings-" + process.pid + ".json");
  runCli([csvPath, "--write-settings", path, "--summary"]);
  return JSON.parse(readFileSync(path, "utf8"));
}

/** Opens the circle fixture through the file input, as a person picks a file, and waits
 * for its first graph. */
export async function openCircleIn(page) {
  await page.setInputFiles("#file-input", circleCsv);
  await waitForGraph(page);
}
