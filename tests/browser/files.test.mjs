// Browser tests of the many-files path, from file:// in headless Chromium: the demo
// scenario's stations as separate files plus a 3-hourly model file (demo/make_campaign.py),
// dropped together, aligned on time per station, the differences added, the graph drawn;
// an ICARTT file and a spreadsheet read through the same file input.
//
//   cargo run --release --features page-builder --bin nervure-build && node --test tests/browser/files.test.mjs
//
// Fails on any request that is not the page itself or a blob:/data: URL, and on any console
// or page error. Prints the time to merge and to align the demo files.

import { test, before, after, beforeEach, afterEach } from "node:test";
import assert from "node:assert/strict";
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, "..", "..");
const pagePath = join(root, "dist", "nervure.html");
const pageUrl = pathToFileURL(pagePath).href;
const CHROMIUM = process.env.CHROMIUM || "/usr/bin/chromium";
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

let context, userDataDir, campaignDir, page, problems;

before(async () => {
  assert.ok(existsSync(pagePath), `${pagePath} is missing: build it with cargo run --release --features page-builder --bin nervure-build`);
  campaignDir = mkdtempSync(join(tmpdir(), "nervure-campaign-"));
  const r = spawnSync(process.env.PYTHON || "python3", [join(root, "demo", "make_campaign.py"), "--out", campaignDir], { encoding: "utf8" });
  assert.equal(r.status, 0, "demo/make_campaign.py failed: " + r.stderr);
  userDataDir = mkdtempSync(join(tmpdir(), "nervure-chromium-"));
  context = await chromium.launchPersistentContext(userDataDir, { executablePath: CHROMIUM, headless: true, args: FLAGS, viewport: { width: 1600, height: 1000 } });
});

after(async () => {
  if (context) await context.close();
  for (const d of [userDataDir, campaignDir]) if (d) rmSync(d, { recursive: true, force: true });
});

beforeEach(async () => {
  problems = [];
  page = await context.newPage();
  const allowed = (url) => url === pageUrl || url.startsWith("blob:") || url.startsWith("data:");
  page.on("request", (r) => { if (!allowed(r.url())) problems.push("request to " + r.url()); });
  page.on("console", (m) => { if (m.type() === "error") problems.push("console error: " + m.text()); });
  page.on("pageerror", (e) => problems.push("page error: " + e.message));
  page.on("worker", (w) => w.on("console", (m) => { if (m.type() === "error") problems.push("worker console error: " + m.text()); }));
  await page.goto(pageUrl);
});

afterEach(async () => {
  await page.close();
  assert.deepEqual(problems, [], "the page made requests or reported errors");
});

/** Waits until the page has built `n` graphs and has nothing pending. */
async function waitBuilt(n) {
  await page.waitForFunction((k) => {
    const s = window.nervure.status();
    return window.nervure.message() || (s.builds >= k && s.phase === "ready" && !s.pending);
  }, n, { timeout: 120000 });
  assert.equal(await page.evaluate(() => window.nervure.message()), null, "the page shows an error");
}

async function builds() {
  return page.evaluate(() => window.nervure.status().builds);
}

