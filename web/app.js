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
/**
 * While the page starts, work that the first plot does not need (what sits below it: the parts
 * table, the circuit drawing, the spread's part list, the safety notes, the converter card's
 * inputs) waits here and is done in the task after that plot (finishStart), in the order asked.
 * Null once the page has started. See web/README.md, "Start-up".
 */
let startupTasks = new Set();

/** Does `task` now, or right after the first plot while the page starts (once, however often asked). */
function afterFirstPlot(task) {
  if (startupTasks) startupTasks.add(task);
  else task();
}

performance.mark("bw:app-start");

// ---------------------------------------------------------------- start and restore

function start() {
  const dark = matchMedia("(prefers-color-scheme: dark)");
  dark.addEventListener("change", () => redraw({ report: true }));

  fillSeriesSelects();
  afterFirstPlot(fillCautions);
  $("version").textContent = api.version();
  $("r-version").textContent = api.version();

  wireRequirement();
  wireParts();
  wireYield();
  wirePlot();
  wireGrid();
  wireKeepAndShare();
  wireSpread();
  xoWire(); // the crossover workspace
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
  performance.mark("bw:opened");
  // The first plot now, not a frame later; what lies below it (afterFirstPlot) follows in the
  // next task, and the demo's shortlist and ideal in the one after.
  frame();
  setTimeout(finishStart, 0);
  if (demo) setTimeout(fitDemo, 0);
  new ResizeObserver(() => redraw({})).observe($("plot"));
  window.addEventListener("hashchange", onHashChange);
  window.addEventListener("beforeprint", refreshReport);
  window.addEventListener("pagehide", saveWorkspace);
  matchMedia("print").addEventListener("change", (event) => event.matches && refreshReport());
  performance.mark("bw:ready");
}

/** Does the work that start() left for after the first plot; the mark "bw:started" says it is done. */
function finishStart() {
  const tasks = startupTasks;
  startupTasks = null;
  try {
    for (const task of tasks) task();
  } catch (error) {
    showStartFailure(error);
  }
  // The cards below the plot are laid out from the next frame on (style.css).
  delete $("app").dataset.starting;
  performance.mark("bw:started");
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
  // Not before the start is finished: the cards below the plot are not filled in yet.
  if (!state.design || startupTasks) return;
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
  markChosen();
  afterFirstPlot(renderDesignDetails);
}

