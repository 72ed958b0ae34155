// Uploads a capture as the raw request body, so the server streams it to disk; shows bytes sent as they go.
// What the upload did ("Stored as capture 6", "the same bytes are already stored") is kept for the tape's page until
// the curator dismisses it, across the reload that shows the new capture.
(function () {
  "use strict";
  var notice = document.getElementById("upload-notice");
  var key = notice ? "tapevault.upload-notice." + notice.dataset.item : null;

  function showNotice() {
    if (!notice) { return; }
    var message = window.sessionStorage.getItem(key);
    notice.textContent = "";
    if (!message) { return; }
    var box = document.createElement("p");
    box.className = "notice dismissible";
    var text = document.createElement("span");
    text.className = "upload-message";
    text.textContent = message;
    var button = document.createElement("button");
    button.type = "button";
    button.className = "quiet";
    button.textContent = "Dismiss";
    button.setAttribute("aria-label", "Dismiss the upload message");
    button.addEventListener("click", function () {
      window.sessionStorage.removeItem(key);
      notice.textContent = "";
    });
    box.appendChild(text);
    box.appendChild(document.createTextNode(" "));
    box.appendChild(button);
    notice.appendChild(box);
  }

  showNotice();

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
        var message = body && body.message ? body.message : "Uploaded.";
        if (body && body.decodeJob) { message += " Decode queued as job " + body.decodeJob.id + "."; }
        text.textContent = message;
        if (key) { window.sessionStorage.setItem(key, file.name + ": " + message); showNotice(); }
        window.setTimeout(function () { window.location.reload(); }, 1200);
      } else {
        text.textContent = "Not stored: " + (body && body.title ? body.title : "the server answered " + request.status + ".");
      }
    });
    request.addEventListener("error", function () { text.textContent = "The upload was cut off; nothing was stored. Try again."; });
    request.send(file);
  });
})();
