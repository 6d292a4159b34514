// Bandwright page module: wiring only. Every number shown, drawn or stepped comes from the wasm
// exports (the Rust core and plot layer); this file moves text and JSON between them and the DOM.
// It never writes HTML from data: text goes in through textContent and value, SVG is built with
// createElementNS. The build (web/build) puts this module after the wasm-bindgen glue and the
// bootstrap, which binds the exports to `bandwright` (null when the browser floor check found a
// missing feature; the check has then shown its message). See web/README.md.

const api = typeof bandwright === "undefined" ? globalThis.bandwright : bandwright;

/** Where the working state is kept between visits. */
const STORE_KEY = "bandwright.workspace.v1";
/** The E-series the requirement offers (IEC 60063). */
const SERIES = ["E3", "E6", "E12", "E24", "E48", "E96", "E192"];
/** The value of the series select that means "my stock list". */
const STOCK = "stock";
/** The names under which stock-list texts travel in the fit request. */
const STOCK_NAMES = { resistors: "resistor-stock", capacitors: "capacitor-stock", inductors: "inductor-stock" };
/** Per part kind: the quantity for parse/format, and the requirement field of its series. */
const KINDS = {
  resistor: { quantity: "resistance", series: "resistors", word: "resistor" },
  capacitor: { quantity: "capacitance", series: "capacitors", word: "capacitor" },
  inductor: { quantity: "inductance", series: "inductors", word: "inductor" },
};
/** Largest design file the page reads, in bytes. */
const MAX_FILE_BYTES = 4 * 1024 * 1024;
/** How many replaced designs Undo remembers. */
const UNDO_DEPTH = 40;

const $ = (id) => document.getElementById(id);
const SVG_NS = "http://www.w3.org/2000/svg";

const state = {
  fit: null, // the last FitResult JSON object, or null
  chosen: -1, // which alternative the working design came from, -1 when none
  design: null, // the working design (A), a design-file object
  adopted: null, // element values when the design was adopted, by ref, to mark edits
  ideal: null, // the ideal-value design drawn dashed, or null
  variant: null, // the kept design (B), or null
  grid: null, // {from, to, points} as typed, or null for the session's own grid
  undo: [],
  cursor: null, // {x, y} in CSS px on the plot canvas
};
let session = null;
let started = false;

performance.mark("bw:app-start");

// ---------------------------------------------------------------- start and restore

function start() {
  const dark = matchMedia("(prefers-color-scheme: dark)");
  dark.addEventListener("change", () => redraw({ report: true }));

  fillSeriesSelects();
  fillCautions();
  $("version").textContent = api.version();
  $("r-version").textContent = api.version();

  wireRequirement();
  wireParts();
  wirePlot();
  wireGrid();
  wireKeepAndShare();
  wireTime();
  wireMask();
  wireFrontEnd();

  const restored = restoreWorkspace();
  let link = null;
  if (location.hash.length > 1) link = readLinkFromHash();

  let demo = false;
  if (link && link.design) {
    // Undo can put back the autosaved work that the link replaced.
    openDesign(link.design, "Opened the design from the link.", { undo: restored });
  } else if (!restored) {
    openDemo();
    demo = true;
  }
  if (link && link.error) showLinkError(link.error);
  if (link) dropHash();

  $("starting").hidden = true;
  $("app").hidden = false;
  started = true;
  // The first plot now, not a frame later; the demo's shortlist and ideal follow in the next task.
  frame();
  if (demo) setTimeout(fitDemo, 0);
  new ResizeObserver(() => redraw({})).observe($("plot"));
  window.addEventListener("hashchange", onHashChange);
  window.addEventListener("beforeprint", refreshReport);
  window.addEventListener("pagehide", saveWorkspace);
  matchMedia("print").addEventListener("change", (event) => event.matches && refreshReport());
  performance.mark("bw:ready");
}

function showStartFailure(error) {
  const note = $("bandwright-unsupported");
  note.setAttribute("role", "alert");
  note.textContent = `Bandwright could not start: ${errorText(error)}. Reload the page; if this stays, open the file in a current browser.`;
  note.hidden = false;
  $("starting").hidden = true;
  if (!started) $("app").hidden = true;
}

/** Opens the demo: our own sensor anti-aliasing front end (its shortlist comes from fitDemo). */
function openDemo() {
  writeRequest(JSON.parse(api.demo_request()));
  adopt(JSON.parse(api.check_design(api.demo_design())), { ideal: null, chosen: -1, undo: false });
  renderShortlist();
}

/** Fits the demo's request for the shortlist and the ideal curve, unless work has moved on. */
function fitDemo() {
  let fit;
  try {
    fit = normaliseFit(JSON.parse(api.fit(api.demo_request())));
  } catch (error) {
    showAskError(errorText(error));
    return;
  }
  if (state.fit) return;
  state.fit = fit;
  // The demo is the fit's best alternative under its own name and note.
  const chosen = fit.alternatives.findIndex((alt) => sameCircuit(alt.design, state.design));
  state.ideal = fit.ideal_design;
  session.set_ideal(JSON.stringify(fit.ideal_design));
  state.chosen = chosen;
  renderShortlist();
  renderParts();
  renderAssumptions();
  redraw({ sweep: true, report: true });
  saveSoon();
}

function restoreWorkspace() {
  let saved;
  try {
    const text = localStorage.getItem(STORE_KEY);
    if (!text) return false;
    saved = JSON.parse(text);
  } catch {
    return false;
  }
  if (!saved || saved.format !== "bandwright-workspace" || saved.version !== 1) return false;
  let design;
  try {
    design = JSON.parse(api.check_design(JSON.stringify(saved.design)));
  } catch (error) {
    notice(`The design saved in this browser could not be read (${errorText(error)}); the demo is shown instead.`);
    return false;
  }
  if (saved.sentence) writeSentence(saved.sentence);
  state.fit = saved.fit && Array.isArray(saved.fit.alternatives) ? saved.fit : null;
  state.grid = saved.grid || null;
  writeGrid(state.grid);
  const ideal = saved.ideal ? checkedOrNull(saved.ideal) : null;
  const chosen = state.fit && Number.isInteger(saved.chosen) && saved.chosen < state.fit.alternatives.length ? saved.chosen : -1;
  adopt(design, { ideal, chosen, undo: false, adopted: saved.adopted });
  if (saved.variant) {
    const variant = checkedOrNull(saved.variant);
    if (variant) keepVariantFrom(variant);
  }
  renderShortlist();
  restoreExtras(saved);
  notice("Restored the design you were working on.");
  return true;
}

function checkedOrNull(design) {
  try {
    return JSON.parse(api.check_design(JSON.stringify(design)));
  } catch {
    return null;
  }
}

let saveTimer = 0;
function saveSoon() {
  clearTimeout(saveTimer);
  saveTimer = setTimeout(saveWorkspace, 250);
}

function saveWorkspace() {
  if (!state.design) return;
  const saved = {
    format: "bandwright-workspace",
    version: 1,
    sentence: readSentence(),
    fit: state.fit,
    chosen: state.chosen,
    design: state.design,
    adopted: state.adopted,
    ideal: state.ideal,
    variant: state.variant,
    grid: state.grid,
    ...extrasForSave(),
  };
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify(saved));
  } catch {
    // Storage full or refused (private mode): the page keeps working without autosave.
  }
}

// ---------------------------------------------------------------- the working design

/**
 * Makes `design` the working design (A). Options: `ideal` (design or null; left as is when
 * absent), `chosen` (alternative index), `undo` (remember the previous design; default true),
 * `adopted` (the reference values that mark edits; default: the design's own).
 */
function adopt(design, options = {}) {
  const json = JSON.stringify(design);
  if (!session) {
    session = new api.Session(json);
  } else {
    try {
      session.set_design(json);
    } catch (error) {
      // Only checked designs come here; should one still be refused, the working design stays.
      notice(`That design could not be used: ${errorText(error)}. The working design is unchanged.`);
      return;
    }
    if (options.undo !== false) pushUndo();
  }
  state.design = design;
  state.adopted = options.adopted || valuesByRef(design);
  if ("ideal" in options) {
    state.ideal = options.ideal;
    session.set_ideal(options.ideal ? JSON.stringify(options.ideal) : null);
  }
  state.chosen = options.chosen ?? -1;
  applyGrid();
  renderDesign();
  redraw({ sweep: true, report: true });
  saveSoon();
}

function valuesByRef(design) {
  const values = {};
  for (const element of design.elements) if (element.kind in KINDS) values[element.ref] = element.value;
  return values;
}

/** Opens a checked design from a file or a link; it has no ideal and no alternative. */
function openDesign(design, message, options = {}) {
  adopt(design, { ideal: null, chosen: -1, undo: options.undo });
  renderShortlist();
  notice(message, options.undo !== false);
}

