// Ranking the shortlist by yield: shown only once limits are set; ranks the demo's fit by the share
// of seeded trials inside the limits (same seed, same ranking); bad options are named at their
// field and leave the shortlist as it was.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, ready, typeInto } from "./harness.mjs";

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
  // The demo's shortlist comes from a fit in the next task.
  await app.page.waitForFunction(() => document.querySelectorAll("#short-body tr").length > 0);
});
after(async () => {
  await app?.close();
});

async function yields(page) {
  return page.locator("#short-body tr").evaluateAll((rows) => rows.map((row) => row.lastElementChild.textContent));
}

async function rank(page, trials, seed) {
  await typeInto(page, "#yield-trials", trials);
  await typeInto(page, "#yield-seed", seed);
  await page.click("#yield-go");
}

test("the yield ranking appears with limits and orders the shortlist by the share inside them", async () => {
  const page = app.page;
  assert.equal(await page.locator("#yield-form").isHidden(), true, "no limits yet, so no yield ranking");
  await typeInto(page, "#mask-pass", "300");
  await typeInto(page, "#mask-loss", "0.5");
  await typeInto(page, "#mask-stop", "9k");
  await typeInto(page, "#mask-atten", "37");
  await page.click("#mask-apply");
  await page.waitForSelector("#yield-form", { state: "visible" });

  await rank(page, "100", "4");
  await page.waitForFunction(() => /^Ranked by yield/.test(document.getElementById("yield-status").textContent));
  assert.equal(await page.locator("#short-yield-col").isVisible(), true);
  const first = await yields(page);
  assert.equal(first.length, 5, "the demo asks for five alternatives");
  const shares = first.map((text) => {
    assert.match(text, /^\d+\.\d %$/);
    return Number(text.split(" ")[0]);
  });
  for (let i = 1; i < shares.length; i += 1) assert.ok(shares[i - 1] >= shares[i], `not best first: ${first}`);
  assert.match(await page.locator("#short-objective").innerText(), /^yield against the spec mask \(100 trials each, seed 4/);
  assert.match(await page.locator("#yield-status").innerText(), /keeps \d+ of 100 trials inside the mask \(seed 4\)/);

  // The same seed gives the same ranking.
  await page.evaluate(() => { document.getElementById("yield-status").textContent = ""; });
  await rank(page, "100", "4");
  await page.waitForFunction(() => /^Ranked by yield/.test(document.getElementById("yield-status").textContent));
  assert.deepEqual(await yields(page), first);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("bad yield options are named at their field and the shortlist stays", async () => {
  const page = app.page;
  const before = await yields(page);
  await rank(page, "many", "4");
  await page.waitForSelector("#yield-trials[aria-invalid=true]");
  assert.match(await page.locator("#yield-trials-msg").innerText(), /"many" is not a whole number/);
  assert.deepEqual(await yields(page), before);
  await rank(page, "0", "4");
  await page.waitForFunction(() => /at least 1 trial/.test(document.getElementById("yield-trials-msg")?.textContent ?? ""));
  await rank(page, "50", "-3");
  await page.waitForSelector("#yield-seed[aria-invalid=true]");
  assert.deepEqual(await yields(page), before);
  // Clearing the limits takes the yield ranking away.
  await page.click("#mask-clear");
  await page.waitForSelector("#yield-form", { state: "hidden" });
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("a spread's yield says so when the limits change after the run", async () => {
  const page = app.page;
  const runs = async () => Number((await page.locator("#spread").getAttribute("data-runs")) ?? 0);
  let before = await runs();
  await page.click("#spread-run");
  await page.waitForFunction((n) => Number(document.getElementById("spread").dataset.runs || 0) > n, before);
  assert.match(await page.locator("#spread-yield").innerText(), /No spec mask is set/);
  await typeInto(page, "#mask-pass", "300");
  await typeInto(page, "#mask-loss", "0.5");
  await typeInto(page, "#mask-stop", "9k");
  await typeInto(page, "#mask-atten", "37");
  await page.click("#mask-apply");
  await page.waitForFunction(() => /limits changed after this run/.test(document.getElementById("spread-yield").textContent));
  before = await runs();
  await page.click("#spread-run");
  await page.waitForFunction((n) => Number(document.getElementById("spread").dataset.runs || 0) > n, before);
  const text = await page.locator("#spread-yield").innerText();
  assert.doesNotMatch(text, /limits changed/);
  assert.match(text, /\d/, `the yield is counted: ${text}`);
  assert.deepEqual(app.problems().pageErrors, []);
  assert.deepEqual(app.problems().consoleErrors, []);
});
