// ductgen design page: the spec form, generated from the published JSON Schema, so every
// spec key is editable and the form never drifts from the spec. Labels come from the
// page's one label table (GET /api/init "labels"), units from the unit hints; a tagged
// union (outlet.kind, skin.shape, a loss's kind) shows its selector first and only the
// chosen member's fields; a point or direction is three number boxes.
"use strict";

(() => {

const F = { defs: {}, units: {}, labels: {}, addItem: {}, onChange: () => {} };
// Top-level sections in reading order; any other key of the schema follows (never dropped).
const ORDER = ["name", "throat", "ramp", "planform", "lip", "outlet", "skin", "insert",
               "cutter", "plug", "template", "print", "flow"];
const NUMBER = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;
const WITH_UNIT = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*([^\d\s.].*)$/;

function el(tag, attrs, ...kids) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs || {})) {
    if (v === undefined || v === null || v === false) continue;
    if (k === "text") e.textContent = v; else e.setAttribute(k, v === true ? "" : v);
  }
  for (const k of kids) if (k) e.append(k);
  return e;
}
const deref = (s) => (s && s.$ref ? F.defs[s.$ref.split("/").pop()] : s);
const keyId = (key) => "f-" + key.replace(/[^A-Za-z0-9]+/g, "-");
const generic = (key) => key.replace(/\[\d+\]/g, "[]");
const unitOf = (key) => F.units[generic(key)];

// The plain label of a dotted key: the label table, else the key's last part in words.
function labelOf(key, name) {
  const t = F.labels[generic(key)];
  if (t) return t;
  return String(name || key.split(".").pop()).replace(/_deg$/, " angle").replace(/_/g, " ");
}

function allowsNumber(s) {
  s = deref(s) || {};
  if (s.type === "number" || s.type === "integer") return true;
  return (s.anyOf || []).some(allowsNumber);
}

// What kind of editor a schema property needs.
function kindOf(p) {
  if (p.$ref) return { kind: "object", model: deref(p) };
  if (p.oneOf && p.discriminator) {
    const order = p.oneOf.map((o) => o.$ref);
    const mapping = p.discriminator.mapping;
    const kinds = Object.keys(mapping).sort((a, b) => order.indexOf(mapping[a]) - order.indexOf(mapping[b]));
    return { kind: "union", mapping, kinds, prop: p.discriminator.propertyName };
  }
  if (p.type === "array" && p.items && p.items.oneOf) return { kind: "list", items: p.items };
  if (p.type === "array" && p.prefixItems) return { kind: "tuple", n: p.prefixItems.length };
  if (p.anyOf) {
    const ref = p.anyOf.find((a) => a.$ref);
    const nullable = p.anyOf.some((a) => a.type === "null");
    if (ref && nullable) return { kind: "optional", model: deref(ref) };
    const tup = p.anyOf.find((a) => a.type === "array" && a.prefixItems);
    if (tup) return { kind: "tuple", n: tup.prefixItems.length };
    const en = p.anyOf.find((a) => a.enum || a.const !== undefined);
    if (en && p.anyOf.every((a) => a === en || a.type === "null"))
      return { kind: "enum", values: en.enum || [en.const] };
  }
  if (p.enum || p.const !== undefined) return { kind: "enum", values: p.enum || [p.const] };
  if (p.type === "boolean") return { kind: "bool" };
  return { kind: "text", numeric: allowsNumber(p), integer: p.type === "integer" };
}

// The root in ORDER; a section's fields in the label table's order (unlabelled ones last).
function orderedProps(model, prefix) {
  const props = Object.keys(model.properties || {});
  if (!prefix) return [...ORDER.filter((k) => props.includes(k)), ...props.filter((k) => !ORDER.includes(k))];
  const order = Object.keys(F.labels);
  const rank = (k) => { const i = order.indexOf(generic(`${prefix}.${k}`)); return i < 0 ? order.length + props.indexOf(k) : i; };
  return [...props].sort((a, b) => rank(a) - rank(b));
}

// --- building the form: each builder returns a node with collect() ----------------------
function fieldRow(key, label, input, p, unit) {
  const err = el("p", { class: "err", id: "err-" + keyId(key) });
  input.setAttribute("aria-describedby", "err-" + keyId(key));
  if (p.description) input.title = p.description;
  const wrap = el("div", { class: "inwrap" }, input, unit || null);
  return el("div", { class: "field", "data-field": key },
            el("label", { for: input.id, text: label, title: p.description || "" }), wrap, err);
}