/** Passes a fit's designs through the core's reader, so that they are written as files are. */
function normaliseFit(result) {
  for (const alt of result.alternatives || []) alt.design = JSON.parse(api.check_design(JSON.stringify(alt.design)));
  if (result.ideal_design) result.ideal_design = JSON.parse(api.check_design(JSON.stringify(result.ideal_design)));
  return result;
}

/** Whether two designs are the same circuit (names and notes aside). */
function sameCircuit(a, b) {
  const circuit = (design) => JSON.stringify([design.source, design.load, design.output, design.elements]);
  return circuit(a) === circuit(b);
}

function pushUndo() {
  if (!state.design) return;
  state.undo.push({ design: structuredClone(state.design), ideal: state.ideal, chosen: state.chosen, adopted: state.adopted });
  if (state.undo.length > UNDO_DEPTH) state.undo.shift();
  $("act-undo").disabled = false;
}

function undo() {
  const previous = state.undo.pop();
  $("act-undo").disabled = state.undo.length === 0;
  if (!previous) return;
  adopt(previous.design, { ideal: previous.ideal, chosen: previous.chosen, undo: false, adopted: previous.adopted });
  renderShortlist();
  notice("Put back the previous design.");
}

function renderDesign() {
  const name = state.design.name;
  const nameInput = $("design-name");
  if (nameInput.value !== name) nameInput.value = name;
  document.title = name ? `${name} · Bandwright` : "Bandwright";
  $("design-note").textContent = state.design.note || "";
  $("design-note").hidden = !state.design.note;
  renderParts();
  renderSchematic();
  renderAssumptions();
  markChosen();
}

// ---------------------------------------------------------------- the requirement sentence

function fillSeriesSelects() {
  for (const select of document.querySelectorAll("#ask-resistors, #ask-capacitors, #ask-inductors")) {
    for (const name of SERIES) select.append(new Option(name, name));
    select.append(new Option("my stock list", STOCK));
  }
}

function wireRequirement() {
  const form = $("ask-form");
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    findParts();
  });
  form.addEventListener("input", (event) => {
    if (event.target.matches("input, textarea")) clearFieldError(event.target);
  });
  form.addEventListener("change", (event) => {
    const target = event.target;
    if (target.id === "ask-response") defaultTarget();
    if (target.matches("select")) clearFieldError(target);
    updateSentence();
    if (target.matches("#ask-resistors, #ask-capacitors, #ask-inductors, textarea")) renderParts();
    saveSoon();
  });
  updateSentence();
}

/** Band-pass and band-stop are usually stated by their edges, the others by a cutoff. */
function defaultTarget() {
  const response = $("ask-response").value;
  const target = $("ask-target");
  if ((response === "bandpass" || response === "bandstop") && target.value === "cutoff") target.value = "band";
  if ((response === "lowpass" || response === "highpass") && target.value === "band") target.value = "cutoff";
}

/** Shows the parts of the sentence that apply to the current choices. */
function updateSentence() {
  const choices = {
    alignment: $("ask-alignment").value,
    target: $("ask-target").value,
    topology: $("ask-topology").value,
  };
  // A slot shows when every data-when-<choice> it carries lists the current value of that choice.
  for (const slot of $("ask-form").querySelectorAll(".slot")) {
    const conditions = Object.entries(choices).filter(([key]) => slot.hasAttribute(`data-when-${key}`));
    if (conditions.length === 0) continue;
    slot.hidden = !conditions.every(([key, value]) => slot.getAttribute(`data-when-${key}`).split(" ").includes(value));
  }
  for (const select of document.querySelectorAll("select[data-stock]")) {
    $(`${select.dataset.stock}-box`).hidden = select.value !== STOCK;
  }
}

/** The FitRequest for the core, every field as typed (null when empty or not applicable). */
function readRequest() {
  const text = (id) => {
    const value = $(id).value.trim();
    return value === "" ? null : value;
  };
  const alignment = $("ask-alignment").value;
  const target = $("ask-target").value;
  const topology = $("ask-topology").value;
  const stock = {};
  const series = (field) => {
    const select = $(`ask-${field}`);
    if (select.value !== STOCK) return select.value;
    stock[STOCK_NAMES[field]] = $(select.dataset.stock).value;
    return STOCK_NAMES[field];
  };
  return {
    response: $("ask-response").value,
    alignment: target === "f0q" ? null : alignment,
    ripple: alignment === "chebyshev" && target !== "f0q" ? text("ask-ripple") : null,
    bessel_norm: alignment === "bessel" && target !== "f0q" ? $("ask-bessel-norm").value : null,
    order: text("ask-order"),
    cutoff: target === "cutoff" ? text("ask-cutoff") : null,
    f0: target === "f0q" ? text("ask-f0") : null,
    q: target === "f0q" ? text("ask-q") : null,
    low: target === "band" ? text("ask-low") : null,
    high: target === "band" ? text("ask-high") : null,
    source: text("ask-source"),
    load: text("ask-load"),
    load_capacitance: text("ask-load-capacitance"),
    topology,
    first: (topology === "ladder" || topology === "rlc") && $("ask-first").value ? $("ask-first").value : null,
    resistors: series("resistors"),
    capacitors: series("capacitors"),
    inductors: series("inductors"),
    alternatives: text("ask-alternatives"),
    r_min: text("ask-r-min"),
    r_max: text("ask-r-max"),
    combine: $("ask-combine").value === "pairs",
    stock,
  };
}

/** Fills the sentence from a FitRequest (e.g. the demo's). */
function writeRequest(request) {
  const set = (id, value) => {
    if (value !== null && value !== undefined) $(id).value = String(value);
  };
  const squash = (text) => String(text).toLowerCase().replace(/[\s_-]/g, "");
  const choose = (id, value) => {
    if (value === null || value === undefined) return;
    const select = $(id);
    const option = [...select.options].find((o) => squash(o.value) === squash(value));
    if (option) select.value = option.value;
  };
  choose("ask-response", request.response);
  choose("ask-alignment", request.alignment);
  set("ask-ripple", request.ripple);
  choose("ask-bessel-norm", request.bessel_norm);
  set("ask-order", request.order);
  set("ask-cutoff", request.cutoff);
  set("ask-f0", request.f0);
  set("ask-q", request.q);
  set("ask-low", request.low);
  set("ask-high", request.high);
  $("ask-target").value = request.f0 || request.q ? "f0q" : request.low || request.high ? "band" : "cutoff";
  set("ask-source", request.source);
  set("ask-load", request.load);
  set("ask-load-capacitance", request.load_capacitance);
  choose("ask-topology", request.topology);
  choose("ask-first", request.first);
  for (const field of ["resistors", "capacitors", "inductors"]) {
    const name = request[field];
    if (!name) continue;
    const select = $(`ask-${field}`);
    const stockText = request.stock && request.stock[name];
    if (typeof stockText === "string") {
      select.value = STOCK;
      $(select.dataset.stock).value = stockText;
    } else {
      const known = SERIES.find((s) => s.toLowerCase() === String(name).toLowerCase());
      if (known) select.value = known;
    }
  }
  $("ask-combine").value = request.combine ? "pairs" : "single";
  set("ask-alternatives", request.alternatives);
  set("ask-r-min", request.r_min);
  set("ask-r-max", request.r_max);
  updateSentence();
}

/** Every control of the sentence, by id, for autosave (hidden ones keep what was typed). */
function readSentence() {
  const values = {};
  for (const control of $("ask-form").querySelectorAll("input, select, textarea")) if (control.id) values[control.id] = control.value;
  return values;
}

function writeSentence(values) {
  for (const control of $("ask-form").querySelectorAll("input, select, textarea")) {
    if (!control.id || typeof values[control.id] !== "string") continue;
    if (control.tagName === "SELECT" && ![...control.options].some((o) => o.value === values[control.id])) continue;
    control.value = values[control.id];
  }
  updateSentence();
}

function findParts() {
  clearAskErrors();
  const request = readRequest();
  let result;
  try {
    result = normaliseFit(JSON.parse(api.fit(JSON.stringify(request))));
  } catch (error) {
    showAskError(errorText(error));
    return false;
  }
  if (!result.alternatives || result.alternatives.length === 0) {
    showAskError("the fit found no alternative within the stated ranges; widen the resistor range or the series");
    return false;
  }
  state.fit = result;
  adopt(result.alternatives[0].design, { ideal: result.ideal_design, chosen: 0 });
  renderShortlist();
  const count = result.alternatives.length;
  notice(`Found ${count} alternative${count === 1 ? "" : "s"}; the best is in use.`, true);
  return true;
}

function clearAskErrors() {
  for (const control of $("ask-form").querySelectorAll("[aria-invalid]")) clearFieldError(control);
  $("ask-msg").hidden = true;
  $("ask-msg").textContent = "";
}

