// Smoke test of the built single file: it loads from file:// in headless Chromium, requests
// nothing else, logs no error, and its wasm module started (the page shows version()).

import { test, after, before } from "node:test";
import assert from "node:assert/strict";
import { readFile } from "node:fs/promises";
import path from "node:path";
import { openApp, ROOT, PAGE_URL } from "./harness.mjs";

// The JS-facing API of bandwright-web (the contract between the bindings and the page).
const EXPORTS = [
  "CrossoverBench",
  "Session",
  "TolerancePlanner",
  "cautions",
  "check_crossover",
  "check_design",
  "check_mask",
  "crossover_ways",
  "demo_crossover",
  "demo_design",
  "demo_request",
  "fit",
  "fit_by_yield",
  "format_value",
  "front_end_demo",
  "front_end_plan",
  "mask_from_form",
  "mask_orders",
  "parse_tolerance",
  "parse_value",
  "parts_csv",
  "read_impedance_csv",
  "schematic",
  "share_decode",
  "share_encode",
  "step_value",
  "version",
];

let app;
before(async () => {
  app = await openApp();
});
after(async () => {
  await app?.close();
});

test("the page loads from file:// and requests nothing besides itself", async () => {
  assert.ok(app.requests.some((url) => url.split("#")[0] === PAGE_URL), `page request missing: ${app.requests}`);
  // Give late work (fonts, images, timers) a moment to show up as requests or errors.
  await app.page.waitForTimeout(300);
  await app.screenshot("smoke-loaded");
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
});

test("the wasm module started: version() matches the workspace and the page shows it", async () => {
  const manifest = await readFile(path.join(ROOT, "Cargo.toml"), "utf8");
  const workspaceVersion = manifest.match(/\[workspace\.package\][^[]*?\bversion\s*=\s*"([^"]+)"/)?.[1];
  assert.ok(workspaceVersion, "no [workspace.package] version in Cargo.toml");
  const version = await app.page.evaluate(() => globalThis.bandwright.version());
  assert.equal(version, workspaceVersion);
  const shown = await app.page.evaluate(() => document.body.innerText);
  assert.ok(shown.includes(version), `the page text does not show version ${version}`);
});

test("the exports are exactly the contract's API, and the browser-floor message stays hidden", async () => {
  const names = await app.page.evaluate(() => Object.keys(globalThis.bandwright).sort());
  assert.deepEqual(names, EXPORTS);
  const unsupported = await app.page.evaluate(() => globalThis.bandwrightUnsupported ?? null);
  assert.equal(unsupported, null);
});

test("a browser without DecompressionStream gets a plain message naming it, not a blank page", async () => {
  const old = await openApp({ waitForApp: false, initScript: () => delete globalThis.DecompressionStream });
  try {
    await old.page.waitForSelector("[role=alert]", { state: "visible", timeout: 5000 });
    const message = await old.page.locator("[role=alert]").innerText();
    assert.match(message, /needs: DecompressionStream \(gzip\)/);
    assert.equal(await old.page.evaluate(() => globalThis.bandwright ?? null), null);
    assert.deepEqual(old.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
    await old.screenshot("smoke-unsupported-browser");
  } finally {
    await old.close();
  }
});

test("a wasm module that fails to compile gets a message naming the failure, not a stuck start", async () => {
  const broken = await openApp({
    waitForApp: false,
    initScript: () => {
      // The bootstrap compiles as it unpacks (compileStreaming); both ways are refused.
      WebAssembly.compile = () => Promise.reject(new Error("compile refused by this test"));
      WebAssembly.compileStreaming = () => Promise.reject(new Error("compile refused by this test"));
    },
  });
  try {
    await broken.page.waitForSelector("[role=alert]", { state: "visible", timeout: 5000 });
    assert.match(await broken.page.locator("[role=alert]").innerText(), /could not start its WebAssembly module.*compile refused by this test/);
    // style.css hides the start notice once the alert shows.
    assert.equal(await broken.page.locator("#starting").isVisible(), false);
    // The bootstrap rethrows, so the failure also reaches the console as a page error.
    assert.equal(broken.problems().requests.length, 0);
  } finally {
    await broken.close();
  }
});
