// Renders the OpenAPI (Swagger 2.0) document as a readable list of operations and models.
(function () {
  "use strict";
  function el(tag, attrs, text) {
    var e = document.createElement(tag);
    if (attrs) Object.keys(attrs).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    if (text !== undefined) e.textContent = text;
    return e;
  }
  function refName(schema) {
    if (!schema) return "";
    if (schema.$ref) return schema.$ref.replace("#/definitions/", "");
    if (schema.type === "array") return "array of " + (refName(schema.items) || schema.items.type);
    return schema.type || "object";
  }
  function modelTable(name, def) {
    var sec = el("section", { id: "model-" + name, class: "model" });
    sec.appendChild(el("h3", null, name));
    if (def.description) sec.appendChild(el("p", null, def.description));
    var props = def.properties || {};
    var keys = Object.keys(props);
    if (!keys.length) return sec;
    var t = el("table");
    var hr = el("tr");
    ["field", "type", "description"].forEach(function (h) { hr.appendChild(el("th", { scope: "col" }, h)); });
    t.appendChild(hr);
    keys.forEach(function (k) {
      var p = props[k], tr = el("tr");
      tr.appendChild(el("td", null, k));
      var ty = refName(p) + (p.enum ? " (" + p.enum.join(", ") + ")" : "");
      tr.appendChild(el("td", null, ty));
      tr.appendChild(el("td", null, p.description || ""));
      t.appendChild(tr);
    });
    sec.appendChild(t);
    return sec;
  }
  fetch("/openapi.json").then(function (r) { return r.json(); }).then(function (spec) {
    var ops = document.getElementById("ops");
    ops.textContent = "";
    var info = spec.info || {};
    ops.appendChild(el("p", null, (info.description || "") + " Version " + (info.version || "") + "."));
    Object.keys(spec.paths).sort().forEach(function (p) {
      Object.keys(spec.paths[p]).forEach(function (m) {
        var op = spec.paths[p][m];
        var sec = el("section", { class: "op" });
        sec.appendChild(el("h2", null, m.toUpperCase() + " " + p));
        if (op.summary) sec.appendChild(el("p", { class: "summary" }, op.summary));
        if (op.description) sec.appendChild(el("p", null, op.description));
        (op.parameters || []).forEach(function (par) {
          var line = par.in + " " + par.name + (par.required ? " (required)" : "") + ": " + (par.schema ? refName(par.schema) : par.type) + (par.description ? " — " + par.description : "");
          sec.appendChild(el("p", { class: "param" }, line));
        });
        var ul = el("ul");
        Object.keys(op.responses || {}).forEach(function (code) {
          var resp = op.responses[code];
          ul.appendChild(el("li", null, code + ": " + (resp.description || "") + (resp.schema ? " → " + refName(resp.schema) : "")));
        });
        sec.appendChild(ul);
        ops.appendChild(sec);
      });
    });
    ops.appendChild(el("h2", null, "Models"));
    Object.keys(spec.definitions || {}).sort().forEach(function (n) { ops.appendChild(modelTable(n, spec.definitions[n])); });
  }).catch(function (e) { document.getElementById("ops").textContent = "Could not load /openapi.json: " + e; });
})();
