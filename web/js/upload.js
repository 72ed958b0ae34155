// Uploads a capture as the raw request body, so the server streams it to disk; shows bytes sent as they go.
(function () {
  "use strict";
  var form = document.getElementById("upload");
  if (!form) { return; }
  var token = document.querySelector('meta[name="tapevault-antiforgery"]').content;
  var bar = document.getElementById("upload-bar");
  var text = document.getElementById("upload-text");
  var box = form.querySelector(".upload-progress");

  function human(bytes) {
    if (bytes >= 1 << 30) { return (bytes / (1 << 30)).toFixed(2) + " GiB"; }
    if (bytes >= 1 << 20) { return (bytes / (1 << 20)).toFixed(1) + " MiB"; }
    if (bytes >= 1 << 10) { return (bytes / 1024).toFixed(0) + " KiB"; }
    return bytes + " bytes";
  }

  form.addEventListener("submit", function (event) {
    event.preventDefault();
    var file = form.querySelector('input[type="file"]').files[0];
    if (!file) { return; }
    var query = new URLSearchParams();
    query.set("fileName", file.name);
    ["deck", "operator", "capturedOn", "notes", "decodeProfile"].forEach(function (name) {
      var value = form.elements[name].value;
      if (value) { query.set(name, value); }
    });
    var request = new XMLHttpRequest();
    request.open("POST", "/api/items/" + form.dataset.item + "/captures?" + query.toString());
    request.setRequestHeader("Content-Type", file.type || "application/octet-stream");
    request.setRequestHeader("X-TapeVault-Antiforgery", token);
    box.hidden = false;
    bar.value = 0;
    text.textContent = "Starting upload of " + file.name + "…";
    request.upload.addEventListener("progress", function (e) {
      if (e.lengthComputable) {
        bar.value = Math.floor(100 * e.loaded / e.total);
        text.textContent = human(e.loaded) + " of " + human(e.total) + " sent (" + bar.value + " %).";
      }
    });
    request.addEventListener("load", function () {
      var body = null;
      try { body = JSON.parse(request.responseText); } catch (ignored) { body = null; }
      if (request.status === 200 || request.status === 201) {
        bar.value = 100;
        text.textContent = body && body.message ? body.message : "Uploaded.";
        window.setTimeout(function () { window.location.reload(); }, 1200);
      } else {
        text.textContent = "Not stored: " + (body && body.title ? body.title : "the server answered " + request.status + ".");
      }
    });
    request.addEventListener("error", function () { text.textContent = "The upload was cut off; nothing was stored. Try again."; });
    request.send(file);
  });
})();