test("station files and a model file: dropped, merged, aligned, differences, graph", async () => {
  const stations = readdirSync(campaignDir).filter((f) => f.startsWith("station-")).sort();
  assert.equal(stations.length, 6);
  const all = [...stations, "model-3h.csv"].map((f) => join(campaignDir, f));
  await page.setInputFiles("#file-input", all);
  await waitBuilt(1);
  const files = await page.evaluate(() => window.nervure.files());
  assert.equal(files.files.length, 7);
  // 6 stations x 1176 hourly rows, plus 2352 3-hourly model rows (demo/README.md: 7056 rows).
  const merged = await page.evaluate(() => window.nervure.status());
  assert.equal(merged.phase, "ready");
  const marsh = files.files.find((f) => f.name === "station-marsh-gate.csv");
  assert.deepEqual(marsh.lacked, ["ph"], "the estuary station has no pH column");
  assert.equal(marsh.rows, 1176);
  assert.equal(await page.locator("#file-list li").count(), 7);
  await assert.doesNotReject(page.locator("#file-list li", { hasText: "lacks ph" }).waitFor());

  // Remove one station and add it back: the list and the table follow.
  let n = await builds();
  await page.locator('button.file-remove[data-file="station-town-weir.csv"]').click();
  await waitBuilt(n + 1);
  assert.equal((await page.evaluate(() => window.nervure.files())).files.length, 6);
  n = await builds();
  await page.setInputFiles("#files-add-input", [join(campaignDir, "station-town-weir.csv")]);
  await waitBuilt(n + 1);
  assert.equal((await page.evaluate(() => window.nervure.files())).files.length, 7);

  // The alignment dialog guesses the model file by its name, the time columns and the key.
  await page.click("#align-open");
  await page.waitForFunction(() => document.querySelector("#align-key").value === "station");
  assert.equal(await page.locator('#align-roles select[data-file="model-3h.csv"]').inputValue(), "model");
  assert.equal(await page.locator("#align-mtime").inputValue(), "time");
  assert.equal(await page.locator("#align-otime").inputValue(), "time");
  await page.selectOption("#align-method", "linear");
  n = await builds();
  await page.click("#align-run");
  await waitBuilt(n + 1);
  const aligned = await page.evaluate(() => window.nervure.files());
  assert.ok(aligned.plan, "the plan is kept");
  assert.equal(aligned.alignment.rows, 7056);
  // Linear in time between 3-hourly model rows: every hour except after the last model row
  // of each station (22:00, 23:00 of the last day: 2 x 6 rows) lies inside the model's range.
  assert.equal(aligned.alignment.matched, 7056 - 12);
  const names = aligned.differences.map((d) => d.name).sort();
  assert.deepEqual(names, ["diff_dissolved_oxygen_mg_l", "diff_stage_m", "diff_water_temp_c"]);
  await assert.doesNotReject(page.locator("#diff-list li", { hasText: 'diff_water_temp_c = "water_temp_c" - "model_water_temp_c"' }).waitFor());

  n = await builds();
  await page.click("#diff-add");
  await waitBuilt(n + 1);
  await page.waitForFunction(() => document.querySelector("#diff-add").disabled);
  const s = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(s.derived.map((d) => d.name).sort(), names);
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.ok(summary.nodes > 0 && summary.rows > 0, "a graph is drawn");
  await page.waitForFunction(() => document.querySelector("#legend-title").textContent.includes("diff_"));

  // Nearest within an hour: every hour is at most 1 h from a 3-hourly model row, except
  // 23:00 of the last day (2 h after the last model row), once per station.
  await page.selectOption("#align-method", "nearest");
  await page.fill("#align-tol", "3600");
  n = await builds();
  await page.click("#align-run");
  await waitBuilt(n + 1);
  const near = await page.evaluate(() => window.nervure.files());
  assert.equal(near.alignment.matched, 7056 - 6);

  // A worker crash: the restarted engine reads the first files again and makes every later
  // change again (the removal, the addition, the alignment), so the same table and graph.
  const before = { files: await page.evaluate(() => window.nervure.files()), summary: await page.evaluate(() => window.nervure.summary()) };
  await page.evaluate(() => window.nervure.test.crashWorker());
  await page.waitForFunction(() => /restarted/.test(window.nervure.message() || "") && !window.nervure.status().recovering, null, { timeout: 120000 });
  const after = { files: await page.evaluate(() => window.nervure.files()), summary: await page.evaluate(() => window.nervure.summary()) };
  assert.deepEqual(after.files.files.map((f) => [f.name, f.rows]), before.files.files.map((f) => [f.name, f.rows]));
  assert.deepEqual(after.files.plan, before.files.plan);
  assert.equal(after.files.alignment.matched, before.files.alignment.matched);
  assert.deepEqual(after.summary, before.summary);
  problems = problems.filter((p) => !/test: the worker stopped/.test(p));

  const t = await page.evaluate(() => window.nervure.fileTimings());
  console.log(`# merge of 7 demo files (${stations.length} stations + model): ${t.mergeMs.toFixed(0)} ms; alignment (nearest, by station): ${t.alignMs.toFixed(0)} ms`);
  await page.screenshot({ path: join(here, "out", "files.png") });
});

