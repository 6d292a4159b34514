// The "In time" card and the "Limits" card: the step response is drawn and its figures follow the
// parts; a tighter settling tolerance settles later; limits pass or fail, are drawn on the plot,
// give the lowest order per alignment (whose button writes the requirement) and are autosaved.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, draws, nextDraw, plotImage, ready, typeInto } from "./harness.mjs";

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
  await app.page.waitForFunction(() => Number(document.getElementById("time-plot").dataset.draws) > 0);
});
after(async () => {
  await app?.close();
});

/** The figures of the time card as {label: text}. */
async function figures(page) {
  return page.locator("#time-figures").evaluate((list) => {
    const out = {};
    for (const term of list.querySelectorAll("dt")) out[term.textContent] = term.nextElementSibling.textContent;
    return out;
  });
}

/** The leading time of a figure ("697.6 µs to ±1 % …"), read back by the core's parser. */
async function leadingTime(page, text) {
  const [number, unit] = text.split(" ");
  return page.evaluate(([n, u]) => globalThis.bandwright.parse_value(`${n} ${u}`, "time"), [number, unit]);
}

async function timeImage(page) {
  return page.evaluate(() => document.getElementById("time-plot").toDataURL());
}

test("the step response is drawn, its figures are finite, and they follow a part edit", async () => {
  const page = app.page;
  const before = await figures(page);
  for (const label of ["final value", "overshoot", "rise 10–90 %", "settling", "method"]) {
    assert.ok(label in before, `missing ${label}: ${JSON.stringify(before)}`);
  }
  assert.doesNotMatch(JSON.stringify(before), /NaN|undefined|null/);
  const rise = await leadingTime(page, before["rise 10–90 %"]);
  assert.ok(Number.isFinite(rise) && rise > 0, `rise ${rise}`);
  assert.match(before.method, /poles and residues/);
  const imageBefore = await timeImage(page);

  const original = await page.locator("#part-0").inputValue();
  const textBefore = await page.locator("#time-figures").textContent();
  const count = await draws(page);
  await typeInto(page, "#part-0", "470");
  await nextDraw(page, count);
  await page.waitForFunction((text) => document.getElementById("time-figures").textContent !== text, textBefore);
  const afterEdit = await figures(page);
  const riseAfter = await leadingTime(page, afterEdit["rise 10–90 %"]);
  assert.notEqual(riseAfter, rise, "the rise time did not follow the edit");
  assert.notEqual(await timeImage(page), imageBefore, "the step plot did not change");
  await typeInto(page, "#part-0", original);
  await page.locator("#part-0").press("Tab");
});

