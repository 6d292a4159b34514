// The speaker-crossover workspace: the switch, the demo's plots and tables, edits that redraw,
// bad values named while the last good crossover stays, impedance CSV import (good, and bad by
// line), save/open round trip, a corrupt store that leaves the filter design alone, and no
// network request at any point.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { openApp, partValues, ready, ROOT, typeInto } from "./harness.mjs";

let app;
let downloads;
before(async () => {
  downloads = await mkdtemp(path.join(tmpdir(), "bandwright-xo-"));
  app = await openApp({ viewport: { width: 1400, height: 1000 } });
  await ready(app.page);
});
after(async () => {
  await app?.close();
  await rm(downloads, { recursive: true, force: true });
});

const xoDraws = (page) => page.evaluate(() => Number(document.getElementById("xo-plot").dataset.draws || 0));
const xoImage = (page) => page.evaluate(() => document.getElementById("xo-plot").toDataURL());
async function xoDrawAfter(page, n) {
  await page.waitForFunction((k) => Number(document.getElementById("xo-plot").dataset.draws || 0) > k, n, { timeout: 10_000 });
}
/** The stress table as rows of cell texts. */
const stressRows = (page) => page.locator("#xo-stress-body tr").evaluateAll((rows) => rows.map((r) => [...r.cells].map((c) => c.textContent)));
const summary = (page) => page.locator("#xo-summary").innerText();
/** Whether the canvas has pixels of more than one colour (not blank). */
const canvasColours = (page) =>
  page.evaluate(() => {
    const canvas = document.getElementById("xo-plot");
    const data = canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height).data;
    const seen = new Set();
    for (let i = 0; i < data.length && seen.size < 50; i += 4 * 97) seen.add(`${data[i]},${data[i + 1]},${data[i + 2]}`);
    return seen.size;
  });
const card = (page, index) => page.locator("#xo-branches .xo-branch").nth(index);

