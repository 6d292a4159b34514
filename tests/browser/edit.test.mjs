// Editing part values: typing redraws the plots and moves the readout, the arrow keys step
// through E-series neighbours, and a bad value gets its message while the plots keep the last
// good design.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, draws, nextDraw, plotImage, ready, typeInto } from "./harness.mjs";

/** Reads a shown value back through the core's parser. */
async function valueOf(page, selector, quantity) {
  const text = await page.locator(selector).inputValue();
  return page.evaluate(([t, q]) => globalThis.bandwright.parse_value(t, q), [text, quantity]);
}

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

test("typing a part value redraws the plots within a frame and changes the readout", async () => {
  const page = app.page;
  const box = await page.locator("#plot").boundingBox();
  // Point at the upper (magnitude) panel, a little right of the middle.
  await page.mouse.move(box.x + box.width * 0.55, box.y + box.height * 0.12);
  await page.waitForFunction(() => !/Point at the plots/.test(document.getElementById("readout").textContent));
  const readoutBefore = await page.locator("#readout").innerText();
  const imageBefore = await plotImage(page);

  const field = page.locator("#part-0");
  const original = await field.inputValue();
  const count = await draws(page);
  // Two keystrokes, each leaving a valid value: "3", then "33" (in the part's SI unit).
  await field.click();
  await field.press("Control+A");
  await field.pressSequentially("3");
  await nextDraw(page, count);
  const afterOne = await draws(page);
  await field.pressSequentially("3");
  await nextDraw(page, afterOne);
  const imageAfter = await plotImage(page);
  const readoutAfter = await page.locator("#readout").innerText();
  assert.notEqual(imageAfter, imageBefore, "the plot did not change");
  assert.notEqual(readoutAfter, readoutBefore, "the readout did not change");
  const measured = await page.evaluate(() => performance.getEntriesByName("bw:keystroke-to-plot").length);
  assert.ok(measured >= 2, "keystrokes were not measured to the redrawn plot");
  assert.match(await page.locator("#parts-body tr").first().innerText(), /edited, was/);
  // Put the value back for the next tests.
  await typeInto(page, "#part-0", original);
  await field.press("Tab");
});

test("the arrow keys step a resistor through its E-series neighbours (E12: 10k → 12k → 15k, down to 8.2k)", async () => {
  const page = app.page;
  // An RC section has a resistor to step.
  await page.selectOption("#ask-topology", "rc");
  await page.selectOption("#ask-target", "cutoff");
  await typeInto(page, "#ask-cutoff", "1k");
  await typeInto(page, "#ask-order", "1");
  await page.selectOption("#ask-resistors", "E12");
  await page.click("#ask-go");
  await page.waitForFunction(() => [...document.querySelectorAll("#parts-body input")].some((i) => i.dataset.quantity === "resistance"));
  const resistor = page.locator('#parts-body input[data-quantity="resistance"]').first();
  const id = `#${await resistor.getAttribute("id")}`;
  await typeInto(page, id, "10k");
  assert.equal(await valueOf(page, id, "resistance"), 10_000);

  const image10k = await plotImage(page);
  let count = await draws(page);
  await resistor.press("ArrowUp");
  await nextDraw(page, count);
  // Source: IEC 60063, E12 (1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2).
  assert.equal(await valueOf(page, id, "resistance"), 12_000);
  assert.notEqual(await plotImage(page), image10k, "the plot did not follow the step");
  await resistor.press("ArrowUp");
  assert.equal(await valueOf(page, id, "resistance"), 15_000);
  for (const expected of [12_000, 10_000, 8_200, 6_800]) {
    await resistor.press("ArrowDown");
    assert.equal(await valueOf(page, id, "resistance"), expected);
  }
  // E96 steps finer: 6.81k is the E96 value just above 6.8k (IEC 60063, E96 row 72).
  await page.selectOption("#ask-resistors", "E96");
  count = await draws(page);
  await resistor.press("ArrowUp");
  await nextDraw(page, count);
  assert.equal(await valueOf(page, id, "resistance"), 6_810);
  assert.match(await page.locator(id).locator("xpath=../..").innerText(), /E96/);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("a bad part value shows its message at the field and the plots keep the last good value", async () => {
  const page = app.page;
  const field = page.locator("#part-0");
  const good = await field.inputValue();
  const image = await plotImage(page);
  await page.waitForTimeout(400); // let the autosave of the steps above land first
  const saved = await page.evaluate(() => localStorage.getItem("bandwright.workspace.v1"));
  await field.click();
  await field.press("End");
  await field.pressSequentially("x7");
  const message = page.locator("#part-0-msg");
  await message.waitFor({ state: "visible" });
  assert.equal(await field.getAttribute("aria-invalid"), "true");
  const text = await message.innerText();
  assert.ok(text.includes(`${good}x7`), `the message does not quote the text: ${text}`);
  assert.match(text, /plots keep/);
  await page.waitForTimeout(100);
  assert.equal(await plotImage(page), image, "a bad value changed the plot");
  await page.waitForTimeout(400);
  assert.equal(await page.evaluate(() => localStorage.getItem("bandwright.workspace.v1")), saved, "a bad value was saved");
  await app.screenshot("error-part-value");
  // Zero is read but is not a part value: the core refuses it too.
  await typeInto(page, "#part-0", "0");
  await message.waitFor({ state: "visible" });
  assert.equal(await plotImage(page), image);
  await typeInto(page, "#part-0", good);
  assert.equal(await message.count(), 0);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});
