/* taubudget planner: builds a request from the form, calls the public API of this service and
   draws the responses with uPlot. No other server, no outside asset. */
"use strict";
(function () {
  const $ = (sel, root = document) => root.querySelector(sel);
  const $$ = (sel, root = document) => Array.from(root.querySelectorAll(sel));
  const plots = {};
  window.taubudgetPlots = plots; // the browser test counts the plotted points here
  const COLORS = ["#1b7f79", "#b4532a", "#6b4e9b", "#123f4a", "#c28a1e", "#4d7f2a", "#8c3b62"];
  const PLAN_ONLY = ["stations", "sync_policy", "relativistic_offset"];
  const KEEP = "__as_in_request__";
  const MAX_LINK_CHARS = 60000;
  const state = { base: {}, file: null, fileText: null, stabilityBase: {}, examples: {} };

  // --- JSON pointers (RFC 6901), the same paths the service names in its problems ------------
  const parts = (ptr) => ptr.split("/").slice(1).map((s) => s.replace(/~1/g, "/").replace(/~0/g, "~"));
  function getPtr(obj, ptr) {
    let o = obj;
    for (const k of parts(ptr)) { if (o == null || typeof o !== "object") return undefined; o = o[k]; }
    return o;
  }
  function setPtr(obj, ptr, value) {
    const ks = parts(ptr);
    let o = obj;
    ks.slice(0, -1).forEach((k, i) => {
      if (o[k] == null || typeof o[k] !== "object") o[k] = /^\d+$/.test(ks[i + 1]) ? [] : {};
      o = o[k];
    });
    o[ks[ks.length - 1]] = value;
  }
  function delPtr(obj, ptr) {
    const ks = parts(ptr);
    const parent = ks.length > 1 ? getPtr(obj, "/" + ks.slice(0, -1).join("/")) : obj;
    if (parent && typeof parent === "object") delete parent[ks[ks.length - 1]];
  }
  function prune(o) { // drop the empty objects that removing form fields leaves behind
    if (!o || typeof o !== "object" || Array.isArray(o)) return o;
    for (const k of Object.keys(o)) {
      const v = prune(o[k]);
      if (v && typeof v === "object" && !Array.isArray(v) && !Object.keys(v).length) delete o[k];
    }
    return o;
  }

  // --- Form <-> request ------------------------------------------------------------------
  const active = (el) => !el.closest("[hidden]");
  const numOrText = (s) => (s !== "" && Number.isFinite(Number(s)) ? Number(s) : s);
  function readValue(el) {
    const kind = el.dataset.kind, raw = el.value.trim();
    if (kind === "bool") return el.checked;
    if (raw === "") return undefined;
    if (kind === "number") return numOrText(raw); // text the service will name as not a number
    if (kind === "numbers") return raw.split(/[\s,;]+/).filter(Boolean).map(numOrText);
    if (kind === "pairs") {
      return raw.split(/\n+/).map((l) => l.trim()).filter(Boolean).map((l) => l.split(/[\s,;]+/).map(numOrText));
    }
    return raw;
  }
  function writeValue(el, v) {
    const kind = el.dataset.kind;
    $$(`option[value="${KEEP}"]`, el).forEach((o) => o.remove());
    if (kind === "bool") el.checked = v === undefined ? el.dataset.default === "true" : Boolean(v);
    else if (v === undefined || v === null) el.value = el.tagName === "SELECT" ? el.options[0].value : "";
    else if (kind === "numbers") el.value = v.join("\n");
    else if (kind === "pairs") el.value = v.map((p) => p.join(" ")).join("\n");
    else if (el.tagName === "SELECT" && !$$("option", el).some((o) => o.value === String(v))) {
      el.append(new Option("(as in the request)", KEEP)); // e.g. a ground clock as the reference
      el.value = KEEP;
    } else el.value = String(v);
  }
  function formRequest(form, base) {
    const req = structuredClone(base || {});
    const inputs = $$("[data-ptr]", form).filter((el) => el.value !== KEEP);
    inputs.forEach((el) => delPtr(req, el.dataset.ptr));
    for (const el of inputs) {
      if (!active(el)) continue;
      const v = readValue(el);
      if (v !== undefined) setPtr(req, el.dataset.ptr, v);
    }
    return prune(req);
  }
  function updateVisibility(root) {
    for (const el of $$("[data-when]", root)) {
      const [id, values] = el.dataset.when.split("=");
      const v = id === "has-stations" ? ($$(".station", root).length ? "yes" : "no") : document.getElementById(id).value;
      el.hidden = !values.split(",").includes(v);
    }
  }

  const STATION_FIELDS = [["name", "Name", "text", ""], ["latitude_deg", "Lat", "number", "deg"],
    ["longitude_deg", "Lon", "number", "deg E"], ["height_m", "Height", "number", "m"],
    ["elevation_mask_deg", "Mask", "number", "deg"], ["geoid_undulation_m", "N", "number", "m"]];
  function addStation(st = {}) {
    const row = document.createElement("div");
    row.className = "station";
    for (const [key, label, kind, unit] of STATION_FIELDS) {
      const lab = document.createElement("label");
      lab.textContent = unit ? `${label}, ${unit}` : label;
      const inp = document.createElement("input");
      Object.assign(inp.dataset, { kind, field: key });
      if (st[key] !== undefined && st[key] !== null) inp.value = st[key];
      lab.append(inp);
      row.append(lab);
    }
    const rm = document.createElement("button");
    Object.assign(rm, { type: "button", className: "small", textContent: "×", title: "remove station" });
    rm.addEventListener("click", () => { row.remove(); renumberStations(); });
    row.append(rm);
    $("#stations").append(row);
    renumberStations();
  }
  function renumberStations() {
    $$(".station").forEach((row, i) => $$("input", row).forEach((inp) => { inp.dataset.ptr = `/stations/${i}/${inp.dataset.field}`; }));
    updateVisibility($("#budget-form"));
  }

  function budgetRequest() {
    const base = structuredClone(state.base);
    const type = $("#orbit-type").value;
    if (type === "file" ? state.file !== null : (base.orbit || {}).type !== type) base.orbit = {};
    if ($("#clock-mode").value === "none") delete base.clock;
    PLAN_ONLY.forEach((k) => delete base[k]);
    const req = formRequest($("#budget-form"), base);
    if (type !== "file") req.orbit = { type, ...req.orbit };
    return req;
  }
  function fillBudgetForm(req) {
    const form = $("#budget-form");
    state.base = structuredClone(req);
    state.file = state.fileText = null;
    $("#orbit-file").value = "";
    $("#orbit-file-note").textContent = "";
    const o = req.orbit || {};
    $("#orbit-type").value = o.text !== undefined ? "file" : o.type || "keplerian";
    if (o.text !== undefined) $("#orbit-file-note").textContent = `A ${o.type} orbit given as text in the request.`;
    const c = req.clock;
    $("#clock-mode").value = !c ? "none" : c.h_alpha ? "h_alpha" : c.adev_points ? "adev" : "preset";
    $("#stations").textContent = "";
    (req.stations || []).forEach((s) => addStation(s));
    $$("[data-ptr]", form).forEach((el) => writeValue(el, getPtr(req, el.dataset.ptr)));
    updateVisibility(form);
  }

  // --- Talking to the service --------------------------------------------------------------
  class Problem extends Error {
    constructor(problem) { super(problem.detail); this.problem = problem; }
  }
  // The API key (TAUBUDGET_API_KEYS on the service) travels only in the X-API-Key header of this
  // page's own requests: never in a URL, a permalink or a snippet (those carry placeholders), and it
  // is kept in sessionStorage (this tab, until it closes), never in localStorage.
  const apiKey = () => $("#api-key").value.trim();
  function apiHeaders(extra = {}) {
    const key = apiKey();
    return key ? { ...extra, "X-API-Key": key } : extra;
  }
  const CURL_KEY = () => (apiKey() ? ' -H "X-API-Key: $TAUBUDGET_API_KEY"' : "");
  function sheetParams(params) { // spreadsheets cannot send headers: GET routes take api_key=
    const p = new URLSearchParams(params);
    if (apiKey()) p.set("api_key", "YOUR_SPREADSHEET_KEY");
    return p;
  }
  function markKey(on) {
    const box = $("#api-key");
    box.classList.toggle("invalid", on);
    if (on) box.setAttribute("aria-invalid", "true"); else box.removeAttribute("aria-invalid");
  }
  async function callApi(path, body, file, fileType) {
    let init;
    if (file) { // an uploaded orbit file: the rest of the request travels as the 'request' part
      const fd = new FormData();
      fd.append("file", file, file.name);
      fd.append("request", JSON.stringify(body));
      if (fileType) fd.append("type", fileType);
      init = { method: "POST", headers: apiHeaders(), body: fd };
    } else {
      init = { method: "POST", headers: apiHeaders({ "Content-Type": "application/json" }), body: JSON.stringify(body) };
    }
    const r = await fetch(path, init);
    const data = await r.json().catch(() => null);
    if (!r.ok) throw new Problem(data || { title: `HTTP ${r.status}`, detail: r.statusText, errors: [] });
    return data;
  }
  function clearProblems(form, box) {
    $$(".results").forEach((r) => r.classList.remove("stale"));
    $$(".field-error", form).forEach((e) => e.remove());
    $$(".invalid", form).forEach((e) => { e.classList.remove("invalid"); e.removeAttribute("aria-invalid"); });
    box.hidden = true;
    box.textContent = "";
    markKey(false);
  }
  function fieldFor(form, pointer) {
    const els = $$("[data-ptr], [data-err]", form).filter(active);
    for (let p = pointer; ; p = p.slice(0, p.lastIndexOf("/"))) {
      const hit = els.find((e) => e.dataset.ptr === p || (e.dataset.err ? e.dataset.err.split(" ").includes(p) : false))
        || (p && els.find((e) => (e.dataset.ptr || "").startsWith(p + "/")));
      if (hit || !p) return hit || null;
    }
  }
  function showProblem(form, box, problem) {
    box.hidden = false;
    $$(".results").forEach((r) => r.classList.add("stale")); // the last result no longer matches the form
    const head = document.createElement("strong");
    head.textContent = problem.title || "Problem";
    box.append(head, document.createTextNode(" " + (problem.detail || "")));
    if (problem.status === 401 || problem.status === 403) markKey(true); // the key is missing or wrong
    for (const e of problem.errors || []) {
      const el = fieldFor(form, e.pointer || "");
      const msg = document.createElement("span");
      msg.className = "field-error";
      msg.dataset.pointer = e.pointer || "";
      msg.textContent = e.detail;
      if (el) {
        el.classList.add("invalid");
        el.setAttribute("aria-invalid", "true");
        (el.closest("label") || el.parentElement).append(msg);
      } else box.append(msg);
    }
    const first = $(".invalid", form);
    if (first) first.scrollIntoView({ block: "center" });
  }
  async function running(button, status, work) {
    button.disabled = true;
    status.textContent = "computing…";
    const t0 = performance.now();
    try {
      await work();
      status.textContent = `done in ${((performance.now() - t0) / 1000).toFixed(1)} s`;
    } catch (e) {
      status.textContent = "";
      throw e;
    } finally { button.disabled = false; }
  }

  // --- Number formatting --------------------------------------------------------------------
  function fmt(v, digits = 6) {
    if (v === null || v === undefined) return "–";
    if (typeof v !== "number") return String(v);
    const a = Math.abs(v);
    return a !== 0 && (a >= 1e7 || a < 1e-3) ? v.toExponential(digits - 1) : Number(v.toPrecision(digits)).toString();
  }
  const exact = (v) => (v == null ? "–" : typeof v === "number" ? String(Number(v.toPrecision(12))) : String(v));
  const parseUtc = (t) => Date.parse(t.replace(/(\.\d{3})\d*/, "$1")) / 1000;

  // --- Plots (uPlot) ------------------------------------------------------------------------
  function plot(name, el, opts, data) {
    if (plots[name]) { plots[name].destroy(); delete plots[name]; }
    el.textContent = "";
    const width = Math.max(320, el.clientWidth || 600);
    const o = { width, height: 270, legend: { live: true }, cursor: { drag: { x: true, y: false } }, ...opts };
    o.series = [{ label: opts.xLabel || "time (UTC)", value: opts.xValue }, ...opts.series.map((s, i) => ({
      stroke: COLORS[i % COLORS.length], width: 1.6, spanGaps: true, value: (u, v) => exact(v), ...s }))];
    const u = new uPlot(o, data, el);
    plots[name] = u;
    return u;
  }
  const utcDate = (ts) => uPlot.tzDate(new Date(ts * 1e3), "Etc/UTC");
  const timeTicks = (u, ticks) => ticks.map((t) => { // UTC: the date at midnight, else the time of day
    const s = new Date(t * 1e3).toISOString();
    return s.slice(11, 19) === "00:00:00" ? s.slice(0, 10) : s.slice(11, 16);
  });
  const timeOpts = (axes) => ({ tzDate: utcDate, xValue: (u, v) => (v == null ? "–" : new Date(v * 1e3).toISOString()),
    axes: [{ label: "time, UTC", values: timeTicks, space: 90, ...axes[0] }, ...axes.slice(1)] });
  const yAxis = (label, scale = "y", side = 3) => ({ scale, side, label, size: 86, grid: { show: side === 3 }, values: (u, ticks) => ticks.map((t) => fmt(t, 3)) });
  const empty = (el, text) => { el.textContent = ""; const p = document.createElement("p"); p.className = "hint"; p.textContent = text; el.append(p); };

  function drawOffset(b) {
    const el = $("#plot-offset"), s = b.series;
    if (!s) { empty(el, "No series in this budget: give a series step to plot the offset."); return; }
    const x = s.time_utc.map(parseUtc);
    // After the preset: the periodic part referred to zero at the sync at t = 0 (the preset line passes
    // through it); after the correction: less the change of the eccentricity term since then.
    const afterPreset = s.periodic_ns.map((v) => v - s.periodic_ns[0]);
    const afterCorr = afterPreset.map((v, i) => v - (s.eccentricity_term_ns[i] - s.eccentricity_term_ns[0]));
    plot("offset", el, { ...timeOpts([{}, yAxis("raw offset, ns"), yAxis("after preset / correction, ns", "res", 1)]),
      scales: { x: { time: true } },
      series: [{ label: "raw offset, ns" }, { label: "after preset, ns", scale: "res" },
        { label: "after correction, ns", scale: "res", dash: [6, 3] }] },
    [x, s.offset_ns, afterPreset, afterCorr]);
  }
  function drawTerms(b) {
    const names = Object.keys(b.terms_fractional);
    const x = names.map((_, i) => i);
    plot("terms", $("#plot-terms"), {
      xLabel: "term", xValue: (u, v) => (v == null ? "–" : names[v]),
      scales: { x: { time: false, range: [-0.6, names.length - 0.4] } },
      axes: [{ splits: () => x, values: (u, ticks) => ticks.map((t) => names[t] ?? "") }, yAxis("fractional rate")],
      series: [{ label: "fractional rate", paths: uPlot.paths.bars({ size: [0.6, 90] }), fill: "#1b7f7999", points: { show: false } }],
    }, [x, names.map((n) => b.terms_fractional[n])]);
  }
  function drawPeriodic(b) {
    const el = $("#plot-periodic"), s = b.series;
    if (!s) { empty(el, "No series in this budget: give a series step to plot the periodic part."); return; }
    plot("periodic", el, { ...timeOpts([{}, yAxis("ns")]), scales: { x: { time: true } },
      series: [{ label: "periodic part after preset, ns" }, { label: "eccentricity term −(2/c²) r·v, ns" },
        { label: "left after correction, ns", dash: [6, 3] }] },
    [s.time_utc.map(parseUtc), s.periodic_ns, s.eccentricity_term_ns, s.periodic_ns.map((v, i) => v - s.eccentricity_term_ns[i])]);
  }
  function drawEnvelope(b, plan) {
    const el = $("#plot-envelope"), ce = b.clock_error, cap = $("#envelope-caption");
    const env = plan && plan.envelope;
    const budgetNs = plan ? plan.time_error_budget_ns : ce && ce.time_error_budget_ns;
    if (!env && !(ce && ce.series)) {
      empty(el, "Give a clock model (and a series step) to see the time error; give stations to plan syncs.");
      cap.textContent = "";
      return;
    }
    const src = env || ce.series, k = plan ? plan.k_sigma : ce.k_sigma;
    const x = src.time_utc.map(parseUtc);
    for (let i = 1; i < x.length; i++) if (x[i] <= x[i - 1]) x[i] = x[i - 1] + 0.001; // after a sync: its own instant
    const tables = [[x, src.bound_ns, src.time_utc.map(() => budgetNs ?? null)]];
    const series = [{ label: `${k}-sigma bound, ns` }, { label: "budget, ns", stroke: "#a8231b", dash: [8, 4] }];
    if (plan) {
      const sx = plan.syncs.map((s) => parseUtc(s.time_utc));
      tables.push([sx, plan.syncs.map((s) => s.bound_before_sync_ns)]);
      series.push({ label: "sync (bound just before), ns", stroke: "#6b4e9b", paths: () => null, points: { show: true, size: 8, fill: "#6b4e9b" } });
    }
    plot("envelope", el, { ...timeOpts([{}, yAxis("|time error|, ns")]), scales: { x: { time: true } }, series },
      uPlot.join(tables));
    cap.textContent = env
      ? `The ${k}-sigma envelope of |clock minus reference| with syncs by the policy (dots: the bound just before each sync), against the ${budgetNs} ns budget.`
      : `The ${k}-sigma envelope of |clock minus reference| for a clock running free from a sync at the span start` +
        (plan ? "; dots: the bound just before each planned sync." : ".") + (budgetNs ? ` Budget ${budgetNs} ns.` : "");
  }
  function drawPasses(plan, request) {
    const card = $("#card-passes");
    card.hidden = !plan;
    if (!plan) { if (plots.passes) { plots.passes.destroy(); delete plots.passes; } return; }
    const names = request.stations.map((s) => s.name);
    const tables = names.map((name, k) => {
      const xs = [], ys = [];
      for (const p of plan.passes.filter((q) => q.station === name)) {
        const a = parseUtc(p.aos_utc), l = parseUtc(p.los_utc);
        xs.push(a, l, l + 0.001);
        ys.push(k + 1, k + 1, null); // null: a gap between passes
      }
      return [xs, ys];
    });
    const syncs = plan.syncs.map((s) => [parseUtc(s.time_utc), names.indexOf(s.station) + 1]).sort((p, q) => p[0] - q[0]);
    tables.push([syncs.map((s) => s[0]), syncs.map((s) => s[1])]);
    const series = names.map((n) => ({ label: n, width: 9, spanGaps: false, value: (u, v) => (v == null ? "–" : "in view") }));
    series.push({ label: "sync", stroke: "#1d2a30", paths: () => null, points: { show: true, size: 8, fill: "#f2b35b" },
      value: (u, v) => (v == null ? "–" : names[v - 1]) });
    plot("passes", $("#plot-passes"), { ...timeOpts([{}, { label: "station", size: 110,
      splits: () => names.map((_, i) => i + 1), values: (u, t) => t.map((v) => names[v - 1] ?? "") }]),
    scales: { x: { time: true }, y: { range: [0.5, names.length + 0.5] } }, series },
    uPlot.join(tables, tables.map((t, i) => [i < names.length ? 1 : 0])));
  }

  // --- Results --------------------------------------------------------------------------------
  const HEADLINE = [
    ["Mean rate", "mean_rate_us_per_day", "µs/day", (v) => v.toFixed(6)],
    ["Mean fractional rate", "mean_fractional_rate", "", (v) => v.toExponential(6)],
    ["Frequency preset", "frequency_preset_fractional", "", (v) => v.toExponential(6)],
    ["Preset frequency", "preset_frequency_hz", "Hz", (v) => v.toFixed(6)],
    ["Periodic amplitude", "periodic.amplitude_ns", "ns", fmt],
    ["Residual after correction", "eccentricity_correction.residual_after_correction_ns", "ns", fmt],
    ["Offset at end", "offset_at_end_ns", "ns", fmt],
    ["Integration error", "integration_error_estimate_ps", "ps", fmt],
    ["Max free-running time", "clock_error.max_free_running_s", "h", (v) => (v / 3600).toFixed(3)],
  ];
  const dotted = (obj, path) => path.split(".").reduce((o, k) => (o == null ? undefined : o[k]), obj);
  function figure(label, field, raw, text, unit, cls) {
    const d = document.createElement("div");
    d.className = "figure" + (cls ? " " + cls : "");
    Object.assign(d.dataset, { field, value: JSON.stringify(raw ?? null) });
    d.innerHTML = '<div class="label"></div><div><span class="value"></span><span class="unit"></span></div>';
    d.querySelector(".label").textContent = label;
    d.querySelector(".value").textContent = text;
    d.querySelector(".unit").textContent = unit;
    d.title = `${field} = ${JSON.stringify(raw ?? null)}`;
    return d;
  }
  function renderHeadline(b, plan) {
    const box = $("#headline");
    box.textContent = "";
    for (const [label, field, unit, f] of HEADLINE) {
      const v = dotted(b, field);
      if (v === undefined || v === null) continue;
      box.append(figure(label, field, v, f(v), unit));
    }
    const ce = b.clock_error;
    if (ce && ce.time_error_budget_ns != null) {
      const holds = !ce.budget_reached_within_span;
      box.append(figure(`Budget ${ce.time_error_budget_ns} ns holds free-running`, "clock_error.budget_reached_within_span",
        ce.budget_reached_within_span, holds ? "yes, over the span" : "no", "", holds ? "holds" : "fails"));
    }
    if (plan) {
      box.append(figure(`Budget ${plan.time_error_budget_ns} ns holds with syncs`, "plan.meets_budget", plan.meets_budget,
        plan.meets_budget ? "yes" : "no", "", plan.meets_budget ? "holds" : "fails"));
    }
    const ps = $("#plan-summary");
    ps.hidden = !plan;
    if (plan) {
      ps.textContent = `${plan.passes.length} passes, ${plan.syncs.length} syncs by the policy; worst ${plan.k_sigma}-sigma error ` +
        `${fmt(plan.worst_error_ns)} ns at ${plan.worst_error_time_utc}; longest gap ${(plan.worst_gap_s / 3600).toFixed(2)} h. ` +
        `Fewest syncs found: ${plan.recommendation.sync_count} (${plan.recommendation.meets_budget ? "meets" : "does not meet"} the budget).`;
    }
  }
  function renderModel(b) {
    const box = $("#model");
    box.textContent = "";
    const m = b.model || {};
    const dl = document.createElement("table");
    for (const [k, v] of Object.entries(m)) {
      if (k === "omitted_terms") continue;
      const tr = dl.insertRow();
      tr.insertCell().textContent = k.replace(/_/g, " ");
      tr.insertCell().textContent = Array.isArray(v) ? v.join(", ") : v && typeof v === "object" ? JSON.stringify(v) : String(v);
    }
    const h = document.createElement("h4");
    h.textContent = "Included terms: " + (m.included_terms || Object.keys(b.terms_fractional)).join(", ") + ". Omitted terms:";
    const om = document.createElement("table");
    om.id = "omitted-terms";
    om.innerHTML = "<tr><th>term</th><th>size (fractional)</th><th>note</th></tr>";
    for (const t of b.omitted_terms || []) {
      const tr = om.insertRow();
      tr.insertCell().textContent = t.term;
      const c = tr.insertCell(); c.className = "num"; c.textContent = t.size_fractional.toExponential(1);
      tr.insertCell().textContent = t.note;
    }
    box.append(dl, h, om);
  }

  // --- Taking a result elsewhere ------------------------------------------------------------
  const shellQuote = (s) => "'" + s.replace(/'/g, "'\\''") + "'";
  function download(name, text, type) {
    const a = document.createElement("a");
    a.href = URL.createObjectURL(new Blob([text], { type }));
    a.download = name;
    a.className = "button";
    a.textContent = name;
    return a;
  }
  function block(title, content) {
    const wrap = document.createElement("div");
    const h = document.createElement("h4");
    h.textContent = title;
    wrap.append(h);
    for (const c of [].concat(content)) {
      if (typeof c === "string") { const pre = document.createElement("pre"); pre.textContent = c; wrap.append(pre); } else wrap.append(c);
    }
    return wrap;
  }
  function csvQuery(req) { // the request as GET /v1/budgets.csv parameters, or null when it has no such spelling
    const o = req.orbit || {}, q = new URLSearchParams();
    const fam = { keplerian: ["semi_major_axis_km", "eccentricity", "inclination_deg", "ra_of_asc_node_deg",
      "arg_of_pericenter_deg", "mean_anomaly_deg", "epoch", "j2_secular", "element_type"],
    surface: ["latitude_deg", "longitude_deg", "height_m", "geoid_undulation_m", "orthometric_height_m"] }[o.type];
    if (o.type === "tle") { q.set("tle_line1", o.line1); q.set("tle_line2", o.line2); if (o.name) return null; }
    else if (!fam) return null;
    for (const [k, v] of Object.entries(o)) {
      if (k === "type") continue;
      if (k === "center" || k === "reference_plane" || (fam && fam.includes(k))) q.set(k, v);
      else if (!(o.type === "tle" && (k === "line1" || k === "line2"))) return null;
    }
    const top = ["reference", "start", "end", "duration_days", "series_step_s", "nominal_frequency_hz", "time_error_budget_ns", "k_sigma"];
    for (const [k, v] of Object.entries(req)) {
      if (k === "orbit") continue;
      if (top.includes(k)) { if (typeof v === "object") return null; q.set(k, v); }
      else if (k === "gravity") Object.entries(v).forEach(([g, gv]) => q.set(g, gv));
      else if (k === "clock") { if (Object.keys(v).join() !== "preset") return null; q.set("clock_preset", v.preset); }
      else if (!((k === "apply_eccentricity_correction" && v === true) || (k === "frame" && v === "auto"))) return null;
    }
    return q;
  }
  function renderExports(full, breq, preq, budget, plan, linkable) {
    const box = $("#exports"), origin = location.origin;
    box.textContent = "";
    const linkText = JSON.stringify(full);
    if (!linkable) box.append(block("Permalink", "Choose the orbit file's type to get a link that carries the file."));
    else if (linkText.length <= MAX_LINK_CHARS) {
      const a = document.createElement("a");
      a.id = "permalink";
      a.href = `${origin}/#budget=${encodeURIComponent(linkText)}`;
      a.textContent = "Permalink to this request (opens the page and computes it again)";
      box.append(block("Permalink", a));
      history.replaceState(null, "", a.href);
    } else box.append(block("Permalink", "The request is too long for a link (a large orbit file): use the JSON file below."));
    const curl = [state.file
      ? `curl -s${CURL_KEY()} ${origin}/v1/budgets -F file=@${shellQuote(state.file.name)} -F request=${shellQuote(JSON.stringify(breq))}` +
        ($("#orbit-file-type").value ? ` -F type=${$("#orbit-file-type").value}` : "")
      : `curl -s -X POST ${origin}/v1/budgets${CURL_KEY()} -H 'Content-Type: application/json' -d ${shellQuote(JSON.stringify(breq))}`];
    if (preq) curl.push(`curl -s -X POST ${origin}/v1/contact-plans${CURL_KEY()} -H 'Content-Type: application/json' -d ${shellQuote(JSON.stringify(preq))}`);
    box.append(block(apiKey() ? "curl (the key from $TAUBUDGET_API_KEY in your shell)" : "curl", curl.join("\n\n")));
    const cliBudget = JSON.stringify(breq, null, 2) + "\n";
    const cli = [download("request.json", cliBudget, "application/json"), "taubudget budget request.json   # add --json for the response", cliBudget];
    if (preq) cli.push(download("plan.json", JSON.stringify(preq, null, 2) + "\n", "application/json"), "taubudget contacts plan.json");
    box.append(block("CLI JSON file", cli));
    const q = csvQuery(breq);
    if (q) {
      const one = sheetParams(q); one.delete("series_step_s"); one.set("field", "mean_rate_us_per_day");
      const sheet = `=WEBSERVICE("${origin}/v1/budgets.csv?${one}")`;
      box.append(block("Spreadsheet cell (one number; change field= for another" +
        (apiKey() ? "; api_key=: a key of the spreadsheet's own" : "") + ")", [sheet,
        `=IMPORTDATA("${origin}/v1/budgets.csv?${sheetParams(q)}")   (the whole CSV, where the spreadsheet has IMPORTDATA)`]));
      const fig = new URLSearchParams(q); fig.set("plot", "all");
      const img = document.createElement("a");
      Object.assign(img, { id: "figure-link", className: "button", href: `${origin}/v1/budgets.svg?${fig}`, textContent: "budget.svg" });
      box.append(block("Figure for a report or wiki (GET /v1/budgets.svg or .png; plot=offset, terms, periodic, envelope or all)",
        [img, `=IMAGE("${origin}/v1/budgets.png?${sheetParams(fig)}")`]));
    } else box.append(block("Spreadsheet cell", "This request has no spelling as GET /v1/budgets.csv parameters (that route takes Keplerian, TLE or surface orbits, a named reference, gravity switches and a clock preset)."));
    const dl = [download("budget.json", JSON.stringify(budget, null, 2) + "\n", "application/json")];
    if (q) {
      const a = document.createElement("a");
      a.href = `${origin}/v1/budgets.csv?${q}`; a.className = "button"; a.textContent = "budget.csv"; a.id = "csv-link";
      dl.push(a);
    } else if (budget.series) {
      const s = budget.series, cols = ["time_utc", "elapsed_s", "offset_ns", "periodic_ns", "eccentricity_term_ns"];
      const rows = s.time_utc.map((_, i) => cols.map((c) => s[c][i]).join(","));
      dl.push(download("budget-series.csv", [`# ${budget.caution}`, cols.join(","), ...rows].join("\r\n") + "\r\n", "text/csv"));
    }
    if (plan) {
      dl.push(download("contact-plan.json", JSON.stringify(plan, null, 2) + "\n", "application/json"));
      const btn = document.createElement("button");
      Object.assign(btn, { type: "button", className: "small", textContent: "passes.csv" });
      btn.addEventListener("click", () => save(fetch("/v1/contact-plans.csv", { method: "POST",
        headers: apiHeaders({ "Content-Type": "application/json" }), body: JSON.stringify(preq) }), "passes.csv"));
      dl.push(btn);
    }
    box.append(block("Downloads", dl));
  }

  // A file the service answers with, saved under its own name (else `name`); or its problem shown.
  async function save(fetching, name) {
    const tab = $(".tab:not([hidden])"), form = $("form", tab), box = $(".problem", tab);
    try {
      const r = await fetching;
      if (!r.ok) throw new Problem(await r.json().catch(() => ({ title: `HTTP ${r.status}`, detail: r.statusText, errors: [] })));
      const named = /filename="([^"]+)"/.exec(r.headers.get("content-disposition") || "");
      download(named ? named[1] : name, await r.blob(), r.headers.get("content-type") || "").click();
    } catch (err) {
      clearProblems(form, box);
      showProblem(form, box, err instanceof Problem ? err.problem : { title: "The page could not reach the service", detail: String(err) });
    }
  }
  // A plain link cannot send a header: with a key set, the page's GET links into /v1 (CSV, figure,
  // constants) are fetched with the key in its header and the answer saved as a file.
  function getWithKey(e) {
    const a = e.target.closest("a[href]");
    const url = a && new URL(a.href, location.href);
    if (!url || !apiKey() || url.origin !== location.origin || !/^\/v1(\/|$)/.test(url.pathname)) return;
    e.preventDefault();
    save(fetch(url, { headers: apiHeaders() }), url.pathname.split("/").pop() + ".json");
  }

  // --- The budget tab --------------------------------------------------------------------
  async function runBudget() {
    const form = $("#budget-form"), box = $("#budget-problem");
    clearProblems(form, box);
    const full = budgetRequest();
    const breq = structuredClone(full);
    PLAN_ONLY.forEach((k) => delete breq[k]);
    try {
      await running($("#run-budget"), $("#budget-status"), async () => {
        const file = $("#orbit-type").value === "file" ? state.file : null;
        const fileType = $("#orbit-file-type").value;
        const budget = await callApi("/v1/budgets", breq, file, fileType);
        // With its type named, the file becomes a JSON text orbit: links and contact plans carry it.
        if (file && fileType) full.orbit = { ...full.orbit, type: fileType, text: state.fileText };
        const linkable = !file || Boolean(fileType);
        const preq = full.stations ? full : null;
        if (preq && !linkable) {
          throw new Problem({ title: "Name the file's type", detail: "A contact plan takes the orbit file as JSON text: choose its type.",
            errors: [{ pointer: "/orbit/type", detail: "choose the file's type (detection works for the budget only)" }] });
        }
        const plan = preq ? await callApi("/v1/contact-plans", preq) : null;
        render(full, breq, preq, budget, plan, linkable);
      });
    } catch (e) {
      showProblem(form, box, e instanceof Problem ? e.problem : { title: "The page could not reach the service", detail: String(e) });
    }
  }
  function render(full, breq, preq, budget, plan, linkable) {
    const res = $("#budget-results");
    res.hidden = false;
    $$("[data-caution]", res).forEach((p) => { p.textContent = "Caution: " + budget.caution; });
    const w = $("#budget-warnings");
    w.textContent = "";
    for (const t of budget.warnings || []) { const li = document.createElement("li"); li.textContent = t; w.append(li); }
    renderHeadline(budget, plan);
    drawOffset(budget);
    drawTerms(budget);
    drawPeriodic(budget);
    drawEnvelope(budget, plan);
    drawPasses(plan, full);
    renderModel(budget);
    renderExports(full, breq, preq, budget, plan, linkable);
    document.body.dataset.budgetReady = String(Date.now());
  }

  // --- The stability tab ------------------------------------------------------------------
  const STATS = { adev: "adev", oadev: "oadev", mdev: "mdev", hdev: "hdev", tdev_s: "tdev" };
  function drawStability(r) {
    const key = $("#stability-stat").value, base = STATS[key], suffix = key.endsWith("_s") ? "_s" : "";
    const rows = r.deviations.filter((d) => d[key] != null);
    const log = { time: false, distr: 3 };
    plot("stability", $("#plot-stability"), {
      xLabel: "tau, s", xValue: (u, v) => exact(v), scales: { x: log, y: { distr: 3 } },
      axes: [{ label: "averaging time tau, s", values: (u, t) => t.map((v) => fmt(v, 3)) }, yAxis(key === "tdev_s" ? "TDEV, s" : base.toUpperCase())],
      series: [{ label: base + (suffix ? ", s" : ""), points: { show: true, size: 6 } },
        { label: "lower bound", dash: [4, 3], stroke: "#b4532a" }, { label: "upper bound", dash: [4, 3], stroke: "#b4532a" }],
    }, [rows.map((d) => d.tau_s), rows.map((d) => d[key]), rows.map((d) => d[`${base}_lower${suffix}`]), rows.map((d) => d[`${base}_upper${suffix}`])]);
  }
  function renderStability(req, r) {
    const res = $("#stability-results");
    res.hidden = false;
    $$("[data-caution]", res).forEach((p) => { p.textContent = "Caution: " + r.caution; });
    drawStability(r);
    const cols = ["tau_s", "adev", "adev_lower", "adev_upper", "mdev", "hdev", "tdev_s"];
    const t = document.createElement("table");
    t.innerHTML = "<tr>" + cols.map((c) => `<th>${c}</th>`).join("") + "</tr>";
    for (const d of r.deviations) {
      const tr = t.insertRow();
      cols.forEach((c) => { const td = tr.insertCell(); td.className = "num"; td.textContent = fmt(d[c], 5); });
    }
    $("#stability-table").replaceChildren(t);
    const box = $("#stability-exports"), origin = location.origin;
    box.textContent = "";
    const link = `${origin}/#stability=${encodeURIComponent(JSON.stringify(req))}`;
    if (link.length <= MAX_LINK_CHARS) {
      const a = document.createElement("a");
      a.href = link; a.id = "stability-permalink"; a.textContent = "Permalink to this request";
      box.append(block("Permalink", a));
      history.replaceState(null, "", link);
    }
    box.append(block(apiKey() ? "curl (the key from $TAUBUDGET_API_KEY in your shell)" : "curl", `curl -s -X POST ${origin}/v1/clock-stability${CURL_KEY()} -H 'Content-Type: application/json' -d ${shellQuote(JSON.stringify(req))}`));
    box.append(block("CLI", [download("data.txt", req.data.join("\n") + "\n", "text/plain"),
      `taubudget stability data.txt --data-type ${req.data_type || "phase"} --sample-interval-s ${req.sample_interval_s}` +
      (req.confidence ? ` --confidence ${req.confidence}` : "")]));
    const keys = Object.keys(r.deviations[0] || {});
    const csv = [`# ${r.caution}`, keys.join(","), ...r.deviations.map((d) => keys.map((k) => d[k] ?? "").join(","))].join("\r\n") + "\r\n";
    box.append(block("Downloads", [download("stability.json", JSON.stringify(r, null, 2) + "\n", "application/json"),
      download("stability.csv", csv, "text/csv")]));
    state.stability = r;
  }
  async function runStability() {
    const form = $("#stability-form"), box = $("#stability-problem");
    clearProblems(form, box);
    const req = formRequest(form, state.stabilityBase);
    try {
      await running($("#run-stability"), $("#stability-status"), async () => renderStability(req, await callApi("/v1/clock-stability", req)));
    } catch (e) {
      showProblem(form, box, e instanceof Problem ? e.problem : { title: "The page could not reach the service", detail: String(e) });
    }
  }
  function fillStabilityForm(req) {
    state.stabilityBase = structuredClone(req);
    $$("[data-ptr]", $("#stability-form")).forEach((el) => writeValue(el, getPtr(req, el.dataset.ptr)));
  }
  function readColumnFile(text) { // '#' lines may carry "key: value" metadata, as the CLI reads them
    const meta = {}, values = [];
    for (const line of text.split(/\r?\n/)) {
      const m = line.match(/^#\s*(data_type|sample_interval_s)\s*:\s*(\S+)/);
      if (m) meta[m[1]] = m[2];
      else if (line.trim() && !line.startsWith("#")) values.push(line.trim().split(/[\s,;]+/)[0]);
    }
    return { meta, values };
  }

  // --- Samples, tabs, start-up ----------------------------------------------------------------
  function spanSeconds(req) {
    if (req.duration_days) return req.duration_days * 86400;
    return (Date.parse(req.end) - Date.parse(req.start)) / 1000;
  }
  function withSeriesStep(req) { // plots need a series: about 600 points, on a round step
    if (req.series_step_s) return req;
    const steps = [1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800, 3600, 7200, 10800, 21600, 43200, 86400];
    const want = spanSeconds(req) / 600;
    return { ...req, series_step_s: steps.find((s) => s >= want) || Math.ceil(want / 86400) * 86400 };
  }
  function sampleButtons(holder, examples, load) {
    for (const [name, ex] of Object.entries(examples)) {
      if (!ex.value || !Object.keys(ex.value).length) continue;
      const b = document.createElement("button");
      Object.assign(b, { type: "button", textContent: ex.summary || name, title: name });
      b.dataset.sample = name;
      b.addEventListener("click", () => load(ex.value));
      holder.append(b);
    }
  }
  function selectTab(name) {
    $$("[data-tab]").forEach((b) => b.setAttribute("aria-selected", String(b.dataset.tab === name)));
    $$(".tab").forEach((t) => { t.hidden = t.id !== `tab-${name}`; });
    Object.values(plots).forEach((u) => u.setSize({ width: Math.max(320, u.root.parentElement.clientWidth || 600), height: 270 }));
  }
  function findEnum(schema) {
    if (!schema || typeof schema !== "object") return null;
    if (Array.isArray(schema.enum)) return schema.enum;
    for (const v of Object.values(schema)) { const e = findEnum(v); if (e) return e; }
    return null;
  }
  async function start() {
    const form = $("#budget-form");
    $$("[data-tab]").forEach((b) => b.addEventListener("click", () => selectTab(b.dataset.tab)));
    ["#orbit-type", "#clock-mode"].forEach((s) => $(s).addEventListener("change", () => updateVisibility(form)));
    $("#add-station").addEventListener("click", () => addStation({ elevation_mask_deg: 10 }));
    form.addEventListener("submit", (e) => { e.preventDefault(); runBudget(); });
    $("#stability-form").addEventListener("submit", (e) => { e.preventDefault(); runStability(); });
    $("#stability-stat").addEventListener("change", () => state.stability && drawStability(state.stability));
    $("#orbit-file").addEventListener("change", async (e) => {
      state.file = e.target.files[0] || null;
      state.fileText = state.file ? await state.file.text() : null;
      $("#orbit-file-note").textContent = state.file ? `${state.file.name}: ${state.file.size} bytes; its type is detected by the service.` : "";
    });
    $("#stability-file").addEventListener("change", async (e) => {
      const f = e.target.files[0];
      if (!f) return;
      const { meta, values } = readColumnFile(await f.text());
      fillStabilityForm({ ...formRequest($("#stability-form"), state.stabilityBase), ...meta, data: values.map(numOrText) });
    });
    window.addEventListener("resize", () => Object.values(plots).forEach((u) => u.setSize({ width: Math.max(320, u.root.parentElement.clientWidth), height: 270 })));

    const keyBox = $("#api-key");
    keyBox.value = sessionStorage.getItem("taubudget-api-key") || "";
    keyBox.addEventListener("change", () => sessionStorage.setItem("taubudget-api-key", keyBox.value.trim()));
    document.addEventListener("click", getWithKey);
    const doc = await (await fetch("/openapi.json")).json();
    const examples = (path) => ((((doc.paths[path] || {}).post || {}).requestBody || {}).content || {})["application/json"]?.examples || {};
    const presets = findEnum(doc.components.schemas.ClockIn?.properties?.preset) || [];
    presets.forEach((p) => $("#clock-preset").append(new Option(p.replace(/_/g, " "), p)));
    const loadBudget = (req) => { fillBudgetForm(withSeriesStep(req)); runBudget(); };
    const loadStability = (req) => { fillStabilityForm(req); runStability(); };
    const plans = examples("/v1/contact-plans"), budgets = examples("/v1/budgets");
    sampleButtons($("#budget-samples"), { ...plans, ...budgets }, loadBudget);
    sampleButtons($("#stability-samples"), examples("/v1/clock-stability"), loadStability);

    const hash = new URLSearchParams(location.hash.slice(1));
    if (hash.has("stability")) { selectTab("stability"); loadStability(JSON.parse(hash.get("stability"))); return; }
    if (hash.has("budget")) { fillBudgetForm(JSON.parse(hash.get("budget"))); runBudget(); return; }
    const first = Object.values(plans).find((e) => e.value && e.value.stations) || Object.values(budgets)[0];
    if (first) loadBudget(first.value);
    const nbs = Object.values(examples("/v1/clock-stability"))[0];
    if (nbs) fillStabilityForm(nbs.value);
  }
  start();
})();
