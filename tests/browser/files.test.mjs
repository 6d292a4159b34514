// Design files: save (a download) and open (the file picker) round-trip; a broken file gets a
// message and the design stays; markup in a design's name is shown as text, never run.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { openApp, partValues, ready, typeInto } from "./harness.mjs";

let downloads;
/** Clicks "Save file" and keeps the download under the name the page suggested. */
async function save(page) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click("#act-save")]);
  const name = download.suggestedFilename();
  const file = path.join(await mkdtemp(path.join(downloads, "save-")), name);
  await download.saveAs(file);
  return { name, path: file };
}
async function open(page, files) {
  const [chooser] = await Promise.all([page.waitForEvent("filechooser"), page.click("#act-open")]);
  await chooser.setFiles(files);
}

const MARKUP = "<img src=x onerror=alert(1)>";

let app;
let dialogs = 0;
before(async () => {
  downloads = await mkdtemp(path.join(tmpdir(), "bandwright-downloads-"));
  app = await openApp();
  app.page.on("dialog", (dialog) => {
    dialogs += 1;
    dialog.dismiss();
  });
  await ready(app.page);
});
after(async () => {
  await app?.close();
  await rm(downloads, { recursive: true, force: true });
});

test("save and open round-trip: the file picker brings back exactly the saved design", async () => {
  const page = app.page;
  await typeInto(page, "#design-name", "round trip");
  await typeInto(page, "#part-0", "47.5n");
  await page.locator("#part-0").press("Tab");
  const partsSaved = await partValues(page);
  const first = await save(page);
  assert.equal(first.name, "round-trip.json");
  const text = await readFile(first.path, "utf8");
  const design = JSON.parse(text);
  assert.equal(design.format, "bandwright-design");
  assert.equal(design.name, "round trip");

  // Change the working design, then open the saved file.
  await typeInto(page, "#part-0", "1u");
  await page.locator("#part-0").press("Tab");
  await typeInto(page, "#design-name", "changed");
  assert.notDeepEqual(await partValues(page), partsSaved);
  await open(page, first.path);
  await page.waitForFunction(() => document.getElementById("design-name").value === "round trip");
  assert.deepEqual(await partValues(page), partsSaved);
  const second = await save(page);
  assert.equal(await readFile(second.path, "utf8"), text);
  assert.match(await page.locator("#notice").innerText(), /Opened “round-trip\.json”/);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("a broken file gets a message naming the problem, and the design stays", async () => {
  const page = app.page;
  const before = await partValues(page);
  const name = await page.locator("#design-name").inputValue();
  await open(page, { name: "cut-short.json", mimeType: "application/json", buffer: Buffer.from('{"format": "bandwright-design", "version": 1, "name": "x", ') });
  const message = page.locator("#open-msg");
  await message.waitFor({ state: "visible" });
  const text = await message.innerText();
  assert.match(text, /cut-short\.json/);
  assert.match(text, /could not be opened/);
  assert.match(text, /line \d+/, `the core's position is missing: ${text}`);
  assert.deepEqual(await partValues(page), before);
  assert.equal(await page.locator("#design-name").inputValue(), name);
  await app.screenshot("error-broken-file");

  // Well-formed JSON that is not a valid design: the core names the culprit.
  const bad = { format: "bandwright-design", version: 1, name: "bad", source: { node: "in", resistance: 50 }, output: "out",
    elements: [{ ref: "X1", kind: "flux_capacitor", value: 1, nodes: ["in", "out"] }] };
  await open(page, { name: "bad-kind.json", mimeType: "application/json", buffer: Buffer.from(JSON.stringify(bad)) });
  await page.waitForFunction(() => document.getElementById("open-msg").textContent.includes("bad-kind.json"));
  assert.match(await message.innerText(), /flux_capacitor/);
  assert.deepEqual(await partValues(page), before);
});

test("a design name containing markup is shown as text, from a file and from a link", async () => {
  const page = app.page;
  const design = JSON.parse(await page.evaluate(() => globalThis.bandwright.demo_design()));
  design.name = MARKUP;
  design.note = `<script>alert(2)</script>${MARKUP}`;
  await open(page, { name: `${MARKUP}.json`, mimeType: "application/json", buffer: Buffer.from(JSON.stringify(design)) });
  await page.waitForFunction((m) => document.getElementById("design-name").value === m, MARKUP);
  const shown = await page.evaluate(() => ({
    title: document.title,
    caption: document.getElementById("circuit-caption").textContent,
    notice: document.getElementById("notice").textContent,
    images: document.querySelectorAll("img").length,
  }));
  assert.ok(shown.title.includes(MARKUP), shown.title);
  assert.ok(shown.caption.includes(MARKUP), shown.caption);
  assert.ok(shown.notice.includes(MARKUP), shown.notice);
  assert.equal(shown.images, 0);
  await page.click("#ab-keep");
  assert.ok((await page.locator("#ab-status").innerText()).includes(MARKUP));
  // The printed report shows it as text too.
  await page.evaluate(() => window.dispatchEvent(new Event("beforeprint")));
  assert.equal(await page.locator("#r-title").textContent(), MARKUP);
  await app.screenshot("markup-name-as-text");

  await page.click("#act-link");
  const link = await page.locator("#link-text").inputValue();
  const other = await openApp({ url: link });
  try {
    let otherDialogs = 0;
    other.page.on("dialog", (dialog) => {
      otherDialogs += 1;
      dialog.dismiss();
    });
    await ready(other.page);
    assert.equal(await other.page.locator("#design-name").inputValue(), MARKUP);
    assert.equal(await other.page.locator("img").count(), 0);
    assert.equal(otherDialogs, 0);
    assert.deepEqual(other.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
  } finally {
    await other.close();
  }
  assert.equal(dialogs, 0, "markup ran as script");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});