/** Puts a fit error at its field when it names one (`field <name>: ...`), else under the sentence. */
function showAskError(message) {
  const { field, text } = splitFieldMessage(message);
  const keep = ". The working design is unchanged.";
  if (field) {
    const candidates = [...$("ask-form").querySelectorAll(`[data-field="${CSS.escape(field)}"]`)];
    const visible = candidates.filter((control) => isShown(control));
    const control = visible.find((c) => c.tagName === "TEXTAREA") || visible[0];
    if (control) {
      setFieldError(control, text + keep);
      control.focus();
      return;
    }
  }
  const box = $("ask-msg");
  box.textContent = (field ? `${field.replace(/_/g, " ")}: ${text}` : message) + keep;
  box.hidden = false;
}

function isShown(element) {
  return !element.closest("[hidden]");
}

function splitFieldMessage(message) {
  const match = /^field ([a-z_]+): ([\s\S]*)$/.exec(message);
  return match ? { field: match[1], text: match[2] } : { field: null, text: message };
}

// ---------------------------------------------------------------- field messages

function setFieldError(control, text) {
  control.setAttribute("aria-invalid", "true");
  let message = $(`${control.id}-msg`);
  if (!message) {
    message = document.createElement("span");
    message.id = `${control.id}-msg`;
    message.className = "msg field-msg";
    message.setAttribute("role", "alert");
    // In the sentence the message goes under the phrase that holds the field (a phrase does not
    // wrap, a message must); in a table cell, right under the field.
    let anchor = control.closest(".sentence .slot, .stock") || control.closest(".v, .pick") || control;
    const next = anchor.nextElementSibling;
    if (next && next.classList.contains("slot") && /^[,.;]$/.test(next.textContent.trim())) anchor = next;
    anchor.after(message);
  }
  message.textContent = text;
  const described = (control.getAttribute("aria-describedby") || "").split(" ").filter(Boolean);
  if (!described.includes(message.id)) control.setAttribute("aria-describedby", [...described, message.id].join(" "));
}

function clearFieldError(control) {
  if (!control.hasAttribute("aria-invalid")) return;
  control.removeAttribute("aria-invalid");
  const message = $(`${control.id}-msg`);
  if (message) message.remove();
  const described = (control.getAttribute("aria-describedby") || "").split(" ").filter((id) => id && id !== `${control.id}-msg`);
  if (described.length) control.setAttribute("aria-describedby", described.join(" "));
  else control.removeAttribute("aria-describedby");
}

function errorText(error) {
  if (error instanceof Error) return error.message;
  return String(error);
}

let noticeTimer = 0;
function notice(text, withUndo = false) {
  const bar = $("notice");
  bar.replaceChildren(document.createTextNode(text));
  if (withUndo && state.undo.length) {
    const button = document.createElement("button");
    button.type = "button";
    button.id = "notice-undo";
    button.textContent = "Undo";
    button.addEventListener("click", undo);
    bar.append(button);
  }
  bar.hidden = false;
  clearTimeout(noticeTimer);
  noticeTimer = setTimeout(() => {
    if (!bar.contains(document.activeElement)) bar.hidden = true;
  }, 9000);
}

// ---------------------------------------------------------------- shortlist

function renderShortlist() {
  const body = $("short-body");
  body.replaceChildren();
  const fit = state.fit;
  $("short").hidden = !fit;
  $("short-empty").hidden = Boolean(fit);
  $("short-objective").textContent = fit ? fit.objective || "" : "";
  $("short-sub").textContent = fit ? `· best first, ${fit.alternatives.length}` : "";
  if (!fit) return;
  const secondOrder = fit.alternatives.some((alt) => alt.f0_error_pct !== null && alt.f0_error_pct !== undefined);
  $("short-err-a").textContent = secondOrder ? "f0 err" : "cutoff err";
  $("short-err-b").textContent = "Q err";
  fit.alternatives.forEach((alt, index) => {
    const row = document.createElement("tr");
    row.dataset.index = String(index);
    const use = document.createElement("td");
    const radio = document.createElement("input");
    radio.type = "radio";
    radio.name = "alternative";
    radio.id = `alt-${index}`;
    radio.value = String(index);
    const label = document.createElement("label");
    label.htmlFor = radio.id;
    label.textContent = ` #${index + 1}`;
    use.append(radio, label);
    const parts = document.createElement("td");
    parts.className = "part-list";
    parts.textContent = alt.parts.map(describeFittedPart).join(", ");
    row.append(use, parts, numberCell(secondOrder ? alt.f0_error_pct : alt.cutoff_error_pct, "%"), numberCell(alt.q_error_pct, "%"), numberCell(alt.max_response_deviation_db, "dB"));
    radio.addEventListener("change", () => chooseAlternative(index));
    row.addEventListener("click", (event) => {
      if (event.target !== radio && event.target.tagName !== "LABEL") {
        radio.checked = true;
        chooseAlternative(index);
      }
    });
    body.append(row);
  });
  markChosen();
}

function describeFittedPart(part) {
  return `${part.ref} ${describeFittedValue(part)}`;
}

/** A fitted value as bought: one part, or a pair in series (+) or parallel (∥). */
function describeFittedValue(part) {
  const quantity = (KINDS[part.kind] || {}).quantity || "ratio";
  return Array.isArray(part.chosen_parts) && part.chosen_parts.length > 1
    ? part.chosen_parts.map((v) => formatShort(v, quantity)).join(part.arrangement === "parallel" ? " ∥ " : " + ")
    : formatShort(part.chosen_value, quantity);
}

/** A percentage or dB figure from the core, written with a sign and three significant digits. */
function numberCell(value, unit) {
  const cell = document.createElement("td");
  cell.className = "num";
  cell.textContent = value === null || value === undefined ? "—" : `${signedFigure(value)} ${unit}`;
  return cell;
}

// Made on first use: building a number format loads locale data, which would delay the first plot.
let figureFormat = null;
function signedFigure(value) {
  figureFormat ||= new Intl.NumberFormat("en", { maximumSignificantDigits: 3, signDisplay: "exceptZero" });
  return figureFormat.format(value).replace("-", "−");
}

function chooseAlternative(index) {
  if (!state.fit || index === state.chosen) return;
  const alt = state.fit.alternatives[index];
  adopt(alt.design, { ideal: state.fit.ideal_design, chosen: index });
  notice(`Using alternative #${index + 1}.`, true);
}

function markChosen() {
  for (const row of $("short-body").rows) {
    const chosen = Number(row.dataset.index) === state.chosen;
    row.classList.toggle("chosen", chosen);
    const radio = row.querySelector("input[type=radio]");
    if (radio) radio.checked = chosen;
  }
}

// ---------------------------------------------------------------- parts

function wireParts() {
  const body = $("parts-body");
  body.addEventListener("input", onPartInput);
  body.addEventListener("keydown", onPartKey);
  body.addEventListener("focusin", (event) => {
    if (event.target.matches("input")) event.target.dataset.before = JSON.stringify(state.design);
  });
  body.addEventListener("change", onPartCommit);
}

function renderParts() {
  const body = $("parts-body");
  const focusedRef = document.activeElement && document.activeElement.closest && document.activeElement.closest("#parts-body")
    ? document.activeElement.dataset.ref : null;
  body.replaceChildren();
  const alt = state.fit && state.chosen >= 0 ? state.fit.alternatives[state.chosen] : null;
  state.design.elements.forEach((element, index) => {
    const row = document.createElement("tr");
    const ref = document.createElement("th");
    ref.scope = "row";
    ref.textContent = element.ref;
    const kind = document.createElement("span");
    kind.className = "kind";
    const info = KINDS[element.kind];
    kind.textContent = info ? info.word : element.kind.replace(/_/g, " ");
    ref.append(kind);
    const valueCell = document.createElement("td");
    const seriesCell = document.createElement("td");
    const fittedCell = document.createElement("td");
    fittedCell.className = "fitted";
    if (info) {
      const label = document.createElement("label");
      label.className = "vh";
      label.htmlFor = `part-${index}`;
      label.textContent = `Value of ${element.ref}`;
      const input = document.createElement("input");
      input.type = "text";
      input.id = `part-${index}`;
      input.dataset.ref = element.ref;
      input.dataset.index = String(index);
      input.dataset.quantity = info.quantity;
      input.autocomplete = "off";
      input.spellcheck = false;
      input.value = formatValue(element.value, info.quantity);
      valueCell.append(label, input);
      if (element.series_resistance !== undefined && element.series_resistance !== null) {
        const extra = document.createElement("span");
        extra.className = "kind";
        extra.textContent = `${element.kind === "capacitor" ? "ESR" : "DCR"} ${formatValue(element.series_resistance, "resistance")}`;
        valueCell.append(extra);
      }
      const edited = document.createElement("span");
      edited.className = "edited";
      valueCell.append(edited);
      markEdited(input, element);
      seriesCell.textContent = seriesLabel(info.series);
      // A pair is written as two elements, e.g. C1a and C1b for the fitted part C1.
      const fitted = alt && alt.parts.find((part) => part.ref === element.ref || (element.ref.length === part.ref.length + 1 && element.ref.startsWith(part.ref)));
      fittedCell.textContent = fitted
        ? `${fitted.ref === element.ref ? "" : `${fitted.ref} = `}${describeFittedValue(fitted)} / ${formatShort(fitted.ideal_value, info.quantity)}`
        : "—";
    } else {
      valueCell.textContent = describeOtherElement(element);
      seriesCell.textContent = "—";
      fittedCell.textContent = "—";
    }
    row.append(ref, valueCell, seriesCell, fittedCell);
    body.append(row);
  });
  if (focusedRef !== null) {
    const again = [...body.querySelectorAll("input")].find((input) => input.dataset.ref === focusedRef);
    if (again) again.focus();
  }
  $("parts-ends").textContent = describeEnds(state.design);
}