// The unit beside a box follows what is written: "3 in" shows "in"; a bare number the
// key's unit (mm for lengths); a key that needs a unit says so.
function unitSpan(key, input) {
  const u = unitOf(key);
  if (!u) return null;
  const span = el("span", { class: "unit" });
  if (!u.bare_number) span.title = `write the unit with the number (e.g. "1 ${u.unit}")`;
  const update = () => {
    const t = input.value.trim();
    const m = NUMBER.test(t) ? null : WITH_UNIT.exec(t);
    span.textContent = m ? m[3] : u.unit;
    span.classList.toggle("needs-unit", !m && !u.bare_number);
  };
  input.addEventListener("input", update);
  update();
  return span;
}

function parsed(t, info) {
  t = t.trim();
  if (t === "") return undefined;
  if (info.numeric && NUMBER.test(t)) return Number(t);
  return t;
}

function textNode(key, name, p, info, value, required) {
  const def = p.default;
  const input = el("input", { type: "text", id: keyId(key), "data-key": key, name: key, spellcheck: "false" });
  input.placeholder = required ? "required" : def === undefined || def === null ? "unset" : `${def}`;
  const u = unitOf(key);
  if (u && !u.bare_number) input.placeholder += ` (with a unit: ${u.unit})`;
  if (value !== undefined && value !== null) input.value = String(value);
  if (key === "skin.file") { input.setAttribute("list", "panel-files"); input.addEventListener("focus", F.onPanelFocus); }
  const row = fieldRow(key, labelOf(key, name), input, p, unitSpan(key, input));
  return { row, leaf: input, collect: () => parsed(input.value, info) };
}

// A point, a direction or the bed: three number boxes (x, y, z) with the unit once.
function tupleNode(key, name, p, info, value, required) {
  const vals = Array.isArray(value) ? value : [];
  const def = Array.isArray(p.default) ? p.default : [];
  const axes = ["x", "y", "z"];
  const boxes = [];
  const wrap = el("div", { class: "tuple" });
  for (let i = 0; i < info.n; i++) {
    const b = el("input", { type: "text", inputmode: "decimal", class: "tuple-box",
      id: i ? `${keyId(key)}-${i}` : keyId(key), "data-key": `${key}[${i}]`,
      "aria-label": `${labelOf(key, name)} ${axes[i] || i}`, spellcheck: "false" });
    b.placeholder = def[i] !== undefined ? String(def[i]) : required ? "required" : axes[i] || "";
    if (vals[i] !== undefined && vals[i] !== null) b.value = String(vals[i]);
    boxes.push(b);
    wrap.append(el("span", { class: "axis", text: axes[i] || String(i) }), b);
  }
  const u = unitOf(key);
  const unit = u ? el("span", { class: "unit", text: u.unit }) : el("span", { class: "unit", text: "(any length)" });
  const row = fieldRow(key, labelOf(key, name), wrap, p, unit);
  row.classList.add("tuple-field");
  return { row, leaf: boxes[0], collect() {
    const t = boxes.map((b) => b.value.trim());
    if (t.every((x) => x === "")) return undefined;
    return t.map((x) => (NUMBER.test(x) ? Number(x) : x));
  } };
}

function enumNode(key, name, p, info, value, required) {
  const sel = el("select", { id: keyId(key), "data-key": key, name: key });
  const def = p.default;
  const blank = required ? "(choose)" : def !== undefined && def !== null ? `(default: ${def})` : "(unset)";
  sel.append(el("option", { value: "", text: blank }));
  for (const v of info.values) sel.append(el("option", { value: String(v), text: String(v) }));
  if (value !== undefined && value !== null) {
    if (!info.values.map(String).includes(String(value))) // keep a bad value visible: its error shows
      sel.append(el("option", { value: String(value), text: String(value) }));
    sel.value = String(value);
  }
  return { row: fieldRow(key, labelOf(key, name), sel, p, null), leaf: sel, collect() {
    return sel.value === "" ? undefined : sel.value;
  } };
}

function boolNode(key, name, p, value) {
  const box = el("input", { type: "checkbox", id: keyId(key), "data-key": key, name: key });
  box.checked = value === undefined ? !!p.default : !!value;
  return { row: fieldRow(key, labelOf(key, name), box, p, null), leaf: box, collect() {
    return box.checked === !!p.default ? undefined : box.checked;
  } };
}

