// ductgen design page. The form is generated from the published JSON Schema (GET /api/init),
// so every spec key is editable and the form never drifts from the spec. Every edit posts
// the spec data to /api/preview and shows what comes back: drawings, numbers, airflow,
// warnings, or the CLI's sentence beside each bad field.
"use strict";

const S = { defs: {}, units: {}, root: null, specPath: "", seq: 0, shown: 0, timer: null,
            poll: null, viewer: null, lastJob: 0, valid: false };
// Top-level sections in reading order; any other key of the schema follows (never dropped).
const ORDER = ["name", "throat", "ramp", "planform", "lip", "outlet", "skin", "insert",
               "cutter", "plug", "template", "flow"];
const $ = (id) => document.getElementById(id);

function el(tag, attrs, ...kids) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs || {})) {
    if (v === undefined || v === null || v === false) continue;
    if (k === "text") e.textContent = v; else e.setAttribute(k, v === true ? "" : v);
  }
  for (const k of kids) if (k) e.append(k);
  return e;
}
const deref = (s) => (s && s.$ref ? S.defs[s.$ref.split("/").pop()] : s);
const keyId = (key) => "f-" + key.replace(/[^A-Za-z0-9]+/g, "-");
const unitOf = (key) => S.units[key.replace(/\[\d+\]/g, "[]")];

function allowsNumber(s) {
  s = deref(s) || {};
  if (s.type === "number" || s.type === "integer") return true;
  return (s.anyOf || []).some(allowsNumber);
}

// What kind of editor a schema property needs.
function kindOf(p) {
  if (p.$ref) return { kind: "object", model: deref(p) };
  if (p.oneOf && p.discriminator) return { kind: "union", mapping: p.discriminator.mapping };
  if (p.type === "array" && p.items && p.items.oneOf) return { kind: "list", items: p.items };
  if (p.anyOf) {
    const ref = p.anyOf.find((a) => a.$ref);
    if (ref && p.anyOf.some((a) => a.type === "null")) return { kind: "optional", model: deref(ref) };
  }
  if (p.enum || p.const !== undefined) return { kind: "enum", values: p.enum || [p.const] };
  if (p.type === "boolean") return { kind: "bool" };
  return { kind: "text", numeric: allowsNumber(p), integer: p.type === "integer" };
}

function orderedProps(model, top) {
  const props = Object.keys(model.properties || {});
  if (top) return [...ORDER.filter((k) => props.includes(k)), ...props.filter((k) => !ORDER.includes(k))];
  const req = (model.required || []).filter((k) => props.includes(k));
  return [...req, ...props.filter((k) => !req.includes(k)).sort()];
}

// --- building the form: each builder returns a node with collect() ----------------------
function fieldRow(key, label, input, p, unit) {
  const err = el("p", { class: "err", id: "err-" + keyId(key) });
  input.setAttribute("aria-describedby", "err-" + keyId(key));
  if (p.description) input.title = p.description;
  const wrap = el("div", { class: "inwrap" }, input, unit ? el("span", { class: "unit", text: unit }) : null);
  return el("div", { class: "field", "data-field": key },
            el("label", { for: keyId(key), text: label, title: p.description || "" }), wrap, err);
}

function textNode(key, name, p, info, value, required) {
  const u = unitOf(key);
  const def = p.default;
  const input = el("input", { type: "text", id: keyId(key), "data-key": key, name: key, spellcheck: "false" });
  input.placeholder = required ? "required" : def === undefined || def === null ? "unset" : `${def}`;
  if (value !== undefined && value !== null) input.value = String(value);
  const unit = u ? (u.bare_number ? u.unit : `${u.unit}, write a unit`) : "";
  const row = fieldRow(key, name, input, p, unit);
  return { row, leaf: input, numeric: info.numeric, collect() {
    const t = input.value.trim();
    if (t === "") return undefined;
    if (info.numeric && /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(t)) {
      const n = Number(t);
      return info.integer && Number.isInteger(n) ? n : n;
    }
    return t;
  } };
}

