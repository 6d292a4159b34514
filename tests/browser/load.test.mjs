// The page opens as a person first sees it: the demo design drawn, nothing requested but the file,
// no console error, a policy that forbids connections, a label on every control, visible focus
// and full keyboard use, both colour themes, a phone-width layout, and the browser-floor message.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { openApp, ready } from "./harness.mjs";


/** Whether the plot canvas holds more than one colour (a drawn plot, not an empty surface). */
async function canvasIsDrawn(page) {
  return page.evaluate(() => {
    const canvas = document.getElementById("plot");
    const data = canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height).data;
    const first = data.slice(0, 4).join(",");
    for (let i = 4; i < data.length; i += 4 * 97) if (data.slice(i, i + 4).join(",") !== first) return true;
    return false;
  });
}

let app;
before(async () => {
  app = await openApp();
  await ready(app.page);
});
after(async () => {
  await app?.close();
});

test("first open shows the demo design with its plots, shortlist and parts, with no request and no error", async () => {
  const page = app.page;
  await page.waitForTimeout(400);
  assert.deepEqual(app.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
  assert.equal(await page.locator("#starting").isVisible(), false);
  assert.equal(await page.locator("#bandwright-unsupported").isVisible(), false);
  const name = await page.locator("#design-name").inputValue();
  assert.ok(name.length > 0, "the demo design has no name");
  const demoName = await page.evaluate(() => JSON.parse(globalThis.bandwright.demo_design()).name);
  assert.equal(name, demoName);
  const demoRefs = await page.evaluate(() => JSON.parse(globalThis.bandwright.demo_design()).elements.map((e) => e.ref));
  const shownRefs = await page.locator("#parts-body th").evaluateAll((cells) => cells.map((c) => c.firstChild.textContent));
  assert.deepEqual(shownRefs, demoRefs);
  assert.ok((await page.locator("#short-body tr").count()) >= 1, "the demo's shortlist is empty");
  assert.ok(await canvasIsDrawn(page), "the plot canvas is blank");
  assert.ok((await page.locator("#schematic line").count()) > 0, "the schematic has no wires");
  const cautions = await page.locator("#cautions dt").allTextContents();
  const expected = await page.evaluate(() => JSON.parse(globalThis.bandwright.cautions()).map((c) => c.title));
  assert.deepEqual(cautions, expected);
  assert.ok(cautions.length >= 4);
  await app.screenshot("page-light-1280x720");
});

test("the content security policy forbids every fetch and connection", async () => {
  const page = app.page;
  const policy = await page.locator('meta[http-equiv="Content-Security-Policy"]').getAttribute("content");
  assert.match(policy, /default-src 'none'/);
  assert.doesNotMatch(policy, /connect-src|'unsafe-eval'|https?:|\*/);
  assert.match(policy, /'wasm-unsafe-eval'/);
  const before = app.requestsBesidesPage().length;
  const outcome = await page.evaluate(async () => {
    const tries = {};
    try {
      await fetch(location.href.split("#")[0]);
      tries.fetch = "fetched";
    } catch {
      tries.fetch = "blocked";
    }
    try {
      const socket = new WebSocket("ws://127.0.0.1:9/");
      tries.socket = await new Promise((resolve) => {
        socket.onopen = () => resolve("open");
        socket.onerror = () => resolve("blocked");
      });
    } catch {
      tries.socket = "blocked";
    }
    return tries;
  });
  assert.deepEqual(outcome, { fetch: "blocked", socket: "blocked" });
  assert.equal(app.requestsBesidesPage().length, before, `requests went out: ${app.requestsBesidesPage()}`);
  // The refusals above are logged as console errors; they were ours, so forget them.
  app.consoleErrors.length = 0;
});

test("every control has a label, and focus is visible on each of them", async () => {
  const page = app.page;
  const unlabelled = await page.evaluate(() =>
    [...document.querySelectorAll("#app input, #app select, #app textarea, #app button, #app canvas[tabindex]")]
      .filter((control) => !control.closest("[hidden]"))
      .filter((control) => {
        if (control.getAttribute("aria-label") || control.getAttribute("aria-labelledby")) return false;
        if (control.labels && control.labels.length > 0 && control.labels[0].textContent.trim()) return false;
        if (control.tagName === "BUTTON" && control.textContent.trim()) return false;
        return true;
      })
      .map((control) => control.id || control.outerHTML.slice(0, 60)),
  );
  assert.deepEqual(unlabelled, []);
  // Walk the tab order from the top and check that every stop shows a focus outline.
  await page.evaluate(() => document.activeElement?.blur());
  await page.mouse.click(2, 2);
  const seen = [];
  for (let i = 0; i < 80; i++) {
    await page.keyboard.press("Tab");
    const stop = await page.evaluate(() => {
      const element = document.activeElement;
      const style = getComputedStyle(element);
      return { id: element.id, tag: element.tagName, outline: style.outlineStyle, width: parseFloat(style.outlineWidth) };
    });
    if (stop.tag === "BODY" || (seen.length > 0 && stop.id && stop.id === seen[0].id)) break;
    seen.push(stop);
    assert.ok(stop.outline !== "none" && stop.width >= 2, `no visible focus on #${stop.id}: ${JSON.stringify(stop)}`);
  }
  const ids = seen.map((stop) => stop.id);
  for (const expected of ["design-name", "act-save", "ask-cutoff", "ask-go", "plot", "part-0", "ab-keep"]) {
    assert.ok(ids.includes(expected), `Tab never reaches #${expected}: ${ids.join(" ")}`);
  }
});

test("the keyboard alone moves the plot cursor and fits a requirement", async () => {
  const page = app.page;
  const readout = () => page.locator("#readout").innerText();
  await page.locator("#plot").focus();
  await page.keyboard.press("ArrowRight");
  await page.waitForFunction(() => !/Point at the plots/.test(document.getElementById("readout").textContent));
  const first = await readout();
  assert.match(first, /f = [\d.]+ k?Hz/);
  await page.keyboard.press("Shift+ArrowRight");
  await page.waitForFunction((text) => document.getElementById("readout").innerText !== text, first, { timeout: 2000 });
  const second = await readout();
  assert.notEqual(second, first, "the readout did not follow the keyboard cursor");
  // Down moves to the next panel (phase).
  await page.keyboard.press("ArrowDown");
  await page.keyboard.press("ArrowDown");
  await page.waitForFunction(() => /phase/.test(document.getElementById("readout").textContent), null, { timeout: 2000 });
  // Order 5 of whatever the sentence holds: the fit's best design has more parts than the
  // order-3 one shown, one row per element.
  const rowsBefore = await page.locator("#parts-body tr").count();
  await page.locator("#ask-order").focus();
  await page.keyboard.press("Control+A");
  await page.keyboard.type("5");
  await page.keyboard.press("Enter");
  await page.waitForFunction((n) => document.querySelectorAll("#parts-body tr").length > n, rowsBefore);
  assert.equal(await page.locator("#short-body tr.chosen").count(), 1);
});

test("dark theme follows the system setting, for the page and the plots", async () => {
  const dark = await openApp({ colorScheme: "dark" });
  try {
    await ready(dark.page);
    const colours = await dark.page.evaluate(() => {
      const canvas = document.getElementById("plot");
      const pixel = canvas.getContext("2d").getImageData(2, 2, 1, 1).data;
      return { body: getComputedStyle(document.body).backgroundColor, plot: [...pixel.slice(0, 3)] };
    });
    const [r, g, b] = colours.body.match(/\d+/g).map(Number);
    assert.ok(r + g + b < 150, `page background is not dark: ${colours.body}`);
    assert.ok(colours.plot.every((channel) => channel < 80), `plot background is not dark: ${colours.plot}`);
    assert.deepEqual(dark.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
    await dark.screenshot("page-dark-1280x720");
  } finally {
    await dark.close();
  }
});

test("at phone width (390 px, 2× pixels) nothing overflows sideways and the plot is sharp", async () => {
  const phone = await openApp({ viewport: { width: 390, height: 844 }, deviceScaleFactor: 2 });
  try {
    await ready(phone.page);
    const layout = await phone.page.evaluate(() => {
      const canvas = document.getElementById("plot");
      return {
        scrollWidth: document.documentElement.scrollWidth,
        cssWidth: canvas.clientWidth,
        backingWidth: canvas.width,
      };
    });
    assert.ok(layout.scrollWidth <= 390, `the page scrolls sideways: ${layout.scrollWidth} px`);
    assert.ok(layout.cssWidth > 300, `the plot is too narrow: ${layout.cssWidth}`);
    assert.equal(layout.backingWidth, layout.cssWidth * 2, "the canvas backing store is not CSS size × devicePixelRatio");
    assert.deepEqual(phone.problems(), { requests: [], consoleErrors: [], pageErrors: [] });
    await phone.screenshot("page-phone-390");
  } finally {
    await phone.close();
  }
});

test("a browser without WebAssembly gets a plain message naming it", async () => {
  const old = await openApp({ waitForApp: false, initScript: () => delete globalThis.WebAssembly });
  try {
    const note = old.page.locator("#bandwright-unsupported");
    await note.waitFor({ state: "visible", timeout: 5000 });
    assert.match(await note.innerText(), /WebAssembly/);
    assert.equal(await old.page.locator("#app").isVisible(), false);
    assert.equal(await old.page.locator("#starting").isVisible(), false);
    await old.screenshot("floor-no-webassembly");
  } finally {
    await old.close();
  }
});
