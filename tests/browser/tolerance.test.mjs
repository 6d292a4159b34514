// The tolerance spread: Monte Carlo trials and worst-case corners of the working design, split
// across Web Workers (or run on the main thread in slices when workers cannot start), with the
// min/max and percentile bands shaded on the magnitude, phase and group-delay plots.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, draws, nextDraw, plotImage, ready, typeInto } from "./harness.mjs";

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

/** Clicks Run and waits until the run's summary is shown; returns what a person reads. */
async function runSpread(page) {
  const runs = Number((await page.locator("#spread").getAttribute("data-runs")) ?? 0);
  const count = await draws(page);
  await page.click("#spread-run");
  await page.waitForFunction((n) => Number(document.getElementById("spread").dataset.runs ?? 0) > n, runs, { timeout: 60_000 });
  await nextDraw(page, count);
  return spreadText(page);
}

async function spreadText(page) {
  return {
    run: await page.locator("#spread-run-text").innerText(),
    figures: await page.locator("#spread-figures").innerText(),
    status: await page.locator("#spread-status").innerText(),
    workers: Number(await page.locator("#spread").getAttribute("data-workers")),
  };
}

/** The numbers in a text, e.g. the figures of a summary. */
function numbers(text) {
  return (text.match(/-?\d+(\.\d+)?/g) ?? []).map(Number);
}

/** Requests other than the page itself, leaving out the in-memory blob: URLs of the workers. */
function networkRequests(app) {
  return app.requestsBesidesPage().filter((url) => !url.startsWith("blob:"));
}

test("a run on the demo shades the plots on workers and shows finite figures", async () => {
  const page = app.page;
  const before = await plotImage(page);
  const result = await runSpread(page);
  assert.notEqual(await plotImage(page), before, "no band was drawn");
  assert.match(result.run, /^Ran 500 trials and \d+ worst-case corners, seed 1, uniform/);
  assert.match(result.figures, /−3 dB \(falling\)/);
  const figures = numbers(result.figures);
  assert.ok(figures.length >= 8 && figures.every(Number.isFinite), result.figures);
  assert.doesNotMatch(result.figures, /NaN|undefined|null/);
  // The trials ran on workers, and the page says how many.
  assert.ok(result.workers >= 1, `workers: ${result.workers}`);
  assert.match(result.status, new RegExp(`^500 trials on ${result.workers} workers? in \\d+ ms\\.$`));
  assert.equal(await page.locator("#spread").getAttribute("data-bands"), "shown");
  // The only URLs besides the page are the workers' in-memory blob: scripts.
  assert.deepEqual(networkRequests(app), []);
  assert.ok(app.requestsBesidesPage().every((url) => url.startsWith("blob:null/")), app.requestsBesidesPage().join(" "));
  assert.deepEqual([app.consoleErrors, app.pageErrors], [[], []]);
  await app.screenshot("tolerance-demo");
});

test("the same seed gives the same band and figures; another seed differs", async () => {
  const page = app.page;
  await typeInto(page, "#spread-seed", "42");
  const first = await runSpread(page);
  const firstImage = await plotImage(page);
  const again = await runSpread(page);
  assert.equal(again.figures, first.figures);
  assert.equal(await plotImage(page), firstImage, "same seed, different picture");
  assert.match(first.run, /seed 42,/);
  await typeInto(page, "#spread-seed", "43");
  const other = await runSpread(page);
  assert.notEqual(other.figures, first.figures);
  assert.notEqual(await plotImage(page), firstImage);
});

test("editing a part marks the bands stale and hides them until the value is back", async () => {
  const page = app.page;
  await typeInto(page, "#spread-seed", "42");
  await runSpread(page);
  const shaded = await plotImage(page);
  const original = await page.locator("#part-0").inputValue();
  let count = await draws(page);
  await typeInto(page, "#part-0", "180");
  await page.locator("#part-0").press("Tab");
  await nextDraw(page, count);
  await page.waitForFunction(() => document.getElementById("spread").dataset.bands === "stale");
  assert.equal(await page.locator("#spread-stale").isVisible(), true);
  count = await draws(page);
  await typeInto(page, "#part-0", original);
  await page.locator("#part-0").press("Tab");
  await nextDraw(page, count);
  await page.waitForFunction(() => document.getElementById("spread").dataset.bands === "shown");
  assert.equal(await page.locator("#spread-stale").isVisible(), false);
  assert.equal(await plotImage(page), shaded);
});

