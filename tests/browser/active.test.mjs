// Active sections from the requirement sentence: a multiple-feedback cascade is fitted like any
// other form, its op-amp appears as a part of the design, and the shortlist shows the core's fit.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, ready, typeInto } from "./harness.mjs";

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

test("a 4th-order multiple-feedback low-pass is fitted from the sentence", async () => {
  const page = app.page;
  await page.selectOption("#ask-response", "lowpass");
  await page.selectOption("#ask-alignment", "butterworth");
  await typeInto(page, "#ask-order", "4");
  await page.selectOption("#ask-target", "cutoff");
  await typeInto(page, "#ask-cutoff", "2k");
  await typeInto(page, "#ask-source", "1k");
  await typeInto(page, "#ask-load", "10k");
  await typeInto(page, "#ask-load-capacitance", "");
  await page.selectOption("#ask-topology", "mfb");
  const drawsBefore = Number(await page.locator("#plot").getAttribute("data-draws"));
  await page.click("#ask-go");
  await page.waitForFunction((n) => Number(document.getElementById("plot").dataset.draws) > n, drawsBefore);
  const request = {
    response: "lowpass", alignment: "butterworth", order: "4", cutoff: "2k", source: "1k", load: "10k", topology: "mfb",
  };
  const result = await page.evaluate((r) => JSON.parse(globalThis.bandwright.fit(JSON.stringify(r))), request);
  const best = result.alternatives[0];
  // Two sections of three resistors and two capacitors each.
  assert.equal(best.parts.length, 10);
  assert.ok(best.parts.some((p) => p.ref === "R11") && best.parts.some((p) => p.ref === "C22"));
  // The 1 kΩ source is absorbed into R11, so the whole circuit stays close to the target.
  assert.ok(best.max_response_deviation_db < 0.2, `${best.max_response_deviation_db} dB`);
  assert.equal(await page.locator("#short-body tr").count(), result.alternatives.length);
  const text = await page.locator("#short-body tr.chosen .part-list").innerText();
  assert.match(text, /R11 .*C22 /);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});