function enumNode(key, name, p, info, value) {
  const sel = el("select", { id: keyId(key), "data-key": key, name: key });
  const def = p.default;
  sel.append(el("option", { value: "", text: def !== undefined && def !== null ? `(default: ${def})` : "(unset)" }));
  for (const v of info.values) sel.append(el("option", { value: String(v), text: String(v) }));
  if (value !== undefined && value !== null) sel.value = String(value);
  return { row: fieldRow(key, name, sel, p, ""), leaf: sel, collect() {
    return sel.value === "" ? undefined : sel.value;
  } };
}

function boolNode(key, name, p, value) {
  const box = el("input", { type: "checkbox", id: keyId(key), "data-key": key, name: key });
  box.checked = value === undefined ? !!p.default : !!value;
  return { row: fieldRow(key, name, box, p, ""), leaf: box, collect() {
    return box.checked === !!p.default ? undefined : box.checked;
  } };
}

function objectNode(model, prefix, data, title, top) {
  data = data && typeof data === "object" ? data : {};
  const box = top ? el("div", {}) : el("fieldset", { "data-field": prefix });
  if (!top) box.append(el("legend", { text: title }));
  if (!top && model.description) box.title = model.description;
  const req = model.required || [];
  const children = [];
  for (const name of orderedProps(model, top)) {
    const p = model.properties[name];
    if (name === "kind" && p.const !== undefined) continue; // the union's own selector
    const key = prefix ? `${prefix}.${name}` : name;
    const node = makeNode(key, name, p, data[name], req.includes(name));
    children.push([name, node]);
    box.append(node.row);
  }
  return { row: box, children, collect() {
    const out = {};
    for (const [name, node] of children) {
      const v = node.collect();
      if (v !== undefined) out[name] = v;
    }
    return Object.keys(out).length || top ? out : undefined;
  } };
}

function optionalNode(key, name, model, value) {
  const on = value !== undefined && value !== null;
  const box = el("input", { type: "checkbox", id: keyId(key) + "-on", "aria-controls": keyId(key) + "-body" });
  box.checked = on;
  const holder = el("div", { id: keyId(key) + "-body" });
  let inner = objectNode(model, key, value, name, false);
  holder.append(inner.row);
  holder.hidden = !on;
  box.addEventListener("change", () => { holder.hidden = !box.checked; });
  const row = el("div", {}, el("label", { class: "row check" }, box, `use [${name}] (${model.description || name})`), holder);
  return { row, collect() {
    if (!box.checked) return undefined;
    return inner.collect() || {};
  } };
}

function unionNode(key, name, mapping, value, legend) {
  value = value && typeof value === "object" ? value : {};
  const kinds = Object.keys(mapping);
  const sel = el("select", { id: keyId(key + ".kind"), "data-key": key + ".kind" });
  for (const k of kinds) sel.append(el("option", { value: k, text: k }));
  if (value.kind !== undefined && !kinds.includes(value.kind)) // keep a bad kind visible: its error shows
    sel.append(el("option", { value: String(value.kind), text: String(value.kind) }));
  sel.value = value.kind !== undefined ? String(value.kind) : kinds[0];
  const fs = el("fieldset", { "data-field": key }, el("legend", { text: legend || name }));
  fs.append(fieldRow(key + ".kind", "kind", sel, { description: "which kind" }, ""));
  const holder = el("div", {});
  fs.append(holder);
  const cache = {};
  function show() {
    const k = sel.value;
    if (!cache[k]) {
      const model = mapping[k] ? S.defs[mapping[k].split("/").pop()] : { properties: {} };
      cache[k] = objectNode(model, key, k === value.kind ? value : {}, k, true);
    }
    holder.replaceChildren(cache[k].row);
  }
  sel.addEventListener("change", show);
  show();
  return { row: fs, collect() {
    return { kind: sel.value, ...(cache[sel.value].collect() || {}) };
  } };
}

