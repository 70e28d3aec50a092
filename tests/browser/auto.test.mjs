// The automatic settings' help in the page (issue 15): a graph of noise gets a note above
// the canvas with the engine's scale and one button that applies it; denoising set in the
// form is counted in the summary and written into the settings.
import { test } from "node:test";
import assert from "node:assert/strict";
import { usePage, openCircleIn, waitForIdle } from "./harness.mjs";

const ctx = usePage();

test("a graph of noise is explained above the canvas and one click applies the computed scale", async () => {
  const page = ctx.page;
  await openCircleIn(page);
  assert.equal(await page.isVisible("#scale-help"), false, "the automatic graph needs no help");
  const first = await page.evaluate(() => window.nervure.summary());
  const builds = (await page.evaluate(() => window.nervure.status().builds));
  await page.evaluate(() => {
    const s = window.nervure.settings();
    s.clustering = { kind: "dbscan", eps: 0.0001, minPoints: 5 };
    return window.nervure.applySettings(s);
  });
  await waitForIdle(page, builds + 1);
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.equal(summary.noiseRows, summary.rows);
  await page.waitForSelector("#scale-help", { state: "visible" });
  const what = await page.textContent("#scale-help-what");
  assert.match(what, new RegExp(`${summary.rows} of ${summary.rows} rows \\(100 %\\) are in no cluster`));
  const button = await page.textContent("#scale-help-apply");
  assert.match(button, /^Use eps [0-9.]+/);
  await page.click("#scale-help-apply");
  await waitForIdle(page, builds + 2);
  const fixed = await page.evaluate(() => window.nervure.summary());
  assert.ok(fixed.noiseRows * 10 < fixed.rows, JSON.stringify(fixed));
  // The scale is the automatic rule's, read off the same points: the first graph again.
  assert.deepEqual([fixed.nodes, fixed.components, fixed.loops], [first.nodes, first.components, first.loops]);
  assert.equal(await page.isVisible("#scale-help"), false);
  const eps = Number(await page.inputValue("#s-eps"));
  assert.ok(eps > 0.0001, "the form shows the applied eps");
});

test("far rows set aside in the form are counted apart and kept in the settings", async () => {
  const page = ctx.page;
  await openCircleIn(page);
  const builds = (await page.evaluate(() => window.nervure.status().builds));
  await page.selectOption("#s-denoise", "distanceToMeasure");
  await waitForIdle(page, builds + 1);
  const s = await page.evaluate(() => window.nervure.settings());
  assert.deepEqual(s.denoise, { measure: "distanceToMeasure", k: 10, quantile: 0.95 });
  assert.equal(s.version, 3, "the settings version this build writes");
  const summary = await page.evaluate(() => window.nervure.summary());
  assert.ok(summary.rowsSetAside > 0, JSON.stringify(summary));
  assert.match(await page.textContent("#summary-rows"), /far rows? set aside/);
});