/** The parts table, the circuit, the assumptions and the spread's parts of the working design. */
function renderDesignDetails() {
  renderParts();
  renderSchematic();
  renderAssumptions();
  renderSpreadParts();
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
  updateYieldControls();
  $("short").hidden = !fit;
  $("short-empty").hidden = Boolean(fit);
  $("short-objective").textContent = fit ? fit.objective || "" : "";
  $("short-sub").textContent = fit ? `· best first, ${fit.alternatives.length}` : "";
  if (!fit) return;
  const secondOrder = fit.alternatives.some((alt) => alt.f0_error_pct !== null && alt.f0_error_pct !== undefined);
  const ranked = fit.alternatives.some((alt) => alt.yield);
  $("short-yield-col").hidden = !ranked;
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
    if (ranked) row.append(yieldCell(alt.yield));
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

/** A yield cell: the share of trials inside the mask, and the counts in its title. */
function yieldCell(entry) {
  const cell = document.createElement("td");
  cell.className = "num";
  const result = entry && entry.mask_yield;
  if (!result || !(result.trials > 0)) {
    cell.textContent = "—";
    return cell;
  }
  cell.textContent = `${((100 * result.passed) / result.trials).toFixed(1)} %`;
  cell.title = `${result.passed} of ${result.trials} trials inside the mask; #${entry.nominal_rank + 1} by nominal error`;
  return cell;
}

// ---------------------------------------------------------------- ranking by yield

/** The spec mask to rank against (set by the mask editor), or null. */
function currentMask() {
  return typeof state.mask === "undefined" || !state.mask ? null : state.mask;
}

/** Shows the yield ranking when there is a spec mask to rank against. */
function updateYieldControls() {
  $("yield-form").hidden = !currentMask();
}

function wireYield() {
  $("yield-form").addEventListener("submit", (event) => {
    event.preventDefault();
    rankByYield();
  });
}

let yieldBusy = false;
/** Fits the requirement again over a wider field and ranks it by yield against the mask. */
function rankByYield() {
  const mask = currentMask();
  if (yieldBusy || !mask) return;
  const fields = [$("yield-trials"), $("yield-seed")];
  for (const control of fields) clearFieldError(control);
  clearAskErrors();
  const run = { trials: $("yield-trials").value.trim(), seed: $("yield-seed").value.trim() };
  const request = readRequest();
  yieldBusy = true;
  $("yield-go").disabled = true;
  $("yield-status").textContent = `Ranking by yield (${run.trials || 200} trials per candidate)…`;
  // Let the status paint before the run takes the thread.
  setTimeout(() => {
    try {
      const result = normaliseFit(JSON.parse(api.fit_by_yield(JSON.stringify(request), JSON.stringify(mask), JSON.stringify(run))));
      if (!result.alternatives || result.alternatives.length === 0) {
        $("yield-status").textContent = "No alternative to rank: the fit found none within the stated ranges.";
        return;
      }
      state.fit = result;
      adopt(result.alternatives[0].design, { ideal: result.ideal_design, chosen: 0 });
      renderShortlist();
      const best = result.alternatives[0].yield.mask_yield;
      $("yield-status").textContent = `Ranked by yield: the best keeps ${best.passed} of ${best.trials} trials inside the mask (seed ${result.yield_run.seed}).`;
      notice("Ranked the shortlist by yield; the highest-yield alternative is in use.", true);
    } catch (error) {
      const message = errorText(error);
      const { field, text } = splitFieldMessage(message);
      const control = fields.find((c) => c.dataset.field === field);
      $("yield-status").textContent = "";
      if (control) setFieldError(control, text);
      else if (field) showAskError(message);
      else $("yield-status").textContent = `Cannot rank by yield: ${message}. The working design is unchanged.`;
    } finally {
      yieldBusy = false;
      $("yield-go").disabled = false;
    }
  }, 30);
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
    if (firstPlot) {
      // The first draw's steps for tests/browser/measure.mjs: reading the canvas's size forces
      // the page's first layout, which the draw would force anyway.
      performance.mark("bw:first-swept");
      void canvas.clientWidth;
      performance.mark("bw:first-laid-out");
    }
    session.draw(canvas, theme());
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
  updateSpreadState();
  secondarySoon();
  if (wantSchematic) renderSchematicSoon();
  if (wantReport) refreshReportSoon();
}

// The time card and the limits verdict follow the Bode plot a frame later, so that a keystroke
// repaints the main plots first and typing stays at the display's rate.
let secondaryRequested = false;
function secondarySoon() {
  if (secondaryRequested) return;
  secondaryRequested = true;
  requestAnimationFrame(() => {
    secondaryRequested = false;
    try {
      drawTimeCard();
      renderMaskVerdict();
    } catch (error) {
      showPlotProblem(errorText(error));
    }
  });
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
    "Parts are ideal apart from the ESR and DCR listed; values are nominal; tolerances enter only the spread bands, when a spread has been run.",
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
  renderSpreadReport();
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

// ---------------------------------------------------------------- tolerance spread
// Monte Carlo trials and worst-case corners of the working design (the core's tolerance
// analysis through TolerancePlanner). The trials are split across Web Workers built from
// the inline worker source (the glue and web/worker.js) and given the already compiled wasm
// module; each worker posts its batches back as transferable Float64Arrays, the main thread's
// planner merges and summarises them, and the Session shades the bands. Plotting stays here.
// Without workers the trials run here in short slices, and the status says so.

/** The most workers one run uses. */
const SPREAD_MAX_WORKERS = 8;
/** Trials per job handed to a worker (or per slice on the main thread), at most. */
const SPREAD_MAX_CHUNK = 200;
/** Trials per slice when the main thread runs them (short, so the page stays live). */
const SPREAD_MAIN_SLICE = 20;
/** How long a worker may take to start before the page gives up on workers, in ms. */
const SPREAD_START_MS = 10_000;

const spread = {
  pool: null, // started workers, or null
  poolError: null, // why workers could not start, once that is known
  run: null, // the run in progress: {planner, cancelled, cancel, done, total}
  parts: [], // the plan's description of the varied parts (defaults, no overrides)
  overrides: {}, // per-part tolerance in percent, by ref, as set here
  summary: null, // the last summary shown (parsed JSON)
  partsKey: "", // which design the parts list was made for
};

function wireSpread() {
  $("spread-form").addEventListener("submit", (event) => {
    event.preventDefault();
    runSpread();
  });
  $("spread-form").addEventListener("input", (event) => {
    if (event.target.matches("input[type=text]")) clearFieldError(event.target);
  });
  $("spread-parts-body").addEventListener("change", onSpreadToleranceChange);
  $("spread-cancel").addEventListener("click", cancelSpread);
}

/** Lists the varied parts with their tolerance and where it came from (from the core's plan). */
function renderSpreadParts() {
  if (!session || !state.design) return;
  const key = JSON.stringify([state.design.elements.map((e) => [e.ref, e.kind]), state.design.tolerances || {}]);
  if (key === spread.partsKey) return;
  spread.partsKey = key;
  const body = $("spread-parts-body");
  body.replaceChildren();
  $("spread-msg").hidden = true;
  try {
    const probe = new api.TolerancePlanner(JSON.stringify(state.design), JSON.stringify({ trials: "1", f_hz: Array.from(session.frequencies()) }));
    spread.parts = JSON.parse(probe.describe()).parts;
    probe.free();
  } catch (error) {
    spread.parts = [];
    showSpreadMessage(errorText(error));
  }
  const refs = new Set(spread.parts.map((part) => part.ref));
  for (const ref of Object.keys(spread.overrides)) if (!refs.has(ref)) delete spread.overrides[ref];
  spread.parts.forEach((part, index) => {
    const row = document.createElement("tr");
    const head = document.createElement("th");
    head.scope = "row";
    head.textContent = part.ref;
    const kind = document.createElement("span");
    kind.className = "kind";
    kind.textContent = part.kind;
    head.append(kind);
    const cell = document.createElement("td");
    const label = document.createElement("label");
    label.className = "vh";
    label.htmlFor = `spread-tol-${index}`;
    label.textContent = `Tolerance of ${part.ref} in percent`;
    const input = document.createElement("input");
    input.type = "text";
    input.id = `spread-tol-${index}`;
    input.dataset.ref = part.ref;
    input.autocomplete = "off";
    input.spellcheck = false;
    input.size = 5;
    const given = spread.overrides[part.ref];
    input.value = String(given ?? part.tolerance_pct);
    const unit = document.createElement("span");
    unit.className = "unit";
    unit.textContent = "%";
    cell.append(label, input, unit);
    const origin = document.createElement("td");
    origin.className = "origin";
    origin.textContent = given === undefined ? part.origin_text : "set here";
    row.append(head, cell, origin);
    body.append(row);
  });
}

/** Reads one per-part tolerance through the core; an empty field goes back to the default. */
function onSpreadToleranceChange(event) {
  const input = event.target;
  if (!input.matches("input[data-ref]")) return;
  const part = spread.parts.find((p) => p.ref === input.dataset.ref);
  const origin = input.closest("tr").querySelector(".origin");
  if (input.value.trim() === "") {
    delete spread.overrides[part.ref];
    input.value = String(part.tolerance_pct);
    origin.textContent = part.origin_text;
    clearFieldError(input);
    return;
  }
  try {
    const pct = api.parse_tolerance(input.value);
    clearFieldError(input);
    if (pct === part.tolerance_pct && spread.overrides[part.ref] === undefined) return;
    spread.overrides[part.ref] = pct;
    origin.textContent = "set here";
  } catch (error) {
    setFieldError(input, `${part.ref}: ${errorText(error)}`);
  }
}

function showSpreadMessage(text) {
  const box = $("spread-msg");
  box.textContent = text;
  box.hidden = text === null;
}

/** The options of a run as typed; the core reads and checks them. */
function spreadOptions() {
  return {
    trials: $("spread-trials").value,
    seed: $("spread-seed").value,
    distribution: $("spread-distribution").value,
    band: $("spread-band").value,
    corners: $("spread-corners").checked,
    tolerances: { ...spread.overrides },
    f_hz: Array.from(session.frequencies()),
  };
}

const SPREAD_FIELDS = { trials: "spread-trials", seed: "spread-seed", distribution: "spread-distribution", band: "spread-band" };

async function runSpread() {
  if (spread.run || !session) return;
  showSpreadMessage(null);
  for (const id of Object.values(SPREAD_FIELDS)) clearFieldError($(id));
  const invalid = $("spread-parts-body").querySelector("[aria-invalid=true]");
  if (invalid) {
    showSpreadMessage(`Fix the tolerance of ${invalid.dataset.ref} first.`);
    invalid.focus();
    return;
  }
  const designJson = JSON.stringify(state.design);
  const optionsJson = JSON.stringify(spreadOptions());
  let planner;
  try {
    planner = new api.TolerancePlanner(designJson, optionsJson);
  } catch (error) {
    const { field, text } = splitFieldMessage(errorText(error));
    if (field && SPREAD_FIELDS[field]) {
      setFieldError($(SPREAD_FIELDS[field]), text);
      $(SPREAD_FIELDS[field]).focus();
    } else {
      showSpreadMessage(`The spread cannot run: ${text}`);
    }
    return;
  }
  const plan = JSON.parse(planner.describe());
  const run = { planner, cancelled: false, cancel: null, done: 0, total: plan.trials, engine: "" };
  spread.run = run;
  setSpreadRunning(true);
  const started = performance.now();
  try {
    const pool = await startSpreadWorkers();
    if (run.cancelled) return;
    if (pool) {
      run.engine = `${pool.length} worker${pool.length === 1 ? "" : "s"}`;
      showSpreadEngine(pool.length, run.engine);
      const size = Math.min(SPREAD_MAX_CHUNK, Math.ceil(plan.trials / (pool.length * 6)));
      await runOnWorkers(run, pool, spreadJobs(plan, size), designJson, optionsJson);
    } else {
      run.engine = `main thread (workers could not start: ${spread.poolError})`;
      showSpreadEngine(0, run.engine);
      await runOnMainThread(run, spreadJobs(plan, SPREAD_MAIN_SLICE));
    }
    if (run.cancelled) return;
    finishSpread(run, performance.now() - started);
  } catch (error) {
    showSpreadMessage(`The spread stopped: ${errorText(error)}`);
    $("spread-status").textContent = "";
  } finally {
    // A cancelled run may end after the next one started; it then leaves that one alone.
    if (spread.run === run) {
      spread.run = null;
      setSpreadRunning(false);
    }
    planner.free();
  }
}

/** Trial ranges of `size` (and the corners) as jobs; several per worker, so that progress moves. */
function spreadJobs(plan, size) {
  size = Math.max(1, size);
  const jobs = [];
  if (plan.corners) jobs.push({ kind: "corners", id: 0 });
  for (let first = 0; first < plan.trials; first += size) {
    jobs.push({ kind: "trials", id: jobs.length, first, end: Math.min(plan.trials, first + size) });
  }
  return jobs;
}

/** Starts the workers once (they stay for later runs), or gives the reason they cannot. */
async function startSpreadWorkers() {
  if (spread.pool) return spread.pool;
  if (spread.poolError) return null;
  const workers = [];
  let url = null;
  try {
    if (typeof Worker !== "function") throw new Error("this browser has no Web Workers");
    const source = $("bandwright-worker-source");
    const glue = glueSource();
    if (!source || glue === null) throw new Error("this build has no worker script");
    const module = typeof bandwrightWasmModule === "undefined" ? null : bandwrightWasmModule;
    if (!module) throw new Error("the compiled module is not available");
    url = URL.createObjectURL(new Blob([glue, "\n", source.textContent], { type: "text/javascript" }));
    const count = Math.max(1, Math.min(navigator.hardwareConcurrency || 2, SPREAD_MAX_WORKERS));
    // Classic workers: a module worker from a blob: URL does not load in a page opened from
    // file:// (an opaque origin), so the build writes the glue without export keywords.
    for (let i = 0; i < count; i += 1) workers.push(new Worker(url, { name: `bandwright-spread-${i + 1}` }));
    await Promise.all(workers.map((worker) => new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`a worker did not start within ${SPREAD_START_MS / 1000} s`)), SPREAD_START_MS);
      worker.onmessage = (event) => {
        clearTimeout(timer);
        if (event.data.kind === "ready") resolve();
        else reject(new Error(event.data.message || "a worker could not start"));
      };
      worker.onerror = (event) => {
        clearTimeout(timer);
        event.preventDefault();
        reject(new Error(event.message || "a worker could not load its script"));
      };
      worker.postMessage({ kind: "start", module });
    })));
    spread.pool = workers;
    return workers;
  } catch (error) {
    for (const worker of workers) worker.terminate();
    spread.poolError = errorText(error);
    return null;
  } finally {
    if (url) URL.revokeObjectURL(url);
  }
}