test("switching to the crossover workspace shows the demo, drawn, with a stress row per part", async () => {
  const page = app.page;
  const filterParts = await partValues(page);
  await page.click("#ws-crossover");
  await xoDrawAfter(page, 0);
  assert.equal(await page.locator("#ws-crossover").getAttribute("aria-pressed"), "true");
  assert.equal(await page.locator(".ask").isVisible(), false, "the filter requirement steps aside");
  assert.equal(await page.locator("#xo-name").inputValue(), "2-way LR4 at 2.4 kHz, 8 Ω");
  assert.ok((await canvasColours(page)) > 5, "the crossover plot is blank");

  // One stress row per crossover part of the parts list, each with finite figures.
  const rows = await stressRows(page);
  const parts = await page.locator("#xo-parts-body tr").count();
  assert.ok(rows.length >= 8, `only ${rows.length} stress rows`);
  assert.equal(rows.length, parts);
  const refs = await page.locator("#xo-parts-body tr td:first-child").allTextContents();
  assert.deepEqual(rows.map((r) => r[0]), refs);
  for (const row of rows) {
    assert.match(row[2], /^\d[\d.]* (m|k)?(V peak|A rms|W)$/, `rating ${row}`);
    assert.match(row[3], /^\d[\d.]* (m|µ|k)?(V rms|A rms|W) at \d[\d.]* k?Hz$/, `worst ${row}`);
  }
  const text = await page.locator("#xo").innerText();
  assert.doesNotMatch(text, /NaN|Infinity|undefined/);

  // The impedance minimum with its frequency, and the 80 % note marked as common practice.
  const lines = await summary(page);
  assert.match(lines, /Impedance minimum, as built: \d[\d.]* Ω at \d[\d.]* k?Hz = \d+ % of nominal 8(\.00)? Ω/);
  assert.match(lines, /80 %/);
  assert.match(lines, /common practice, not a standard/);
  // The cautions sit beside the stress table.
  const cautions = await page.locator(".xo-stress-card .cautions").innerText();
  for (const words of [/Hazardous amplifier voltages/, /bipolar/, /heat/, /local electrical codes/]) assert.match(cautions, words);
  assert.match(await page.locator("#xo-amp").innerText(), /28\.3 V rms/);
  // The filter bench's design is untouched.
  await page.click("#ws-filter");
  assert.deepEqual(await partValues(page), filterParts);
  await page.click("#ws-crossover");
  await app.screenshot("crossover-demo");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("editing the crossover frequency redraws and changes the parts", async () => {
  const page = app.page;
  const before = { rows: await stressRows(page), image: await xoImage(page), draws: await xoDraws(page) };
  await typeInto(page, "#xo-f1", "3k");
  await page.locator("#xo-f1").press("Tab");
  await xoDrawAfter(page, before.draws);
  await page.waitForFunction(() => document.querySelector("#xo-branches .xo-branch legend").textContent.includes("3.000 kHz"));
  const after = await stressRows(page);
  assert.notDeepEqual(after.map((r) => r[1]), before.rows.map((r) => r[1]), "part values did not change");
  assert.notEqual(await xoImage(page), before.image);
  assert.equal(await page.locator("#xo-msg").isVisible(), false);

  // A quarter of the power: half the voltage at the amplifier (P = V²/R).
  await typeInto(page, "#xo-power", "25");
  await page.waitForFunction(() => document.getElementById("xo-amp").textContent.includes("14.1 V rms"));
  assert.match(await page.locator("#xo-stress-title").innerText(), /25\.00 W/i);
  await typeInto(page, "#xo-power", "lots");
  await page.waitForFunction(() => document.getElementById("xo-msg").textContent.includes('"lots"'));
  assert.match(await page.locator("#xo-msg").innerText(), /^Amplifier power: cannot read "lots"/);
  await typeInto(page, "#xo-power", "");
  await page.waitForFunction(() => document.getElementById("xo-amp").textContent.includes("28.3 V rms"));
});

test("the sweep CSV and the plot SVG download", async () => {
  const page = app.page;
  const [csv] = await Promise.all([page.waitForEvent("download"), page.click("#xo-csv")]);
  const csvPath = path.join(downloads, csv.suggestedFilename());
  await csv.saveAs(csvPath);
  const lines = (await readFile(csvPath, "utf8")).split("\r\n").filter(Boolean);
  assert.equal(lines[1], "frequency_hz,woofer_db,woofer_phase_deg,tweeter_db,tweeter_phase_deg,sum_db,sum_phase_deg,impedance_ohm,impedance_phase_deg");
  assert.ok(lines.length > 100, `${lines.length} lines`);
  assert.doesNotMatch(lines.join("\n"), /NaN|inf/i);
  const [svg] = await Promise.all([page.waitForEvent("download"), page.click("#xo-svg")]);
  const svgPath = path.join(downloads, svg.suggestedFilename());
  await svg.saveAs(svgPath);
  const text = await readFile(svgPath, "utf8");
  assert.ok(text.startsWith("<svg"));
  assert.match(text, /80 % of nominal/);
  assert.match(text, /minimum \d[\d.]* Ω at/);
});

test("a bad value is named and the last good crossover stays on the plots", async () => {
  const page = app.page;
  const rows = await stressRows(page);
  const image = await xoImage(page);
  const re = card(page, 0).locator('[data-key="re"]');
  await typeInto(page, '#xo-branches .xo-branch:nth-child(1) [data-key="re"]', "0");
  await page.locator("#xo-msg").waitFor({ state: "visible" });
  const message = await page.locator("#xo-msg").innerText();
  assert.match(message, /woofer, Re/);
  assert.match(message, /branches\[0\]\.driver\.model\.re is 0/);
  assert.match(message, /last crossover that worked/);
  assert.equal(await re.getAttribute("aria-invalid"), "true");
  assert.deepEqual(await stressRows(page), rows);
  assert.equal(await xoImage(page), image);
  await app.screenshot("crossover-bad-re");

  // Text that is no value at all is named too.
  await typeInto(page, '#xo-branches .xo-branch:nth-child(1) [data-key="re"]', "5R8x");
  await page.waitForFunction(() => document.getElementById("xo-msg").textContent.includes("5R8x"));
  assert.match(await page.locator("#xo-msg").innerText(), /woofer, Re: cannot read/);
  await typeInto(page, '#xo-branches .xo-branch:nth-child(1) [data-key="re"]', "5R8");
  await page.waitForFunction(() => document.getElementById("xo-msg").hidden);
  assert.equal(await re.getAttribute("aria-invalid"), null);

  // A 3-way whose frequencies are out of order: the core names the second one.
  const draws = await xoDraws(page);
  await page.selectOption("#xo-ways", "3");
  await xoDrawAfter(page, draws);
  assert.equal(await page.locator("#xo-branches .xo-branch").count(), 3);
  const kept = await stressRows(page);
  await typeInto(page, "#xo-f2", "200");
  await page.waitForFunction(() => document.getElementById("xo-msg").textContent.includes("is 200 Hz"));
  const order = await page.locator("#xo-msg").innerText();
  assert.match(order, /^Crossover 2: crossover_frequencies\[1\] is 200 Hz; it must be above crossover_frequencies\[0\]/);
  assert.equal(await page.locator("#xo-f2").getAttribute("aria-invalid"), "true");
  assert.deepEqual(await stressRows(page), kept);
  await typeInto(page, "#xo-f2", "3k");
  await page.waitForFunction(() => document.getElementById("xo-msg").hidden);
  await page.selectOption("#xo-ways", "2");
  await page.waitForFunction(() => document.querySelectorAll("#xo-branches .xo-branch").length === 2);
  // 2 → 3 → 2 gives the 2-way back, at the crossover it had.
  assert.equal(await page.locator("#xo-f1").inputValue(), "3.00k");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("an impedance CSV imports at a driver; a bad row is named by its line", async () => {
  const page = app.page;
  const woofer = card(page, 0);
  await woofer.locator('[data-key="driver_kind"]').selectOption("measured");
  await page.locator("#xo-msg").waitFor({ state: "visible" });
  assert.match(await page.locator("#xo-msg").innerText(), /woofer, impedance CSV: choose the driver's impedance CSV/);
  // A measured curve has no Le for the Zobel to match: the core says so, naming the Zobel.
  await woofer.locator('[data-key="zobel"]').selectOption("none");

  const good = "# made-up test curve\nfrequency_hz,impedance_ohm,phase_deg\n10,7.0,10\n100,6.5,5\n1000,7.5,20\n10000,15,45\n40000,30,60\n";
  const draws = await xoDraws(page);
  const [chooser] = await Promise.all([page.waitForEvent("filechooser"), woofer.locator('[data-key="csv"]').click()]);
  await chooser.setFiles({ name: "test-woofer.csv", mimeType: "text/csv", buffer: Buffer.from(good) });
  await xoDrawAfter(page, draws);
  assert.match(await woofer.locator('[data-role="csv-status"]').innerText(), /“test-woofer\.csv”: 5 points, 10\.0 Hz – 40\.0 kHz/);
  assert.equal(await page.locator("#xo-msg").isVisible(), false);
  const rows = await stressRows(page);

  const bad = "frequency_hz,impedance_ohm,phase_deg\n10,7.0,10\n100,6.5,5\n50,7.5,20\n";
  const [again] = await Promise.all([page.waitForEvent("filechooser"), woofer.locator('[data-key="csv"]').click()]);
  await again.setFiles({ name: "bad-order.csv", mimeType: "text/csv", buffer: Buffer.from(bad) });
  await page.locator("#xo-msg").waitFor({ state: "visible" });
  const message = await page.locator("#xo-msg").innerText();
  assert.match(message, /“bad-order\.csv” could not be read: line 4: frequency 50 Hz is not above the 100 Hz before it/);
  assert.match(await woofer.locator('[data-role="csv-status"]').innerText(), /test-woofer\.csv/);
  assert.deepEqual(await stressRows(page), rows);
  await app.screenshot("crossover-bad-csv");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("save and open round-trip the crossover with its CSV; a broken file is refused by name", async () => {
  const page = app.page;
  await typeInto(page, "#xo-name", "round trip xo");
  await page.waitForTimeout(100);
  const [download] = await Promise.all([page.waitForEvent("download"), page.click("#xo-save")]);
  assert.equal(download.suggestedFilename(), "round-trip-xo.json");
  const saved = path.join(downloads, download.suggestedFilename());
  await download.saveAs(saved);
  const text = await readFile(saved, "utf8");
  const file = JSON.parse(text);
  assert.equal(file.format, "bandwright-crossover");
  assert.equal(file.branches[0].driver.measured, "test-woofer.csv");
  assert.match(await page.locator("#xo-notice").innerText(), /test-woofer\.csv/);
  const rows = await stressRows(page);

  // Change the crossover, then open the saved file with its CSV.
  await page.click("#xo-demo");
  await page.waitForFunction(() => document.getElementById("xo-name").value.startsWith("2-way"));
  assert.notDeepEqual(await stressRows(page), rows);
  const csv = "# made-up test curve\nfrequency_hz,impedance_ohm,phase_deg\n10,7.0,10\n100,6.5,5\n1000,7.5,20\n10000,15,45\n40000,30,60\n";
  const [chooser] = await Promise.all([page.waitForEvent("filechooser"), page.click("#xo-open")]);
  await chooser.setFiles([
    { name: "round-trip-xo.json", mimeType: "application/json", buffer: Buffer.from(text) },
    { name: "test-woofer.csv", mimeType: "text/csv", buffer: Buffer.from(csv) },
  ]);
  await page.waitForFunction(() => document.getElementById("xo-name").value === "round trip xo");
  assert.deepEqual(await stressRows(page), rows);
  const [second] = await Promise.all([page.waitForEvent("download"), page.click("#xo-save")]);
  const again = path.join(downloads, "again.json");
  await second.saveAs(again);
  assert.equal(await readFile(again, "utf8"), text);

  const [broken] = await Promise.all([page.waitForEvent("filechooser"), page.click("#xo-open")]);
  const wrong = JSON.parse(text);
  wrong.crossover_frequencies = [-5];
  await broken.setFiles({ name: "negative.json", mimeType: "application/json", buffer: Buffer.from(JSON.stringify(wrong)) });
  await page.locator("#xo-file-msg").waitFor({ state: "visible" });
  assert.match(await page.locator("#xo-file-msg").innerText(), /“negative\.json” could not be opened: crossover_frequencies\[0\] is -5 Hz.*unchanged/s);
  assert.equal(await page.locator("#xo-name").inputValue(), "round trip xo");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("the 3-way example opens with its lossy coil, notch and band-pass branch", async () => {
  const page = app.page;
  const text = await readFile(path.join(ROOT, "examples", "crossover", "crossover-3way.json"), "utf8");
  const [chooser] = await Promise.all([page.waitForEvent("filechooser"), page.click("#xo-open")]);
  await chooser.setFiles({ name: "crossover-3way.json", mimeType: "application/json", buffer: Buffer.from(text) });
  await page.waitForFunction(() => document.querySelectorAll("#xo-branches .xo-branch").length === 3);
  assert.equal(await page.locator("#xo-f2-box").isVisible(), true);
  assert.equal(await card(page, 0).locator('[data-key="l2"]').inputValue(), "1.10m");
  assert.equal(await card(page, 0).locator('[data-key="qes"]').inputValue(), "0.38");
  assert.equal(await card(page, 0).locator('[data-key="zobel"]').inputValue(), "match_coil");
  assert.equal(await card(page, 1).locator('[data-key="notch"]').inputValue(), "resonance");
  await page.waitForFunction(() => document.querySelectorAll("#xo-branches .xo-branch legend")[1].textContent.includes("band-pass"));
  const helpers = await page.locator("#xo-helpers").innerText();
  assert.match(helpers, /woofer: Zobel .* for the lossy coil/);
  assert.match(helpers, /mid: resonance notch/);
  assert.match(helpers, /mid: band-pass ladder gain over the product of its high-pass and low-pass: \+\d/);
  const rows = await stressRows(page);
  assert.equal(rows.length, await page.locator("#xo-parts-body tr").count());
  assert.doesNotMatch(await page.locator("#xo").innerText(), /NaN|Infinity|undefined/);
  await app.screenshot("crossover-3way");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("the crossover is kept apart: a reload restores it, a corrupt store leaves the filter design", async () => {
  const page = app.page;
  await page.waitForTimeout(400); // the autosave runs 250 ms after the last change
  const filterStore = await page.evaluate(() => localStorage.getItem("bandwright.workspace.v1"));
  const other = await app.newPage();
  await other.waitForFunction(() => Number(document.getElementById("xo-plot").dataset.draws || 0) > 0);
  assert.equal(await other.locator("#xo-name").inputValue(), "3-way LR4 at 400 Hz and 3 kHz, 8 Ω");
  assert.equal(await other.locator("#xo-branches .xo-branch").count(), 3);
  assert.match(await other.locator("#xo-notice").innerText(), /Restored the crossover/);
  await other.close();

  await page.evaluate(() => localStorage.setItem("bandwright.crossover.v1", '{"format": "bandwright-crossover-workspace", "version": 1, "workspace": "crossover", "file": {"format": "nope"}}'));
  const third = await app.newPage();
  await third.locator("#xo-notice").waitFor({ state: "visible" });
  assert.match(await third.locator("#xo-notice").innerText(), /could not be read .*demo crossover is shown instead/);
  assert.equal(await third.locator("#xo-name").inputValue(), "2-way LR4 at 2.4 kHz, 8 Ω");
  assert.equal(await third.evaluate(() => localStorage.getItem("bandwright.workspace.v1")), filterStore);
  // It opened in the crossover workspace; the filter bench draws once it is shown.
  await third.click("#ws-filter");
  await ready(third);
  assert.equal(await third.locator("#grid-msg").isVisible(), false);
  assert.ok((await partValues(third)).length > 0);
  await third.close();
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("phone width, and the dark theme, lay out and draw", async () => {
  for (const [name, options] of [
    ["crossover-phone", { viewport: { width: 390, height: 844 }, deviceScaleFactor: 2 }],
    ["crossover-dark", { viewport: { width: 1400, height: 1000 }, colorScheme: "dark" }],
  ]) {
    const view = await openApp(options);
    try {
      await ready(view.page);
      await view.page.click("#ws-crossover");
      await view.page.waitForFunction(() => Number(document.getElementById("xo-plot").dataset.draws || 0) > 0);
      const overflow = await view.page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      assert.ok(overflow <= 0, `${name}: the page scrolls sideways by ${overflow} px`);
      await view.screenshot(name);
      assert.deepEqual(view.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
    } finally {
      await view.close();
    }
  }
});