test("½ LSB of 16 bits settles later than 1 %, and a bad bit count is refused at its field", async () => {
  const page = app.page;
  await page.selectOption("#time-settle", "percent");
  await typeInto(page, "#time-percent", "1");
  await page.locator("#time-percent").press("Enter");
  await page.waitForFunction(() => /±1 %/.test(document.getElementById("time-figures").textContent));
  const percent = await leadingTime(page, (await figures(page)).settling);

  await page.selectOption("#time-settle", "half_lsb");
  await typeInto(page, "#time-bits", "16");
  await page.locator("#time-bits").press("Enter");
  await page.waitForFunction(() => /½ LSB of 16 bits/.test(document.getElementById("time-figures").textContent));
  const halfLsb = await leadingTime(page, (await figures(page)).settling);
  assert.ok(halfLsb > percent, `½ LSB ${halfLsb} s is not later than 1 % ${percent} s`);

  await typeInto(page, "#time-bits", "0");
  await page.locator("#time-bits").press("Enter");
  await page.waitForSelector("#time-bits[aria-invalid=true]");
  assert.match(await page.locator("#time-bits-msg").innerText(), /bits.*1 to 32.*keeps the previous settings/);
  // The figures stayed with the last good setting.
  assert.match((await figures(page)).settling, /½ LSB of 16 bits/);
  await typeInto(page, "#time-bits", "16");
  await page.selectOption("#time-settle", "percent");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

async function setMask(page, { pass, loss, stop, atten }) {
  await typeInto(page, "#mask-pass", pass);
  await typeInto(page, "#mask-loss", loss);
  await typeInto(page, "#mask-stop", stop);
  await typeInto(page, "#mask-atten", atten);
  await page.click("#mask-apply");
}

test("limits pass, are drawn on the plot, and fail when tightened", async () => {
  const page = app.page;
  const plain = await plotImage(page);
  // The demo (a 1 kHz critically damped 3rd-order RC) loses well under 1 dB at 200 Hz and is
  // more than 40 dB down at 20 kHz.
  let count = await draws(page);
  await setMask(page, { pass: "200", loss: "1", stop: "20k", atten: "40" });
  await nextDraw(page, count);
  await page.waitForSelector("#mask-verdict[data-verdict=pass]");
  assert.match(await page.locator("#mask-verdict").innerText(), /^Pass: .*worst: (passband|stopband): .* at /);
  assert.notEqual(await plotImage(page), plain, "the limits were not drawn on the plot");
  const stored = await page.evaluate(() => JSON.parse(globalThis.bandwright.check_mask(JSON.stringify({
    band: { response: "lowpass", passband_edge_hz: 200, stopband_edge_hz: 20000 },
    max_passband_loss_db: 1, min_stopband_attenuation_db: 40 }))));
  assert.equal(stored.band.stopband_edge_hz, 20000);

  count = await draws(page);
  await typeInto(page, "#mask-atten", "120");
  await page.click("#mask-apply");
  await nextDraw(page, count);
  await page.waitForSelector("#mask-verdict[data-verdict=fail]");
  const text = await page.locator("#mask-verdict").innerText();
  assert.match(text, /^Fail: .*worst: stopband: attenuation [\d.]+ dB of 120 dB required; margin -[\d.]+ dB at [\d.]+ kHz/);
  assert.doesNotMatch(text, /NaN/);
});

test("the lowest order per alignment puts its order and alignment into the requirement", async () => {
  const page = app.page;
  await setMask(page, { pass: "1k", loss: "1", stop: "4k", atten: "60" });
  await page.waitForSelector("#mask-orders:not([hidden]) tbody tr");
  const rows = await page.locator("#mask-orders-body tr").evaluateAll((trs) => trs.map((tr) => [...tr.cells].map((c) => c.textContent)));
  const butterworth = rows.find((cells) => cells[0] === "Butterworth");
  // n ≥ log10((10^6 − 1)/(10^0.1 − 1))/(2·log10 4) = 5.47 → 6 (closed form as in scipy.signal.buttord; computed).
  assert.equal(butterworth[1], "6");
  const index = rows.indexOf(butterworth);
  await page.locator("#mask-orders-body tr").nth(index).locator("button").click();
  assert.equal(await page.locator("#ask-order").inputValue(), "6");
  assert.equal(await page.locator("#ask-alignment").inputValue(), "butterworth");
  assert.equal(await page.locator("#ask-target").inputValue(), "cutoff");
  const cutoff = await page.evaluate((t) => globalThis.bandwright.parse_value(t, "frequency"), await page.locator("#ask-cutoff").inputValue());
  assert.ok(cutoff > 1000 && cutoff < 4000, `cutoff ${cutoff}`);
  assert.match(await page.locator("#notice").innerText(), /Butterworth of order 6/);
});

test("limits no order up to 8 meets, and limits out of order, get their messages", async () => {
  const page = app.page;
  await setMask(page, { pass: "1k", loss: "1", stop: "2k", atten: "200" });
  await page.waitForFunction(() => /no alignment up to order 8/.test(document.getElementById("mask-orders-msg").textContent));
  const message = await page.locator("#mask-orders-msg").innerText();
  assert.match(message, /the closest is .* of order \d, which misses by [\d.]+ dB; relax it/);
  assert.ok(await page.locator("#mask-orders").isHidden());

  await typeInto(page, "#mask-stop", "500");
  await page.click("#mask-apply");
  await page.waitForSelector("#mask-stop[aria-invalid=true]");
  assert.match(await page.locator("#mask-stop-msg").innerText(), /stopband edge.*must lie above the passband edge.*The limits are unchanged/);
});

test("the limits are kept as state.mask in the autosave and come back on reload", async () => {
  const page = app.page;
  await setMask(page, { pass: "200", loss: "1", stop: "20k", atten: "40" });
  await page.waitForSelector("#mask-verdict[data-verdict=pass]");
  await page.waitForFunction(() => {
    const saved = JSON.parse(localStorage.getItem("bandwright.workspace.v1") || "{}");
    return saved.mask && saved.mask.min_stopband_attenuation_db === 40;
  });
  const saved = await page.evaluate(() => JSON.parse(localStorage.getItem("bandwright.workspace.v1")).mask);
  assert.deepEqual(saved.band, { response: "lowpass", passband_edge_hz: 200, stopband_edge_hz: 20000 });
  const again = await app.newPage();
  await ready(again);
  await again.waitForSelector("#mask-verdict[data-verdict=pass]");
  assert.equal(await again.locator("#mask-atten").inputValue(), "40");
  // Clearing the limits removes them from the plot and the autosave.
  await again.click("#mask-clear");
  await again.waitForFunction(() => JSON.parse(localStorage.getItem("bandwright.workspace.v1")).mask === null);
  assert.ok(await again.locator("#mask-verdict").isHidden());
  await again.close();
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("the printed report carries the step figures and the limits' verdict", async () => {
  const page = app.page;
  await setMask(page, { pass: "200", loss: "1", stop: "20k", atten: "40" });
  await page.waitForSelector("#mask-verdict[data-verdict=pass]");
  await page.evaluate(() => window.dispatchEvent(new Event("beforeprint")));
  const ends = await page.locator("#r-ends").textContent();
  assert.match(ends, /Step response: overshoot [\d.]+ %; rise 10–90 % [\d.]+ [µm]s; settling [\d.]+ [µm]s to ±1 %/);
  assert.match(ends, /Limits: pass; worst (passband|stopband): /);
  assert.doesNotMatch(ends, /NaN/);
});