/**
 * The wasm-bindgen glue, read back from this page's own module script, where the build marks it
 * (web/build/src/page.rs); the worker runs the same glue.
 */
function glueSource() {
  const start = "// ---- wasm-bindgen glue (bandwright build) ----";
  const end = "// ---- end of wasm-bindgen glue ----";
  for (const script of document.querySelectorAll("script[type=module]")) {
    const text = script.textContent;
    const from = text.indexOf(start);
    const to = text.indexOf(end);
    if (from >= 0 && to > from) return text.slice(from + start.length, to);
  }
  return null;
}

/** Hands the jobs to the workers as each one comes free; resolves when all batches are in. */
function runOnWorkers(run, pool, jobs, designJson, optionsJson) {
  return new Promise((resolve, reject) => {
    const queue = jobs.slice();
    let active = 0;
    const fail = (error) => {
      stopSpreadWorkers();
      reject(error);
    };
    run.cancel = () => {
      stopSpreadWorkers();
      resolve();
    };
    const next = (worker) => {
      if (run.cancelled) return;
      const job = queue.shift();
      if (!job) {
        if (active === 0) resolve();
        return;
      }
      active += 1;
      worker.postMessage(job.kind === "trials"
        ? { kind: "trials", job: job.id, first: job.first, end: job.end }
        : { kind: "corners", job: job.id });
    };
    for (const worker of pool) {
      worker.onerror = (event) => {
        event.preventDefault();
        fail(new Error(event.message || "a worker failed"));
      };
      worker.onmessage = (event) => {
        const message = event.data;
        if (run.cancelled) return;
        if (message.kind === "planned") {
          next(worker);
        } else if (message.kind === "batch") {
          active -= 1;
          try {
            run.planner.add_batch(message.data);
          } catch (error) {
            fail(error);
            return;
          }
          if (message.end !== undefined) run.done += message.end - message.first;
          showSpreadProgress(run);
          next(worker);
        } else if (message.kind === "error") {
          fail(new Error(message.message));
        }
      };
      worker.postMessage({ kind: "plan", design: designJson, options: optionsJson });
    }
  });
}

