// ductgen design page. The form (form.js) is generated from the published JSON Schema.
// Every edit posts the spec data to /api/preview and shows what comes back: drawings,
// numbers, airflow, warnings, or the CLI's sentence beside each bad field. The open spec
// and unsaved edits are kept in this browser (localStorage; never the page's key, which
// lives in an HttpOnly cookie the page cannot read), so a reload restores them.
"use strict";

const F = window.DuctForm;
const el = F.el, keyId = F.keyId;
const S = { root: null, specPath: "", seq: 0, timer: null, poll: null, viewer: null,
            lastJob: 0, valid: false, storeKey: "", start: null, edited: false };
const $ = (id) => document.getElementById(id);

function buildForm(schema, data) {
  S.root = F.build(schema, data);
  const form = $("spec-form");
  form.replaceChildren(S.root.row);
  const keys = [...form.querySelectorAll("input[type=text][data-key]:not(.tuple-box)")].map((i) => i.dataset.key);
  const sk = $("sweep-key");
  const prev = sk.value;
  sk.replaceChildren(...keys.filter((k) => !/\.(name|profile|label|file)$|^name$/.test(k))
    .map((k) => el("option", { value: k, text: `${F.labelOf(k)} (${k})` })));
  if (keys.includes(prev)) sk.value = prev; else if (keys.includes("ramp.angle_deg")) sk.value = "ramp.angle_deg";
  const name = data && data.name ? data.name : "";
  $("spec-name").textContent = S.specPath ? `${S.specPath}` : name;
  $("sweep-out").placeholder = `${name || "NAME"}-sweep`;
}

const specData = () => (S.root ? S.root.collect() : {});

// --- kept in the browser --------------------------------------------------------------
function keep() {
  if (!S.storeKey) return;
  try {
    localStorage.setItem(S.storeKey, JSON.stringify({ specPath: S.specPath, data: specData(), at: Date.now() }));
  } catch (e) { /* storage full or off: the page still works */ }
}

function restored() {
  try {
    const j = JSON.parse(localStorage.getItem(S.storeKey) || "null");
    return j && j.data && typeof j.data === "object" ? j : null;
  } catch (e) { return null; }
}

function forget() { try { localStorage.removeItem(S.storeKey); } catch (e) { /* nothing kept */ } }

function showRestored(j) {
  const when = new Date(j.at).toLocaleTimeString([], { hour: "2-digit", minute: "2-digit" });
  const btn = el("button", { type: "button", class: "small", id: "discard-btn", text: "discard them" });
  btn.addEventListener("click", () => {
    forget();
    S.specPath = S.start.spec_path;
    buildForm(S.start.schema, S.start.data);
    $("restored").hidden = true;
    refresh();
  });
  $("restored").replaceChildren(`Restored ${j.specPath || "the spec"} with the edits kept in this browser (${when}). `, btn);
  $("restored").hidden = false;
}

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
               text: r.text !== undefined ? r.text : `${fmt(r.value, r.digits)}${r.unit ? " " + r.unit : ""}` }))));
}

function showWarnings(ws) {
  const list = $("warnings");
  list.replaceChildren(...ws.map((w) => el("li", { "data-code": w.code }, el("code", { text: w.code }), " " + w.message)));
  if (!ws.length) list.append(el("li", { class: "muted", text: "none" }));
  $("warn-count").textContent = ws.length ? String(ws.length) : "";
  list.scrollTop = 0;
  const more = list.scrollHeight > list.clientHeight + 2;
  list.classList.toggle("scrolls", more);
  $("warn-more").hidden = !more;
  $("warn-more").textContent = more ? `${ws.length} warnings: scroll the list for all of them ↓` : "";
}

function render(res, ms) {
  const stale = !res.ok;
  for (const id of ["plan", "section", "panel-view", "numbers", "flow", "warnings"]) $(id).classList.toggle("stale", stale);
  S.valid = !!res.ok;
  $("build-btn").disabled = !res.ok || !!S.poll;
  if (!res.ok) {
    showProblems(res.problems, res.message);
    const n = (res.problems || []).length;
    $("status").textContent = n ? `${n} problem${n > 1 ? "s" : ""}: fix the marked field${n > 1 ? "s" : ""}` : "error";
    return;
  }
  clearErrors();
  $("plan").querySelector(".svg-holder").innerHTML = res.plan_svg;
  $("section").querySelector(".svg-holder").innerHTML = res.section_svg;
  $("skin-caption").textContent = res.skin_caption || "";
  $("panel-view").hidden = !res.panel_svg;
  $("panel-view").querySelector(".svg-holder").innerHTML = res.panel_svg || "";
  fillTable($("numbers"), res.numbers);
  fillTable($("flow"), res.flow ? res.flow.rows : []);
  $("flow-note").textContent = !res.flow ? "no airflow section: tick “use the airflow estimate” to estimate the airflow"
    : res.flow.operating_point === "found" ? "" : `no operating point: ${res.flow.note || ""}`;
  const meets = $("meets");
  meets.className = "badge" + (res.meets_required === true ? " good" : res.meets_required === false ? " bad" : "");
  meets.textContent = res.meets_required === true ? "meets required flow" : res.meets_required === false ? "below required flow" : "";
  showWarnings(res.warnings);
  $("status").textContent = `${res.name}: up to date (${ms.toFixed(0)} ms)`;
}

