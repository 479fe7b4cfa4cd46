/* Ring test offline outbox: readings entered without a connection are kept on this phone and
 * sent when the connection comes back.
 *
 * Pages work without this script: every reading is an ordinary form post. With it, a reading
 * form (one carrying a hidden client_id) is sent with fetch; when the phone is offline or the
 * post fails on the network, the reading goes into an outbox in localStorage instead, and the
 * page says so. The outbox is replayed, oldest first, to the same endpoint when the browser
 * comes back online (and on every page load while anything waits). The server treats client_id
 * as an idempotency key, so a reading replayed twice is stored once.
 *
 * The page script hands over the JSON readings it could not send itself:
 *   window.ringtestOffline.enqueue(url, body[, label])   (body carries client_id)
 */
(function () {
  "use strict";

  var OUTBOX = "ringtest.outbox.v1";
  var REJECTED = "ringtest.outbox.rejected.v1";
  var READING_FORMS = "form[data-offline], form[action$='/test/reading']";
  var NAMES = { r1: "r1", rn: "rn", r2: "r2", ln: "L–N", le: "L–CPC" };
  var replaying = false;

  // ------------------------------------------------------------ storage

  function load(key) {
    try {
      var items = JSON.parse(window.localStorage.getItem(key) || "[]");
      return Array.isArray(items) ? items : [];
    } catch (error) {
      return [];
    }
  }

  function store(key, items) {
    window.localStorage.setItem(key, JSON.stringify(items));
  }

  function removeFromOutbox(clientId) {
    store(OUTBOX, load(OUTBOX).filter(function (item) { return item.clientId !== clientId; }));
  }

  function enqueue(item) {
    var items = load(OUTBOX);
    if (!items.some(function (known) { return known.clientId === item.clientId; })) {
      items.push(item);
      store(OUTBOX, items);
    }
    return items.length;
  }

  function newClientId() {
    if (window.crypto && typeof window.crypto.randomUUID === "function") {
      return window.crypto.randomUUID();
    }
    var bytes = new Uint8Array(16);
    window.crypto.getRandomValues(bytes);
    return Array.prototype.map.call(bytes, function (b) {
      return ("0" + b.toString(16)).slice(-2);
    }).join("");
  }

  // ------------------------------------------------------------ what the user sees

  function banner() {
    var node = document.getElementById("offline-status");
    if (!node) {
      node = document.createElement("div");
      node.id = "offline-status";
      node.setAttribute("role", "status");
      node.setAttribute("aria-live", "polite");
      var main = document.getElementById("main") || document.body;
      main.insertBefore(node, main.firstChild);
    }
    return node;
  }

  /* Show one message; parts are strings or {href, text} links (all set as text, never HTML). */
  function say(kind, parts) {
    var node = banner();
    node.className = "flash flash-" + kind + " offline-status";
    node.textContent = "";
    parts.forEach(function (part) {
      if (typeof part === "string") {
        node.appendChild(document.createTextNode(part));
      } else {
        var link = document.createElement("a");
        link.href = part.href;
        link.textContent = part.text;
        node.appendChild(link);
      }
    });
  }

  function waiting(count) {
    return count === 1 ? "1 reading waiting" : count + " readings waiting";
  }

  function describe(fields) {
    var get = function (name) {
      var pair = fields.find(function (f) { return f[0] === name; });
      return pair ? pair[1] : "";
    };
    var field = get("field") || get("step");
    var value = get("ol") ? "OL" : get("value");
    var where = get("outlet") ? " at outlet " + get("outlet") : "";
    return (NAMES[field] || field || "reading") + where + (value ? " = " + value : "");
  }

  function showQueued(label, count) {
    say("warning", ["Saved on this phone, will send when back online: " + label + " (" +
      waiting(count) + ")."]);
  }

  function showWaiting() {
    var count = load(OUTBOX).length;
    if (count) {
      say("warning", ["Saved on this phone, will send when back online (" + waiting(count) +
        ")."]);
    } else if (!navigator.onLine) {
      say("info", ["Offline: pages you opened before still open, and readings you save are " +
        "kept on this phone."]);
    }
  }

  function noteOnForm(form, text) {
    var note = form.querySelector(".offline-note");
    if (!note) {
      note = document.createElement("p");
      note.className = "offline-note";
      form.appendChild(note);
    }
    note.textContent = text;
  }

  // ------------------------------------------------------------ forms

  function csrfToken(doc) {
    var meta = (doc || document).querySelector("meta[name='csrf-token']");
    return meta ? meta.getAttribute("content") : "";
  }

  /* The form's fields as [name, value] pairs, with the button pressed, without the CSRF token
   * (a fresh one is added when sending). */
  function formFields(form, submitter) {
    var clientField = form.querySelector("input[name='client_id']");
    if (clientField && !clientField.value) clientField.value = newClientId();
    var data = new FormData(form);
    if (submitter && submitter.name) data.append(submitter.name, submitter.value || "");
    var fields = [];
    data.forEach(function (value, name) {
      if (name !== "csrf_token" && typeof value === "string") fields.push([name, value]);
    });
    return fields;
  }

  function clientIdOf(fields) {
    var pair = fields.find(function (f) { return f[0] === "client_id"; });
    return pair && pair[1] ? pair[1] : null;
  }

  /* Offline there is no diagnosis, but the page carries the band the server last gave for
   * this reading (data-low / data-high on its card): say at once whether the value is in it. */
  function bandNote(form, fields) {
    var card = form.closest("[data-low][data-high]");
    if (!card) return "";
    var low = parseFloat(card.getAttribute("data-low"));
    var high = parseFloat(card.getAttribute("data-high"));
    var get = function (name) {
      var pair = fields.find(function (f) { return f[0] === name; });
      return pair ? pair[1] : "";
    };
    var band = low.toFixed(2) + " to " + high.toFixed(2) + " Ω";
    if (get("ol")) return " OL where " + band + " was expected: check the probe contact and the board joins.";
    var value = parseFloat(String(get("value")).replace(",", "."));
    if (!isFinite(value) || !isFinite(low) || !isFinite(high)) return "";
    if (value < low) return " Below the expected " + band + ": check before moving on.";
    if (value > high) return " Above the expected " + band + ": check before moving on.";
    return " Within the expected " + band + ".";
  }

  function queueForm(form, fields) {
    var clientId = clientIdOf(fields);
    if (!clientId) {
      clientId = newClientId();
      fields.push(["client_id", clientId]);
    }
    var label = describe(fields);
    var count = enqueue({
      kind: "form", url: form.action, fields: fields, clientId: clientId, label: label,
      page: window.location.pathname, savedAt: new Date().toISOString(),
    });
    // the next reading from this form is a new write with its own key
    var clientField = form.querySelector("input[name='client_id']");
    if (clientField) clientField.value = newClientId();
    noteOnForm(form, "Saved on this phone: " + label + ". It will be sent when back online." +
      bandNote(form, fields));
    showQueued(label, count);
  }

  function body(fields, token) {
    var params = new URLSearchParams();
    fields.forEach(function (f) { params.append(f[0], f[1]); });
    if (token) params.append("csrf_token", token);
    return params;
  }

  function isReadingForm(form) {
    return form instanceof HTMLFormElement && form.matches(READING_FORMS) &&
      !!form.querySelector("input[name='client_id']");
  }

  /* Capture phase, before any other script: offline, a reading goes straight to the outbox. */
  function onSubmitOffline(event) {
    var form = event.target;
    if (navigator.onLine || !isReadingForm(form) || form.dataset.offlineNative === "1") return;
    event.preventDefault();
    event.stopImmediatePropagation();
    queueForm(form, formFields(form, event.submitter));
  }

  /* Bubble phase: online, send with fetch unless the page script took the form over already
   * (it hands network failures to ringtestOffline.enqueue). */
  function onSubmit(event) {
    var form = event.target;
    if (!(form instanceof HTMLFormElement)) return;
    if (form.matches("form[action$='/logout']")) {
      onLogout(event);
      return;
    }
    if (!isReadingForm(form) || event.defaultPrevented || form.dataset.offlineNative === "1") {
      return;
    }
    event.preventDefault();
    var fields = formFields(form, event.submitter);
    var token = (form.querySelector("input[name='csrf_token']") || {}).value || csrfToken();
    fetch(form.action, {
      method: "POST", body: body(fields, token), credentials: "same-origin",
      redirect: "manual",
    }).then(function (response) {
      if (response.type === "opaqueredirect" || (response.status >= 300 && response.status < 400)) {
        // stored: show the page the server would have shown (its message is waiting there)
        window.location.assign(window.location.pathname + window.location.search);
        return;
      }
      // a page with the form's errors (or any other answer): let the browser post it itself
      form.dataset.offlineNative = "1";
      if (typeof form.requestSubmit === "function") {
        form.requestSubmit(event.submitter || undefined);
      } else {
        form.submit();
      }
    }, function () {
      queueForm(form, fields);
    });
  }

  function onLogout(event) {
    var count = load(OUTBOX).length;
    if (count && !window.confirm(waiting(count) + " on this phone not sent yet. Logging out " +
        "deletes them from this phone. Log out anyway?")) {
      event.preventDefault();
      return;
    }
    store(OUTBOX, []);
    store(REJECTED, []);
    if (navigator.serviceWorker && navigator.serviceWorker.controller) {
      navigator.serviceWorker.controller.postMessage({ type: "clear-pages" });
    }
  }

  // ------------------------------------------------------------ replay

  function isLoginPage(url) {
    return /\/login\/?$/.test(new URL(url, window.location.href).pathname);
  }

  /* A CSRF token from a fresh page, or null when the session has ended. */
  function freshToken() {
    return fetch("/", { credentials: "same-origin", cache: "no-store" })
      .then(function (response) {
        if (isLoginPage(response.url)) return null;
        return response.text().then(function (html) {
          return csrfToken(new DOMParser().parseFromString(html, "text/html")) || null;
        });
      });
  }

  /* Send one outbox item: "sent", "rejected", "token" (CSRF refused), "login" or "later". */
  function send(item, token) {
    var request;
    if (item.kind === "json") {
      request = fetch(item.url, {
        method: "POST", credentials: "same-origin",
        headers: { "Content-Type": "application/json", "Accept": "application/json",
                   "X-CSRFToken": token },
        body: JSON.stringify(item.json),
      });
    } else {
      request = fetch(item.url, {
        method: "POST", credentials: "same-origin", body: body(item.fields, token),
      });
    }
    return request.then(function (response) {
      var json = (response.headers.get("Content-Type") || "").indexOf("json") >= 0;
      if (response.status === 401 || (response.redirected && isLoginPage(response.url))) {
        return "login";
      }
      if (response.ok) return "sent";
      if (response.status === 400 && !json && item.kind === "json") return "token";
      if (response.status === 400 && item.kind === "form") return "token";
      if (response.status >= 500) return "later";
      return "rejected";
    });
  }

  function runReplay() {
    var items = load(OUTBOX);
    if (!items.length || !navigator.onLine) return Promise.resolve();
    var sent = 0;
    var rejected = [];
    var token = csrfToken();
    var outcome = "done";
    say("info", ["Sending " + waiting(items.length).replace(" waiting", "") +
      " saved on this phone…"]);

    function next(index, retried) {
      if (index >= items.length) return Promise.resolve();
      var item = items[index];
      return send(item, token).then(function (result) {
        if (result === "token" && !retried) {
          return freshToken().then(function (fresh) {
            if (!fresh) { outcome = "login"; return undefined; }
            token = fresh;
            return next(index, true);
          });
        }
        if (result === "sent") {
          removeFromOutbox(item.clientId);
          sent += 1;
        } else if (result === "rejected" || result === "token") {
          removeFromOutbox(item.clientId);
          rejected.push(item);
        } else {
          outcome = result;
          return undefined;
        }
        return next(index + 1, false);
      }, function () {
        outcome = "later";
      });
    }

    return next(0, false).then(function () {
      if (rejected.length) store(REJECTED, load(REJECTED).concat(rejected));
      report(sent, rejected, outcome);
    });
  }

  function report(sent, rejected, outcome) {
    var left = load(OUTBOX).length;
    var parts = [];
    if (sent) {
      parts.push("Sent " + waiting(sent).replace(" waiting", "") + " saved on this phone. ");
      parts.push({ href: window.location.pathname + window.location.search,
                   text: "Reload to see them" });
      parts.push(". ");
    }
    if (rejected.length) {
      parts.push("Not accepted, enter again: " + rejected.map(function (item) {
        return item.label;
      }).join("; ") + ". ");
    }
    if (outcome === "login" && left) {
      parts.push(waiting(left) + ": ");
      parts.push({ href: "/login?next=" + encodeURIComponent(window.location.pathname),
                   text: "log in again to send them" });
      parts.push(".");
    } else if (left) {
      parts.push("Still saved on this phone, will send when back online (" + waiting(left) +
        ").");
    }
    if (parts.length) say(left || rejected.length ? "warning" : "ok", parts);
  }

  function replay() {
    if (replaying) return Promise.resolve();
    replaying = true;
    var run = navigator.locks && navigator.locks.request
      ? navigator.locks.request("ringtest-outbox", { ifAvailable: true }, function (lock) {
        return lock ? runReplay() : undefined;
      })
      : runReplay();
    return Promise.resolve(run).catch(function () { return undefined; }).then(function () {
      replaying = false;
    });
  }

  // ------------------------------------------------------------ wiring

  function enqueueJson(url, json, label) {
    var clientId = json.client_id || (json.client_id = newClientId());
    var text = label || describe(Object.keys(json).map(function (name) {
      return [name, json[name] == null ? "" : String(json[name])];
    }));
    var count = enqueue({
      kind: "json", url: url, json: json, clientId: clientId, label: text,
      page: window.location.pathname, savedAt: new Date().toISOString(),
    });
    showQueued(text, count);
    return count;
  }

  /* For the page script (static/js/app.js): readings it could not send go here. */
  window.ringtestOffline = {
    enqueue: enqueueJson,
    pending: function () { return load(OUTBOX).length; },
    replay: replay,
    newClientId: newClientId,
  };

  window.addEventListener("submit", onSubmitOffline, true);
  document.addEventListener("submit", onSubmit);
  window.addEventListener("online", replay);
  window.addEventListener("offline", showWaiting);

  /* A page loaded before the service worker controlled it did not go through it: once the
   * worker takes over, ask it to keep this page for offline use. */
  function keepThisPage() {
    var sw = navigator.serviceWorker;
    if (!sw || sw.controller || isLoginPage(window.location.href)) return;
    sw.addEventListener("controllerchange", function () {
      if (sw.controller) sw.controller.postMessage({ type: "keep-page", url: window.location.href });
    }, { once: true });
  }

  function start() {
    if ("serviceWorker" in navigator && document.body && document.body.dataset.sw) {
      keepThisPage();
      navigator.serviceWorker.register(document.body.dataset.sw, { scope: "/" })
        .catch(function () { return undefined; });
    }
    showWaiting();
    if (navigator.onLine && load(OUTBOX).length) replay();
  }

  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", start);
  } else {
    start();
  }
})();