function describeOtherElement(element) {
  if (element.kind === "vcvs") return `gain ${formatValue(element.gain, "ratio")}`;
  if (element.value !== undefined) return formatValue(element.value, "ratio");
  return "";
}

function describeEnds(design) {
  const load = describeLoad(design);
  return `Between a source of ${formatValue(design.source.resistance, "resistance")} and ${load ? `a load of ${load}` : "an open output"}, output at node “${design.output}”.`;
}

/** The load as "R ∥ C", or "" for an open output. */
function describeLoad(design) {
  if (!design.load) return "";
  const present = (value) => value !== undefined && value !== null;
  return [
    present(design.load.resistance) ? formatValue(design.load.resistance, "resistance") : null,
    present(design.load.capacitance) ? formatValue(design.load.capacitance, "capacitance") : null,
  ].filter(Boolean).join(" ∥ ");
}

function seriesLabel(field) {
  const select = $(`ask-${field}`);
  return select.value === STOCK ? "stock list" : select.value;
}

/** The series `step_value` walks for a part kind: an E-series name or the stock-list text. */
function seriesFor(field) {
  const select = $(`ask-${field}`);
  return select.value === STOCK ? $(select.dataset.stock).value : select.value;
}

function elementOf(input) {
  return state.design.elements[Number(input.dataset.index)];
}

function onPartInput(event) {
  const input = event.target;
  if (!input.matches("input[data-ref]")) return;
  let value;
  try {
    value = api.parse_value(input.value, input.dataset.quantity);
  } catch (error) {
    showPartError(input, errorText(error));
    return;
  }
  applyPartValue(input, value, event.timeStamp);
}

function onPartKey(event) {
  const input = event.target;
  if (!input.matches("input[data-ref]")) return;
  if (event.key !== "ArrowUp" && event.key !== "ArrowDown") return;
  event.preventDefault();
  const element = elementOf(input);
  const field = KINDS[element.kind].series;
  let next;
  try {
    next = api.step_value(element.value, seriesFor(field), event.key === "ArrowUp" ? 1 : -1);
  } catch (error) {
    showPartError(input, errorText(error));
    return;
  }
  input.value = formatValue(next, input.dataset.quantity);
  applyPartValue(input, next, event.timeStamp);
  onPartCommit(event);
}

function applyPartValue(input, value, since) {
  const element = elementOf(input);
  try {
    session.set_part(element.ref, value);
  } catch (error) {
    showPartError(input, errorText(error));
    return;
  }
  clearFieldError(input);
  element.value = value;
  markEdited(input, element);
  redraw({ sweep: true, since, schematic: true, report: true });
  saveSoon();
}

/** Shows "edited, was …" under a part whose value differs from the fitted or opened one. */
function markEdited(input, element) {
  const mark = input.parentElement.querySelector(".edited");
  const adopted = state.adopted ? state.adopted[element.ref] : undefined;
  const edited = adopted !== undefined && adopted !== element.value;
  mark.hidden = !edited;
  mark.textContent = edited ? `edited, was ${formatValue(adopted, input.dataset.quantity)}` : "";
}

function showPartError(input, text) {
  const element = elementOf(input);
  setFieldError(input, `${text}. The plots keep ${formatValue(element.value, input.dataset.quantity)}.`);
}

/** On leaving a field (or after a step): tidy the text, update the table, remember for Undo. */
function onPartCommit(event) {
  const input = event.target;
  if (!input.matches("input[data-ref]")) return;
  const before = input.dataset.before;
  const now = JSON.stringify(state.design);
  if (before && before !== now) {
    state.undo.push({ design: JSON.parse(before), ideal: state.ideal, chosen: state.chosen, adopted: state.adopted });
    if (state.undo.length > UNDO_DEPTH) state.undo.shift();
    $("act-undo").disabled = false;
    input.dataset.before = now;
  }
  if (event.type === "change" && !input.hasAttribute("aria-invalid")) {
    renderParts();
    renderAssumptions();
  }
}

// ---------------------------------------------------------------- schematic

let schematicPending = false;
function renderSchematicSoon() {
  if (schematicPending) return;
  schematicPending = true;
  requestAnimationFrame(() => {
    schematicPending = false;
    renderSchematic();
  });
}

function renderSchematic() {
  const svg = $("schematic");
  const caption = $("circuit-caption");
  svg.replaceChildren();
  let drawing;
  try {
    drawing = JSON.parse(api.schematic(JSON.stringify(state.design)));
  } catch (error) {
    caption.textContent = `No drawing for this circuit: ${errorText(error)}`;
    return;
  }
  const items = Array.isArray(drawing) ? drawing : drawing.primitives || drawing.items || [];
  if (drawing.width && drawing.height) {
    // Drawn at its own size (one unit a CSS pixel), so its text stays readable; wide ladders scroll.
    svg.setAttribute("viewBox", `0 0 ${drawing.width} ${drawing.height}`);
    svg.setAttribute("width", String(drawing.width));
    svg.setAttribute("height", String(drawing.height));
  }
  for (const item of items) {
    const node = schematicItem(item);
    if (node) svg.append(node);
  }
  caption.textContent = `${state.design.name || "Working design"}: source on the left, load on the right.`;
}

function svgElement(tag, attributes, text) {
  const node = document.createElementNS(SVG_NS, tag);
  for (const [key, value] of Object.entries(attributes)) if (value !== undefined && value !== null) node.setAttribute(key, String(value));
  if (text !== undefined) node.textContent = text;
  return node;
}

/** One drawing primitive from the core's `schematic()` as SVG; coordinates are the core's. */
function schematicItem(item) {
  switch (item.kind) {
    case "line":
      return svgElement("line", { x1: item.x1, y1: item.y1, x2: item.x2, y2: item.y2, class: "wire" });
    case "text":
      return svgElement("text", { x: item.x, y: item.y, "text-anchor": item.anchor === "start" ? "start" : "middle", class: item.class === "node" ? "ref" : "note" }, item.text ?? "");
    case "ground":
      return symbol("ground", item);
    case "dot":
      return svgElement("circle", { cx: item.x, cy: item.y, r: item.r || 2.5, class: "node" });
    case "resistor":
    case "capacitor":
    case "inductor":
    case "source":
    case "load":
      return symbol(item.kind, item);
    default:
      return null;
  }
}

/**
 * A part symbol drawn in its own frame: centred on (x, y) from the core, horizontal, turned by
 * the core's orientation. The shapes are fixed drawings in a 40-unit box (our own, IEC-style box
 * resistor), not computed from data.
 */
const SYMBOL_PATHS = {
  resistor: [["rect", { x: -14, y: -6, width: 28, height: 12, class: "sym sym-fill" }], ["path", { d: "M-20 0H-14M14 0H20", class: "sym" }]],
  capacitor: [["path", { d: "M-20 0H-3M3 0H20M-3 -10V10M3 -10V10", class: "sym" }]],
  inductor: [["path", { d: "M-20 0H-15A3.75 3.75 0 0 1 -7.5 0A3.75 3.75 0 0 1 0 0A3.75 3.75 0 0 1 7.5 0A3.75 3.75 0 0 1 15 0H20", class: "sym" }]],
  ground: [["path", { d: "M0 -8V0M-9 0H9M-6 4H6M-3 8H3", class: "wire" }]],
  source: [["circle", { cx: 0, cy: 0, r: 11, class: "sym sym-fill" }], ["path", { d: "M-20 0H-11M11 0H20M-6 0C-4 -5 -2 -5 0 0S4 5 6 0", class: "sym" }]],
  load: [["rect", { x: -8, y: -14, width: 16, height: 28, class: "sym sym-fill" }]],
};

