/* Starts the page: the one service-worker registration, a fresh page on Back, the outbox.
 *
 * - A page that comes back from the back/forward cache is reloaded (it may show old data).
 * - The first page a phone opens went past the service worker: this script hands the worker
 *   the page as the browser received it, so it opens offline too without being fetched again.
 * - When a different user signs in on this phone, the worker forgets the pages kept for the
 *   previous one (their outbox items stay, held for them).
 * - The outbox is sent on page load and on the "online" event, and by the worker's
 *   Background Sync where the browser has it.
 */
(function (root) {
  "use strict";
  var RT = root.RT;
  var SW_URL = "/sw.js";
  var LAST_USER = "ringtest.last-user";
  var login = /\/login\/?$/.test(location.pathname);
  var sw = navigator.serviceWorker;
  /* Taken before any script changes the page (they all wait for DOMContentLoaded). */
  var firstCopy = sw && !sw.controller && !login && document.body &&
    document.body.hasAttribute("data-user")
    ? "<!doctype html>\n" + document.documentElement.outerHTML : null;

  root.addEventListener("pageshow", function (event) {
    if (event.persisted) location.reload();
  });

  function tellWorker(message) {
    if (!sw) return;
    sw.ready.then(function (reg) {
      var worker = sw.controller || reg.active;
      if (worker) worker.postMessage(message);
    });
  }

  function userChanged() {
    var me = RT.util.pageUser();
    if (!me) return;
    var last;
    try { last = localStorage.getItem(LAST_USER); } catch (e) { last = null; }
    if (last && last !== String(me.id)) tellWorker({ type: "clear-pages" });
    try { localStorage.setItem(LAST_USER, String(me.id)); } catch (e) { /* private mode */ }
  }

  function register() {
    if (!sw) return;
    sw.register(SW_URL, { scope: "/" }).catch(function () { return undefined; });
    if (firstCopy) {
      tellWorker({ type: "keep-page", url: location.href.split("#")[0], html: firstCopy });
    }
    keepSteps();
    sw.addEventListener("message", function (event) {
      var data = event.data || {};
      if (data.type === "outbox") {
        root.dispatchEvent(new CustomEvent("ringtest:outbox", { detail: data.detail }));
      }
    });
  }

  /* On a step page, the next step's page is kept too (once, if not kept yet), so that "Next"
   * works in a basement (the previous one was kept on the way here); an older copy is brought
   * up to date by the outbox. */
  function keepSteps() {
    var p = RT.overlay && RT.overlay.page();
    var next = p && { e2e: "ln", ln: "le" }[p.step];
    if (!next || !p.writable || !navigator.onLine) return;
    tellWorker({ type: "keep-missing",
      urls: [location.origin + "/circuits/" + p.circuitId + "/test/" + next] });
  }

  function redraw() {
    return RT.status.refresh().then(function (items) {
      RT.overlay.apply(items);
      return items;
    });
  }

  function send() {
    if (!navigator.onLine || !RT.util.pageUser()) return;
    RT.replay.run();
  }

  function onLogout(event) {
    var form = event.target;
    if (form instanceof HTMLFormElement && /\/logout$/.test(form.action)) {
      tellWorker({ type: "clear-pages" });
    }
  }

  function start() {
    userChanged(); // before the worker keeps this page
    register();
    // each part on its own: one failing never leaves the others (or the plain forms) broken
    [RT.forms, RT.app].forEach(function (part) {
      if (!part) return;
      try { part.start(); } catch (error) { if (root.console) console.error(error); }
    });
    document.addEventListener("submit", onLogout, true);
    root.addEventListener("ringtest:outbox", function (event) {
      if (event.detail && event.detail.done) {
        var report = event.detail.report || {};
        RT.status.report(report).then(function (items) {
          // online, a reading shows on its card once the server has it (app.js)
          RT.overlay.apply(items, { waiting: report.outcome !== "done" && report.outcome !== "busy" });
        });
      }
    });
    root.addEventListener("online", send);
    root.addEventListener("offline", redraw);
    RT.outbox.migrate().catch(function () { return 0; })
      .then(function () { return RT.outbox.prune().catch(function () { return undefined; }); })
      .then(redraw)
      .then(function (items) {
        if (items.some(function (i) { return i.state === "waiting"; })) send();
      });
  }

  /* For the browser tests and for support: how many items of this user wait. */
  root.ringtestOffline = {
    pending: function () {
      var me = RT.util.pageUser();
      return RT.outbox.all().then(function (items) {
        return items.filter(function (i) { return i.state === "waiting" && me && i.userId === me.id; }).length;
      });
    },
    items: function () { return RT.outbox.all(); },
    replay: function () { return RT.replay.run(); },
  };

  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", start);
  } else {
    start();
  }
})(self);
