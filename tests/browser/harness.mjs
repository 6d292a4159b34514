// Helpers for the browser tests (`node --test tests/browser/`): start Debian's Chromium headless
// through playwright-core, open the built single file from file://, and record everything that
// would show a broken or leaky page: every request, every console error and every uncaught page
// error. Screenshots go to target/screenshots/.
//
// The page under test is dist/bandwright.html, built by
//   cargo run -p bandwright-build --release -- --no-open
// or the file named by the environment variable BANDWRIGHT_PAGE.
//
// Usage in a test file:
//   import { test, after } from "node:test";
//   import { openApp } from "./harness.mjs";
//   const app = await openApp();
//   after(() => app.close());
//   test("...", async () => { await app.page.click(...); assert.deepEqual(app.requestsBesidesPage(), []); });

import { createRequire } from "node:module";
import { mkdir, mkdtemp, rm, stat } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

// playwright-core is installed in web/node_modules (web/package.json pins it), not beside the
// tests, so it is loaded relative to that package.
const requireFromWeb = createRequire(new URL("../../web/package.json", import.meta.url));
const { chromium } = requireFromWeb("playwright-core");

/** The repository root. */
export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
/** The built page under test. */
export const PAGE_FILE = path.resolve(process.env.BANDWRIGHT_PAGE ?? path.join(ROOT, "dist", "bandwright.html"));
/** Its file:// URL, as the browser reports it. */
export const PAGE_URL = pathToFileURL(PAGE_FILE).href;
/** Where screenshot(name) writes. */
export const SCREENSHOT_DIR = path.join(ROOT, "target", "screenshots");
/** Debian's chromium package; Playwright's own browser download is not used. */
export const CHROMIUM = "/usr/bin/chromium";
/**
 * Chromium flags: no sandbox (the tests run as root), software rendering, and no background
 * networking of the browser's own, so that every request a test sees comes from the page.
 */
export const CHROMIUM_ARGS = [
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

/**
 * Starts Chromium with a fresh profile and opens the page.
 *
 * Options: `viewport` ({width, height}, default 1280×720), `deviceScaleFactor` (default 1),
 * `colorScheme` ("light" | "dark"), `url` (default PAGE_URL; add a #fragment for share links),
 * `waitForApp` (default true: wait until the wasm exports are on `globalThis.bandwright`),
 * `initScript` (a function or source text run in every page before the page's own scripts,
 * e.g. to remove a browser feature and check the browser-floor message).
 *
 * Returns an object with `browser context`, `page`, the records `requests` (URLs, in order, of
 * every page in the context), `consoleErrors` and `pageErrors` (texts), and the methods
 * `requestsBesidesPage()`, `problems()`, `screenshot(name)`, `newPage(url)` and `close()`.
 */
export async function openApp(options = {}) {
  await assertPageBuilt();
  const userDataDir = await mkdtemp(path.join(tmpdir(), "bandwright-chromium-"));
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath: CHROMIUM,
    args: CHROMIUM_ARGS,
    headless: true,
    viewport: options.viewport ?? { width: 1280, height: 720 },
    deviceScaleFactor: options.deviceScaleFactor ?? 1,
    colorScheme: options.colorScheme ?? "light",
    acceptDownloads: true,
  });
  const app = {
    context,
    page: null,
    userDataDir,
    requests: [],
    consoleErrors: [],
    pageErrors: [],

    /** Requests other than the page file itself (its URL with or without a fragment). */
    requestsBesidesPage() {
      return this.requests.filter((url) => url.split("#")[0] !== PAGE_URL);
    },

    /** Everything that should be empty on a healthy page, in one object for deepEqual. */
    problems() {
      return {
        requests: this.requestsBesidesPage(),
        consoleErrors: this.consoleErrors,
        pageErrors: this.pageErrors,
      };
    },

    /** Saves a full-page PNG as target/screenshots/<name>.png and returns its path. */
    async screenshot(name, page = this.page) {
      const safe = String(name).replace(/[^A-Za-z0-9._-]+/g, "-");
      await mkdir(SCREENSHOT_DIR, { recursive: true });
      const file = path.join(SCREENSHOT_DIR, `${safe}.png`);
      await page.screenshot({ path: file, fullPage: true });
      return file;
    },

    /** Opens another tab in the same profile (shared localStorage) at `url`. */
    async newPage(url = PAGE_URL, { waitForApp = true } = {}) {
      const page = await context.newPage();
      watchPage(this, page);
      await page.goto(url);
      if (waitForApp) await waitForBandwright(page);
      return page;
    },

    async close() {
      await context.close();
      await rm(userDataDir, { recursive: true, force: true });
    },
  };
  context.on("request", (request) => app.requests.push(request.url()));
  if (options.initScript) await context.addInitScript(options.initScript);
  const page = context.pages()[0] ?? (await context.newPage());
  watchPage(app, page);
  app.page = page;
  await page.goto(options.url ?? PAGE_URL);
  if (options.waitForApp ?? true) await waitForBandwright(page);
  return app;
}

/**
 * Waits until the page's bootstrap has started the wasm and published its exports, and the page
 * has finished its start (the mark "bw:started": app.js does what lies below the first plot in
 * the task after it).
 */
export async function waitForBandwright(page, timeoutMs = 10_000) {
  await page.waitForFunction(
    () => globalThis.bandwright !== undefined && performance.getEntriesByName("bw:started").length > 0,
    null,
    { timeout: timeoutMs },
  );
}

/** Throws a message with the build command when the page file is missing. */
export async function assertPageBuilt() {
  try {
    await stat(PAGE_FILE);
  } catch {
    throw new Error(
      `${PAGE_FILE} does not exist; build it first with: cargo run -p bandwright-build --release -- --no-open`,
    );
  }
}

function watchPage(app, page) {
  page.on("console", (message) => {
    if (message.type() === "error") {
      const where = message.location();
      app.consoleErrors.push(`${message.text()} (${where.url}:${where.lineNumber})`);
    }
  });
  page.on("pageerror", (error) => app.pageErrors.push(String(error?.stack ?? error)));
}

// ---------------------------------------------------------------- helpers the page tests share

/** Waits until the page has drawn its plot at least once and finished its start. */
export async function ready(page) {
  await page.waitForFunction(
    () => Number(document.getElementById("plot")?.dataset.draws) > 0 && performance.getEntriesByName("bw:started").length > 0,
    null,
    { timeout: 15_000 },
  );
}

/** How many times the plot has been drawn (app.js counts them on the canvas). */
export async function draws(page) {
  return Number(await page.locator("#plot").getAttribute("data-draws"));
}

/** Waits for a draw after the `after`-th. */
export async function nextDraw(page, after) {
  await page.waitForFunction((n) => Number(document.getElementById("plot").dataset.draws) > n, after);
}

/** The plot canvas as a data URL, to tell whether it changed. */
export async function plotImage(page) {
  return page.evaluate(() => document.getElementById("plot").toDataURL());
}

/** Replaces a field's text by typing, key by key, as a person would ("" empties it). */
export async function typeInto(page, selector, text) {
  const field = page.locator(selector);
  await field.click();
  await field.press("Control+A");
  if (text === "") await field.press("Backspace");
  else await field.pressSequentially(text);
}

/** The part values shown in the parts table, in order. */
export async function partValues(page) {
  return page.locator("#parts-body input").evaluateAll((inputs) => inputs.map((i) => i.value));
}
