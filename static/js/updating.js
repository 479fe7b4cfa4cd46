/* After a save the server may answer before the full diagnosis is ready: the leading box then
   holds a [data-poll] element. Ask that URL until the diagnosis is ready (200) and put it in
   place; 202 means "still computing". Stops after about 30 s (the page still works: the next
   reading or a reload shows the diagnosis). */
(function () {
  "use strict";
  var INTERVAL_MS = 400;
  var LIMIT = 75;

  function poll(box, url, tries) {
    fetch(url, { credentials: "same-origin", headers: { "Accept": "application/json" } })
      .then(function (response) {
        if (response.status === 202) { return null; }
        if (!response.ok) { throw new Error("status " + response.status); }
        return response.json();
      })
      .then(function (data) {
        var holder = box.querySelector("[data-poll]");
        if (!holder || holder.getAttribute("data-poll") !== url) { return; } // replaced meanwhile
        if (data && data.html && data.html.leading !== undefined) {
          box.innerHTML = data.html.leading;
        } else if (tries < LIMIT) {
          setTimeout(function () { poll(box, url, tries + 1); }, INTERVAL_MS);
        }
      })
      .catch(function () {
        if (tries < LIMIT) { setTimeout(function () { poll(box, url, tries + 1); }, INTERVAL_MS * 3); }
      });
  }

  function watch(box) {
    var seen = null;
    function check() {
      var holder = box.querySelector("[data-poll]");
      var url = holder ? holder.getAttribute("data-poll") : null;
      if (url && url !== seen) { seen = url; poll(box, url, 0); }
      if (!url) { seen = null; }
    }
    new MutationObserver(check).observe(box, { childList: true, subtree: true });
    check();
  }

  document.addEventListener("DOMContentLoaded", function () {
    document.querySelectorAll("#leading").forEach(watch);
  });
}());