async function refresh() {
  const mine = ++S.seq;
  const t0 = performance.now();
  let res;
  try { res = await api("/api/preview", { data: specData(), spec_path: S.specPath }); }
  catch (e) { $("status").textContent = "the server does not answer (was ductgen design stopped?)"; return; }
  if (mine !== S.seq) return; // a newer edit is on its way
  render(res, performance.now() - t0);
}

function schedule() {
  S.edited = true;
  keep();
  clearTimeout(S.timer);
  S.timer = setTimeout(refresh, 80);
}
F.onChange = schedule;

async function panelFiles() {
  const res = await api("/api/panel-files");
  $("panel-files").replaceChildren(...(res.files || []).map((f) => el("option", { value: f })));
}
F.onPanelFocus = panelFiles;

// --- build, cancel, sweep --------------------------------------------------------------
function chosenKinds() {
  const boxes = [...document.querySelectorAll("#kinds input")];
  const on = boxes.filter((b) => b.checked).map((b) => b.value);
  return on.length === boxes.length ? null : on;
}

function progressText(j) {
  const secs = j.status === "running" ? j.elapsed_s : j.seconds;
  let t = `${j.kind} #${j.id} (${j.name}): ${j.status === "running" ? (j.cancelling ? "cancelling" : "running") : j.status}`;
  if (j.status === "running") {
    if (j.kind === "build" && j.stage_n) t += ` · stage ${Math.max(1, j.stage_k)} of ${j.stage_n}: ${j.stage}`;
    else t += ` · ${j.stage}`;
    t += ` · ${fmt(secs, 0)} s elapsed`;
    if (j.estimate_s !== undefined) t += ` · about ${fmt(j.estimate_s, 0)} s (the last ${j.kind})`;
  } else if (secs !== undefined) t += ` · ${fmt(secs, 0)} s`;
  return t + (j.message ? `\n${j.message}` : "");
}

function showJob(j) {
  const build = $("job"), sw = $("sweep-msg");
  if (!j || j.status === "idle") { build.textContent = "no build yet"; return; }
  const p = j.kind === "sweep" ? sw : build;
  const running = j.status === "running";
  if (!(j.kind === "sweep" && j.status === "done")) {
    p.textContent = progressText(j);
    p.className = j.status === "failed" ? "err" : "muted";
  }
  $("cancel-btn").hidden = !(running && j.kind === "build");
  $("cancel-btn").disabled = !!j.cancelling;
  if (running) {
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
    $("files-where").textContent = `in ${j.out_dir}`;
    if (j.solids && j.solids.length) showViewer(j);
  } else {
    sw.className = "muted";
    sw.replaceChildren(`${j.variants} variants written in ${j.out_dir}` + (j.failed.length ? `, ${j.failed.length} failed` : "") + ` (${fmt(j.seconds, 0)} s) · `,
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

async function cancel() {
  $("cancel-btn").disabled = true;
  const res = await api("/api/cancel", {});
  if (res.job && res.job.cancel) $("job").textContent = `${progressText(res.job)}\n${res.job.cancel}`;
  pollJob();
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
  buildForm(S.start.schema, res.data);
  keep();
  $("restored").hidden = true;
  refresh();
}

async function sweep() {
  $("sweep-err").textContent = "";
  const res = await api("/api/sweep", { data: specData(), spec_path: S.specPath, key: $("sweep-key").value,
    values: $("sweep-values").value, only: chosenKinds(), sweep_out: $("sweep-out").value });
  if (res.httpStatus === 202) { $("sweep-msg").textContent = "sweep started"; return showJob(res.job); }
  $("sweep-err").textContent = (res.problems && res.problems.length ? res.problems.map((p) => p.sentence).join("\n") : res.message);
}

async function init() {
  const ini = await api("/api/init");
  Object.assign(F, { defs: ini.schema.$defs || {}, units: ini.units, labels: ini.labels || {}, addItem: ini.add_item || {} });
  S.start = ini;
  S.specPath = ini.spec_path;
  S.storeKey = `ductgen-design|${ini.work_dir}|${ini.spec_path}`;
  $("save-path").value = ini.save_path;
  $("save-path").title = `a .toml file inside the work folder ${ini.work_dir}`;
  $("out-dir").title = `a folder inside the work folder ${ini.work_dir}`;
  $("out-dir").value = ini.out_dir;
  $("sweep-out").value = ini.sweep_dir;
  $("sweep-out").title = `a folder inside the work folder ${ini.work_dir}`;
  $("work-dir").textContent = `work folder ${ini.work_dir}`;
  $("kinds").append(...ini.output_kinds.map((k) => el("label", {}, el("input", { type: "checkbox", value: k, checked: true }), " " + k)));
  const kept = restored();
  if (kept) { S.specPath = kept.specPath; buildForm(ini.schema, kept.data); showRestored(kept); }
  else buildForm(ini.schema, ini.data);
  const form = $("spec-form");
  form.addEventListener("input", schedule);
  form.addEventListener("change", schedule);
  form.addEventListener("submit", (e) => e.preventDefault());
  $("build-btn").addEventListener("click", build);
  $("cancel-btn").addEventListener("click", cancel);
  $("save-btn").addEventListener("click", save);
  $("open-btn").addEventListener("click", open_);
  $("sweep-btn").addEventListener("click", sweep);
  $("sweep-values").placeholder = `e.g. 6:8:1 or 100 mm,120 mm (at most ${ini.max_sweep_variants})`;
  await refresh();
  showJob(ini.job);
}

window.ductgenPage = { specData, refresh };
init();
