/* levels: small helpers for every page (no inline scripts anywhere; CSP allows only this site's files). */
(function () {
  "use strict";
  var depth = 0;

  /* Show or hide the progress strip under the top band; calls nest. */
  function busy(on, text) {
    var strip = document.getElementById("busy");
    if (!strip) { return; }
    depth = Math.max(0, depth + (on ? 1 : -1));
    strip.hidden = depth === 0;
    if (on && text) { strip.querySelector(".busy-text").textContent = text; }
  }
  window.levelsSite = { busy: busy };

  /* A form that leaves the page (filters, uploads, commits) shows the strip and blocks a second click. */
  document.addEventListener("submit", function (event) {
    var form = event.target;
    window.setTimeout(function () {
      if (event.defaultPrevented) { return; }
      busy(true, form.getAttribute("data-busy") || "Loading…");
      var buttons = form.querySelectorAll("button[type=submit]");
      for (var i = 0; i < buttons.length; i += 1) { buttons[i].disabled = true; }
    }, 0);
  });

  /* After a form came back with problems, put the keyboard on the first field to fix. */
  document.addEventListener("DOMContentLoaded", function () {
    var first = document.querySelector("main [aria-invalid=true]");
    if (first) { first.focus(); }
  });

  /* Coming back through the history must not leave a stale strip or disabled buttons. */
  window.addEventListener("pageshow", function () {
    depth = 0;
    var strip = document.getElementById("busy");
    if (strip) { strip.hidden = true; }
    var buttons = document.querySelectorAll("button[disabled]");
    for (var i = 0; i < buttons.length; i += 1) { buttons[i].disabled = false; }
  });
}());
