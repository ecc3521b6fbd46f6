/* levels: the emission workbench. The page holds the numbers (rendered by the server); this file paints
   the colour swatch from its data attribute (the CSP forbids style attributes) and fetches and draws the
   spectrum figure built by webui/figures.py, with the progress strip shown while the server computes. */
(function () {
  "use strict";
  var swatch = document.getElementById("swatch");
  if (swatch && /^#[0-9a-f]{6}$/i.test(swatch.getAttribute("data-swatch") || "")) {
    swatch.style.backgroundColor = swatch.getAttribute("data-swatch");
    swatch.classList.add("is-painted");
  }
  var form = document.getElementById("emission-form");
  var plot = document.getElementById("emission-plot");
  var status = document.getElementById("emission-status");
  if (!form || !plot || !status) { return; }
  if (!window.Plotly) {
    status.textContent = "The plotting library did not load; the numbers below are complete.";
    return;
  }
  var site = window.levelsSite || { busy: function () {} };
  var query = window.location.search;
  plot.setAttribute("data-state", "loading");
  plot.setAttribute("aria-busy", "true");
  site.busy(true, "Computing the spectrum…");
  window.fetch(form.getAttribute("data-source") + query, { headers: { Accept: "application/json" } })
    .then(function (response) {
      return response.json().then(function (body) { return { ok: response.ok, body: body }; });
    })
    .then(function (result) {
      if (!result.ok) {
        var error = result.body.error || { message: "the spectrum could not be computed" };
        status.textContent = (error.field ? error.field + ": " : "") + error.message;
        status.classList.add("is-error");
        plot.setAttribute("data-state", "error");
        return null;
      }
      var body = result.body;
      var config = { responsive: true, displaylogo: false, modeBarButtonsToRemove: ["lasso2d", "select2d"] };
      return window.Plotly.newPlot(plot, body.figure.data, body.figure.layout, config).then(function () {
        status.textContent = body.lines_total.toLocaleString() + " lines with a known A in the window; the " +
          Math.min(body.lines_total, 40) + " strongest are marked (hover for the line). Drag to zoom, double-click to reset.";
        status.classList.remove("is-error");
        plot.setAttribute("data-lines-total", String(body.lines_total));
        plot.setAttribute("data-state", "ready");
      });
    })
    .catch(function () {
      status.textContent = "The spectrum could not be loaded; try again.";
      status.classList.add("is-error");
      plot.setAttribute("data-state", "error");
    })
    .then(function () {
      plot.removeAttribute("aria-busy");
      site.busy(false);
    });
}());
