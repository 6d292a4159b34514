// Measures the built page in headless Chromium (not a test; run `node tests/browser/measure.mjs`):
//   1. the size of dist/bandwright.html (target: under 1 MB);
//   2. the time from opening the file to the first drawn plot, from the performance mark
//      "bw:first-plot" that web/app.js sets after the first Session.draw (navigation start is 0),
//      median of several fresh opens (target: under 300 ms), with the medians of its steps from
//      the marks the bootstrap (web/build/src/bootstrap.js) and web/app.js set: the HTML read and
//      parsed up to the module ("bw:boot-start"), base64 ("bw:wasm-decoded"), gunzip and
//      WebAssembly.compileStreaming, which overlap ("bw:wasm-compiled"), initSync
//      ("bw:wasm-started"), wiring and opening the design ("bw:opened"), the first sweep
//      ("bw:first-swept"), the page's first style and layout ("bw:first-laid-out"), and the first
//      draw (to "bw:first-plot"); "bw:started" is when the work deferred
//      until after the first plot (the cards below it) is done;
//   3. the time from a keystroke in a part value to the redrawn plots at 500 sweep points: the
//      measure "bw:keystroke-to-plot" that web/app.js records from the key event's timestamp to
//      the end of Session.draw in the next animation frame, median of 30 keystrokes
//      (target: under 16 ms). The compute part alone (sweep + draw) is printed beside it.
// Options: --opens N (default 5), --keys N (default 30).

import { readFile, stat } from "node:fs/promises";
import { openApp, PAGE_FILE } from "./harness.mjs";

const args = process.argv.slice(2);
const option = (name, fallback) => {
  const at = args.indexOf(name);
  return at >= 0 ? Number(args[at + 1]) : fallback;
};
const OPENS = option("--opens", 5);
const KEYS = option("--keys", 30);

const median = (values) => {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
};
const ms = (value) => `${value.toFixed(1)} ms`;

async function firstPlotMs(app) {
  await app.page.waitForFunction(() => performance.getEntriesByName("bw:first-plot").length > 0, null, { timeout: 15_000 });
  await app.page.waitForFunction(() => performance.getEntriesByName("bw:started").length > 0, null, { timeout: 15_000 });
  return app.page.evaluate(() => {
    const at = (name) => performance.getEntriesByName(name)[0]?.startTime ?? NaN;
    return {
      firstPlot: at("bw:first-plot"),
      appStart: at("bw:app-start"),
      steps: {
        "to the module": at("bw:boot-start"),
        base64: at("bw:wasm-decoded") - at("bw:boot-start"),
        "gunzip and compile": at("bw:wasm-compiled") - at("bw:wasm-decoded"),
        initSync: at("bw:wasm-started") - at("bw:wasm-compiled"),
        "wiring and opening the design": at("bw:opened") - at("bw:wasm-started"),
        "first sweep": at("bw:first-swept") - at("bw:opened"),
        "first layout": at("bw:first-laid-out") - at("bw:first-swept"),
        "first draw": at("bw:first-plot") - at("bw:first-laid-out"),
        "deferred work done at": at("bw:started"),
      },
    };
  });
}

const breakdown = (opens) =>
  Object.keys(opens[0].steps)
    .map((step) => `${step} ${ms(median(opens.map((o) => o.steps[step])))}`)
    .join("; ");

const size = (await stat(PAGE_FILE)).size;
console.log(`file: ${PAGE_FILE}`);
console.log(`size: ${size} bytes = ${(size / 1000).toFixed(1)} KB (target under 1 MB = 1,000,000 bytes)`);

const opens = [];
for (let i = 0; i < OPENS; i++) {
  const app = await openApp();
  try {
    opens.push(await firstPlotMs(app));
  } finally {
    await app.close();
  }
}
console.log(
  `open to first plot: median ${ms(median(opens.map((o) => o.firstPlot)))} over ${OPENS} fresh opens ` +
    `(each: ${opens.map((o) => o.firstPlot.toFixed(0)).join(", ")} ms; module start at median ${ms(median(opens.map((o) => o.appStart)))}) ` +
    "(target under 300 ms)",
);
console.log(`  steps (medians): ${breakdown(opens)}`);

// The same file opened again in a browser that is already running (a reload): what a person
// sees on every open after the first, without the fresh profile's one-time costs.
{
  const app = await openApp();
  try {
    await firstPlotMs(app);
    const again = [];
    for (let i = 0; i < OPENS; i++) {
      await app.page.reload();
      again.push(await firstPlotMs(app));
    }
    console.log(
      `open again in a running browser (reload) to first plot: median ${ms(median(again.map((o) => o.firstPlot)))} over ${OPENS} ` +
        `(each: ${again.map((o) => o.firstPlot.toFixed(0)).join(", ")} ms; module start at median ${ms(median(again.map((o) => o.appStart)))})`,
    );
  } finally {
    await app.close();
  }
}

const app = await openApp();
try {
  const page = app.page;
  await firstPlotMs(app);
  // 500 points over four decades.
  for (const [id, text] of [["#grid-from", "10"], ["#grid-to", "100k"], ["#grid-points", "500"]]) {
    await page.fill(id, text);
  }
  await page.locator("#grid-points").press("Enter");
  await page.waitForTimeout(200);
  const field = page.locator("#part-0");
  await field.click();
  await field.press("Control+A");
  await field.pressSequentially("1");
  await page.waitForTimeout(100);
  await page.evaluate(() => performance.clearMeasures("bw:keystroke-to-plot"));
  // Each keystroke leaves a valid value: digits appended to a number, then Backspace, in turn.
  const keys = [];
  for (let i = 0; i < KEYS; i++) keys.push(i % 2 === 0 ? String((i / 2) % 9 + 1) : "Backspace");
  const compute = [];
  for (const [index, key] of keys.entries()) {
    await page.keyboard.press(key);
    await page.waitForFunction((n) => performance.getEntriesByName("bw:keystroke-to-plot").length >= n, index + 1);
    compute.push(await page.evaluate(() => performance.getEntriesByName("bw:redraw").at(-1)?.duration ?? NaN));
  }
  // The sweep really has 500 points: count the rows of the sweep CSV.
  const [download] = await Promise.all([page.waitForEvent("download"), page.click("#act-sweep-csv")]);
  const csv = await readFile(await download.path(), "utf8");
  const sweepRows = csv.trim().split(/\r?\n/).length - 1;
  const times = await page.evaluate(() => performance.getEntriesByName("bw:keystroke-to-plot").map((e) => e.duration));
  console.log(
    `keystroke to redrawn plots at ${sweepRows} points: median ${ms(median(times))} over ${times.length} keystrokes ` +
      `(min ${ms(Math.min(...times))}, max ${ms(Math.max(...times))}); sweep + draw alone: median ${ms(median(compute))} (target under 16 ms)`,
  );
  const problems = app.problems();
  if (problems.requests.length || problems.consoleErrors.length || problems.pageErrors.length) {
    console.log(`problems seen: ${JSON.stringify(problems)}`);
  }
} finally {
  await app.close();
}
