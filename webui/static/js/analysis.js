/* levels: the spectrum-analysis page. The server puts each figure (built by levels/figures.py) in a
   JSON data block beside its plot; this file draws them with plotly (the CSP allows no inline script). */
(function () {
  "use strict";
  if (!window.Plotly) { return; }
  var plots = document.querySelectorAll("[data-figure]");
  var config = { responsive: true, displaylogo: false, modeBarButtonsToRemove: ["lasso2d", "select2d"] };
  for (var i = 0; i < plots.length; i++) {
    var block = document.getElementById(plots[i].getAttribute("data-figure"));
    if (!block) { continue; }
    try {
      var figure = JSON.parse(block.textContent);
      window.Plotly.newPlot(plots[i], figure.data, figure.layout, config);
      plots[i].setAttribute("data-state", "ready");
    } catch (err) {
      plots[i].setAttribute("data-state", "error");
    }
  }
})();
