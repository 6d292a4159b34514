// Keeping work: the working design is autosaved in localStorage and restored on reload; a kept
// variant (B) is overlaid while A is edited, and can be swapped and dropped; Undo puts back a
// replaced design.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, draws, nextDraw, partValues, plotImage, ready, typeInto } from "./harness.mjs";


let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

test("the working design and the requirement are autosaved and come back on reload", async () => {
  const page = app.page;
  await typeInto(page, "#design-name", "autosave check");
  await typeInto(page, "#part-0", "68.1n");
  await page.locator("#part-0").press("Tab");
  await typeInto(page, "#ask-cutoff", "2.5k");
  await page.locator("#ask-cutoff").press("Tab");
  const parts = await partValues(page);
  await page.waitForTimeout(400);
  await page.reload();
  await ready(page);
  assert.equal(await page.locator("#design-name").inputValue(), "autosave check");
  assert.deepEqual(await partValues(page), parts);
  assert.equal(await page.locator("#ask-cutoff").inputValue(), "2.5k");
  assert.match(await page.locator("#notice").innerText(), /Restored/);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("keep a variant as B, edit A over it, swap them and drop B", async () => {
  const page = app.page;
  const aParts = await partValues(page);
  const aImage = await plotImage(page);
  let count = await draws(page);
  await page.click("#ab-keep");
  await nextDraw(page, count);
  assert.match(await page.locator("#ab-status").innerText(), /B kept/);
  // B is drawn behind A: the same design twice, so the curves coincide; edit A to part them.
  count = await draws(page);
  await typeInto(page, "#part-0", "220n");
  await nextDraw(page, count);
  await page.locator("#part-0").press("Tab");
  const abImage = await plotImage(page);
  assert.notEqual(abImage, aImage);
  const editedParts = await partValues(page);
  assert.notDeepEqual(editedParts, aParts);
  await app.screenshot("ab-overlay");

  // Dropping B changes the picture though A stays the same.
  count = await draws(page);
  await page.click("#ab-drop");
  await nextDraw(page, count);
  const aloneImage = await plotImage(page);
  assert.notEqual(aloneImage, abImage, "B was not drawn");
  assert.match(await page.locator("#ab-status").innerText(), /Nothing kept/);
  assert.equal(await page.locator("#ab-swap").isDisabled(), true);

  // Keep again, edit, swap: the parts become B's, and B holds the edit.
  await page.click("#ab-keep");
  await typeInto(page, "#part-0", "330n");
  await page.locator("#part-0").press("Tab");
  const beforeSwap = await partValues(page);
  await page.click("#ab-swap");
  await page.waitForFunction((v) => document.getElementById("part-0").value !== v, beforeSwap[0]);
  assert.deepEqual(await partValues(page), editedParts);
  await page.click("#ab-swap");
  await page.waitForFunction((v) => document.getElementById("part-0").value === v, beforeSwap[0]);
  assert.deepEqual(await partValues(page), beforeSwap);

  // B survives a reload too.
  await page.waitForTimeout(400);
  await page.reload();
  await ready(page);
  assert.match(await page.locator("#ab-status").innerText(), /B kept/);
  assert.equal(await page.locator("#ab-drop").isDisabled(), false);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("Undo puts back the design a fit replaced", async () => {
  const page = app.page;
  const before = await partValues(page);
  const name = await page.locator("#design-name").inputValue();
  await page.selectOption("#ask-target", "cutoff");
  await typeInto(page, "#ask-cutoff", "7k");
  await page.click("#ask-go");
  await page.waitForFunction((n) => document.getElementById("design-name").value !== n, name);
  assert.notDeepEqual(await partValues(page), before);
  await page.click("#act-undo");
  await page.waitForFunction((n) => document.getElementById("design-name").value === n, name);
  assert.deepEqual(await partValues(page), before);
});