/** A 60-row ICARTT 1001 file laid out as tests/fixtures/icartt/v2_ozone.ict (written from
 *  memory of the standard, like that file): a loop in (O3, NO2), two flagged values. */
function icarttLoop() {
  const normal = ["LLOD_FLAG: -8888", "ULOD_FLAG: -7777", "Time_Start, O3, NO2"];
  const head = ["Doe, Jane", "Example Institute", "Example photometer", "EXAMPLE", "1, 1", "2013, 07, 15, 2013, 08, 01", "10",
    "Time_Start, seconds, elapsed seconds from 0 hours UT", "2", "1, 0.1", "-9999, -9999", "O3, ppbv, ozone", "NO2, pptv, nitrogen dioxide",
    "1", "Written from memory of the ICARTT File Format Standards V2.0 for a test; not real data.", String(normal.length), ...normal];
  const rows = [];
  for (let i = 0; i < 60; i++) {
    const a = (2 * Math.PI * i) / 60;
    const o3 = i === 7 ? "-9999" : (30 + 5 * Math.cos(a)).toFixed(3);
    const no2 = i === 19 ? "-8888" : (1000 + 200 * Math.sin(a)).toFixed(1);
    rows.push(`${36000 + 10 * i}, ${o3}, ${no2}`);
  }
  return `${head.length + 1}, 1001, V02_2016\n${head.join("\n")}\n${rows.join("\n")}\n`;
}

test("an ICARTT file and a spreadsheet read through the file input, units in the column list", async () => {
  await page.setInputFiles("#file-input", { name: "loop.ict", mimeType: "text/plain", buffer: Buffer.from(icarttLoop()) });
  await waitBuilt(1);
  let files = await page.evaluate(() => window.nervure.files());
  assert.equal(files.files[0].format, "icartt");
  await assert.doesNotReject(page.locator("#columns-body tr", { hasText: "ppbv" }).first().waitFor());
  const n = await builds();
  await page.setInputFiles("#file-input", join(root, "tests", "reference", "fixtures", "sheet.xlsx"));
  await waitBuilt(n + 1);
  files = await page.evaluate(() => window.nervure.files());
  assert.equal(files.files.length, 1, "one file dropped alone replaces the list");
  assert.equal(files.files[0].format, "xlsx");
  assert.deepEqual(files.files[0].sheets, ["stations", "notes"]);
  assert.equal(await page.evaluate(() => window.nervure.status().phase), "ready");
  // The sheet choice re-reads the kept workbook (a one-row sheet: no graph, but the list follows).
  await page.selectOption('#file-list select[data-file="sheet.xlsx"]', "notes");
  await page.waitForFunction(() => window.nervure.message() || (window.nervure.files().files[0].sheet === "notes"));
  // One row is too few for automatic settings: the engine says so, naming the file.
  const m = await page.evaluate(() => window.nervure.message());
  if (m) assert.match(m, /sheet\.xlsx/);
  problems = problems.filter((p) => !p.includes("sheet.xlsx"));
});

test("a file that is not ICARTT after all: the error names the header line", async () => {
  const bad = "16, 1001\nDoe, Jane\nX\nY\nZ\n1, 1\n2013, 07, 15, 2013, 08, 01\n0\nTime_Start, seconds\n1\n1, 1\n-9999\nO3, ppbv\n0\n1\nTime_Start, O3\n0, 1\n";
  await page.setInputFiles("#file-input", [{ name: "bad.ict", mimeType: "text/plain", buffer: Buffer.from(bad) }, { name: "b.csv", mimeType: "text/csv", buffer: Buffer.from("x\n1\n") }]);
  await page.waitForFunction(() => window.nervure.message());
  const m = await page.evaluate(() => window.nervure.message());
  assert.match(m, /bad\.ict: ICARTT header line 11 \(scale factors\)/);
});
