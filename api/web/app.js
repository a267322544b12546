// ringsieve screening page: paste or upload candidates, screen them through the JSON API, show
// a ranked, sortable, filterable table and a detail view with thermodynamic plots (SVG).
(function () {
  "use strict";
  var $ = function (id) { return document.getElementById(id); };
  var state = { rows: [], sortKey: "rank", sortDir: 1, lastRequest: null, jobId: null, conditions: null };
  var VERDICT_TEXT = {
    polymerizes: "polymerizes", equilibrium_limited: "equilibrium limited", unfavorable: "unfavorable",
    blocked: "blocked", not_a_monomer: "not a monomer"
  };

  function el(tag, attrs, text) {
    var e = document.createElement(tag);
    if (attrs) Object.keys(attrs).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    if (text !== undefined && text !== null) e.textContent = text;
    return e;
  }
  function svgEl(tag, attrs, text) {
    var e = document.createElementNS("http://www.w3.org/2000/svg", tag);
    Object.keys(attrs || {}).forEach(function (k) { e.setAttribute(k, attrs[k]); });
    if (text !== undefined) e.textContent = text;
    return e;
  }
  function status(msg, isError) {
    var s = $("status");
    s.textContent = msg;
    s.className = isError ? "error" : "";
  }
  function fmt(x, digits) {
    if (x === null || x === undefined || isNaN(x)) return "";
    return Number(x).toFixed(digits);
  }
  function problemText(p) {
    if (!p) return "";
    var t = p.detail || p.title || "error";
    if (p.position !== undefined && p.position !== null) t += " (character " + p.position + ")";
    return t;
  }

  function conditions() {
    var c = { temperature_c: parseFloat($("temp").value), catalyst: $("catalyst").value };
    if ($("bulk").checked) c.bulk = true; else c.monomer_conc_mol_l = parseFloat($("conc").value);
    return c;
  }

  function parsePasted(text) {
    var items = [];
    text.split(/\r?\n/).forEach(function (line, i) {
      var t = line.trim();
      if (!t || t.charAt(0) === "#") return;
      var parts = t.split(/\s+/);
      items.push({ id: parts.length > 1 ? parts.slice(1).join(" ") : String(i + 1), smiles: parts[0] });
    });
    return items;
  }

  function api(method, path, body, isForm) {
    var opts = { method: method, headers: {} };
    var key = $("apikey").value.trim();
    if (key) opts.headers["X-API-Key"] = key;
    if (body !== undefined) {
      if (isForm) opts.body = body;
      else { opts.body = JSON.stringify(body); opts.headers["Content-Type"] = "application/json"; }
    }
    return fetch(path, opts).then(function (r) {
      return r.text().then(function (t) {
        var data = null;
        try { data = t ? JSON.parse(t) : null; } catch (e) { data = { detail: t }; }
        if (!r.ok) { var err = new Error(problemText(data) || r.statusText); err.problem = data; throw err; }
        return data;
      });
    });
  }

  // drawing fetches the 2-D drawing of a SMILES (GET /v1/depict) and shows it inline; the SVG
  // uses presentation attributes only, so it passes the page's content security policy.
  function drawing(smiles, w, h, cls) {
    var box = el("span", { class: "drawing " + (cls || ""), "data-role": "drawing", "data-smiles": smiles || "" });
    if (!smiles) return box;
    var path = "/v1/depict?smiles=" + encodeURIComponent(smiles) + "&width=" + w + "&height=" + h;
    var opts = { headers: {} };
    var key = $("apikey").value.trim();
    if (key) opts.headers["X-API-Key"] = key;
    fetch(path, opts).then(function (r) { return r.ok ? r.text() : ""; }).then(function (t) {
      if (!t) { box.textContent = "(no drawing)"; return; }
      var doc = new DOMParser().parseFromString(t, "image/svg+xml");
      var svg = doc.documentElement;
      if (svg && svg.nodeName === "svg") box.appendChild(document.importNode(svg, true));
    }).catch(function () { box.textContent = "(no drawing)"; });
    return box;
  }

  function rowSmiles(row) {
    return row.smiles || (row.result && row.result.descriptors && row.result.descriptors.smiles) || "";
  }

  function setApiCall(text) {
    var pre = $("api-call");
    pre.textContent = text;
  }

  function curlFor(path, body) {
    return "curl -s -H 'Content-Type: application/json' -d '" + JSON.stringify(body).replace(/'/g, "'\\''") + "' " + location.origin + path;
  }

  function screenPasted(items, cond) {
    var body = { items: items, conditions: cond };
    state.lastRequest = { path: "/v1/screen/batch", body: body };
    setApiCall(curlFor("/v1/screen/batch", body));
    return api("POST", "/v1/screen/batch", body).then(function (data) {
      state.jobId = null;
      return data.results.map(function (r) {
        var src = items.filter(function (x) { return x.id === r.id; })[0];
        return { rank: r.rank, id: r.id, result: r.error ? null : r, error: r.error || null, smiles: src ? src.smiles : "" };
      });
    });
  }

  function screenFile(file, cond) {
    var fd = new FormData();
    fd.append("file", file);
    Object.keys(cond).forEach(function (k) { fd.append(k, String(cond[k])); });
    return api("POST", "/v1/jobs", fd, true).then(function (job) {
      state.jobId = job.id;
      var skipped = (job.input_errors || []).map(function (e) { return "line " + e.line + ": " + e.message; });
      if (skipped.length) status("Skipped " + skipped.length + " unreadable row(s): " + skipped.slice(0, 3).join("; "));
      state.lastRequest = { path: "/v1/jobs/" + job.id + "/results?format=json&limit=5000" };
      setApiCall("curl -s -F file=@" + file.name + Object.keys(cond).map(function (k) { return " -F " + k + "=" + cond[k]; }).join("") +
        " " + location.origin + "/v1/jobs\ncurl -s '" + location.origin + "/v1/jobs/" + job.id + "/results?format=csv'");
      return pollJob(job.id);
    }).then(function (id) {
      return api("GET", "/v1/jobs/" + id + "/results?format=json&limit=5000");
    }).then(function (data) {
      return data.results.map(function (r) {
        return { rank: r.rank, id: r.id, result: r.result || null, error: r.error || null, smiles: (r.result && r.result.descriptors && r.result.descriptors.smiles) || "" };
      });
    });
  }

  function pollJob(id) {
    return new Promise(function (resolve, reject) {
      (function tick() {
        api("GET", "/v1/jobs/" + id).then(function (j) {
          status("Job " + id + ": " + j.done + " of " + j.total + " screened (" + j.percent + " %)");
          if (j.status === "done") resolve(id);
          else if (j.status === "failed" || j.status === "canceled") reject(new Error("job " + j.status));
          else setTimeout(tick, 400);
        }).catch(reject);
      })();
    });
  }

  function mainReasons(r) {
    if (!r) return [];
    var order = { blocks: 0, penalizes: 1, favors: 2 };
    return r.reasons.filter(function (x) { return x.effect in order; })
      .sort(function (a, b) { return order[a.effect] - order[b.effect]; })
      .map(function (x) { return x.code + (x.group ? " (" + x.group + ")" : ""); });
  }

  function sortValue(row, key) {
    var r = row.result, t = r && r.thermo;
    switch (key) {
      case "rank": return row.rank;
      case "id": return row.id.toLowerCase();
      case "verdict": return r ? ["polymerizes", "equilibrium_limited", "unfavorable", "blocked", "not_a_monomer"].indexOf(r.verdict) : 9;
      case "score": return r ? -r.score : 9;
      case "dh": return t ? t.dh_kj_mol : 1e9;
      case "tc": return t && t.ceiling_temp_k !== null ? -t.ceiling_temp_k : 1e9;
      case "conv": return t ? -t.eq_conversion : 9;
    }
    return 0;
  }

  function visibleRows() {
    var v = $("filter-verdict").value, q = $("filter-text").value.trim().toLowerCase();
    var rows = state.rows.filter(function (row) {
      if (v && (!row.result || row.result.verdict !== v)) return false;
      if (q) {
        var hay = (row.id + " " + mainReasons(row.result).join(" ") + " " + (row.error ? problemText(row.error) : "")).toLowerCase();
        if (hay.indexOf(q) < 0) return false;
      }
      return true;
    });
    var k = state.sortKey, d = state.sortDir;
    return rows.sort(function (a, b) {
      var x = sortValue(a, k), y = sortValue(b, k);
      if (x < y) return -d;
      if (x > y) return d;
      return a.rank - b.rank;
    });
  }

  function renderTable() {
    var tbody = document.querySelector("#ranked tbody");
    tbody.textContent = "";
    visibleRows().forEach(function (row) {
      var r = row.result, t = r && r.thermo;
      var tr = el("tr", { "data-id": row.id });
      tr.appendChild(el("td", { class: "num" }, String(row.rank)));
      var idCell = el("td");
      var b = el("button", { type: "button", class: "id-link", "aria-label": "details for " + row.id }, row.id);
      b.addEventListener("click", function () { showDetail(row); });
      idCell.appendChild(b);
      tr.appendChild(idCell);
      var sc = el("td", { class: "structure" });
      sc.appendChild(drawing(rowSmiles(row), 150, 90));
      tr.appendChild(sc);
      if (r) {
        tr.appendChild(el("td", { class: "verdict v-" + r.verdict, "data-verdict": r.verdict }, VERDICT_TEXT[r.verdict]));
        tr.appendChild(el("td", { class: "num" }, fmt(r.score, 3)));
        tr.appendChild(el("td", { class: "num" }, t ? fmt(t.dh_kj_mol, 1) + " ± " + fmt(t.dh_uncertainty_kj_mol, 1) : "—"));
        tr.appendChild(el("td", { class: "num", "data-tc": t && t.ceiling_temp_k !== null ? String(t.ceiling_temp_k) : "" }, t ? tcText(t, 0) : "—"));
        tr.appendChild(el("td", { class: "num" }, t ? fmt(t.eq_conversion, 3) : "—"));
        tr.appendChild(el("td", null, mainReasons(r).join("; ")));
      } else {
        tr.appendChild(el("td", { class: "verdict error" }, "error"));
        for (var i = 0; i < 4; i++) tr.appendChild(el("td", null, ""));
        tr.appendChild(el("td", { class: "error" }, problemText(row.error)));
      }
      tbody.appendChild(tr);
    });
    document.querySelectorAll("#ranked th[data-key]").forEach(function (th) {
      if (th.getAttribute("data-key") === state.sortKey) th.setAttribute("aria-sort", state.sortDir > 0 ? "ascending" : "descending");
      else th.removeAttribute("aria-sort");
    });
    $("sort-desc").textContent = state.sortKey + (state.sortDir > 0 ? "" : " (reversed)");
  }

  function csvEscape(v) {
    v = v === null || v === undefined ? "" : String(v);
    return /[",\n]/.test(v) ? '"' + v.replace(/"/g, '""') + '"' : v;
  }

  function downloadCSV() {
    if (state.jobId) { location.href = "/v1/jobs/" + state.jobId + "/results?format=csv"; return; }
    var head = ["rank", "id", "smiles", "verdict", "score", "dh_kj_mol", "dh_uncertainty_kj_mol", "ds_j_mol_k", "dg_kj_mol", "ceiling_temp_k", "eq_monomer_mol_l", "eq_conversion", "basis", "formula", "main_reasons", "error"];
    var lines = [head.join(",")];
    visibleRows().forEach(function (row) {
      var r = row.result, t = r && r.thermo;
      lines.push([row.rank, row.id, row.smiles, r ? r.verdict : "", r ? r.score : "", t ? t.dh_kj_mol : "", t ? t.dh_uncertainty_kj_mol : "",
        t ? t.ds_j_mol_k : "", t ? t.dg_kj_mol : "", t && t.ceiling_temp_k !== null ? t.ceiling_temp_k : "", t ? t.eq_monomer_mol_l : "",
        t ? t.eq_conversion : "", t ? t.basis : "", r ? r.descriptors.formula || "" : "", mainReasons(r).join("; "), row.error ? problemText(row.error) : ""].map(csvEscape).join(","));
    });
    var blob = new Blob([lines.join("\n") + "\n"], { type: "text/csv" });
    var a = el("a", { href: URL.createObjectURL(blob), download: "ringsieve-ranked.csv" });
    document.body.appendChild(a);
    a.click();
    a.remove();
  }

  // ---------- plots ----------
  var W = 420, H = 260, M = { l: 62, r: 14, t: 16, b: 44 };

  function niceTicks(lo, hi, n) {
    var span = hi - lo, step = Math.pow(10, Math.floor(Math.log10(span / n)));
    [1, 2, 5, 10].some(function (m) { if (span / (step * m) <= n) { step *= m; return true; } return false; });
    var ticks = [];
    for (var v = Math.ceil(lo / step) * step; v <= hi + 1e-9; v += step) ticks.push(v);
    return ticks;
  }

  function plot(opts) {
    // opts: id, title, xs, ys, xLabel, yLabel, log, markers: [{x, label, role}], yZero
    var svg = svgEl("svg", { viewBox: "0 0 " + W + " " + H, role: "img", "aria-label": opts.title, id: opts.id, width: "100%" });
    var xs = opts.xs, ys = opts.ys.map(function (y) { return opts.log ? Math.log10(Math.max(y, 1e-30)) : y; });
    var xmin = xs[0], xmax = xs[xs.length - 1];
    var finite = ys.filter(function (y) { return isFinite(y); });
    var ymin = Math.min.apply(null, finite), ymax = Math.max.apply(null, finite);
    if (opts.yRange) { ymin = opts.yRange[0]; ymax = opts.yRange[1]; }
    if (ymax - ymin < 1e-9) { ymax += 1; ymin -= 1; }
    var pad = (ymax - ymin) * 0.05; ymin -= pad; ymax += pad;
    var X = function (x) { return M.l + (x - xmin) / (xmax - xmin) * (W - M.l - M.r); };
    var Y = function (y) { return H - M.b - (y - ymin) / (ymax - ymin) * (H - M.t - M.b); };
    svg.appendChild(svgEl("rect", { x: M.l, y: M.t, width: W - M.l - M.r, height: H - M.t - M.b, fill: "none", stroke: "#1b1d1f" }));
    niceTicks(xmin, xmax, 6).forEach(function (v) {
      svg.appendChild(svgEl("line", { x1: X(v), x2: X(v), y1: H - M.b, y2: H - M.b + 4, stroke: "#1b1d1f" }));
      svg.appendChild(svgEl("text", { x: X(v), y: H - M.b + 16, "text-anchor": "middle" }, String(Math.round(v))));
    });
    niceTicks(ymin, ymax, 5).forEach(function (v) {
      svg.appendChild(svgEl("line", { x1: M.l - 4, x2: M.l, y1: Y(v), y2: Y(v), stroke: "#1b1d1f" }));
      var label = opts.log ? "1e" + Math.round(v) : (Math.abs(v) < 1e-9 ? "0" : String(+v.toPrecision(3)));
      svg.appendChild(svgEl("text", { x: M.l - 6, y: Y(v) + 4, "text-anchor": "end" }, label));
    });
    svg.appendChild(svgEl("text", { x: (M.l + W - M.r) / 2, y: H - 8, "text-anchor": "middle" }, opts.xLabel));
    svg.appendChild(svgEl("text", { x: 14, y: (M.t + H - M.b) / 2, transform: "rotate(-90 14 " + (M.t + H - M.b) / 2 + ")", "text-anchor": "middle" }, opts.yLabel));
    if (opts.yZero && ymin < 0 && ymax > 0) {
      svg.appendChild(svgEl("line", { x1: M.l, x2: W - M.r, y1: Y(0), y2: Y(0), stroke: "#5a5f66", "stroke-dasharray": "2 3" }));
    }
    var d = "";
    xs.forEach(function (x, i) {
      if (!isFinite(ys[i])) return;
      var y = Math.min(Math.max(ys[i], ymin), ymax);
      d += (d ? "L" : "M") + X(x).toFixed(1) + "," + Y(y).toFixed(1);
    });
    svg.appendChild(svgEl("path", { d: d, fill: "none", stroke: "#24507a", "stroke-width": 2, "data-role": "curve" }));
    (opts.markers || []).forEach(function (mk, i) {
      if (mk.x < xmin || mk.x > xmax) return;
      var line = svgEl("line", { x1: X(mk.x), x2: X(mk.x), y1: M.t, y2: H - M.b, stroke: "#1b1d1f", "stroke-width": mk.role === "tc-marker" ? 2 : 1,
        "stroke-dasharray": mk.role === "tc-marker" ? "6 3" : "1 3", "data-role": mk.role, "data-value": String(mk.x) });
      svg.appendChild(line);
      var nearRight = X(mk.x) > W - M.r - 110;
      svg.appendChild(svgEl("text", { x: nearRight ? X(mk.x) - 3 : X(mk.x) + 3, y: M.t + 12 + 12 * i, "text-anchor": nearRight ? "end" : "start",
        "data-role": mk.role + "-label" }, mk.label));
    });
    return svg;
  }

  // tcText shows a ceiling temperature, or says that it is a formal, extrapolated number
  function tcText(t, digits) {
    if (t.ceiling_temp_k === null) return t.critical_conc_mol_l ? "none (floor: " + Number(t.critical_conc_mol_l).toPrecision(3) + " mol/L)" : "none";
    if (t.ceiling_temp_extrapolated) return (t.ceiling_temp_k > 500 ? "> 500 K" : "< 200 K") + " (extrapolated)";
    return fmt(t.ceiling_temp_k, digits) + (digits ? " K" : "");
  }

  function showDetail(row) {
    var sec = $("detail"), body = $("detail-body");
    body.textContent = "";
    sec.hidden = false;
    $("detail-h").textContent = "Details: " + row.id;
    if (!row.result) {
      body.appendChild(el("p", { class: "error" }, problemText(row.error)));
      sec.focus();
      return;
    }
    var r = row.result, t = r.thermo, d = r.descriptors;
    var summary = el("p");
    summary.appendChild(el("strong", { class: "verdict v-" + r.verdict }, VERDICT_TEXT[r.verdict]));
    summary.appendChild(document.createTextNode(" — score " + fmt(r.score, 3) + (rowSmiles(row) ? " — " + rowSmiles(row) : "")));
    body.appendChild(summary);
    if (rowSmiles(row)) {
      var big = drawing(rowSmiles(row), 420, 280, "drawing-large");
      big.id = "detail-drawing";
      body.appendChild(big);
      body.appendChild(el("p", { class: "note" }, "The highlighted double bond is the ring olefin that opens."));
    }
    // say first why a monomer is blocked or unfavorable, before any number
    var why = (r.reasons || []).filter(function (x) { return x.effect === "blocks"; });
    if (!why.length && r.verdict !== "polymerizes") why = (r.reasons || []).filter(function (x) { return x.effect === "penalizes"; });
    if (why.length) {
      var wb = el("div", { class: "why", id: "why" });
      wb.appendChild(el("strong", null, r.verdict === "blocked" ? "Why it is blocked: " : "What holds it back: "));
      var ul = el("ul");
      why.forEach(function (x) { ul.appendChild(el("li", null, x.detail + (x.group ? " (" + x.group + ")" : ""))); });
      wb.appendChild(ul);
      body.appendChild(wb);
    }
    if (t) {
      var tt = el("table", { class: "thermo" });
      [["ΔH_p", fmt(t.dh_kj_mol, 1) + " ± " + fmt(t.dh_uncertainty_kj_mol, 1) + " kJ/mol"],
       ["ΔS_p° (1 mol/L)", fmt(t.ds_j_mol_k, 1) + " ± " + fmt(t.ds_uncertainty_j_mol_k, 1) + " J/(mol K)"],
       ["ΔG_p at " + fmt(t.temperature_k, 2) + " K, " + t.monomer_conc_mol_l + " mol/L", fmt(t.dg_kj_mol, 2) + " ± " + fmt(t.dg_uncertainty_kj_mol, 1) + " kJ/mol"],
       ["Ceiling temperature", tcText(t, 1)],
       ["[M]eq", Number(t.eq_monomer_mol_l).toPrecision(3) + " mol/L"], ["Equilibrium conversion", fmt(t.eq_conversion, 4)],
       ["Basis", t.basis + (t.source ? " — " + t.source : "")]].forEach(function (kv) {
        var tr = el("tr"); tr.appendChild(el("th", { scope: "row" }, kv[0])); tr.appendChild(el("td", null, kv[1])); tt.appendChild(tr);
      });
      body.appendChild(tt);
      if (t.estimate) {
        var em = el("table", { class: "thermo", id: "estimate-vs-measured" });
        var hr = el("tr");
        ["", "ΔH_p / kJ/mol", "ΔS_p° / J/(mol K)", "how"].forEach(function (h) { hr.appendChild(el("th", { scope: "col" }, h)); });
        em.appendChild(hr);
        var e = t.estimate;
        var how = e.method + " — parent " + (e.parent_ring_system || "?") +
          (e.forcefield_correction_kj_mol !== null && e.forcefield_correction_kj_mol !== undefined ? ", force-field difference " + fmt(e.forcefield_correction_kj_mol, 1) + " kJ/mol" : "") +
          (e.calibration ? "; " + e.calibration : "");
        [["Estimate (without any measurement of this structure)", fmt(e.dh_kj_mol, 1) + " ± " + fmt(e.dh_uncertainty_kj_mol, 1), fmt(e.ds_j_mol_k, 1) + " ± " + fmt(e.ds_uncertainty_j_mol_k, 1), how]]
          .concat(t.measured ? [["Measured (used for the verdict)", fmt(t.measured.dh_kj_mol, 1), t.measured.ds_j_mol_k === null ? "—" : fmt(t.measured.ds_j_mol_k, 1), t.measured.source]] : [])
          .forEach(function (cells) {
            var tr = el("tr"); tr.appendChild(el("th", { scope: "row" }, cells[0]));
            cells.slice(1).forEach(function (c) { tr.appendChild(el("td", null, c)); });
            em.appendChild(tr);
          });
        body.appendChild(el("h3", null, "Estimate and measurement"));
        body.appendChild(em);
      }
      var plots = el("div", { class: "plots", id: "plots" });
      body.appendChild(el("h3", null, "Thermodynamics against temperature"));
      body.appendChild(plots);
      plots.appendChild(el("p", null, "Loading curves…"));
      // a working window of −80 to 150 °C, widened when T_c lies just outside it (up to 400 °C,
      // down to −150 °C); a formal, extrapolated T_c is marked only when it falls inside
      var tcK = t.ceiling_temp_k, tcC = tcK === null ? null : tcK - 273.15;
      var fromC = -80, toC = 150;
      if (tcC !== null && !t.ceiling_temp_extrapolated) {
        if (tcC > 130 && tcC <= 400) toC = Math.ceil((tcC + 30) / 10) * 10;
        if (tcC < -60 && tcC >= -150) fromC = Math.floor((tcC - 20) / 10) * 10;
      }
      var sweepBody = { descriptors: { ring_size: d.ring_size || 5, ring_system: d.ring_system || "monocyclic", dh_kj_mol: t.dh_kj_mol, ds_j_mol_k: t.ds_j_mol_k },
        conditions: { temperature_k: t.temperature_k, monomer_conc_mol_l: t.monomer_conc_mol_l, catalyst: r.conditions.catalyst },
        sweep: { from_c: fromC, to_c: toC, step_c: Math.max(1, Math.round((toC - fromC) / 150)) } };
      var curl = curlFor("/v1/sweep", sweepBody);
      api("POST", "/v1/sweep", sweepBody).then(function (sw) {
        plots.textContent = "";
        var xs = sw.points.map(function (p) { return p.temperature_k - 273.15; });
        var markers = [{ x: t.temperature_k - 273.15, label: "working " + fmt(t.temperature_k - 273.15, 0) + " °C", role: "work-marker" }];
        if (tcC !== null) markers.unshift({ x: tcC, label: "T_c " + fmt(tcC, 0) + " °C", role: "tc-marker" });
        var f1 = el("figure"); f1.appendChild(plot({ id: "plot-dg", title: "ΔG_p against temperature", xs: xs, ys: sw.points.map(function (p) { return p.dg_kj_mol; }), xLabel: "T / °C", yLabel: "ΔG_p / kJ mol⁻¹", markers: markers, yZero: true }));
        f1.appendChild(el("figcaption", null, "ΔG_p at " + t.monomer_conc_mol_l + " mol/L; the dashed vertical line is the ceiling temperature, the dotted one the working temperature."));
        var f2 = el("figure"); f2.appendChild(plot({ id: "plot-conv", title: "Equilibrium conversion against temperature", xs: xs, ys: sw.points.map(function (p) { return p.eq_conversion; }), xLabel: "T / °C", yLabel: "equilibrium conversion X_eq", markers: markers, yRange: [0, 1] }));
        f2.appendChild(el("figcaption", null, "Equilibrium conversion 1 − [M]eq/[M]0."));
        var f3 = el("figure"); f3.appendChild(plot({ id: "plot-meq", title: "Equilibrium monomer concentration against temperature (log scale)", xs: xs, ys: sw.points.map(function (p) { return p.eq_monomer_mol_l; }), xLabel: "T / °C", yLabel: "[M]eq / mol L⁻¹ (log)", log: true, markers: markers }));
        f3.appendChild(el("figcaption", null, "[M]eq = exp(ΔH_p/RT − ΔS_p°/R), log axis."));
        plots.appendChild(f1); plots.appendChild(f2); plots.appendChild(f3);
        var callBox = el("div", { class: "curve-call" });
        callBox.appendChild(el("p", null, "API call for these curves:"));
        callBox.appendChild(el("pre", { class: "api-call" }, curl));
        plots.parentNode.insertBefore(callBox, plots.nextSibling);
      }).catch(function (e) { plots.textContent = "Could not load the curves: " + e.message; });
    }
    body.appendChild(el("h3", null, "Reasons"));
    var ul = el("ul", { class: "reason-list" });
    r.reasons.forEach(function (x) {
      var li = el("li");
      li.appendChild(el("code", null, x.code));
      li.appendChild(document.createTextNode(" [" + x.effect + "] " + x.detail));
      ul.appendChild(li);
    });
    body.appendChild(ul);
    body.appendChild(el("h3", null, "Catalyst classes for this monomer"));
    var ct = el("table");
    var hr = el("tr"); ["class", "status", "groups", "remedy"].forEach(function (h) { hr.appendChild(el("th", { scope: "col" }, h)); }); ct.appendChild(hr);
    (r.catalyst_compatibility || []).forEach(function (c) {
      var tr = el("tr");
      tr.appendChild(el("td", null, c.catalyst)); tr.appendChild(el("td", null, c.status));
      tr.appendChild(el("td", null, (c.groups || []).join(", "))); tr.appendChild(el("td", null, c.remedy || ""));
      ct.appendChild(tr);
    });
    body.appendChild(ct);
    body.appendChild(el("h3", null, "Descriptors"));
    var dt = el("table");
    Object.keys(d).forEach(function (k) {
      var v = d[k];
      if (v === null || v === "" || (Array.isArray(v) && !v.length)) return;
      var tr = el("tr"); tr.appendChild(el("th", { scope: "row" }, k));
      tr.appendChild(el("td", null, typeof v === "object" ? JSON.stringify(v) : String(v))); dt.appendChild(tr);
    });
    body.appendChild(dt);
    body.appendChild(el("h3", null, "Cautions"));
    var cl = el("ul", { class: "cautions" });
    r.cautions.forEach(function (c) { cl.appendChild(el("li", null, c)); });
    body.appendChild(cl);
    sec.focus();
  }

  $("screen-form").addEventListener("submit", function (ev) {
    ev.preventDefault();
    var cond = conditions();
    if (isNaN(cond.temperature_c)) { status("Give a temperature in °C.", true); $("temp").focus(); return; }
    if (!cond.bulk && !(cond.monomer_conc_mol_l > 0)) { status("Give a monomer concentration above 0 mol/L, or tick bulk.", true); $("conc").focus(); return; }
    var file = $("file").files[0];
    var items = parsePasted($("smiles").value);
    if (!file && !items.length) { status("Paste at least one SMILES or choose a file.", true); $("smiles").focus(); return; }
    $("go").disabled = true;
    status("Screening…");
    state.conditions = cond;
    (file ? screenFile(file, cond) : screenPasted(items, cond)).then(function (rows) {
      state.rows = rows;
      state.sortKey = "rank"; state.sortDir = 1;
      $("results").hidden = false;
      $("detail").hidden = true;
      renderTable();
      status("Screened " + rows.length + " candidate(s).");
    }).catch(function (e) {
      status("Could not screen: " + e.message, true);
    }).then(function () { $("go").disabled = false; });
  });
  $("bulk").addEventListener("change", function () { $("conc").disabled = $("bulk").checked; });
  // keep the key for this browser tab only
  try { $("apikey").value = sessionStorage.getItem("ringsieve-key") || ""; } catch (e) { /* storage blocked */ }
  $("apikey").addEventListener("change", function () { try { sessionStorage.setItem("ringsieve-key", $("apikey").value.trim()); } catch (e) { /* ignore */ } });
  document.querySelectorAll("#ranked th[data-key] button").forEach(function (b) {
    b.addEventListener("click", function () {
      var key = b.parentNode.getAttribute("data-key");
      if (state.sortKey === key) state.sortDir = -state.sortDir; else { state.sortKey = key; state.sortDir = 1; }
      renderTable();
    });
  });
  $("filter-verdict").addEventListener("change", renderTable);
  $("filter-text").addEventListener("input", renderTable);
  $("download").addEventListener("click", downloadCSV);
  $("api-link").addEventListener("click", function (ev) { ev.preventDefault(); var p = $("api-call"); p.hidden = !p.hidden; });
  $("close-detail").addEventListener("click", function () { $("detail").hidden = true; var f = document.querySelector("#ranked .id-link"); if (f) f.focus(); });
})();
