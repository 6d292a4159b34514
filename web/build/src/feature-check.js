// Browser floor check (inserted by bandwright-build as a classic script, before the page module).
// Written in ES5 so that an old browser can run it and show a plain message naming what is
// missing, instead of a blank page. Each byte list is a minimal WebAssembly module that uses one
// feature the Bandwright module needs; a browser without the feature rejects it.
(function () {
  "use strict";
  var missing = [];
  var probes = [
    ["sign-extension operators", [0, 97, 115, 109, 1, 0, 0, 0, 1, 6, 1, 96, 1, 127, 1, 127, 3, 2, 1, 0, 10, 7, 1, 5, 0, 32, 0, 192, 11]],
    ["non-trapping float-to-int conversions", [0, 97, 115, 109, 1, 0, 0, 0, 1, 6, 1, 96, 1, 125, 1, 127, 3, 2, 1, 0, 10, 8, 1, 6, 0, 32, 0, 252, 0, 11]],
    ["bulk memory operations", [0, 97, 115, 109, 1, 0, 0, 0, 1, 4, 1, 96, 0, 0, 3, 2, 1, 0, 5, 3, 1, 0, 1, 10, 14, 1, 12, 0, 65, 0, 65, 0, 65, 0, 252, 10, 0, 0, 11]],
    ["reference types", [0, 97, 115, 109, 1, 0, 0, 0, 1, 5, 1, 96, 0, 1, 111, 3, 2, 1, 0, 10, 6, 1, 4, 0, 208, 111, 11]],
    ["multi-value", [0, 97, 115, 109, 1, 0, 0, 0, 1, 6, 1, 96, 0, 2, 127, 127, 3, 2, 1, 0, 10, 8, 1, 6, 0, 65, 0, 65, 0, 11]],
    ["mutable globals", [0, 97, 115, 109, 1, 0, 0, 0, 2, 8, 1, 1, 97, 1, 98, 3, 127, 1]]
  ];
  if (typeof WebAssembly !== "object" || typeof WebAssembly.validate !== "function") {
    missing.push("WebAssembly");
  } else {
    for (var i = 0; i < probes.length; i++) {
      var valid = false;
      try {
        valid = WebAssembly.validate(new Uint8Array(probes[i][1]));
      } catch (e) {
        valid = false;
      }
      if (!valid) missing.push("WebAssembly " + probes[i][0]);
    }
  }
  if (typeof DecompressionStream !== "function") missing.push("DecompressionStream (gzip)");
  if (!("noModule" in document.createElement("script"))) missing.push("JavaScript modules");
  if (missing.length === 0) return;
  window.bandwrightUnsupported = missing;
  function show() {
    var note = document.getElementById("bandwright-unsupported");
    if (!note) {
      note = document.createElement("p");
      document.body.insertBefore(note, document.body.firstChild);
    }
    note.setAttribute("role", "alert");
    note.textContent =
      "This page cannot run in this browser. It needs: " + missing.join(", ") + ". " +
      "Use a current browser (for example Chromium-based 96 or newer, Firefox 113 or newer, Safari 16.4 or newer).";
    note.hidden = false;
  }
  if (document.body) show();
  else document.addEventListener("DOMContentLoaded", show);
})();
