// ---- bandwright bootstrap (inserted by bandwright-build after the wasm-bindgen glue) ----
// Unpacks the inline wasm (gzip, base64, the text of the element the build names) with
// DecompressionStream, compiles it as it unpacks (WebAssembly.compileStreaming), starts it
// through the glue's `initSync`, and hands the glue's exports to the page code as the frozen
// object `bandwright` (also `globalThis.bandwright`, for tests and the console). Nothing is
// fetched.
// Performance marks time each step for tests/browser/measure.mjs: bw:boot-start, bw:wasm-decoded
// (base64), bw:wasm-compiled (gunzip and compile, overlapped), bw:wasm-started (initSync).
// When the feature check before this module found something missing, `bandwright` is null and
// the page code does not run. The compiled module stays in `bandwrightWasmModule`, so that the
// page can post it to Web Workers (a WebAssembly.Module is structured-cloneable).
let bandwrightWasmModule = null;
const bandwright = globalThis.bandwrightUnsupported ? null : await (async () => {
  try {
    performance.mark("bw:boot-start");
    // The packed wasm is the text of a non-running element before this module (as a string
    // literal in the module, V8 had to scan it too: about 14 ms more to the module's start,
    // measured in web/README.md). The build puts the element's id where the name stands.
    const holder = document.getElementById(BANDWRIGHT_WASM_ELEMENT_ID);
    if (holder === null) throw new Error("the page has lost its packed WebAssembly text; rebuild it with bandwright-build");
    const base64 = holder.textContent;
    // Native base64 decoding where the browser has it; otherwise one pass over atob's text
    // (Uint8Array.from with a mapping function was measured at about 80 ms here).
    let packed;
    if (typeof Uint8Array.fromBase64 === "function") {
      packed = Uint8Array.fromBase64(base64);
    } else {
      const text = atob(base64);
      packed = new Uint8Array(text.length);
      for (let i = 0; i < text.length; i += 1) packed[i] = text.charCodeAt(i);
    }
    performance.mark("bw:wasm-decoded");
    // The packed bytes are written straight into the decompressor (through a Blob's stream they
    // took a detour through the browser process), and the compiler reads the decompressor's
    // output as it comes, so unpacking and compiling overlap (measured in web/README.md). A
    // corrupt text makes the compile fail, which is reported; the writer's own promises then
    // reject too and are not needed.
    const inflate = new DecompressionStream("gzip");
    const writer = inflate.writable.getWriter();
    writer.write(packed).catch(() => {});
    writer.close().catch(() => {});
    const wasm = new Response(inflate.readable, { headers: { "Content-Type": "application/wasm" } });
    bandwrightWasmModule = await WebAssembly.compileStreaming(wasm);
    performance.mark("bw:wasm-compiled");
    initSync({ module: bandwrightWasmModule });
    performance.mark("bw:wasm-started");
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