function symbol(kind, item) {
  const vertical = item.orientation === "vertical" || item.orientation === "v" || item.orientation === 90;
  const group = svgElement("g", { transform: `translate(${item.x} ${item.y})${vertical ? " rotate(90)" : ""}` });
  for (const [tag, attributes] of SYMBOL_PATHS[kind]) group.append(svgElement(tag, attributes));
  const outer = svgElement("g", {});
  outer.append(group);
  if (item.ref || item.label) {
    // Fixed offsets from the core's centre (SVG dx/dy): beside a vertical part, above and below a
    // horizontal one.
    const place = vertical
      ? { ref: { dx: 14, dy: -3 }, label: { dx: 14, dy: 11 }, anchor: "start" }
      : { ref: { dx: 0, dy: -12 }, label: { dx: 0, dy: 22 }, anchor: "middle" };
    const text = (offset, className, content) =>
      svgElement("text", { x: item.x, y: item.y, dx: offset.dx, dy: offset.dy, "text-anchor": place.anchor, class: className }, content);
    if (item.ref) outer.append(text(place.ref, "ref", item.ref));
    if (item.label) outer.append(text(place.label, "val", item.label));
  }
  const title = svgElement("title", {}, [item.ref, item.label].filter(Boolean).join(" "));
  outer.prepend(title);
  return outer;
}

// ---------------------------------------------------------------- plots

let frameRequested = false;
const pending = { draw: false, sweep: false, since: null, schematic: false, report: false };

function theme() {
  return matchMedia("(prefers-color-scheme: dark)").matches ? "dark" : "light";
}

/** Asks for a redraw in the next animation frame; several requests in one frame merge. */
function redraw({ sweep = false, since = null, schematic = false, report = false }) {
  if (!session) return;
  pending.draw = true;
  pending.sweep ||= sweep;
  pending.schematic ||= schematic;
  pending.report ||= report;
  if (since !== null && pending.since === null) pending.since = since;
  // A keystroke with no draw in the last frame is drawn at once, so the plot follows typing
  // within the frame; further keystrokes in the same frame are gathered into the next one.
  if (since !== null && !frameRequested && performance.now() - lastDrawEnd > FRAME_MS) {
    frame();
    return;
  }
  if (!frameRequested) {
    frameRequested = true;
    requestAnimationFrame(frame);
  }
}

/** One display frame at 60 Hz, in ms. */
const FRAME_MS = 1000 / 60;
let lastDrawEnd = -Infinity;

let firstPlot = true;
let drawCount = 0;
function frame() {
  frameRequested = false;
  if (!pending.draw) return;
  pending.draw = false;
  const since = pending.since;
  const wantSweep = pending.sweep;
  const wantSchematic = pending.schematic;
  const wantReport = pending.report;
  pending.sweep = pending.schematic = pending.report = false;
  pending.since = null;
  const canvas = $("plot");
  const drawStart = performance.now();
  try {
    if (wantSweep) session.sweep();
    session.draw(canvas, theme());
    drawTimeCard();
    renderMaskVerdict();
    drawCount += 1;
    // A counter that tests and the measurement script wait on.
    canvas.dataset.draws = String(drawCount);
    showPlotProblem(null);
    if (firstPlot) {
      firstPlot = false;
      performance.mark("bw:first-plot");
      performance.measure("bw:first-draw", { start: drawStart });
    }
  } catch (error) {
    showPlotProblem(errorText(error));
  }
  const end = performance.now();
  lastDrawEnd = end;
  if (since !== null) {
    performance.measure("bw:keystroke-to-plot", { start: since, end });
    performance.measure("bw:redraw", { start: drawStart, end });
  }
  updateReadout();
  if (wantSchematic) renderSchematicSoon();
  if (wantReport) refreshReportSoon();
}

function showPlotProblem(text) {
  const box = $("grid-msg");
  if (text === null) {
    if (box.dataset.source === "plot") {
      box.hidden = true;
      box.dataset.source = "";
    }
    return;
  }
  box.textContent = `The plots could not be drawn: ${text}`;
  box.dataset.source = "plot";
  box.hidden = false;
}

function wirePlot() {
  const canvas = $("plot");
  let readoutPending = false;
  const follow = (x, y) => {
    state.cursor = { x, y };
    if (readoutPending) return;
    readoutPending = true;
    requestAnimationFrame(() => {
      readoutPending = false;
      updateReadout();
    });
  };
  canvas.addEventListener("pointermove", (event) => follow(event.offsetX, event.offsetY));
  canvas.addEventListener("pointerdown", (event) => follow(event.offsetX, event.offsetY));
  canvas.addEventListener("keydown", (event) => {
    const width = canvas.clientWidth;
    const height = canvas.clientHeight;
    const cursor = state.cursor || { x: Math.round(width / 2), y: Math.round(height / 8) };
    const step = event.shiftKey ? 20 : 2;
    const moves = {
      ArrowLeft: [-step, 0],
      ArrowRight: [step, 0],
      ArrowUp: [0, -Math.round(height / 8)],
      ArrowDown: [0, Math.round(height / 8)],
    };
    let x = cursor.x;
    let y = cursor.y;
    if (event.key in moves) {
      x += moves[event.key][0];
      y += moves[event.key][1];
    } else if (event.key === "Home") {
      x = 0;
    } else if (event.key === "End") {
      x = width;
    } else {
      return;
    }
    event.preventDefault();
    follow(Math.min(Math.max(x, 0), width), Math.min(Math.max(y, 0), height));
  });
}

function updateReadout() {
  const out = $("readout");
  const cursorLine = $("cursor");
  if (!state.cursor || !session) return;
  let reading = null;
  try {
    reading = JSON.parse(session.readout(state.cursor.x, state.cursor.y));
  } catch (error) {
    out.textContent = `No reading here: ${errorText(error)}`;
    return;
  }
  if (!reading) {
    out.textContent = "Off the plot area: move inside a panel to read values.";
    cursorLine.hidden = true;
    return;
  }
  cursorLine.hidden = false;
  cursorLine.style.transform = `translateX(${state.cursor.x}px)`;
  out.replaceChildren(...readoutNodes(reading));
}

/** The readout's text, as the core formatted it. */
function readoutNodes(reading) {
  const nodes = [];
  const formatted = reading.formatted;
  const item = (key, value, className = "r-item") => {
    const span = document.createElement("span");
    span.className = className;
    if (key) {
      const k = document.createElement("span");
      k.className = "r-key";
      k.textContent = `${key} `;
      span.append(k);
    }
    span.append(document.createTextNode(String(value)));
    return span;
  };
  // `formatted` is the core's list of {label, text}: the frequency first, then A, ideal, B.
  if (reading.panel) nodes.push(item(null, reading.panel, "r-item r-key"));
  for (const entry of Array.isArray(formatted) ? formatted : []) {
    if (!entry || typeof entry !== "object") continue;
    if (entry.label === "f") nodes.push(item(null, `f = ${entry.text}`, "r-f"));
    else nodes.push(item(entry.label, entry.text));
  }
  // Spaces between the items, so that the text reads as words (and copies) too.
  return nodes.flatMap((node, index) => (index ? [document.createTextNode(" "), node] : [node]));
}

// ---------------------------------------------------------------- sweep grid

function wireGrid() {
  const form = $("grid-form");
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    setGridFromForm();
  });
  form.addEventListener("change", setGridFromForm);
  form.addEventListener("input", (event) => clearFieldError(event.target));
}

function writeGrid(grid) {
  $("grid-from").value = grid ? grid.from : "";
  $("grid-to").value = grid ? grid.to : "";
  $("grid-points").value = grid ? grid.points : "";
}

function setGridFromForm() {
  const grid = { from: $("grid-from").value.trim(), to: $("grid-to").value.trim(), points: $("grid-points").value.trim() };
  for (const id of ["grid-from", "grid-to", "grid-points"]) clearFieldError($(id));
  const previous = state.grid;
  state.grid = grid.from || grid.to || grid.points ? grid : null;
  if (!applyGrid()) {
    state.grid = previous;
    return;
  }
  redraw({ sweep: true, report: true });
  saveSoon();
}

/** Gives the session the typed grid; returns false (with a message at the field) when it is bad. */
function applyGrid() {
  const grid = state.grid;
  if (!grid) {
    session.set_grid(null, null, null);
    return true;
  }
  const read = (id, text, quantity) => {
    if (text === "") return null;
    try {
      return api.parse_value(text, quantity);
    } catch (error) {
      setFieldError($(id), `${errorText(error)}; the sweep is unchanged`);
      throw error;
    }
  };
  let from;
  let to;
  let points;
  try {
    from = read("grid-from", grid.from, "frequency");
    to = read("grid-to", grid.to, "frequency");
    points = read("grid-points", grid.points, "ratio");
  } catch {
    return false;
  }
  try {
    session.set_grid(from, to, points);
  } catch (error) {
    const { field, text } = splitFieldMessage(errorText(error));
    const id = { from: "grid-from", start_hz: "grid-from", to: "grid-to", stop_hz: "grid-to", points: "grid-points" }[field] || "grid-points";
    setFieldError($(id), `${text}; the sweep is unchanged`);
    return false;
  }
  return true;
}

// ---------------------------------------------------------------- keep (A/B), share, files, exports