function listNode(key, name, items, value) {
  const mapping = items.discriminator.mapping;
  const fs = el("fieldset", { "data-field": key }, el("legend", { text: name }));
  const holder = el("div", {});
  const entries = [];
  function renumber() {
    // rebuild so field keys follow the items' positions (flow.losses[0].diameter ...)
    const vals = entries.map((e) => e.node.collect());
    entries.length = 0;
    holder.replaceChildren();
    vals.forEach(add);
  }
  function add(v) {
    const i = entries.length;
    const node = unionNode(`${key}[${i}]`, name, mapping, v, `${name} ${i + 1}`);
    node.row.classList.add("list-item");
    const rm = el("button", { type: "button", class: "small", text: "remove", "aria-label": `remove ${name} ${i + 1}` });
    rm.addEventListener("click", () => { entries.splice(entries.indexOf(entry), 1); renumber(); schedule(); });
    node.row.append(rm);
    const entry = { node };
    entries.push(entry);
    holder.append(node.row);
  }
  (Array.isArray(value) ? value : []).forEach(add);
  const addBtn = el("button", { type: "button", class: "small", text: `add ${name.replace(/s$/, "")}` });
  addBtn.addEventListener("click", () => { add({ kind: Object.keys(mapping)[0] }); schedule(); });
  fs.append(holder, addBtn);
  return { row: fs, collect() {
    const out = entries.map((e) => e.node.collect());
    return out.length ? out : undefined;
  } };
}

function makeNode(key, name, p, value, required) {
  const info = kindOf(p);
  switch (info.kind) {
    case "object": return objectNode(info.model, key, value, name, false);
    case "optional": return optionalNode(key, name, info.model, value);
    case "union": return unionNode(key, name, info.mapping, value);
    case "list": return listNode(key, name, info.items, value);
    case "enum": return enumNode(key, name, p, info, value);
    case "bool": return boolNode(key, name, p, value);
    default: return textNode(key, name, p, info, value, required);
  }
}

function buildForm(schema, data) {
  S.root = objectNode(schema, "", data, "", true);
  const form = $("spec-form");
  form.replaceChildren(S.root.row);
  const keys = [...form.querySelectorAll("input[type=text][data-key]")].map((i) => i.dataset.key);
  const sk = $("sweep-key");
  const prev = sk.value;
  sk.replaceChildren(...keys.filter((k) => !/\.(name|profile|label)$|^name$/.test(k)).map((k) => el("option", { value: k, text: k })));
  if (keys.includes(prev)) sk.value = prev; else if (keys.includes("ramp.angle_deg")) sk.value = "ramp.angle_deg";
  const name = data && data.name ? data.name : "";
  $("spec-name").textContent = S.specPath ? `${S.specPath}` : name;
}

const specData = () => (S.root ? S.root.collect() : {});

// --- talking to the server -------------------------------------------------------------
async function api(path, body) {
  const opts = body === undefined ? {} : { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) };
  const r = await fetch(path, opts);
  let j = {};
  try { j = await r.json(); } catch (e) { j = { ok: false, message: `HTTP ${r.status}` }; }
  j.httpStatus = r.status;
  return j;
}

function clearErrors() {
  for (const e of document.querySelectorAll(".err[id^=err-]")) e.textContent = "";
  for (const e of document.querySelectorAll("[aria-invalid]")) e.removeAttribute("aria-invalid");
  $("global-errors").hidden = true;
  $("global-errors").textContent = "";
}

function showProblems(problems, message) {
  clearErrors();
  const loose = [];
  for (const p of problems || []) {
    let key = p.key, target = null;
    while (key && !(target = $("err-" + keyId(key)))) {
      const cut = Math.max(key.lastIndexOf("."), key.lastIndexOf("["));
      key = cut > 0 ? key.slice(0, cut) : "";
    }
    const input = target && $(keyId(key));
    if (target && input) {
      target.textContent = (target.textContent ? target.textContent + "\n" : "") + p.sentence;
      input.setAttribute("aria-invalid", "true");
    } else loose.push(p.sentence);
  }
  if (loose.length || (!problems || !problems.length) && message) {
    $("global-errors").textContent = loose.length ? loose.join("\n") : message;
    $("global-errors").hidden = false;
  }
}

