// The pages' only script of their own (the Content-Security-Policy allows no inline script and
// no eval, so htmx runs with allowEval off and these small behaviours live here).
"use strict";

// A part picker's search box: its typing stays its own and does not also trigger the form's
// live preview (the preview form listens for input and change events bubbling up to it).
function keepEvents(root) {
  root.querySelectorAll("[data-keep-events]").forEach(function (el) {
    if (el.dataset.keepEventsBound) return;
    el.dataset.keepEventsBound = "1";
    ["input", "change", "search"].forEach(function (type) {
      el.addEventListener(type, function (event) { event.stopPropagation(); });
    });
  });
}
document.addEventListener("htmx:load", function (event) { keepEvents(event.detail.elt); });
document.addEventListener("DOMContentLoaded", function () { keepEvents(document); });

// A checkbox that submits its form when changed (e.g. "show archived" on the parts page).
document.addEventListener("change", function (event) {
  var el = event.target;
  if (el.matches && el.matches("[data-submit-on-change]") && el.form) el.form.submit();
});

// The printed record's "Print" button (no inline handler: the policy allows no inline script).
document.addEventListener("click", function (event) {
  var el = event.target;
  if (el.matches && el.matches("[data-print]")) window.print();
});