function wireKeepAndShare() {
  $("design-name").addEventListener("input", onNameInput);
  $("act-undo").addEventListener("click", undo);
  $("ab-keep").addEventListener("click", () => {
    keepVariantFrom(null);
    notice("Kept the working design as B; it is drawn behind A while you edit.");
  });
  $("ab-swap").addEventListener("click", swapVariant);
  $("ab-drop").addEventListener("click", () => {
    session.clear_variant();
    state.variant = null;
    renderVariant();
    redraw({ sweep: true, report: true });
    saveSoon();
  });
  $("act-link").addEventListener("click", showLink);
  $("link-copy").addEventListener("click", copyLink);
  $("link-text").addEventListener("keydown", (event) => {
    if (event.key === "Escape") {
      $("link-bar").hidden = true;
      $("act-link").focus();
    }
  });
  $("act-save").addEventListener("click", saveFile);
  $("act-open").addEventListener("click", () => $("open-input").click());
  $("open-input").addEventListener("change", openFile);
  $("act-parts-csv").addEventListener("click", () => exportText("parts.csv", "text/csv", () => api.parts_csv(JSON.stringify(state.design))));
  $("act-sweep-csv").addEventListener("click", () => exportText("sweep.csv", "text/csv", () => session.sweep_csv()));
  $("act-svg").addEventListener("click", () => {
    const canvas = $("plot");
    exportText("plot.svg", "image/svg+xml", () => session.plot_svg(canvas.clientWidth, canvas.clientHeight, theme()));
  });
  $("act-png").addEventListener("click", () => {
    $("plot").toBlob((blob) => {
      if (blob) download(`${fileStem()}-plot.png`, blob);
      else barMessage("open-msg", "The browser could not turn the plot into a PNG.");
    }, "image/png");
  });
  $("act-print").addEventListener("click", () => {
    refreshReport();
    window.print();
  });
  $("act-safety").addEventListener("click", () => {
    const notes = $("notes");
    notes.scrollIntoView({ block: "start" });
    notes.focus();
  });
}

let nameTimer = 0;
function onNameInput(event) {
  state.design.name = event.target.value;
  document.title = state.design.name ? `${state.design.name} · Bandwright` : "Bandwright";
  clearTimeout(nameTimer);
  nameTimer = setTimeout(() => {
    session.set_design(JSON.stringify(state.design));
    applyGrid();
    $("circuit-caption").textContent = `${state.design.name || "Working design"}: source on the left, load on the right.`;
    redraw({ sweep: true, report: true });
  }, 200);
  saveSoon();
}

/** Copies A into B (or, given a design, makes that design B) and overlays it. */
function keepVariantFrom(design) {
  if (design) {
    session.set_design(JSON.stringify(design));
    session.keep_variant();
    session.set_design(JSON.stringify(state.design));
    applyGrid();
    state.variant = design;
  } else {
    session.keep_variant();
    state.variant = structuredClone(state.design);
  }
  renderVariant();
  redraw({ sweep: true, report: true });
  saveSoon();
}

function swapVariant() {
  if (!state.variant) return;
  const b = state.variant;
  const a = state.design;
  session.keep_variant();
  state.variant = a;
  adopt(b, { ideal: state.ideal, chosen: -1 });
  renderVariant();
  notice("Swapped A and B.", true);
}

function renderVariant() {
  const has = Boolean(state.variant);
  $("ab-swap").disabled = !has;
  $("ab-drop").disabled = !has;
  const status = $("ab-status");
  status.replaceChildren();
  if (!has) {
    status.textContent = "Nothing kept yet.";
    return;
  }
  const mark = document.createElement("span");
  mark.className = "kept";
  mark.textContent = "B";
  status.append(mark, document.createTextNode(` kept: “${state.variant.name}”, drawn behind A.`));
  renderAssumptions();
}

function showLink() {
  let code;
  try {
    code = api.share_encode(JSON.stringify(state.design));
  } catch (error) {
    barMessage("link-msg", `No link could be made: ${errorText(error)}`);
    return;
  }
  $("link-msg").hidden = true;
  const link = `${location.href.split("#")[0]}#${code}`;
  $("link-bar").hidden = false;
  const text = $("link-text");
  text.value = link;
  text.focus();
  text.select();
  $("link-status").textContent = `${link.length} characters.`;
}

async function copyLink() {
  const text = $("link-text");
  text.select();
  try {
    await navigator.clipboard.writeText(text.value);
    $("link-status").textContent = "Copied.";
  } catch {
    const copied = document.execCommand && document.execCommand("copy");
    $("link-status").textContent = copied ? "Copied." : "Select the text and copy it (Ctrl+C).";
  }
}

/** Reads a design from the address's fragment: {design} or {error}. */
function readLinkFromHash() {
  let code = location.hash.slice(1);
  try {
    code = decodeURIComponent(code);
  } catch {
    // Leave it as it is: the decoder says what is wrong with it.
  }
  try {
    return { design: JSON.parse(api.share_decode(code)) };
  } catch (error) {
    return { error: errorText(error) };
  }
}

function onHashChange() {
  if (location.hash.length <= 1) return;
  const link = readLinkFromHash();
  dropHash();
  if (link.design) {
    $("link-msg").hidden = true;
    openDesign(link.design, "Opened the design from the link.");
  } else {
    showLinkError(link.error);
  }
}

function showLinkError(text) {
  barMessage("link-msg", `The link in the address could not be read: ${text}. A link holds “bw1.” and the packed design after the “#”; copy it again in full. Your design is unchanged.`);
}

/** Removes the fragment so that a reload restores the autosaved work, not the link again. */
function dropHash() {
  history.replaceState(null, "", location.href.split("#")[0]);
}

function barMessage(id, text) {
  const box = $(id);
  box.textContent = text;
  box.hidden = false;
}

function fileStem() {
  const stem = (state.design.name || "design").normalize("NFKD").replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 60);
  return stem || "design";
}

function download(name, data, type = "application/octet-stream") {
  const blob = data instanceof Blob ? data : new Blob([data], { type });
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = name;
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(url), 30000);
}

function exportText(suffix, type, make) {
  let text;
  try {
    text = make();
  } catch (error) {
    barMessage("open-msg", `Could not export ${suffix}: ${errorText(error)}`);
    return;
  }
  download(`${fileStem()}-${suffix}`, text, type);
}

function saveFile() {
  let text;
  try {
    text = api.check_design(JSON.stringify(state.design));
  } catch (error) {
    barMessage("open-msg", `Could not save: ${errorText(error)}`);
    return;
  }
  download(`${fileStem()}.json`, text, "application/json");
}

async function openFile(event) {
  const input = event.target;
  const file = input.files && input.files[0];
  input.value = "";
  if (!file) return;
  const box = $("open-msg");
  box.hidden = true;
  if (file.size > MAX_FILE_BYTES) {
    barMessage("open-msg", `“${file.name}” is ${file.size} bytes; a design file is a small JSON text (this page reads up to ${MAX_FILE_BYTES} bytes). Your design is unchanged.`);
    return;
  }
  let design;
  try {
    design = JSON.parse(api.check_design(await file.text()));
  } catch (error) {
    barMessage("open-msg", `“${file.name}” could not be opened: ${errorText(error)}. A design file is JSON with "format": "bandwright-design", "version": 1 (see the README). Your design is unchanged.`);
    $("act-open").focus();
    return;
  }
  openDesign(design, `Opened “${file.name}”.`);
}

// ---------------------------------------------------------------- notes and the printed report

function fillCautions() {
  const cautions = JSON.parse(api.cautions());
  for (const list of [$("cautions"), $("r-cautions")]) {
    for (const caution of cautions) {
      const term = document.createElement("dt");
      term.textContent = caution.title;
      const text = document.createElement("dd");
      text.textContent = caution.text;
      list.append(term, text);
    }
  }
}

function assumptions() {
  const design = state.design;
  const lines = [
    `Source: a voltage source${design.source.amplitude !== undefined ? ` of ${formatValue(design.source.amplitude, "voltage")} rms` : ""} behind ${formatValue(design.source.resistance, "resistance")} (0 Ω is ideal).`,
    `Load: ${describeLoad(design) || "none (open output)"}; the output is node “${design.output}”.`,
    "Parts are ideal apart from the ESR and DCR listed; values are nominal, tolerances are not applied.",
    "H = V(output) / EMF of the source; dB = 20·log10|H|; phase unwrapped along the sweep; group delay exact from the differentiated MNA system; |Z_in| seen by the source.",
  ];
  if (state.ideal) lines.push("The dashed curve is the ideal: the same circuit with unrounded values.");
  if (state.variant) lines.push(`B (kept variant) is “${state.variant.name}”.`);
  if (state.fit && state.chosen >= 0) {
    lines.push(`Fit: alternative #${state.chosen + 1} of ${state.fit.alternatives.length}${state.fit.objective ? `, ranked by: ${state.fit.objective}` : ""}.`);
    if (Array.isArray(state.fit.deviation_band_hz)) {
      const [low, high] = state.fit.deviation_band_hz;
      lines.push(`Worst deviation measured from ${formatValue(low, "frequency")} to ${formatValue(high, "frequency")}.`);
    }
  }
  return lines;
}