function fmt(v, digits) {
  return v === null || v === undefined ? "—" : Number(v).toLocaleString("en-US", { minimumFractionDigits: digits, maximumFractionDigits: digits, useGrouping: false });
}

function fillTable(table, rows) {
  table.replaceChildren(...rows.map((r) => el("tr", {}, el("td", { text: r.label }),
    el("td", { class: "v", id: "num-" + r.key, "data-value": r.value === null ? "" : String(r.value),
               text: `${fmt(r.value, r.digits)}${r.unit ? " " + r.unit : ""}` }))));
}

function render(res, ms) {
  const stale = !res.ok;
  for (const id of ["plan", "section", "numbers", "flow", "warnings"]) $(id).classList.toggle("stale", stale);
  S.valid = !!res.ok;
  $("build-btn").disabled = !res.ok;
  if (!res.ok) {
    showProblems(res.problems, res.message);
    const n = (res.problems || []).length;
    $("status").textContent = n ? `${n} problem${n > 1 ? "s" : ""}: fix the marked field${n > 1 ? "s" : ""}` : "error";
    return;
  }
  clearErrors();
  $("plan").querySelector(".svg-holder").innerHTML = res.plan_svg;
  $("section").querySelector(".svg-holder").innerHTML = res.section_svg;
  fillTable($("numbers"), res.numbers);
  fillTable($("flow"), res.flow ? res.flow.rows : []);
  $("flow-note").textContent = !res.flow ? "no [flow] section: tick “use [flow]” to estimate the airflow"
    : res.flow.operating_point === "found" ? "" : `no operating point: ${res.flow.note || ""}`;
  const meets = $("meets");
  meets.className = "badge" + (res.meets_required === true ? " good" : res.meets_required === false ? " bad" : "");
  meets.textContent = res.meets_required === true ? "meets required flow" : res.meets_required === false ? "below required flow" : "";
  $("warnings").replaceChildren(...res.warnings.map((w) => el("li", { "data-code": w.code }, el("code", { text: w.code }), " " + w.message)));
  if (!res.warnings.length) $("warnings").append(el("li", { class: "muted", text: "none" }));
  $("warn-count").textContent = res.warnings.length ? String(res.warnings.length) : "";
  $("status").textContent = `${res.name}: up to date (${ms.toFixed(0)} ms)`;
}

async function refresh() {
  const mine = ++S.seq;
  const t0 = performance.now();
  let res;
  try { res = await api("/api/preview", { data: specData(), spec_path: S.specPath }); }
  catch (e) { $("status").textContent = "the server does not answer (was ductgen design stopped?)"; return; }
  if (mine !== S.seq) return; // a newer edit is on its way
  S.shown = mine;
  render(res, performance.now() - t0);
}

function schedule() {
  clearTimeout(S.timer);
  S.timer = setTimeout(refresh, 80);
}

// --- build, save, open, sweep -----------------------------------------------------------
function chosenKinds() {
  const boxes = [...document.querySelectorAll("#kinds input")];
  const on = boxes.filter((b) => b.checked).map((b) => b.value);
  return on.length === boxes.length ? null : on;
}

function showJob(j) {
  const p = $("job");
  if (!j || j.status === "idle") { p.textContent = "no build yet"; return; }
  const secs = j.status === "running" ? j.elapsed_s : j.seconds;
  p.textContent = `${j.kind} ${j.id} of ${j.name}: ${j.status}` + (j.status === "running" ? ` · ${j.stage}` : "") +
    (secs !== undefined ? ` · ${fmt(secs, 0)} s` : "") + (j.message ? `\n${j.message}` : "");
  p.className = j.status === "failed" ? "err" : "muted";
  if (j.status === "running") {
    $("build-btn").disabled = true; $("sweep-btn").disabled = true;
    if (!S.poll) S.poll = setInterval(pollJob, 400);
    return;
  }
  clearInterval(S.poll); S.poll = null;
  $("build-btn").disabled = !S.valid; $("sweep-btn").disabled = false;
  if (j.status !== "done" || j.id === S.lastJob) return;
  S.lastJob = j.id;
  if (j.kind === "build") {
    $("files").replaceChildren(...j.files.map((f) => el("li", {}, el("a", { href: j.base_url + encodeURIComponent(f.name), download: f.name, text: f.name }))));
    if (j.solids && j.solids.length) showViewer(j);
  } else {
    $("sweep-msg").replaceChildren(`${j.variants} variants in ${j.out_dir}` + (j.failed.length ? `, ${j.failed.length} failed` : "") + " · ",
      el("a", { href: j.base_url + encodeURIComponent(j.page), target: "_blank", id: "sweep-page", text: "open the comparison page" }));
  }
}