/** The fallback: the same jobs here, one short slice per task, so that the page stays live. */
async function runOnMainThread(run, jobs) {
  run.cancel = () => {};
  for (const job of jobs) {
    if (run.cancelled) return;
    const data = job.kind === "trials" ? run.planner.run_trials(job.first, job.end) : run.planner.run_corners();
    run.planner.add_batch(data);
    if (job.kind === "trials") run.done += job.end - job.first;
    showSpreadProgress(run);
    await new Promise((resolve) => setTimeout(resolve, 0));
  }
}

function stopSpreadWorkers() {
  for (const worker of spread.pool || []) worker.terminate();
  spread.pool = null;
}

function cancelSpread() {
  const run = spread.run;
  if (!run) return;
  run.cancelled = true;
  if (run.cancel) run.cancel();
  $("spread-status").textContent = `Cancelled after ${run.done} of ${run.total} trials; nothing new is shaded.`;
  spread.run = null;
  setSpreadRunning(false);
}

function setSpreadRunning(running) {
  $("spread-run").disabled = running;
  $("spread-cancel").disabled = !running;
  $("spread").dataset.running = running ? "true" : "false";
  const bar = $("spread-progress");
  bar.hidden = !running;
  if (running) {
    bar.value = 0;
    $("spread-status").textContent = "Starting…";
  }
}

function showSpreadEngine(workers, text) {
  $("spread").dataset.workers = String(workers);
  $("spread-status").dataset.engine = text;
}

function showSpreadProgress(run) {
  const bar = $("spread-progress");
  bar.max = run.total;
  bar.value = run.done;
  $("spread-status").textContent = `${run.done} of ${run.total} trials on ${run.engine}`;
}

/** Summarises, hands the bands to the session and shows the figures. */
function finishSpread(run, elapsedMs) {
  const mask = state.mask ?? null;
  let summaryJson;
  let maskProblem = null;
  try {
    summaryJson = run.planner.summarize(mask ? JSON.stringify(mask) : null);
  } catch (error) {
    if (!mask) throw error;
    maskProblem = splitFieldMessage(errorText(error)).text;
    summaryJson = run.planner.summarize(null);
  }
  session.set_tolerance(summaryJson);
  spread.summary = JSON.parse(summaryJson);
  // A counter that tests wait on.
  $("spread").dataset.runs = String(Number($("spread").dataset.runs || 0) + 1);
  spread.summary.maskProblem = maskProblem;
  spread.summary.maskKey = JSON.stringify(mask ?? null);
  $("spread-status").textContent = `${run.total} trials on ${run.engine} in ${Math.round(elapsedMs)} ms.`;
  renderSpreadResults();
  redraw({ report: true });
}

function renderSpreadResults() {
  const summary = spread.summary;
  $("spread-results").hidden = !summary;
  if (!summary) return;
  const text = summary.formatted;
  $("spread-run-text").textContent = `Ran ${text.run}.`;
  $("spread-figures").replaceChildren(...text.spreads.flatMap((item) => {
    const term = document.createElement("dt");
    term.textContent = item.label;
    const detail = document.createElement("dd");
    detail.textContent = item.text;
    return [term, detail];
  }));
  // A yield belongs to the limits it was counted against.
  const limitsMoved = summary.maskKey !== JSON.stringify(currentMask());
  $("spread-yield").textContent = limitsMoved
    ? "The limits changed after this run; run the spread again to count the yield against them."
    : summary.maskProblem
      ? `The yield could not be counted against the spec mask: ${summary.maskProblem}.`
      : text.yield ?? "No spec mask is set, so no yield is counted.";
  updateSpreadState();
}

/** Marks the results stale once the working design is no longer the one they were run on. */
function updateSpreadState() {
  if (!session || !spread.summary) return;
  const state_ = session.tolerance_state();
  $("spread-stale").hidden = state_ !== "stale";
  $("spread").dataset.bands = state_;
}

/** The spread in the printed report, when it applies to the design. */
function renderSpreadReport() {
  const shown = Boolean(spread.summary) && session.tolerance_state() === "shown";
  $("r-spread").hidden = !shown;
  if (!shown) return;
  const text = spread.summary.formatted;
  $("r-spread-run").textContent = `${text.run}. ${text.yield ?? ""}`.trim();
  $("r-spread-figures").replaceChildren(...text.spreads.map((item) => {
    const line = document.createElement("li");
    line.textContent = `${item.label}: ${item.text}`;
    return line;
  }));
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
  updateYieldControls();
  if (spread.summary) renderSpreadResults();
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
  afterFirstPlot(fillFrontEnd);
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
}

