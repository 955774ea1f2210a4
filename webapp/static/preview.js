// Live preview of a rewrite: posts the text to the server, which renders live fields,
// Markdown and cleans the HTML; the cleaned fragment is shown under the text area.
(function () {
  "use strict";
  var area = document.getElementById("rewrite-text");
  var out = document.getElementById("rewrite-preview");
  var meta = document.querySelector('meta[name="csrf-token"]');
  if (!area || !out || !area.dataset.previewUrl) { return; }
  var timer = null;
  var sent = 0;

  function refresh() {
    var mine = ++sent;
    var body = new FormData();
    body.append("text", area.value);
    fetch(area.dataset.previewUrl, {
      method: "POST",
      body: body,
      credentials: "same-origin",
      headers: { "X-CSRFToken": meta ? meta.content : "" }
    }).then(function (response) {
      return response.text();
    }).then(function (html) {
      if (mine === sent) { out.innerHTML = html; }
    }).catch(function () {
      if (mine === sent) { out.textContent = "The preview is not available right now."; }
    });
  }

  area.addEventListener("input", function () {
    clearTimeout(timer);
    timer = setTimeout(refresh, 250);
  });
  refresh();
})();