function objectNode(model, prefix, data, title, top, skip) {
  data = data && typeof data === "object" ? data : {};
  const box = top ? el("div", {}) : el("fieldset", { "data-field": prefix });
  if (!top) box.append(el("legend", { text: title }));
  if (!top && model.description) box.title = model.description;
  const req = model.required || [];
  const children = [];
  for (const name of orderedProps(model, prefix)) {
    if (name === skip) continue; // the union's own selector
    const p = model.properties[name];
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
  const inner = objectNode(model, key, value, labelOf(key, name), false);
  holder.append(inner.row);
  holder.hidden = !on;
  box.addEventListener("change", () => { holder.hidden = !box.checked; });
  const row = el("div", {}, el("label", { class: "row check" }, box, `use the ${labelOf(key, name)}`), holder);
  return { row, collect() {
    if (!box.checked) return undefined;
    return inner.collect() || {};
  } };
}

// A member with no required keys besides its tag is the union's default (no outlet, a
// flat skin); else the first.
function defaultKind(info) {
  for (const k of info.kinds) {
    const m = deref({ $ref: info.mapping[k] }) || {};
    if (!(m.required || []).some((r) => r !== info.prop)) return k;
  }
  return info.kinds[0];
}

function unionNode(key, name, info, value, legend) {
  value = value && typeof value === "object" ? value : {};
  const prop = info.prop;
  const tagKey = `${key}.${prop}`;
  const sel = el("select", { id: keyId(tagKey), "data-key": tagKey, name: tagKey });
  for (const k of info.kinds) sel.append(el("option", { value: k, text: k }));
  if (value[prop] !== undefined && !info.kinds.includes(value[prop])) // keep a bad tag visible
    sel.append(el("option", { value: String(value[prop]), text: String(value[prop]) }));
  sel.value = value[prop] !== undefined ? String(value[prop]) : defaultKind(info);
  const fs = el("fieldset", { "data-field": key }, el("legend", { text: legend || labelOf(key, name) }));
  fs.append(fieldRow(tagKey, labelOf(tagKey, prop), sel, { description: `which ${prop}` }, null));
  const holder = el("div", {});
  fs.append(holder);
  let current = null;
  function show(data) {
    const k = sel.value;
    const model = info.mapping[k] ? deref({ $ref: info.mapping[k] }) : { properties: {} };
    current = objectNode(model, key, data, k, true, prop);
    holder.replaceChildren(current.row);
  }
  // another kind: keep the values its fields share (a skin's thickness), drop the rest
  sel.addEventListener("change", () => {
    const before = current ? current.collect() || {} : {};
    const model = deref({ $ref: info.mapping[sel.value] }) || { properties: {} };
    const kept = Object.fromEntries(Object.entries(before).filter(([k]) => k in (model.properties || {})));
    show(kept);
  });
  show(value);
  return { row: fs, collect() {
    return { [prop]: sel.value, ...(current.collect() || {}) };
  } };
}

function listNode(key, name, items, value) {
  const info = kindOf(items);
  const fs = el("fieldset", { "data-field": key }, el("legend", { text: labelOf(key, name) }));
  const holder = el("div", {});
  const entries = [];
  const one = labelOf(key, name).replace(/^losses\b/, "loss");
  function renumber() {
    // rebuild so field keys follow the items' positions (flow.losses[0].diameter ...)
    const vals = entries.map((e) => e.node.collect());
    entries.length = 0;
    holder.replaceChildren();
    vals.forEach(add);
  }
  function add(v) {
    const i = entries.length;
    const node = unionNode(`${key}[${i}]`, name, info, v, `${F.itemName(key)} ${i + 1}`);
    node.row.classList.add("list-item");
    const rm = el("button", { type: "button", class: "small", text: "remove", "aria-label": `remove ${F.itemName(key)} ${i + 1}` });
    const entry = { node };
    rm.addEventListener("click", () => { entries.splice(entries.indexOf(entry), 1); renumber(); F.onChange(); });
    node.row.append(rm);
    entries.push(entry);
    holder.append(node.row);
  }
  (Array.isArray(value) ? value : []).forEach(add);
  const addBtn = el("button", { type: "button", class: "small", text: F.addItem[key] || `add ${one}` });
  addBtn.addEventListener("click", () => { add({ [info.prop]: info.kinds[0] }); F.onChange(); });
  fs.append(holder, addBtn);
  return { row: fs, collect() {
    const out = entries.map((e) => e.node.collect());
    return out.length ? out : undefined;
  } };
}

function makeNode(key, name, p, value, required) {
  const info = kindOf(p);
  switch (info.kind) {
    case "object": return objectNode(info.model, key, value, labelOf(key, name), false);
    case "optional": return optionalNode(key, name, info.model, value);
    case "union": return unionNode(key, name, info, value);
    case "list": return listNode(key, name, p.items, value);
    case "tuple": return tupleNode(key, name, p, info, value, required);
    case "enum": return enumNode(key, name, p, info, value, required);
    case "bool": return boolNode(key, name, p, value);
    default: return textNode(key, name, p, info, value, required);
  }
}

F.itemName = (key) => (F.addItem[key] || "item").replace(/^add (an? )?/, "");
F.el = el;
F.keyId = keyId;
F.labelOf = labelOf;
F.build = (schema, data) => objectNode(schema, "", data, "", true);
window.DuctForm = F;
})();