async function pollJob() { showJob(await api("/api/job")); }

function showViewer(j) {
  const sel = $("viewer-kind");
  sel.replaceChildren(...j.solids.map((k) => el("option", { value: k, text: k })));
  $("viewer-card").hidden = false;
  const load = () => S.viewer.load(j.base_url + encodeURIComponent(j.name + "-" + sel.value + ".stl"));
  sel.onchange = load;
  if (!S.viewer) S.viewer = new window.DuctViewer($("viewer"));
  load();
}

async function build() {
  const res = await api("/api/build", { data: specData(), spec_path: S.specPath, out: $("out-dir").value,
    only: chosenKinds(), force: $("force").checked, quality: $("quality").value });
  if (res.httpStatus === 202) return showJob(res.job);
  if (res.problems && res.problems.length) showProblems(res.problems, res.message);
  $("job").className = "err";
  $("job").textContent = `not built: ${res.message}`;
}

async function save() {
  const res = await api("/api/save", { data: specData(), spec_path: S.specPath, path: $("save-path").value, force: $("save-force").checked });
  const m = $("save-msg");
  m.className = res.ok ? "muted" : "err";
  m.textContent = res.ok ? `saved ${res.path}` : `not saved: ${res.message}`;
  if (!res.ok && res.problems) showProblems(res.problems, res.message);
}

async function open_() {
  const res = await api("/api/open", { path: $("save-path").value });
  const m = $("save-msg");
  m.className = res.ok ? "muted" : "err";
  m.textContent = res.ok ? `opened ${res.spec_path}` : `not opened: ${res.message}`;
  if (!res.ok) return;
  S.specPath = res.spec_path;
  buildForm(S.schema, res.data);
  refresh();
}

async function sweep() {
  $("sweep-err").textContent = "";
  const res = await api("/api/sweep", { data: specData(), spec_path: S.specPath, key: $("sweep-key").value,
    values: $("sweep-values").value, only: chosenKinds() });
  if (res.httpStatus === 202) { $("sweep-msg").textContent = "sweep started"; return showJob(res.job); }
  $("sweep-err").textContent = (res.problems && res.problems.length ? res.problems.map((p) => p.sentence).join("\n") : res.message);
}

async function init() {
  const ini = await api("/api/init");
  S.schema = ini.schema; S.defs = ini.schema.$defs || {}; S.units = ini.units; S.specPath = ini.spec_path;
  $("save-path").value = ini.save_path;
  $("save-path").title = `a .toml file inside the work folder ${ini.work_dir}`;
  $("out-dir").title = `a folder inside the work folder ${ini.work_dir}`;
  $("out-dir").value = ini.out_dir;
  $("kinds").append(...ini.output_kinds.map((k) => el("label", {}, el("input", { type: "checkbox", value: k, checked: true }), " " + k)));
  buildForm(ini.schema, ini.data);
  const form = $("spec-form");
  form.addEventListener("input", schedule);
  form.addEventListener("change", schedule);
  form.addEventListener("submit", (e) => e.preventDefault());
  $("build-btn").addEventListener("click", build);
  $("save-btn").addEventListener("click", save);
  $("open-btn").addEventListener("click", open_);
  $("sweep-btn").addEventListener("click", sweep);
  $("sweep-values").placeholder = `e.g. 6:8:1 or 100 mm,120 mm (at most ${ini.max_sweep_variants})`;
  await refresh();
  showJob(ini.job);
}

window.ductgenPage = { specData, refresh };
init();
