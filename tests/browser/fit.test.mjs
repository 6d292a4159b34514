// Stating a requirement in the sentence and fitting it: the shortlist and the parts appear; a bad
// value or an impossible requirement gets a message at its field and the design stays.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, ready, typeInto } from "./harness.mjs";


/** The parts table as [ref, value text] pairs. */
async function partsShown(page) {
  return page.locator("#parts-body tr").evaluateAll((rows) =>
    rows.map((row) => [row.querySelector("th").firstChild.textContent, row.querySelector("input")?.value ?? row.cells[1].textContent]),
  );
}


let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

test("a 5th-order 50 Ω ladder requirement is fitted: the shortlist and its best parts appear", async () => {
  const page = app.page;
  await page.selectOption("#ask-alignment", "butterworth");
  await typeInto(page, "#ask-order", "5");
  await page.selectOption("#ask-target", "cutoff");
  await typeInto(page, "#ask-cutoff", "10M");
  await typeInto(page, "#ask-source", "50");
  await typeInto(page, "#ask-load", "50");
  await typeInto(page, "#ask-load-capacitance", "");
  await page.selectOption("#ask-topology", "ladder");
  await page.selectOption("#ask-combine", "pairs");
  const drawsBefore = Number(await page.locator("#plot").getAttribute("data-draws"));
  await page.click("#ask-go");
  await page.waitForFunction((n) => Number(document.getElementById("plot").dataset.draws) > n, drawsBefore);

  // What the core fits for the same request, to compare with what the page shows.
  const request = {
    response: "lowpass", alignment: "butterworth", order: "5", cutoff: "10M", source: "50", load: "50",
    topology: "ladder", combine: true,
  };
  const result = await page.evaluate((r) => JSON.parse(globalThis.bandwright.fit(JSON.stringify(r))), request);
  assert.ok(result.alternatives.length >= 1);
  assert.equal(await page.locator("#short-body tr").count(), result.alternatives.length);
  assert.equal(await page.locator("#short-body tr.chosen").count(), 1);
  assert.equal(await page.locator("#alt-0").isChecked(), true);

  const shown = await partsShown(page);
  const best = result.alternatives[0].design.elements;
  assert.deepEqual(shown.map(([ref]) => ref), best.map((e) => e.ref));
  // Five ladder positions, each one part or a pair (written as two elements).
  assert.equal(result.alternatives[0].parts.length, 5);
  assert.ok(shown.length >= 5 && shown.length <= 10);
  for (const [index, [, text]] of shown.entries()) {
    const quantity = { resistor: "resistance", capacitor: "capacitance", inductor: "inductance" }[best[index].kind];
    const value = await page.evaluate(([t, q]) => globalThis.bandwright.parse_value(t, q), [text, quantity]);
    assert.equal(value, best[index].value, `part ${best[index].ref} shows ${text}`);
  }
  // The shortlist shows each alternative's cutoff error and worst deviation.
  const firstRow = await page.locator("#short-body tr").first().innerText();
  assert.match(firstRow, /%/);
  assert.match(firstRow, /dB/);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
  await app.screenshot("fit-5th-order-ladder");
});

test("choosing another alternative makes it the working design", async (t) => {
  const page = app.page;
  const count = await page.locator("#short-body tr").count();
  if (count < 2) {
    t.skip("the fit returned one alternative");
    return;
  }
  const before = await partsShown(page);
  await page.check("#alt-1");
  await page.waitForFunction(() => document.querySelector("#short-body tr.chosen")?.dataset.index === "1");
  const after = await partsShown(page);
  assert.notDeepEqual(after, before);
});

test("a value the core cannot read is reported at its field, and the design stays", async () => {
  const page = app.page;
  const before = await partsShown(page);
  await typeInto(page, "#ask-cutoff", "10 MHzz");
  await page.click("#ask-go");
  const message = page.locator("#ask-cutoff-msg");
  await message.waitFor({ state: "visible" });
  assert.equal(await page.locator("#ask-cutoff").getAttribute("aria-invalid"), "true");
  const text = await message.innerText();
  assert.match(text, /10 MHzz/, "the message does not repeat what was typed");
  assert.match(text, /unchanged/);
  assert.deepEqual(await partsShown(page), before);
  await app.screenshot("error-requirement-value");
  // Typing again clears the message.
  await typeInto(page, "#ask-cutoff", "10M");
  assert.equal(await message.count(), 0);
  assert.equal(await page.locator("#ask-cutoff").getAttribute("aria-invalid"), null);
});

