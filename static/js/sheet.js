/* The job sheet link says it is working while the PDF is built (a few seconds on a long job).
   Only an enhancement: without JavaScript, or where fetch is missing, the link is an ordinary
   link to the PDF. With it, the PDF is fetched, the link reads "Building the job sheet…" with
   the seconds gone, then the file is handed over as a download; a failure is said on the
   link's line and the link works again. */
(function () {
  "use strict";

  function fileName(reply, fallback) {
    var header = reply.headers.get("Content-Disposition") || "";
    var match = /filename="([^"]+)"/.exec(header);
    return match ? match[1] : fallback;
  }

  function status(link) {
    var box = link.parentNode.querySelector(".sheet-status");
    if (!box) {
      box = document.createElement("span");
      box.className = "sheet-status small";
      box.setAttribute("role", "status");
      link.insertAdjacentElement("afterend", box);
    }
    return box;
  }

  function build(link, event) {
    if (!window.fetch || !window.URL || !URL.createObjectURL) { return; }
    event.preventDefault();
    if (link.getAttribute("aria-busy") === "true") { return; }
    var words = link.textContent;
    var started = Date.now();
    var box = status(link);
    link.setAttribute("aria-busy", "true");
    link.classList.add("busy");
    link.textContent = "Building the job sheet…";
    box.textContent = "";
    var timer = setInterval(function () {
      link.textContent = "Building the job sheet… " +
        Math.round((Date.now() - started) / 1000) + " s";
    }, 1000);
    function done(text) {
      clearInterval(timer);
      link.textContent = words;
      link.removeAttribute("aria-busy");
      link.classList.remove("busy");
      box.textContent = text;
    }
    fetch(link.href, {credentials: "same-origin"}).then(function (reply) {
      var type = reply.headers.get("Content-Type") || "";
      if (!reply.ok || type.indexOf("application/pdf") !== 0) {
        throw new Error(reply.status === 401 || reply.redirected ? "signed out" : "refused");
      }
      var name = fileName(reply, "job-sheet.pdf");
      return reply.blob().then(function (blob) {
        var url = URL.createObjectURL(blob);
        var save = document.createElement("a");
        save.href = url;
        save.download = name;
        document.body.appendChild(save);
        save.click();
        save.remove();
        setTimeout(function () { URL.revokeObjectURL(url); }, 60000);
        done("Job sheet ready: " + name);
      });
    }).catch(function (error) {
      done(!navigator.onLine ? "No signal: the job sheet is built on the server. Try again when online." :
        error && error.message === "signed out" ? "Signed out: log in again, then try once more." :
          "The job sheet could not be built. Try again.");
    });
  }

  document.addEventListener("click", function (event) {
    var link = event.target.closest && event.target.closest("a[data-sheet-link]");
    if (link && !event.defaultPrevented && event.button === 0 &&
        !event.metaKey && !event.ctrlKey && !event.shiftKey) {
      build(link, event);
    }
  });
})();
