// The build tool's test page module: shows the wasm version() so a test can see that the
// module started and its exports are reachable, and draws the demo through a Session so the
// HiDPI canvas backend and the readout can be checked without the app's page.
document.getElementById("version").textContent = bandwright.version();
const canvas = document.getElementById("plot");
const started = performance.now();
const session = new bandwright.Session(bandwright.demo_design());
session.draw(canvas, "light");
const firstPlotMs = performance.now() - started;
globalThis.testPage = { session, canvas, firstPlotMs };
document.getElementById("timing").textContent = `first plot ${firstPlotMs.toFixed(1)} ms`;
