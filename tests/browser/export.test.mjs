// Taking the result away: parts CSV, sweep CSV, plot PNG and SVG downloads, and the printed
// one-page report (requirement, parts, plots, assumptions, cautions).

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFile, writeFile, mkdir } from "node:fs/promises";
import path from "node:path";
import { openApp, SCREENSHOT_DIR, ready } from "./harness.mjs";

async function downloadFrom(page, selector) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
  return { name: download.suggestedFilename(), bytes: await readFile(await download.path()) };
}

let app;
let refs;
before(async () => {
  app = await openApp();
  await ready(app.page);
  refs = await app.page.locator("#parts-body th").evaluateAll((cells) => cells.map((c) => c.firstChild.textContent));
});
after(async () => {
  await app?.close();
});

test("the parts list downloads as CSV with a header and every part", async () => {
  const { name, bytes } = await downloadFrom(app.page, "#act-parts-csv");
  assert.match(name, /-parts\.csv$/);
  const lines = bytes.toString("utf8").trim().split(/\r?\n/);
  assert.ok(lines.length >= refs.length + 1);
  assert.match(lines[0], /ref/i);
  for (const ref of refs) assert.ok(lines.some((line) => line.split(",")[0].replace(/"/g, "") === ref), `no row for ${ref}`);
});

test("the sweep downloads as CSV, one row per frequency", async () => {
  const { name, bytes } = await downloadFrom(app.page, "#act-sweep-csv");
  assert.match(name, /-sweep\.csv$/);
  const lines = bytes.toString("utf8").trim().split(/\r?\n/);
  assert.match(lines[0], /freq/i);
  assert.ok(lines.length > 50, `only ${lines.length} lines`);
  const columns = lines[0].split(",").length;
  assert.ok(lines.slice(1).every((line) => line.split(",").length === columns), "ragged rows");
});

test("the plot downloads as PNG (from the canvas) and as SVG (from the plot layer)", async () => {
  const png = await downloadFrom(app.page, "#act-png");
  assert.match(png.name, /-plot\.png$/);
  assert.deepEqual([...png.bytes.subarray(0, 8)], [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  const svg = await downloadFrom(app.page, "#act-svg");
  assert.match(svg.name, /-plot\.svg$/);
  const text = svg.bytes.toString("utf8");
  assert.match(text, /^(<\?xml[^>]*>\s*)?<svg/);
  assert.match(text, /<\/svg>\s*$/);
  assert.match(text, /<(path|polyline|line)\b/);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("printing gives a one-page report with the requirement, parts, plot, assumptions and cautions", async () => {
  const page = app.page;
  await page.evaluate(() => window.dispatchEvent(new Event("beforeprint")));
  await page.emulateMedia({ media: "print" });
  try {
    const report = page.locator("#report");
    assert.equal(await report.isVisible(), true);
    assert.equal(await page.locator("#app").isVisible(), false);
    const text = await report.innerText();
    assert.match(text, /Requirement/i);
    assert.match(text, /A low-pass|A high-pass|A band-pass|A band-stop/);
    for (const ref of refs) assert.ok(text.includes(ref), `the report lacks ${ref}`);
    const cautions = await page.evaluate(() => JSON.parse(globalThis.bandwright.cautions()).map((c) => c.title));
    for (const title of cautions) assert.ok(text.includes(title), `the report lacks the caution "${title}"`);
    assert.match(text, /Assumptions/i);
    // The report's plot is drawn, in the light theme.
    const plot = await page.evaluate(() => {
      const canvas = document.getElementById("r-plot");
      const corner = canvas.getContext("2d").getImageData(2, 2, 1, 1).data;
      return { width: canvas.width, corner: [...corner.slice(0, 3)] };
    });
    assert.ok(plot.width > 0);
    assert.ok(plot.corner.every((c) => c > 200), `the report plot is not light: ${plot.corner}`);
    await app.screenshot("print-report");

    const pdf = await page.pdf({ format: "A4", printBackground: true });
    await mkdir(SCREENSHOT_DIR, { recursive: true });
    await writeFile(path.join(SCREENSHOT_DIR, "print-report.pdf"), pdf);
    assert.equal(pageCount(pdf), 1, `the report takes ${pageCount(pdf)} pages`);
    const letter = await page.pdf({ format: "Letter", printBackground: true });
    assert.equal(pageCount(letter), 1, "more than one Letter page");
  } finally {
    await page.emulateMedia({ media: "screen" });
  }
});

test("a ten-part design (a 5th-order ladder of pairs) still prints on one page", async () => {
  const page = app.page;
  await page.selectOption("#ask-alignment", "butterworth");
  await page.selectOption("#ask-topology", "ladder");
  await page.fill("#ask-order", "5");
  await page.fill("#ask-cutoff", "10M");
  await page.fill("#ask-source", "50");
  await page.fill("#ask-load", "50");
  await page.selectOption("#ask-combine", "pairs");
  await page.click("#ask-go");
  await page.waitForFunction(() => document.querySelectorAll("#parts-body tr").length === 10);
  await page.evaluate(() => window.dispatchEvent(new Event("beforeprint")));
  await page.emulateMedia({ media: "print" });
  try {
    assert.equal(await page.locator("#r-parts-body tr").count(), 10);
    for (const format of ["A4", "Letter"]) {
      assert.equal(pageCount(await page.pdf({ format, printBackground: true })), 1, `more than one ${format} page`);
    }
  } finally {
    await page.emulateMedia({ media: "screen" });
  }
});

/** The number of pages in a PDF that Chromium wrote (one "/Type /Page" object per page). */
function pageCount(pdf) {
  return (pdf.toString("latin1").match(/\/Type\s*\/Page(?!s)/g) ?? []).length;
}
