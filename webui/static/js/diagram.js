/* levels: the level diagram. The server builds the figure (webui/figures.py); this file fetches it,
   redraws on every filter change without reloading, keeps the address bar a permalink, and shows
   the full record of a clicked line. Text from the store is only ever set through textContent. */
(function () {
  "use strict";
  var form = document.getElementById("diagram-filters");
  if (!form || !window.Plotly) { return; }
  var plot = document.getElementById("diagram");
  var status = document.getElementById("diagram-status");
  var recordBox = document.getElementById("record");
  var recordHint = document.getElementById("record-hint");
  var recordLink = document.getElementById("record-link");
  var strongest = document.getElementById("strongest");
  var strongestTitle = document.getElementById("strongest-title");
  var download = document.getElementById("download-lines");
  var site = window.levelsSite || { busy: function () {} };
  var recordBase = null;
  var inflight = null;
  var timer = null;
  var clickBound = false;

  var RECORD_FIELDS = [
    ["lower", "lower level", ""], ["upper", "upper level", ""],
    ["lower_cm1", "lower energy", "cm⁻¹"], ["upper_cm1", "upper energy", "cm⁻¹"],
    ["wavenumber_cm1", "wavenumber σ", "cm⁻¹"], ["vacuum_nm", "λ vacuum", "nm"], ["air_nm", "λ air", "nm"],
    ["multipole", "multipole", ""], ["a_per_s", "Einstein A", "s⁻¹"], ["f_abs", "f", ""],
    ["line_strength_au", "S", "e² a₀²"], ["g_lower", "g lower", ""], ["g_upper", "g upper", ""],
    ["unc_nm", "uncertainty", "nm"], ["dataset", "dataset", ""], ["id", "line id", ""]
  ];

  function filterParams(forDownload) {
    var params = new URLSearchParams();
    var data = new FormData(form);
    data.forEach(function (value, key) {
      if (value === "") { return; }
      if (forDownload && (key === "unit" || key === "max_lines" || key === "engine")) { return; }
      params.append(key, value);
    });
    return params;
  }

  function clearFieldErrors() {
    var marked = form.querySelectorAll("[aria-invalid=true]");
    for (var i = 0; i < marked.length; i += 1) { marked[i].removeAttribute("aria-invalid"); }
    var old = form.querySelectorAll(".js-error");
    for (var j = 0; j < old.length; j += 1) { old[j].remove(); }
  }

  function showFieldError(error) {
    status.textContent = (error.field ? error.field + ": " : "") + error.message;
    status.classList.add("is-error");
    if (!error.field) { return; }
    var input = form.querySelector("[name='" + error.field.replace(/[^a-z_]/g, "") + "']");
    if (!input) { return; }
    input.setAttribute("aria-invalid", "true");
    var note = document.createElement("span");
    note.className = "field-error js-error";
    note.textContent = error.message;
    (input.closest(".field") || input.parentNode).appendChild(note);
  }

  /* Floats of the record with 10 significant digits (the raw value stays in data-value and the JSON). */
  function shown(value) {
    if (value === null || value === undefined || value === "") { return "–"; }
    if (typeof value === "number" && !Number.isInteger(value)) {
      var text = Math.abs(value) >= 1e-4 && Math.abs(value) < 1e9 ? String(Number(value.toPrecision(10)))
        : value.toExponential(6);
      return text;
    }
    return String(value);
  }

  function number(value, digits, sci) {
    if (value === null || value === undefined) { return "–"; }
    return sci ? Number(value).toExponential(digits) : Number(value).toFixed(digits);
  }

  function describe(body) {
    var text = body.lines_shown.toLocaleString() + " of " + body.lines_total.toLocaleString() +
      (body.panel_title === "Lines drawn, no rates known" ? " lines drawn (no rates known: order not by strength)"
        : " lines drawn (strongest A first)");
    if (body.lines_omitted > 0) { text += "; " + body.lines_omitted.toLocaleString() + " left out"; }
    if (body.lines_unplaced > 0) { text += "; " + body.lines_unplaced + " have a level not in the level list"; }
    text += " · " + body.levels.toLocaleString() + " levels in " + body.columns + " term columns";
    if (body.engine) {
      text += " · lines implied by the levels (engine)";
      if (body.lines_without_rates) { text += ", " + body.lines_without_rates.toLocaleString() + " without a known A"; }
    }
    if (body.axis_note) { text += " · " + body.axis_note; }
    return text;
  }

  /* A line's wavelength in the form's medium: air at and above 200 nm when the medium is air, else vacuum. */
  function wavelengthText(line, medium) {
    if (medium === "air" && line.air_nm !== null && line.air_nm !== undefined) {
      return "λ air " + number(line.air_nm, 4) + " nm";
    }
    return "λ vac " + number(line.vacuum_nm, 4) + " nm";
  }

  function listStrongest(lines, medium) {
    while (strongest.firstChild) { strongest.removeChild(strongest.firstChild); }
    lines.forEach(function (line) {
      var item = document.createElement("li");
      var button = document.createElement("button");
      button.type = "button";
      var pair = document.createElement("span");
      pair.className = "pair";
      pair.textContent = line.lower + " – " + line.upper;
      var nums = document.createElement("span");
      nums.className = "nums";
      nums.textContent = wavelengthText(line, medium) + " · " + (line.a_per_s === null ? "A unknown" : "A " + number(line.a_per_s, 2, true) + " s⁻¹") + " · " +
        line.multipole;
      button.appendChild(pair);
      button.appendChild(nums);
      button.addEventListener("click", function () { showRecord(line.id, line.vacuum_nm); });
      item.appendChild(button);
      strongest.appendChild(item);
    });
  }

  function draw(body) {
    recordBase = body.record_base;
    var config = { responsive: true, displaylogo: false,
      modeBarButtonsToRemove: ["toImage", "lasso2d", "select2d", "autoScale2d"] };
    return window.Plotly.react(plot, body.figure.data, body.figure.layout, config).then(function () {
      if (!clickBound) {
        plot.on("plotly_click", function (event) {
          var point = event && event.points && event.points[0];
          if (point && point.data.meta === "lines" && point.customdata) {
            showRecord(point.customdata[0], point.customdata[1]);
          }
        });
        clickBound = true;
      }
      status.textContent = describe(body);
      status.classList.remove("is-error");
      listStrongest(body.strongest, body.medium);
      if (strongestTitle && body.panel_title) { strongestTitle.textContent = body.panel_title; }
      plot.setAttribute("data-lines-shown", String(body.lines_shown));
      plot.setAttribute("data-lines-total", String(body.lines_total));
      plot.setAttribute("data-state", "ready");
    });
  }

  function load() {
    var params = filterParams(false);
    if (inflight) { inflight.abort(); }
    var controller = new AbortController();
    inflight = controller;
    clearFieldErrors();
    plot.setAttribute("data-state", "loading");
    plot.setAttribute("aria-busy", "true");
    status.textContent = "Loading the diagram…";
    site.busy(true, "Drawing the diagram…");
    var query = params.toString();
    window.fetch(form.getAttribute("data-source") + (query ? "?" + query : ""),
      { signal: controller.signal, headers: { Accept: "application/json" } })
      .then(function (response) {
        return response.json().then(function (body) { return { ok: response.ok, body: body }; });
      })
      .then(function (result) {
        if (!result.ok) {
          showFieldError(result.body.error || { message: "the diagram could not be built" });
          plot.setAttribute("data-state", "error");
          return null;
        }
        window.history.replaceState(null, "", form.getAttribute("action") + (query ? "?" + query : ""));
        var dl = filterParams(true).toString();
        download.setAttribute("href", form.getAttribute("data-download") + (dl ? "?" + dl : ""));
        return draw(result.body);
      })
      .catch(function (error) {
        if (error.name === "AbortError") { return; }
        status.textContent = "The diagram could not be loaded: " + error.message;
        status.classList.add("is-error");
        plot.setAttribute("data-state", "error");
      })
      .then(function () {
        if (inflight === controller) { inflight = null; plot.removeAttribute("aria-busy"); }
        site.busy(false);
      });
  }

  function showRecord(id, vacuumNm) {
    if (!recordBase) { return; }
    if (id === null || id === undefined) {
      recordHint.textContent = "This line is implied by the levels (λ vac " + number(vacuumNm, 4) +
        " nm) and has no stored record.";
      recordBox.hidden = true;
      recordLink.hidden = true;
      return;
    }
    site.busy(true, "Fetching the line…");
    recordHint.textContent = "Loading line " + id + "…";
    window.fetch(recordBase + encodeURIComponent(id) + ".json?nm=" + encodeURIComponent(vacuumNm),
      { headers: { Accept: "application/json" } })
      .then(function (response) { return response.json(); })
      .then(function (body) {
        if (!body.line) {
          recordHint.textContent = (body.error && body.error.message) || "That line could not be read.";
          return;
        }
        while (recordBox.firstChild) { recordBox.removeChild(recordBox.firstChild); }
        RECORD_FIELDS.forEach(function (entry) {
          var value = body.line[entry[0]];
          var wrap = document.createElement("div");
          var dt = document.createElement("dt");
          var dd = document.createElement("dd");
          dt.textContent = entry[1] + (entry[2] ? " [" + entry[2] + "]" : "");
          dd.textContent = shown(value);
          dd.setAttribute("data-value", value === null || value === undefined ? "" : String(value));
          dd.setAttribute("data-field", entry[0]);
          wrap.appendChild(dt);
          wrap.appendChild(dd);
          recordBox.appendChild(wrap);
        });
        recordBox.hidden = false;
        recordBox.setAttribute("data-line-id", String(body.line.id));
        recordHint.textContent = body.line.lower + " – " + body.line.upper;
        recordLink.hidden = false;
        recordLink.querySelector("a").setAttribute("href", body.page);
      })
      .catch(function (error) { recordHint.textContent = "That line could not be read: " + error.message; })
      .then(function () { site.busy(false); });
  }

  form.addEventListener("submit", function (event) { event.preventDefault(); load(); });
  form.addEventListener("change", function () { window.clearTimeout(timer); timer = window.setTimeout(load, 150); });
  form.addEventListener("input", function (event) {
    if (event.target.type === "text") { window.clearTimeout(timer); timer = window.setTimeout(load, 500); }
  });
  load();
}());
