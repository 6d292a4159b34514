// Share links: the design travels in the URL fragment and comes back exactly; a corrupt link gets
// a message and the last good design stays.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFile } from "node:fs/promises";
import { openApp, PAGE_URL, partValues, ready, typeInto } from "./harness.mjs";

/** Clicks "Save file" and returns the downloaded design text. */
async function savedDesign(page) {
  const [download] = await Promise.all([page.waitForEvent("download"), page.click("#act-save")]);
  return readFile(await download.path(), "utf8");
}

let app;
let link;
let original;
before(async () => {
  app = await openApp();
  await ready(app.page);
  const page = app.page;
  // Make the design our own first: a name with characters that need care in a URL, and a value
  // that is no standard value, so that a lossy round trip would show.
  await typeInto(page, "#design-name", "Link check: 1 kHz ∥ 10 kΩ, µ & # ?");
  await typeInto(page, "#part-0", "123.456789n");
  await page.locator("#part-0").press("Tab");
  await page.waitForTimeout(300);
  original = await savedDesign(page);
  await page.click("#act-link");
  link = await page.locator("#link-text").inputValue();
});
after(async () => {
  await app?.close();
});

test("the share link holds the design in the fragment and restores it exactly", async () => {
  assert.ok(link.startsWith(`${PAGE_URL}#`), link);
  const fragment = link.slice(link.indexOf("#") + 1);
  assert.match(fragment, /^[A-Za-z0-9._~-]+$/, "the fragment needs escaping");
  // Open the link in a fresh profile, as someone receiving it would.
  const other = await openApp({ url: link });
  try {
    await ready(other.page);
    const restored = await savedDesign(other.page);
    assert.deepEqual(JSON.parse(restored), JSON.parse(original));
    assert.equal(restored, original);
    assert.equal(await other.page.locator("#design-name").inputValue(), "Link check: 1 kHz ∥ 10 kΩ, µ & # ?");
    assert.deepEqual(await partValues(other.page), await partValues(app.page));
    // The fragment is dropped once read, so a reload restores the autosaved work instead.
    assert.equal(await other.page.evaluate(() => location.hash), "");
    assert.match(await other.page.locator("#notice").innerText(), /from the link/);
    assert.deepEqual(other.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
  } finally {
    await other.close();
  }
});

test("a corrupt link shows its message and keeps the last good design", async () => {
  const page = app.page;
  const before = await partValues(page);
  const fragment = link.slice(link.indexOf("#") + 1);
  const broken = `${PAGE_URL}#${fragment.slice(0, Math.floor(fragment.length / 2))}`;
  const tab = await app.newPage(broken);
  try {
    await ready(tab);
    const message = tab.locator("#link-msg");
    await message.waitFor({ state: "visible" });
    assert.match(await message.innerText(), /could not be read/);
    assert.match(await message.innerText(), /unchanged/);
    // Same profile: the autosaved design (the last good one) is what the new tab shows.
    assert.deepEqual(await partValues(tab), before);
    assert.equal(await tab.locator("#design-name").inputValue(), "Link check: 1 kHz ∥ 10 kΩ, µ & # ?");
    await app.screenshot("error-corrupt-link", tab);
  } finally {
    await tab.close();
  }
});

test("a link that is not a Bandwright link at all is refused in a fresh browser, which shows the demo", async () => {
  const other = await openApp({ url: `${PAGE_URL}#%3Cimg%20src%3Dx%20onerror%3Dalert(1)%3E` });
  try {
    await ready(other.page);
    let dialogs = 0;
    other.page.on("dialog", (dialog) => {
      dialogs += 1;
      dialog.dismiss();
    });
    await other.page.locator("#link-msg").waitFor({ state: "visible" });
    const demoName = await other.page.evaluate(() => JSON.parse(globalThis.bandwright.demo_design()).name);
    assert.equal(await other.page.locator("#design-name").inputValue(), demoName);
    assert.equal(await other.page.locator("img").count(), 0);
    assert.equal(dialogs, 0);
    assert.deepEqual(other.requestsBesidesPage(), []);
  } finally {
    await other.close();
  }
});

test("pasting a link into the address bar of an open page (a fragment change) opens it too", async () => {
  const page = app.page;
  await typeInto(page, "#part-0", "2.2u");
  await page.locator("#part-0").press("Tab");
  const fragment = link.slice(link.indexOf("#") + 1);
  await page.evaluate((f) => {
    location.hash = f;
  }, fragment);
  await page.waitForFunction(() => location.hash === "");
  assert.equal(await savedDesign(page), original);
  assert.equal(await page.locator("#act-undo").isDisabled(), false, "the replaced design cannot be put back");
});