/** The converter card's series and its demo inputs (a saved card is written over them after). */
function fillFrontEnd() {
  for (const id of ["fe-resistors", "fe-capacitors"]) for (const name of SERIES) $(id).append(new Option(name, name));
  writeFields($("fe-form"), JSON.parse(api.front_end_demo()));
  showSlots($("fe-form"), { rule: $("fe-rule").value });
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
    // After the card's own demo inputs, which wait for the first plot while the page starts.
    afterFirstPlot(() => {
      writeFields($("fe-form"), saved.front_end);
      showSlots($("fe-form"), { rule: $("fe-rule").value });
    });
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

// ================================================================ crossover workspace
// The speaker-crossover workspace: its own state, store, form and plot. It shares the page and
// the helpers above, never the filter bench's design. Every figure and text it shows comes from
// the wasm exports (`CrossoverBench`, `check_crossover`, `crossover_ways`, `read_impedance_csv`,
// `demo_crossover`, `parse_value`, `format_value`); this code only moves them to the DOM.

/** Where the crossover workspace is kept between visits: apart from the filter design's store. */
const XO_STORE_KEY = "bandwright.crossover.v1";
/** The ways-and-frequencies, driver and level inputs of a branch card, by the key they fill. */
const XO_MODEL_KEYS = ["re", "le", "l2", "r2", "fs", "qms", "qes"];

const xo = {
  bench: null, // the CrossoverBench: the last crossover that analysed, which it draws
  file: null, // that crossover's file (object)
  csv: {}, // impedance CSV texts by name
  report: null, // its report (object)
  ready: false,
  draws: 0,
};

function xoWire() {
  $("ws-filter").addEventListener("click", () => showWorkspace("filter"));
  $("ws-crossover").addEventListener("click", () => showWorkspace("crossover"));
  let saved = null;
  try {
    saved = JSON.parse(localStorage.getItem(XO_STORE_KEY) || "null");
  } catch {
    saved = { corrupt: true };
  }
  if (saved && saved.workspace === "crossover") showWorkspace("crossover", { save: false });
}

/** Shows one workspace; the other keeps its state. */
function showWorkspace(name, { save = true } = {}) {
  const crossover = name === "crossover";
  $("app").dataset.workspace = crossover ? "crossover" : "filter";
  $("ws-filter").setAttribute("aria-pressed", String(!crossover));
  $("ws-crossover").setAttribute("aria-pressed", String(crossover));
  $("xo").hidden = !crossover;
  if (!crossover) document.title = state.design && state.design.name ? `${state.design.name} · Bandwright` : "Bandwright";
  if (crossover) {
    if (!xo.ready) xoStart();
    xoRedraw();
  } else {
    redraw({});
  }
  if (save) xoSave();
}

function xoStart() {
  xo.ready = true;
  xo.bench = new api.CrossoverBench();
  for (const id of ["xo-capacitors", "xo-inductors", "xo-resistors"]) {
    const select = $(id);
    for (const series of SERIES) select.append(new Option(series, series));
  }
  $("xo-capacitors").value = "E12";
  $("xo-inductors").value = "E12";
  $("xo-resistors").value = "E24";
  const form = $("xo-form");
  form.addEventListener("submit", (event) => event.preventDefault());
  form.addEventListener("input", (event) => {
    if (event.target.tagName === "INPUT" && event.target.type === "text") xoChangeSoon();
  });
  form.addEventListener("change", (event) => {
    const target = event.target;
    if (target.type === "file") return;
    if (target.id === "xo-ways") return xoSetWays(Number(target.value));
    if (target.tagName === "SELECT") xoShowWhen(target.closest(".xo-branch"));
    xoChange();
  });
  $("xo-name").addEventListener("input", xoChangeSoon);
  $("xo-demo").addEventListener("click", () => xoLoadDemo("Loaded the demo crossover (our own scenario with made-up drivers)."));
  $("xo-save").addEventListener("click", xoSaveFile);
  $("xo-open").addEventListener("click", () => $("xo-open-input").click());
  $("xo-open-input").addEventListener("change", xoOpenFiles);
  $("xo-csv").addEventListener("click", () => {
    try {
      download(`${xoStem()}-sweep.csv`, xo.bench.sweep_csv(), "text/csv");
    } catch (error) {
      xoBar(`Could not export the sweep: ${errorText(error)}`);
    }
  });
  $("xo-svg").addEventListener("click", () => {
    try {
      download(`${xoStem()}-plot.svg`, xo.bench.plot_svg(1000, 900, theme()), "image/svg+xml");
    } catch (error) {
      xoBar(`Could not export the plot: ${errorText(error)}`);
    }
  });
  new ResizeObserver(() => xoRedraw()).observe($("xo-plot"));
  matchMedia("(prefers-color-scheme: dark)").addEventListener("change", () => xoRedraw());
  window.addEventListener("pagehide", xoSave);
  if (!xoRestore()) xoLoadDemo(null);
}

function xoRestore() {
  let text = null;
  try {
    text = localStorage.getItem(XO_STORE_KEY);
  } catch {
    return false;
  }
  if (!text) return false;
  let saved;
  try {
    saved = JSON.parse(text);
    if (saved && saved.format === "bandwright-crossover-workspace" && !saved.file) return false;
    if (!saved || saved.format !== "bandwright-crossover-workspace" || saved.version !== 1 || !saved.file) throw new Error("it is not a saved crossover workspace");
    if (saved.options) xoWriteOptions(saved.options);
    xoAdopt(JSON.stringify(saved.file), saved.csv || {}, "Restored the crossover you were working on.");
    return true;
  } catch (error) {
    xoLoadDemo(`The crossover saved in this browser could not be read (${errorText(error)}); the demo crossover is shown instead. The filter bench's design is kept apart and is not affected.`);
    return true;
  }
}

function xoLoadDemo(message) {
  const demo = JSON.parse(api.demo_crossover());
  xoAdopt(JSON.stringify(demo.file), demo.csv, message);
}

/** Takes a crossover file (text) and CSV texts as the working crossover; throws when it fails. */
function xoAdopt(fileText, csv, message) {
  const checked = JSON.parse(api.check_crossover(fileText, JSON.stringify(csv)));
  const report = JSON.parse(xo.bench.analyse(JSON.stringify(checked), JSON.stringify(csv), JSON.stringify(xoOptions())));
  xo.file = checked;
  xo.csv = { ...csv };
  xoWriteForm();
  xoClearErrors();
  xoShowReport(report);
  if (message) xoNotice(message);
  xoSaveSoon();
}

// ---- the form

function xoWriteOptions(options) {
  $("xo-power").value = options.power || "";
  $("xo-from").value = options.from || "";
  $("xo-to").value = options.to || "";
  for (const kind of ["capacitors", "inductors", "resistors"]) if (SERIES.includes(options[kind])) $(`xo-${kind}`).value = options[kind];
}

function xoOptions() {
  return {
    power: $("xo-power").value.trim() || null,
    from: $("xo-from").value.trim() || null,
    to: $("xo-to").value.trim() || null,
    capacitors: $("xo-capacitors").value || null,
    inductors: $("xo-inductors").value || null,
    resistors: $("xo-resistors").value || null,
  };
}

/** Puts an SI value into a text field, remembering it so that the same text reads back exactly. */
function xoPut(input, value, quantity) {
  if (value === undefined || value === null) {
    input.value = "";
    delete input.dataset.si;
    return;
  }
  // Plain numbers (Q, dB, Ω/H) read better as written ("0.42", not "420m").
  input.value = quantity === "ratio" ? String(value) : formatShort(value, quantity);
  input.dataset.si = String(value);
  input.dataset.shown = input.value;
}

function xoWriteForm() {
  const file = xo.file;
  $("xo-name").value = file.name || "";
  $("xo-ways").value = String(file.branches.length);
  $("xo-f2-box").hidden = file.branches.length < 3;
  xoPut($("xo-f1"), file.crossover_frequencies[0], "frequency");
  xoPut($("xo-f2"), file.crossover_frequencies[1], "frequency");
  xoPut($("xo-nominal"), file.nominal_impedance, "resistance");
  xoPut($("xo-dcr"), file.coil_resistance_per_henry, "ratio");
  const holder = $("xo-branches");
  holder.replaceChildren();
  const defaults = file.defaults || {};
  file.branches.forEach((branch, index) => {
    const card = $("xo-branch-template").content.firstElementChild.cloneNode(true);
    card.dataset.index = String(index);
    const key = (name) => card.querySelector(`[data-key="${name}"]`);
    card.querySelector('[data-role="title"]').textContent = `Branch ${index + 1}`;
    key("name").value = branch.name;
    key("alignment").value = branch.alignment || defaults.alignment || "linkwitz_riley";
    key("order").value = String(branch.order || defaults.order || 2);
    key("polarity").value = branch.polarity || defaults.polarity || "normal";
    key("design_load").value = branch.design_load || defaults.design_load || "nominal";
    key("zobel").value = branch.zobel || defaults.zobel || "none";
    key("notch").value = branch.notch || defaults.notch || "none";
    const driver = branch.driver;
    const kind = driver.resistor !== undefined ? "resistor" : driver.measured !== undefined ? "measured" : "model";
    key("driver_kind").value = kind;
    xoPut(key("resistor"), driver.resistor, "resistance");
    const model = driver.model || {};
    for (const name of XO_MODEL_KEYS) xoPut(key(name), model[name], key(name).dataset.quantity);
    if (kind === "measured") {
      card.dataset.csv = driver.measured;
      xoCsvStatus(card, driver.measured);
    }
    const acoustic = branch.acoustic;
    xoPut(key("sensitivity"), acoustic ? acoustic.sensitivity : null, "ratio");
    xoPut(key("delay"), acoustic && acoustic.delay ? acoustic.delay : null, "time");
    if (acoustic && acoustic.response) card.dataset.response = acoustic.response;
    const level = branch.level || {};
    key("level_kind").value = level.l_pad !== undefined ? "l_pad" : level.series_resistor !== undefined ? "series_resistor" : "none";
    xoPut(key("level_db"), level.l_pad ?? level.series_resistor, "ratio");
    key("csv").addEventListener("click", () => card.querySelector('[data-role="csv-input"]').click());
    card.querySelector('[data-role="csv-input"]').addEventListener("change", (event) => xoImportCsv(card, event));
    holder.append(card);
    xoShowWhen(card);
  });
}

function xoShowWhen(card) {
  if (!card) return;
  const kind = card.querySelector('[data-key="driver_kind"]').value;
  for (const part of card.querySelectorAll("[data-when]")) part.hidden = part.dataset.when !== kind;
  const level = card.querySelector('[data-key="level_kind"]').value;
  for (const part of card.querySelectorAll("[data-when-level]")) part.hidden = !part.dataset.whenLevel.split(" ").includes(level);
}

function xoCsvStatus(card, name, extra = "") {
  const status = card.querySelector('[data-role="csv-status"]');
  const text = xo.csv[name];
  if (text === undefined) {
    status.textContent = name ? `“${name}” is named but not loaded: import it.` : "No CSV yet.";
    return;
  }
  try {
    status.textContent = `“${name}”: ${JSON.parse(api.read_impedance_csv(text)).text}${extra}`;
  } catch (error) {
    status.textContent = `“${name}”: ${errorText(error)}`;
  }
}

/** A field problem the page finds before the core sees the file. */
class XoFieldError extends Error {
  constructor(control, message) {
    super(message);
    this.control = control;
  }
}

/** Reads a text field as a value of its quantity; `null` when empty and optional. */
function xoValue(input, { optional = false } = {}) {
  const text = input.value.trim();
  if (text === "") {
    if (optional) return null;
    throw new XoFieldError(input, "give a value");
  }
  if (input.dataset.si !== undefined && input.value === input.dataset.shown) return Number(input.dataset.si);
  try {
    return api.parse_value(text, input.dataset.quantity);
  } catch (error) {
    throw new XoFieldError(input, errorText(error));
  }
}

/** The crossover file the form describes (throws XoFieldError for a field it cannot read). */
function xoReadForm() {
  const base = xo.file;
  const ways = $("xo-branches").children.length;
  const file = {
    format: "bandwright-crossover",
    version: 1,
    name: $("xo-name").value.trim(),
    nominal_impedance: xoValue($("xo-nominal")),
    crossover_frequencies: ways === 3 ? [xoValue($("xo-f1")), xoValue($("xo-f2"))] : [xoValue($("xo-f1"))],
    branches: [],
  };
  if (base.note) file.note = base.note;
  const dcr = xoValue($("xo-dcr"), { optional: true });
  if (dcr !== null) file.coil_resistance_per_henry = dcr;
  if (base.reference_sensitivity !== undefined) file.reference_sensitivity = base.reference_sensitivity;
  for (const card of $("xo-branches").children) {
    const key = (name) => card.querySelector(`[data-key="${name}"]`);
    const branch = {
      name: key("name").value.trim(),
      order: Number(key("order").value),
      alignment: key("alignment").value,
      polarity: key("polarity").value,
      design_load: key("design_load").value,
      zobel: key("zobel").value,
      notch: key("notch").value,
    };
    const kind = key("driver_kind").value;
    if (kind === "resistor") branch.driver = { resistor: xoValue(key("resistor")) };
    else if (kind === "measured") {
      if (!card.dataset.csv) throw new XoFieldError(key("csv"), "choose the driver's impedance CSV with “Import impedance CSV…”");
      branch.driver = { measured: card.dataset.csv };
    } else {
      const model = { re: xoValue(key("re")) };
      for (const name of XO_MODEL_KEYS.slice(1)) {
        const value = xoValue(key(name), { optional: true });
        if (value !== null) model[name] = value;
      }
      branch.driver = { model };
    }
    const sensitivity = xoValue(key("sensitivity"), { optional: true });
    const delay = xoValue(key("delay"), { optional: true });
    if (sensitivity === null && (delay !== null || card.dataset.response)) {
      throw new XoFieldError(key("sensitivity"), "give the driver's sensitivity together with its offset delay");
    }
    if (sensitivity !== null) {
      branch.acoustic = { sensitivity };
      if (delay !== null) branch.acoustic.delay = delay;
      if (card.dataset.response) branch.acoustic.response = card.dataset.response;
    }
    const level = key("level_kind").value;
    if (level !== "none") branch.level = { [level]: xoValue(key("level_db")) };
    file.branches.push(branch);
  }
  return file;
}

let xoChangeFrame = 0;
function xoChangeSoon() {
  cancelAnimationFrame(xoChangeFrame);
  xoChangeFrame = requestAnimationFrame(xoChange);
}

/** Analyses what the form says; on a problem, names it and keeps the last good crossover. */
function xoChange() {
  cancelAnimationFrame(xoChangeFrame);
  xoClearErrors();
  let file;
  try {
    file = xoReadForm();
  } catch (error) {
    if (error instanceof XoFieldError) return xoFieldError(error.control, error.message);
    throw error;
  }
  let report;
  try {
    report = JSON.parse(xo.bench.analyse(JSON.stringify(file), JSON.stringify(xo.csv), JSON.stringify(xoOptions())));
  } catch (error) {
    return xoCoreError(errorText(error));
  }
  xo.file = file;
  xoShowReport(report);
  xoSaveSoon();
}

function xoSetWays(ways) {
  let file = xo.file;
  try {
    file = xoReadForm();
  } catch {
    // An unreadable field: switch from the last good crossover.
  }
  try {
    const next = JSON.parse(api.crossover_ways(JSON.stringify(file), ways));
    const report = JSON.parse(xo.bench.analyse(JSON.stringify(next), JSON.stringify(xo.csv), JSON.stringify(xoOptions())));
    xo.file = next;
    xoWriteForm();
    xoClearErrors();
    xoShowReport(report);
    xoSaveSoon();
  } catch (error) {
    $("xo-ways").value = String(xo.file.branches.length);
    xoCoreError(errorText(error));
  }
}

// ---- messages

function xoClearErrors() {
  for (const control of $("xo").querySelectorAll("[aria-invalid]")) control.removeAttribute("aria-invalid");
  $("xo-msg").hidden = true;
  $("xo-msg").textContent = "";
}

/** Where a control is, in words: "woofer, Re" or "Crossover 1". */
function xoWhere(control) {
  const label = control.closest("label");
  const words = control.dataset.key === "csv" ? "impedance CSV" : label ? [...label.childNodes].filter((n) => n.nodeType === Node.TEXT_NODE).map((n) => n.textContent).join(" ").trim() : control.textContent.trim();
  const card = control.closest(".xo-branch");
  if (!card) return words;
  const name = card.querySelector('[data-key="name"]').value.trim() || `branch ${Number(card.dataset.index) + 1}`;
  return `${name}, ${words}`;
}

function xoFieldError(control, text) {
  if (control) control.setAttribute("aria-invalid", "true");
  const box = $("xo-msg");
  box.textContent = `${control ? `${xoWhere(control)}: ` : ""}${text}. The plots and tables show the last crossover that worked.`;
  box.hidden = false;
}

/** A core error `field <path>: …` goes to the control of that path; others under the form. */
function xoCoreError(message) {
  const match = /^field ([^:\s]+): ([\s\S]*)$/.exec(message);
  if (!match) return xoFieldError(null, message);
  xoFieldError(xoControlFor(match[1]), match[2]);
}

function xoControlFor(path) {
  const top = {
    "crossover_frequencies[0]": "xo-f1",
    "crossover_frequencies[1]": "xo-f2",
    nominal_impedance: "xo-nominal",
    coil_resistance_per_henry: "xo-dcr",
    branches: "xo-ways",
    ways: "xo-ways",
    power: "xo-power",
    from: "xo-from",
    to: "xo-to",
    capacitors: "xo-capacitors",
    inductors: "xo-inductors",
    resistors: "xo-resistors",
    name: "xo-name",
  }[path];
  if (top) return $(top);
  const match = /^(?:branches\[(\d+)\]|defaults)\.(.+)$/.exec(path);
  if (!match) return null;
  const card = $("xo-branches").children[Number(match[1] || 0)];
  if (!card) return null;
  const sub = match[2];
  const key = sub.startsWith("driver.model.") ? sub.slice("driver.model.".length)
    : { "driver.resistor": "resistor", "driver.measured": "csv", "acoustic.sensitivity": "sensitivity", "acoustic.delay": "delay",
        "level.l_pad": "level_db", "level.series_resistor": "level_db" }[sub] || sub;
  return card.querySelector(`[data-key="${CSS.escape(key)}"]`);
}

function xoBar(text) {
  const box = $("xo-file-msg");
  box.textContent = text;
  box.hidden = false;
}

let xoNoticeTimer = 0;
function xoNotice(text) {
  const bar = $("xo-notice");
  bar.textContent = text;
  bar.hidden = false;
  clearTimeout(xoNoticeTimer);
  xoNoticeTimer = setTimeout(() => (bar.hidden = true), 12000);
}

// ---- the results

function xoCells(row, texts, numeric = []) {
  for (const [index, text] of texts.entries()) {
    const cell = document.createElement("td");
    cell.textContent = text ?? "—";
    if (numeric.includes(index)) cell.className = "num";
    row.append(cell);
  }
  return row;
}

function xoItems(list, lines) {
  list.replaceChildren(...lines.map((line) => {
    const item = document.createElement("li");
    item.textContent = typeof line === "string" ? line : line.text;
    if (line.className) item.className = line.className;
    return item;
  }));
}

function xoShowReport(report) {
  xo.report = report;
  $("xo-file-msg").hidden = true;
  if (!$("xo").hidden) document.title = `${report.name || "Speaker crossover"} · Bandwright`;
  const minimum = report.impedance_minimum;
  xoItems($("xo-summary"), [
    { text: `Impedance minimum, as built: ${minimum.built.text}.`, className: minimum.built.below_rule_of_thumb ? "below" : "" },
    `Impedance minimum, designed: ${minimum.designed.text}.`,
    minimum.rule_text,
    `Sum, as built: ${report.sum_built.text}; designed: ${report.sum_designed.text}.`,
    `At the crossover: ${report.branches.map((b) => `${b.name} ${b.at_crossover.map((a) => a.text).join(", ")}`).join("; ")}; sum ${report.sum_at_crossover.map((a) => a.text).join(", ")}.`,
    `Levels relative to ${report.reference_sensitivity_db ?? "—"} dB; band ${report.band.text}.${report.unsolved.count ? ` ${report.unsolved.count} frequencies could not be solved (first: ${report.unsolved.first}).` : ""}`,
  ]);
  $("xo-stress-power").textContent = report.stress.power_text;
  $("xo-amp").textContent = `${report.stress.amplifier_text}: a hazardous voltage at higher powers. Work with the amplifier off.`;
  $("xo-stress-body").replaceChildren(...report.stress.parts.map((part) =>
    xoCells(document.createElement("tr"), [part.reference, part.value_text, part.rating_text, `${part.worst_text} at ${part.at_text}`], [2, 3])));
  xoItems($("xo-drivers"), report.stress.drivers.map((d) => d.text));
  $("xo-margins").textContent = report.stress.margins_text;
  $("xo-cautions").replaceChildren(...report.cautions.flatMap((caution) => {
    const term = document.createElement("dt");
    term.textContent = caution.title;
    const text = document.createElement("dd");
    text.textContent = caution.text;
    return [term, text];
  }));
  $("xo-parts-body").replaceChildren(...report.parts.map((part) =>
    xoCells(document.createElement("tr"), [part.reference, part.kind, part.ideal_text, part.standard_text, part.dcr_text, part.rating_text], [2, 3, 4, 5])));
  $("xo-loss-body").replaceChildren(...report.branches.map((b) =>
    xoCells(document.createElement("tr"), [b.name, `${b.filter}, order ${b.order} ${b.alignment}, ${b.polarity} polarity, into ${b.load_text}`, `${b.deviation_designed.text} / ${b.deviation_built.text}`, b.coil_loss_built.text], [2, 3])));
  xoItems($("xo-helpers"), report.branches.flatMap((b) => b.helpers.map((h) => `${b.name}: ${h}`)));
  $("xo-note").textContent = report.note || "";
  for (const [index, card] of [...$("xo-branches").children].entries()) {
    const branch = report.branches[index];
    if (branch) card.querySelector('[data-role="filter"]').textContent = `${branch.name}: ${branch.filter}`;
  }
  xoRedraw();
}

let xoFrameRequested = false;
function xoRedraw() {
  if (!xo.ready || xoFrameRequested) return;
  xoFrameRequested = true;
  requestAnimationFrame(() => {
    xoFrameRequested = false;
    const canvas = $("xo-plot");
    if ($("xo").hidden || !xo.report) return;
    const box = $("xo-plot-msg");
    try {
      xo.bench.draw(canvas, theme());
      xo.draws += 1;
      canvas.dataset.draws = String(xo.draws);
      box.hidden = true;
    } catch (error) {
      box.textContent = `The plots could not be drawn: ${errorText(error)}`;
      box.hidden = false;
    }
  });
}

// ---- files and the store

async function xoImportCsv(card, event) {
  const input = event.target;
  const chosen = input.files && input.files[0];
  input.value = "";
  if (!chosen) return;
  const button = card.querySelector('[data-key="csv"]');
  if (chosen.size > MAX_FILE_BYTES) return xoFieldError(button, `“${chosen.name}” is ${chosen.size} bytes; an impedance CSV is a small text (up to ${MAX_FILE_BYTES} bytes)`);
  const text = await chosen.text();
  try {
    api.read_impedance_csv(text);
  } catch (error) {
    xoClearErrors();
    return xoFieldError(button, `“${chosen.name}” could not be read: ${errorText(error)}; the driver keeps its previous curve`);
  }
  xo.csv[chosen.name] = text;
  card.dataset.csv = chosen.name;
  xoCsvStatus(card, chosen.name);
  xoChange();
}

async function xoOpenFiles(event) {
  const input = event.target;
  const files = [...(input.files || [])];
  input.value = "";
  if (!files.length) return;
  $("xo-file-msg").hidden = true;
  const keep = " Your crossover is unchanged.";
  const big = files.find((f) => f.size > MAX_FILE_BYTES);
  if (big) return xoBar(`“${big.name}” is ${big.size} bytes; this page reads files up to ${MAX_FILE_BYTES} bytes.${keep}`);
  const json = files.filter((f) => !/\.csv$|\.txt$/i.test(f.name));
  if (json.length !== 1) return xoBar(`Choose one crossover file (JSON), with the impedance CSVs it names if any; ${json.length} other files were chosen.${keep}`);
  // The CSVs are read by the core in the role the file gives each (impedance or acoustic
  // response); a bad row is named with its file, field and line.
  const csv = { ...xo.csv };
  for (const f of files.filter((f) => /\.csv$|\.txt$/i.test(f.name))) csv[f.name] = await f.text();
  try {
    xoAdopt(await json[0].text(), csv, `Opened “${json[0].name}”.`);
  } catch (error) {
    const text = errorText(error).replace(/^field ([^:\s]+): /, "");
    xoBar(`“${json[0].name}” could not be opened: ${text}. A crossover file is JSON with "format": "bandwright-crossover", "version": 1 (see the README).${keep}`);
  }
}

function xoStem() {
  const name = (xo.file && xo.file.name) || "crossover";
  return name.normalize("NFKD").replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "").slice(0, 60) || "crossover";
}

