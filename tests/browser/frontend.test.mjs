// The "Converter input" card: the demo inputs give a plan with finite figures and its rules
// stated; impossible inputs are refused at their field; "Fit these parts" hands the
// recommendation to the fit flow.

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

test("the demo inputs give a plan with finite figures, its rule stated and the 10× rule marked", async () => {
  const page = app.page;
  assert.equal(await page.locator("#fe-fs").inputValue(), "10k");
  assert.ok(await page.locator("#fe-fit").isDisabled());
  await page.click("#fe-go");
  await page.waitForSelector("#fe-out:not([hidden])");
  const text = await page.locator("#fe-rows").innerText();
  assert.doesNotMatch(text, /NaN|undefined|Infinity/);
  // 6.02·12 + 1.76 = 74.0 dB (W. Kester, ADI tutorial MT-001).
  assert.match(text, /6\.02·N \+ 1\.76 dB = 74\.008 dB/);
  assert.match(text, /stopband edge\s+9\.000 kHz/);
  assert.match(text, /dB at the first alias \(fs − band\), [\d.]+ dB at Nyquist/);
  assert.match(text, /common practice/);
  assert.match(text, /kT\/C of the sampler\s+[\d.]+ µV rms = [\d.]+ LSB/);
  assert.match(text, /group delay\s+[\d.]+ µs at DC/);
  assert.ok(await page.locator("#fe-fit").isEnabled());
  // The rule can be switched, and the statement follows it: 20·log10(2^13) = 78.268 dB (computed).
  await page.selectOption("#fe-rule", "half_lsb");
  await page.click("#fe-go");
  await page.waitForFunction(() => /6\.02·\(N \+ 1\) dB = 78\.268 dB/.test(document.getElementById("fe-rows").textContent));
});

test("a sample rate below twice the band and zero bits are refused at their fields", async () => {
  const page = app.page;
  await typeInto(page, "#fe-fs", "1.5k");
  await page.click("#fe-go");
  await page.waitForSelector("#fe-fs[aria-invalid=true]");
  assert.match(await page.locator("#fe-fs-msg").innerText(), /sample rate 1500 Hz is not above twice the signal band 1000 Hz.*Nothing was planned/);
  assert.ok(await page.locator("#fe-out").isHidden());
  assert.ok(await page.locator("#fe-fit").isDisabled());
  await typeInto(page, "#fe-fs", "10k");
  await typeInto(page, "#fe-bits", "0");
  await page.click("#fe-go");
  await page.waitForSelector("#fe-bits[aria-invalid=true]");
  assert.match(await page.locator("#fe-bits-msg").innerText(), /0 bits is not a converter resolution/);
  await typeInto(page, "#fe-bits", "12");
  await page.selectOption("#fe-rule", "snr");
});

test("“Fit these parts” fits the recommendation through the fit flow", async () => {
  const page = app.page;
  await page.click("#fe-go");
  await page.waitForSelector("#fe-out:not([hidden])");
  const recommended = await page.locator("#fe-rows dt", { hasText: /^recommended$/ }).locator("xpath=following-sibling::dd[1]").innerText();
  const order = /of order (\d)/.exec(recommended)[1];
  await page.click("#fe-fit");
  await page.waitForFunction(() => /Found \d+ alternative/.test(document.getElementById("notice").textContent));
  assert.equal(await page.locator("#ask-order").inputValue(), order);
  assert.equal(await page.locator("#ask-topology").inputValue(), "sallen-key");
  assert.equal(await page.locator("#ask-source").inputValue(), "100");
  const rows = await page.locator("#short-body tr").count();
  assert.ok(rows >= 1, "no alternatives in the shortlist");
  const parts = await page.locator("#parts-body tr").count();
  assert.ok(parts >= 4, `only ${parts} parts`);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});
