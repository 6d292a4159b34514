// ---- bandwright bootstrap (inserted by bandwright-build after the wasm-bindgen glue) ----
// Unpacks the inline wasm (gzip, base64) with DecompressionStream, compiles and starts it through
// the glue's `initSync`, and hands the glue's exports to the page code as the frozen object
// `bandwright` (also `globalThis.bandwright`, for tests and the console). Nothing is fetched.
// When the feature check before this module found something missing, `bandwright` is null and
// the page code does not run. The compiled module stays in `bandwrightWasmModule`, so that the
// page can post it to Web Workers (a WebAssembly.Module is structured-cloneable).
let bandwrightWasmModule = null;
const bandwright = globalThis.bandwrightUnsupported ? null : await (async () => {
  try {
    // Native base64 decoding where the browser has it; otherwise one pass over atob's text
    // (Uint8Array.from with a mapping function was measured at about 80 ms here).
    // (The build puts the text where the name stands, so it is named once.)
    const base64 = BANDWRIGHT_WASM_GZ_BASE64;
    let packed;
    if (typeof Uint8Array.fromBase64 === "function") {
      packed = Uint8Array.fromBase64(base64);
    } else {
      const text = atob(base64);
      packed = new Uint8Array(text.length);
      for (let i = 0; i < text.length; i += 1) packed[i] = text.charCodeAt(i);
    }
    const stream = new Blob([packed]).stream().pipeThrough(new DecompressionStream("gzip"));
    const bytes = await new Response(stream).arrayBuffer();
    bandwrightWasmModule = await WebAssembly.compile(bytes);
    initSync({ module: bandwrightWasmModule });
  } catch (error) {
    const note = document.getElementById("bandwright-unsupported") ??
      document.body.insertBefore(document.createElement("p"), document.body.firstChild);
    note.setAttribute("role", "alert");
    note.textContent = `This page could not start its WebAssembly module in this browser: ${error}`;
    note.hidden = false;
    throw error;
  }
  const api = Object.freeze(BANDWRIGHT_EXPORTS);
  globalThis.bandwright = api;
  return api;
})();
