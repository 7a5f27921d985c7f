// stowflow local page: the drop zone, the submit buttons, and the progress of a running study.
(function () {
  "use strict";

  function dropZone() {
    var zone = document.getElementById("drop");
    if (!zone) return;
    var input = zone.querySelector("input[type=file]");
    var shown = document.getElementById("drop-file");
    function show() {
      var f = input.files && input.files[0];
      shown.textContent = f ? f.name + " (" + Math.max(1, Math.round(f.size / 1000)) + " kB)" : "no file chosen";
      zone.classList.toggle("chosen", !!f);
    }
    input.addEventListener("change", show);
    ["dragenter", "dragover"].forEach(function (t) {
      zone.addEventListener(t, function () { zone.classList.add("over"); });
    });
    ["dragleave", "drop"].forEach(function (t) {
      zone.addEventListener(t, function () { zone.classList.remove("over"); });
    });
    show();
  }

  function busyButtons() {
    var form = document.getElementById("study-form");
    if (!form) return;
    form.addEventListener("submit", function (ev) {
      var clicked = ev.submitter;
      // Disable after the browser has taken the clicked button's value into the form.
      setTimeout(function () {
        form.querySelectorAll("button").forEach(function (b) { b.disabled = true; });
        if (clicked) clicked.textContent = "Uploading…";
      }, 0);
    });
  }

  function follow() {
    var box = document.getElementById("progress");
    if (!box) return;
    var url = box.getAttribute("data-status-url");
    var bar = document.getElementById("bar");
    var stage = document.getElementById("stage");
    var percent = document.getElementById("percent");
    var elapsed = document.getElementById("elapsed");
    var position = document.getElementById("position");
    var wait = 500;
    function tick() {
      fetch(url, {cache: "no-store", headers: {"Accept": "application/json"}})
        .then(function (r) { if (!r.ok) throw new Error("status " + r.status); return r.json(); })
        .then(function (s) {
          wait = 500;
          if (s.state !== "queued" && s.state !== "running") { window.location.reload(); return; }
          bar.value = s.fraction;
          stage.textContent = s.label;
          percent.textContent = Math.round(100 * s.fraction) + " %";
          elapsed.textContent = Math.round(s.elapsed_s) + " s";
          if (position) position.textContent = s.queue_position ? " · number " + s.queue_position + " in the queue" : "";
          setTimeout(tick, wait);
        })
        .catch(function () {
          stage.textContent = "lost contact with the server; trying again";
          wait = Math.min(wait * 2, 5000);
          setTimeout(tick, wait);
        });
    }
    setTimeout(tick, wait);
  }

  document.addEventListener("DOMContentLoaded", function () { dropZone(); busyButtons(); follow(); });
})();