test("an order out of range names the order field", async () => {
  const page = app.page;
  await typeInto(page, "#ask-order", "2.5");
  await page.click("#ask-go");
  await page.locator("#ask-order-msg").waitFor({ state: "visible" });
  assert.match(await page.locator("#ask-order-msg").innerText(), /whole number/);
  await typeInto(page, "#ask-order", "5");
});

test("an impossible requirement (Q above 0.5 from an RC section) says why, and the design stays", async () => {
  const page = app.page;
  const before = await partsShown(page);
  await page.selectOption("#ask-topology", "rc");
  await page.selectOption("#ask-target", "f0q");
  await typeInto(page, "#ask-order", "2");
  await typeInto(page, "#ask-f0", "1k");
  await typeInto(page, "#ask-q", "2");
  await page.click("#ask-go");
  const visible = page.locator("#ask-form .msg:visible");
  await visible.first().waitFor({ state: "visible" });
  const text = (await visible.allInnerTexts()).join(" ");
  // The core's reason: a passive RC section cannot reach Q above 0.5, and what to use instead.
  assert.match(text, /0\.5/, `no reason given: ${text}`);
  assert.match(text, /rlc|ladder/i, `no way out offered: ${text}`);
  assert.match(text, /unchanged/);
  assert.deepEqual(await partsShown(page), before);
  await app.screenshot("error-impossible-requirement");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("a stock list stands in for an E-series: the fit and the arrow keys use only its values", async () => {
  const page = app.page;
  await page.selectOption("#ask-topology", "rc");
  await page.selectOption("#ask-target", "cutoff");
  await typeInto(page, "#ask-order", "1");
  await typeInto(page, "#ask-cutoff", "1k");
  await typeInto(page, "#ask-source", "100");
  await typeInto(page, "#ask-load", "1M");
  await page.selectOption("#ask-capacitors", "stock");
  await page.locator("#ask-stock-capacitors").waitFor({ state: "visible" });
  // A drawer of our own: a bad line first, to see its message at the list.
  await page.fill("#ask-stock-capacitors", "# film caps on hand\n22n\n47n\n100nn\n");
  await page.click("#ask-go");
  const message = page.locator("#ask-stock-capacitors-msg");
  await message.waitFor({ state: "visible" });
  assert.match(await message.innerText(), /100nn/);
  await page.fill("#ask-stock-capacitors", "# film caps on hand\n22n\n47n\n100n\n");
  await page.click("#ask-go");
  await page.waitForFunction(() => document.querySelector("#parts-body input[data-quantity=capacitance]"));
  const capacitor = page.locator("#parts-body input[data-quantity=capacitance]").first();
  const value = () => capacitor.inputValue().then((t) => page.evaluate((x) => globalThis.bandwright.parse_value(x, "capacitance"), t));
  const stock = [22e-9, 47e-9, 100e-9];
  assert.ok(stock.includes(await value()), `the fitted capacitor is not from the list: ${await capacitor.inputValue()}`);
  assert.match(await capacitor.locator("xpath=../..").innerText(), /stock list/);
  await capacitor.click();
  await capacitor.press("Home");
  await page.keyboard.press("ArrowDown");
  await page.keyboard.press("ArrowDown");
  await page.keyboard.press("ArrowDown");
  // Below the smallest value the list ends: the value stays and the field says why.
  assert.equal(await value(), 22e-9);
  await page.locator(`#${await capacitor.getAttribute("id")}-msg`).waitFor({ state: "visible" });
  await page.keyboard.press("ArrowUp");
  assert.equal(await value(), 47e-9);
  await page.selectOption("#ask-capacitors", "E12");
});