function xoCsvInUse() {
  const used = {};
  for (const branch of xo.file.branches) {
    for (const name of [branch.driver.measured, branch.acoustic && branch.acoustic.response]) {
      if (name && xo.csv[name] !== undefined) used[name] = xo.csv[name];
    }
  }
  return used;
}

function xoSaveFile() {
  let text;
  try {
    text = api.check_crossover(JSON.stringify(xo.file), JSON.stringify(xo.csv));
  } catch (error) {
    return xoBar(`Could not save: ${errorText(error)}`);
  }
  download(`${xoStem()}.json`, text, "application/json");
  const named = Object.keys(xoCsvInUse());
  if (named.length) xoNotice(`Saved. The file names ${named.map((n) => `“${n}”`).join(", ")}: keep ${named.length > 1 ? "them" : "it"} beside it, and choose ${named.length > 1 ? "them" : "it"} with it when you open it.`);
}

let xoSaveTimer = 0;
function xoSaveSoon() {
  clearTimeout(xoSaveTimer);
  xoSaveTimer = setTimeout(xoSave, 250);
}

function xoSave() {
  const workspace = $("app").dataset.workspace === "crossover" ? "crossover" : "filter";
  const saved = { format: "bandwright-crossover-workspace", version: 1, workspace };
  if (xo.file) Object.assign(saved, { file: xo.file, csv: xoCsvInUse(), options: xoOptions() });
  else {
    // Not opened this visit: keep the crossover the store holds, with the new choice.
    let before = null;
    try {
      before = JSON.parse(localStorage.getItem(XO_STORE_KEY) || "null");
    } catch {
      // A corrupt store: only the choice is written.
    }
    if (before && before.format === saved.format && before.file) Object.assign(saved, { file: before.file, csv: before.csv, options: before.options });
  }
  xoStoreChoice(saved);
}

function xoStoreChoice(saved) {
  try {
    localStorage.setItem(XO_STORE_KEY, JSON.stringify(saved));
  } catch {
    // Storage full or refused: the workspace keeps working without autosave.
  }
}
// ================================================================ /crossover workspace

// ---------------------------------------------------------------- go

// Last, so that every declaration above is initialised before it runs (the build wraps this
// module in a block, where const and let are not hoisted).
if (api) {
  try {
    start();
  } catch (error) {
    showStartFailure(error);
    performance.mark("bw:started");
  }
}
