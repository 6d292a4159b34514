// ---- bandwright tolerance worker (web/worker.js) ----
// The page builds a classic worker from a Blob of the wasm-bindgen glue (the same text as in the
// page's module script, written by the build without export keywords) followed by this script,
// so nothing is fetched. The page posts the compiled
// WebAssembly.Module it already has; the worker starts it with the glue's initSync, compiles a
// tolerance plan, and runs the trial ranges it is sent, posting each batch back as a
// transferable Float64Array. It draws nothing: plotting stays on the main thread.
//
// Messages in:  {kind: "start", module} | {kind: "plan", design, options} |
//               {kind: "trials", job, first, end} | {kind: "corners", job}
// Messages out: {kind: "ready"} | {kind: "planned"} | {kind: "batch", job, first, end, data} |
//               {kind: "error", job, message}
let workerPlanner = null;
self.onmessage = (event) => {
  const message = event.data;
  try {
    if (message.kind === "start") {
      initSync({ module: message.module });
      self.postMessage({ kind: "ready" });
    } else if (message.kind === "plan") {
      if (workerPlanner) workerPlanner.free();
      workerPlanner = new TolerancePlanner(message.design, message.options);
      self.postMessage({ kind: "planned" });
    } else if (message.kind === "trials" || message.kind === "corners") {
      const data = message.kind === "trials"
        ? workerPlanner.run_trials(message.first, message.end)
        : workerPlanner.run_corners();
      self.postMessage({ kind: "batch", job: message.job, first: message.first, end: message.end, data }, [data.buffer]);
    }
  } catch (error) {
    self.postMessage({ kind: "error", job: message.job, message: error instanceof Error ? error.message : String(error) });
  }
};