test("a per-part tolerance set here replaces the series' one and changes the spread", async () => {
  const page = app.page;
  await typeInto(page, "#spread-seed", "42");
  const before = await runSpread(page);
  const row = page.locator("#spread-parts-body tr").first();
  assert.equal(await row.locator(".origin").innerText(), "from its series");
  await typeInto(page, "#spread-tol-0", "0.1");
  await page.locator("#spread-tol-0").press("Tab");
  assert.equal(await row.locator(".origin").innerText(), "set here");
  const after = await runSpread(page);
  assert.notEqual(after.figures, before.figures);
  // Emptying the field goes back to the series' tolerance.
  await typeInto(page, "#spread-tol-0", "");
  await page.locator("#spread-tol-0").press("Tab");
  assert.equal(await row.locator(".origin").innerText(), "from its series");
  assert.equal((await runSpread(page)).figures, before.figures);
});

test("bad inputs get a message at their field and nothing runs", async () => {
  const page = app.page;
  const runs = await page.locator("#spread").getAttribute("data-runs");
  for (const [field, text, expected] of [
    ["#spread-trials", "0", /trials is not accepted; give a whole number from 1/],
    ["#spread-seed", "seven", /is not a seed; give a whole number from 0/],
    ["#spread-band", "100", /is not a percentile band/],
  ]) {
    const before = await page.locator(field).inputValue();
    await typeInto(page, field, text);
    await page.click("#spread-run");
    await page.waitForSelector(`${field}[aria-invalid=true]`);
    const id = await page.locator(field).getAttribute("id");
    assert.match(await page.locator(`#${id}-msg`).innerText(), expected);
    await typeInto(page, field, before);
  }
  await typeInto(page, "#spread-tol-1", "-2");
  await page.locator("#spread-tol-1").press("Tab");
  assert.match(await page.locator("#spread-tol-1-msg").innerText(), /^C1: a tolerance of -2 % is not usable; give a percentage from 0 to 100/);
  await page.click("#spread-run");
  assert.match(await page.locator("#spread-msg").innerText(), /Fix the tolerance of C1 first/);
  await typeInto(page, "#spread-tol-1", "");
  await page.locator("#spread-tol-1").press("Tab");
  assert.equal(await page.locator("#spread").getAttribute("data-runs"), runs, "a run started on bad input");
  assert.deepEqual([app.consoleErrors, app.pageErrors], [[], []]);
});

test("a long run shows progress and can be cancelled, and the next run still works", async () => {
  const page = app.page;
  const runs = await page.locator("#spread").getAttribute("data-runs");
  const shownBefore = await page.locator("#spread-figures").innerText();
  await typeInto(page, "#spread-trials", "10000");
  await page.click("#spread-run");
  await page.waitForFunction(() => / of 10000 trials on /.test(document.getElementById("spread-status").textContent));
  assert.equal(await page.locator("#spread-cancel").isEnabled(), true);
  assert.equal(await page.locator("#spread-progress").isVisible(), true);
  await page.click("#spread-cancel");
  assert.match(await page.locator("#spread-status").innerText(), /^Cancelled after \d+ of 10000 trials/);
  assert.equal(await page.locator("#spread-run").isEnabled(), true);
  await page.waitForTimeout(300);
  assert.equal(await page.locator("#spread").getAttribute("data-runs"), runs, "the cancelled run finished anyway");
  assert.equal(await page.locator("#spread-figures").innerText(), shownBefore);
  await typeInto(page, "#spread-trials", "300");
  const next = await runSpread(page);
  assert.match(next.run, /^Ran 300 trials/);
  assert.ok(next.workers >= 1);
  assert.deepEqual(networkRequests(app), []);
});

test("without Web Workers the same run goes on the main thread, says so, and gives the same figures", async () => {
  await typeInto(app.page, "#spread-seed", "42");
  await typeInto(app.page, "#spread-trials", "500");
  const onWorkers = await runSpread(app.page);
  const bare = await openApp({ initScript: "delete globalThis.Worker;" });
  try {
    await ready(bare.page);
    await typeInto(bare.page, "#spread-seed", "42");
    const onMain = await runSpread(bare.page);
    assert.match(onMain.status, /^500 trials on main thread \(workers could not start: this browser has no Web Workers\)/);
    assert.equal(onMain.workers, 0);
    assert.equal(onMain.figures, onWorkers.figures);
    assert.deepEqual(bare.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
  } finally {
    await bare.close();
  }
});