function renderAssumptions() {
  const list = $("assumptions");
  list.replaceChildren(...assumptions().map((line) => {
    const item = document.createElement("li");
    item.textContent = line;
    return item;
  }));
}

let reportTimer = 0;
function refreshReportSoon() {
  clearTimeout(reportTimer);
  reportTimer = setTimeout(refreshReport, 700);
}

/** Fills the one-page report. Its plot is drawn in the light theme for paper. */
function refreshReport() {
  if (!state.design) return;
  clearTimeout(reportTimer);
  $("r-title").textContent = state.design.name || "Bandwright design";
  $("r-ask").textContent = sentenceText();
  const body = $("r-parts-body");
  body.replaceChildren();
  for (const element of state.design.elements) {
    const info = KINDS[element.kind];
    const row = document.createElement("tr");
    const cells = [
      element.ref,
      info ? info.word : element.kind.replace(/_/g, " "),
      info ? formatValue(element.value, info.quantity) : describeOtherElement(element),
      info ? seriesLabel(info.series) : "—",
    ];
    for (const text of cells) {
      const cell = document.createElement("td");
      cell.textContent = text;
      row.append(cell);
    }
    body.append(row);
  }
  // The step figures and the limits' verdict go under the parts, where the column has room.
  $("r-ends").textContent = [describeEnds(state.design), ...extrasReportLines()].join(" ");
  // A long parts list is set in smaller type, so that the report stays on one page.
  $("report").classList.toggle("many-parts", state.design.elements.length > 5);
  $("r-assumptions").replaceChildren(...assumptions().map((line) => {
    const item = document.createElement("li");
    item.textContent = line;
    return item;
  }));
  try {
    session.draw($("r-plot"), "light");
    // Draw the screen plot again, so that the readout maps pointer pixels on it.
    session.draw($("plot"), theme());
  } catch (error) {
    showPlotProblem(errorText(error));
  }
}

/** The requirement as a plain sentence: the words and the chosen or typed values, in order. */
function sentenceText() {
  const parts = [];
  const walk = (node) => {
    if (node.nodeType === Node.TEXT_NODE) {
      parts.push(node.textContent);
      return;
    }
    if (node.nodeType !== Node.ELEMENT_NODE || node.hidden || node.classList.contains("vh") || node.classList.contains("field-msg")) return;
    if (node.classList.contains("unit")) {
      parts.push(` ${node.textContent}`);
      return;
    }
    if (node.tagName === "SELECT") parts.push(node.selectedOptions[0] ? node.selectedOptions[0].textContent : "");
    else if (node.tagName === "INPUT") parts.push(node.value.trim() || node.placeholder || "—");
    else if (node.tagName === "BUTTON") return;
    else for (const child of node.childNodes) walk(child);
  };
  for (const line of $("ask-form").querySelectorAll(".line")) walk(line);
  return parts.join("").replace(/\s+/g, " ").replace(/\s+([,.;])/g, "$1").trim();
}

// ---------------------------------------------------------------- time response, limits, converter input
// The "In time" card, the "Limits" card (state.mask: the core's SpecMask JSON object or null) and
// the "Converter input" card. As everywhere here, every figure comes from the wasm exports.

let timeDraws = 0;
let lastTimeSummary = null;
let lastMaskReport = null;

/** Shows the slots of `form` whose data-when-<choice> lists the current value of that choice. */
function showSlots(form, choices) {
  for (const slot of form.querySelectorAll(".slot")) {
    const conditions = Object.entries(choices).filter(([key]) => slot.hasAttribute(`data-when-${key}`));
    if (conditions.length === 0) continue;
    slot.hidden = !conditions.every(([key, value]) => slot.getAttribute(`data-when-${key}`).split(" ").includes(value));
  }
}

/** Whether a control is shown within its form (slots that do not apply are hidden). */
function shownInForm(form, control) {
  const hidden = control.closest("[hidden]");
  return !hidden || !form.contains(hidden);
}

/** The data-field controls of a form as {field: text or null}; hidden ones are left out. */
function readFields(form) {
  const values = {};
  for (const control of form.querySelectorAll("[data-field]")) {
    if (!shownInForm(form, control)) continue;
    const text = control.value.trim();
    values[control.dataset.field] = text === "" ? null : text;
  }
  return values;
}

function writeFields(form, values) {
  if (!values || typeof values !== "object") return;
  for (const control of form.querySelectorAll("[data-field]")) {
    const value = values[control.dataset.field];
    if (typeof value !== "string") continue;
    if (control.tagName === "SELECT" && ![...control.options].some((o) => o.value === value)) continue;
    control.value = value;
  }
}

function clearFormErrors(form, messageId) {
  for (const control of form.querySelectorAll("[aria-invalid]")) clearFieldError(control);
  $(messageId).hidden = true;
  $(messageId).textContent = "";
}

/** Puts an error at the field it names (`field <name>: ...`) within `form`, else in the box. */
function showFormError(form, messageId, message, keep) {
  const { field, text } = splitFieldMessage(message);
  if (field) {
    const control = [...form.querySelectorAll(`[data-field="${CSS.escape(field)}"]`)].find((c) => shownInForm(form, c));
    if (control) {
      setFieldError(control, `${text}. ${keep}`);
      return;
    }
  }
  const box = $(messageId);
  box.textContent = `${field ? `${field.replace(/_/g, " ")}: ${text}` : message}. ${keep}`;
  box.hidden = false;
}

function definitionRows(list, rows) {
  list.replaceChildren();
  for (const row of rows) {
    const term = document.createElement("dt");
    term.textContent = row.label;
    const text = document.createElement("dd");
    text.textContent = row.text;
    list.append(term, text);
  }
}

// ---- In time

function wireTime() {
  const form = $("time-form");
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    applyTimeOptions();
  });
  form.addEventListener("change", applyTimeOptions);
  form.addEventListener("input", (event) => clearFieldError(event.target));
  const canvas = $("time-plot");
  canvas.addEventListener("pointermove", (event) => showTimeReadout(event.offsetX, event.offsetY));
  canvas.addEventListener("pointerdown", (event) => showTimeReadout(event.offsetX, event.offsetY));
  new ResizeObserver(() => redraw({})).observe(canvas);
  showTimeSlots();
}

function showTimeSlots() {
  showSlots($("time-form"), { time: $("time-kind").value, settle: $("time-settle").value });
}

/** Gives the session the card's options; false (with the message at its field) when refused. */
function applyTimeOptions() {
  const form = $("time-form");
  clearFormErrors(form, "time-msg");
  showTimeSlots();
  try {
    session.set_time_options(JSON.stringify(readFields(form)));
  } catch (error) {
    showFormError(form, "time-msg", errorText(error), "The plot keeps the previous settings");
    return false;
  }
  redraw({ report: true });
  saveSoon();
  return true;
}

function drawTimeCard() {
  const canvas = $("time-plot");
  let summary;
  try {
    summary = JSON.parse(session.time_summary());
  } catch (error) {
    summary = { error: errorText(error), formatted: [] };
  }
  lastTimeSummary = summary;
  const figures = $("time-figures");
  if (summary.error) {
    definitionRows(figures, [{ label: "no time response", text: summary.error }]);
    return;
  }
  try {
    session.draw_time(canvas, theme());
    timeDraws += 1;
    canvas.dataset.draws = String(timeDraws);
  } catch (error) {
    definitionRows(figures, [{ label: "not drawn", text: errorText(error) }]);
    return;
  }
  const rows = [...summary.formatted];
  if (summary.variant) {
    const pick = (label) => (summary.variant.formatted.find((row) => row.label === label) || {}).text;
    const parts = ["overshoot", "rise 10–90 %", "settling"].map((label) => pick(label) && `${label} ${pick(label)}`).filter(Boolean);
    if (parts.length) rows.push({ label: "B (kept)", text: parts.join("; ") });
  }
  definitionRows(figures, rows);
}

function showTimeReadout(x, y) {
  if (!session) return;
  let reading = null;
  try {
    reading = JSON.parse(session.time_readout(x, y));
  } catch {
    reading = null;
  }
  const out = $("time-readout");
  if (!reading) {
    out.textContent = "Off the plot area: move inside it to read values.";
    return;
  }
  const nodes = reading.formatted.map((entry) => {
    const span = document.createElement("span");
    if (entry.label === "t") {
      span.className = "r-f";
      span.textContent = `t = ${entry.text}`;
    } else {
      span.className = "r-item";
      const key = document.createElement("span");
      key.className = "r-key";
      key.textContent = `${entry.label} `;
      span.append(key, document.createTextNode(entry.text));
    }
    return span;
  });
  out.replaceChildren(...nodes.flatMap((node, index) => (index ? [document.createTextNode(" "), node] : [node])));
}

// ---- Limits (spec mask)

function wireMask() {
  const form = $("mask-form");
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    applyMask();
  });
  form.addEventListener("input", (event) => clearFieldError(event.target));
  $("mask-clear").addEventListener("click", () => {
    setMask(null);
    saveSoon();
  });
}

function applyMask() {
  const form = $("mask-form");
  clearFormErrors(form, "mask-msg");
  let mask;
  try {
    mask = JSON.parse(api.mask_from_form(JSON.stringify(readFields(form))));
  } catch (error) {
    showFormError(form, "mask-msg", errorText(error), "The limits are unchanged");
    return false;
  }
  setMask(mask);
  saveSoon();
  return true;
}

/** Sets (or with null clears) the limits drawn on the plots and checked. */
function setMask(mask) {
  try {
    session.set_mask(mask ? JSON.stringify(mask) : null);
  } catch (error) {
    showFormError($("mask-form"), "mask-msg", errorText(error), "The limits are unchanged");
    return;
  }
  state.mask = mask;
  $("mask-clear").disabled = !mask;
  renderMaskOrders();
  redraw({ report: true });
}

function renderMaskOrders() {
  const table = $("mask-orders");
  const body = $("mask-orders-body");
  const note = $("mask-orders-msg");
  body.replaceChildren();
  note.textContent = "";
  note.classList.remove("msg");
  table.hidden = true;
  if (!state.mask) return;
  let orders;
  try {
    orders = JSON.parse(api.mask_orders(JSON.stringify(state.mask)));
  } catch (error) {
    note.textContent = errorText(error);
    note.classList.add("msg");
    return;
  }
  for (const entry of orders.met) {
    const row = document.createElement("tr");
    for (const text of [entry.label, String(entry.order), entry.cutoff_text, entry.margin_text]) {
      const cell = document.createElement("td");
      cell.textContent = text;
      row.append(cell);
    }
    const use = document.createElement("td");
    const button = document.createElement("button");
    button.type = "button";
    button.className = "use-order";
    button.textContent = "Use";
    button.title = `Put ${entry.label} of order ${entry.order} at ${entry.cutoff_text} into the requirement`;
    button.addEventListener("click", () => useOrder(entry));
    use.append(button);
    row.append(use);
    body.append(row);
  }
  table.hidden = orders.met.length === 0;
  if (orders.none_met) {
    note.textContent = orders.message;
    note.classList.add("msg");
  } else if (orders.unmet.length) {
    note.textContent = `Not within order 8: ${orders.unmet.map((u) => `${u.alignment} (closest order ${u.closest_order})`).join(", ")}.`;
  }
}

function useOrder(entry) {
  clearAskErrors();
  writeRequest(entry.request);
  saveSoon();
  notice(`Put ${entry.label} of order ${entry.order} at ${entry.cutoff_text} into the requirement; “Find parts” fits it.`);
}

function renderMaskVerdict() {
  const verdict = $("mask-verdict");
  const list = $("mask-regions");
  lastMaskReport = null;
  if (!state.mask) {
    verdict.hidden = true;
    list.replaceChildren();
    return;
  }
  let report;
  try {
    report = JSON.parse(session.mask_report());
  } catch (error) {
    report = { error: errorText(error), regions: [] };
  }
  lastMaskReport = report;
  verdict.hidden = false;
  verdict.classList.toggle("pass", report.pass === true);
  verdict.classList.toggle("fail", report.pass === false);
  verdict.dataset.verdict = report.verdict || "not checked";
  verdict.textContent = report.error
    ? `Not checked: ${report.error}`
    : `${report.pass ? "Pass" : "Fail"}: the working design ${report.pass ? "stays inside" : "breaks"} the limits; worst: ${report.worst.text}.`;
  list.replaceChildren(...report.regions.map((region) => {
    const item = document.createElement("li");
    item.textContent = region.text;
    return item;
  }));
}

function writeMaskForm(mask) {
  if (!mask || !mask.band) return;
  const band = mask.band;
  const set = (id, value, quantity) => {
    if (typeof value === "number") $(id).value = formatShort(value, quantity);
  };
  if ([...$("mask-response").options].some((o) => o.value === band.response)) $("mask-response").value = band.response;
  set("mask-pass", band.passband_edge_hz, "frequency");
  set("mask-stop", band.stopband_edge_hz, "frequency");
  set("mask-loss", mask.max_passband_loss_db, "ratio");
  set("mask-atten", mask.min_stopband_attenuation_db, "ratio");
  $("mask-delay").value = typeof mask.max_group_delay_variation_s === "number" ? formatShort(mask.max_group_delay_variation_s, "time") : "";
}

// ---- Converter input (anti-aliasing front end)

function wireFrontEnd() {
  for (const id of ["fe-resistors", "fe-capacitors"]) for (const name of SERIES) $(id).append(new Option(name, name));
  writeFields($("fe-form"), JSON.parse(api.front_end_demo()));
  const form = $("fe-form");
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    planFrontEnd();
  });
  form.addEventListener("change", () => {
    showSlots(form, { rule: $("fe-rule").value });
    saveSoon();
  });
  form.addEventListener("input", (event) => clearFieldError(event.target));
  $("fe-fit").addEventListener("click", fitFrontEnd);
  showSlots(form, { rule: $("fe-rule").value });
}

let frontEndPlan = null;
function planFrontEnd() {
  const form = $("fe-form");
  clearFormErrors(form, "fe-msg");
  let plan;
  try {
    plan = JSON.parse(api.front_end_plan(JSON.stringify(readFields(form))));
  } catch (error) {
    frontEndPlan = null;
    $("fe-fit").disabled = true;
    $("fe-out").hidden = true;
    showFormError(form, "fe-msg", errorText(error), "Nothing was planned");
    return false;
  }
  frontEndPlan = plan;
  const groups = ["requirement", "orders", "recommendation", "parts", "sampling", "noise", "delay"];
  definitionRows($("fe-rows"), groups.flatMap((group) => plan.rows[group] || []));
  const items = (texts) => texts.map((text) => {
    const item = document.createElement("li");
    item.textContent = text;
    return item;
  });
  $("fe-warnings").replaceChildren(...items(plan.warnings));
  $("fe-cautions").replaceChildren(...items(plan.cautions));
  $("fe-out").hidden = false;
  $("fe-fit").disabled = false;
  saveSoon();
  return true;
}

/** Hands the recommendation to the fit flow: into the requirement sentence, then "Find parts". */
function fitFrontEnd() {
  if (!frontEndPlan) return;
  clearAskErrors();
  writeRequest(frontEndPlan.fit_request);
  if (findParts()) $("ask-title").scrollIntoView({ block: "start" });
}

// ---- their part of the workspace and the report

function extrasForSave() {
  return {
    mask: state.mask,
    mask_form: readFields($("mask-form")),
    time_options: readFields($("time-form")),
    front_end: readFields($("fe-form")),
  };
}

function restoreExtras(saved) {
  if (!saved) return;
  if (saved.time_options) {
    writeFields($("time-form"), saved.time_options);
    showTimeSlots();
    if (!applyTimeOptions()) writeFields($("time-form"), {});
  }
  if (saved.front_end) {
    writeFields($("fe-form"), saved.front_end);
    showSlots($("fe-form"), { rule: $("fe-rule").value });
  }
  if (saved.mask_form) writeFields($("mask-form"), saved.mask_form);
  if (saved.mask) {
    let mask = null;
    try {
      mask = JSON.parse(api.check_mask(JSON.stringify(saved.mask)));
    } catch (error) {
      notice(`The saved limits could not be read (${errorText(error)}); they are cleared.`);
    }
    if (mask) {
      if (!saved.mask_form) writeMaskForm(mask);
      setMask(mask);
    }
  }
}

function extrasReportLines() {
  const lines = [];
  if (lastTimeSummary && !lastTimeSummary.error && lastTimeSummary.kind === "step") {
    const rows = lastTimeSummary.formatted.filter((row) => ["overshoot", "rise 10–90 %", "settling"].includes(row.label));
    if (rows.length) lines.push(`Step response: ${rows.map((row) => `${row.label} ${row.text}`).join("; ")}.`);
  }
  if (state.mask && lastMaskReport && !lastMaskReport.error) {
    lines.push(`Limits: ${lastMaskReport.pass ? "pass" : "fail"}; worst ${lastMaskReport.worst.text}.`);
  }
  return lines;
}

// ---------------------------------------------------------------- formatting (by the core)

function formatValue(value, quantity) {
  try {
    return api.format_value(value, quantity);
  } catch {
    return String(value);
  }
}

/** The core's engineering notation without the unit symbol, for compact lists. */
function formatShort(value, quantity) {
  return formatValue(value, quantity).replace(/\s*(Ω|F|H|Hz|V)$/, "").replace(" ", "");
}

// ---------------------------------------------------------------- go

// Last, so that every declaration above is initialised before it runs (the build wraps this
// module in a block, where const and let are not hoisted).
if (api) {
  try {
    start();
  } catch (error) {
    showStartFailure(error);
  }
}
